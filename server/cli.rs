//! The command line: `sagline [serve]` and `sagline analyze`.

use clap::{Args, Parser, Subcommand};
use std::net::SocketAddr;
use std::path::PathBuf;
use std::process::ExitCode;

#[derive(Debug, Parser)]
#[command(name = "sagline", version, about = "Subsidence analysis of sedimentary basins, well by well")]
pub struct Cli {
    #[command(subcommand)]
    pub command: Option<Command>,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Serve the web app (what plain `sagline` does).
    Serve(ServeArgs),
    /// Analyse a tops file and print the results as JSON or CSV.
    Analyze(crate::batch::AnalyzeArgs),
}

#[derive(Debug, Clone, Args)]
pub struct ServeArgs {
    /// Address to listen on. The default serves this machine only; give e.g.
    /// 0.0.0.0:8080 to let the office network in.
    #[arg(long, default_value = "127.0.0.1:8080")]
    pub bind: SocketAddr,
    /// The study database (SQLite). Created, holding the demo study, if it does not exist.
    #[arg(long, default_value = "sagline.db")]
    pub db: PathBuf,
    /// Create a new database without the demo study.
    #[arg(long)]
    pub empty: bool,
}

impl Default for ServeArgs {
    fn default() -> Self {
        ServeArgs {
            bind: "127.0.0.1:8080".parse().expect("a valid default address"),
            db: PathBuf::from("sagline.db"),
            empty: false,
        }
    }
}

pub fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli.command {
        Some(Command::Analyze(args)) => crate::batch::run(&args),
        Some(Command::Serve(args)) => serve_blocking(args),
        None => serve_blocking(ServeArgs::default()),
    }
}

fn serve_blocking(args: ServeArgs) -> ExitCode {
    init_logging();
    let runtime = match tokio::runtime::Runtime::new() {
        Ok(rt) => rt,
        Err(e) => {
            eprintln!("error: cannot start the async runtime: {e}");
            return ExitCode::FAILURE;
        }
    };
    match runtime.block_on(crate::server::run(args)) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e:#}");
            ExitCode::FAILURE
        }
    }
}

fn init_logging() {
    use tracing_subscriber::EnvFilter;
    let filter = EnvFilter::try_from_default_env().unwrap_or_else(|_| EnvFilter::new("info,sqlx=warn,tower_http=info"));
    let _ = tracing_subscriber::fmt().with_env_filter(filter).try_init();
}
