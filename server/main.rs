//! The `sagline` command: serve the web app (the default) or analyse files in batch.

fn main() -> std::process::ExitCode {
    sagline::cli::main()
}
