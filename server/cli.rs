//! The command line: `sagline [serve]`, `sagline analyze`, `sagline section`, `sagline user add`
//! and `sagline backup`.

use crate::auth::Role;
use crate::services::accounts;
use clap::{Args, Parser, Subcommand};
use std::io::BufRead;
use std::net::SocketAddr;
use std::path::PathBuf;
use std::process::ExitCode;

#[derive(Debug, Parser)]
#[command(
    name = "sagline",
    version,
    about = "Subsidence analysis of sedimentary basins, well by well"
)]
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
    /// Flexurally backstrip the wells along a section line (JSON or CSV).
    Section(crate::section_batch::SectionArgs),
    /// Manage the accounts of a database.
    User(UserArgs),
    /// Copy a database to a file, consistently, also while the server is using it.
    Backup(BackupArgs),
    /// Rebuild the demo study's CSV files from its basin description (seeded, repeatable).
    BuildDemo(BuildDemoArgs),
}

#[derive(Debug, Args)]
pub struct BuildDemoArgs {
    /// The basin description.
    #[arg(long, default_value = "demo-db/basin.json")]
    pub spec: PathBuf,
    /// Where tops.csv, wells.csv and sea_level.csv are written.
    #[arg(long, default_value = "demo-db")]
    pub out: PathBuf,
}

#[derive(Debug, Clone, Args)]
pub struct BackupArgs {
    /// The database to copy (the server's --db). It is only read: never created or upgraded.
    #[arg(long, default_value = "sagline.db")]
    pub db: PathBuf,
    /// The file the copy is written to. It must not exist, unless --force is given.
    #[arg(long)]
    pub out: PathBuf,
    /// Replace --out FILE if it exists.
    #[arg(long)]
    pub force: bool,
}

#[derive(Debug, Args)]
pub struct UserArgs {
    #[command(subcommand)]
    pub action: UserAction,
}

#[derive(Debug, Subcommand)]
pub enum UserAction {
    /// Add an account and print its generated password (or read one with --password-stdin).
    Add(UserAddArgs),
}

#[derive(Debug, Clone, Args)]
pub struct UserAddArgs {
    /// The user name: letters, digits and . _ - @ (no spaces).
    pub name: String,
    /// What the account may do: viewer (reads), interpreter (also uploads, picks,
    /// comments) or admin (also users, studies, parameters, catalogue, deletes).
    #[arg(long, value_parser = parse_role)]
    pub role: Role,
    /// The study database (SQLite); it must exist (start the server once to create it:
    /// `sagline serve` for sagline.db, `sagline serve --db PATH --create` for another).
    #[arg(long, default_value = "sagline.db")]
    pub db: PathBuf,
    /// Read the password from the first line of standard input instead of generating one.
    /// It needs at least 12 characters (5 of them different), may not be or contain the
    /// user name, and may not be a common password or one built on it.
    #[arg(long)]
    pub password_stdin: bool,
}

fn parse_role(text: &str) -> Result<Role, String> {
    text.parse()
}

#[derive(Debug, Clone, Args)]
pub struct ServeArgs {
    /// Address to listen on. The default serves this machine only; give e.g.
    /// 0.0.0.0:8080 to let the office network in.
    #[arg(long, default_value = "127.0.0.1:8080")]
    pub bind: SocketAddr,
    /// The study database (SQLite) [default: sagline.db, created holding the demo study
    /// if it does not exist]. A database named here must exist, unless --create is given.
    #[arg(long)]
    pub db: Option<PathBuf>,
    /// Create the --db database if it does not exist (holding the demo study unless --empty).
    #[arg(long)]
    pub create: bool,
    /// A new database starts without the demo study.
    #[arg(long)]
    pub empty: bool,
    /// Connections served at once; more wait until one closes.
    #[arg(long, default_value_t = crate::server::DEFAULT_MAX_CONNECTIONS, value_parser = clap::value_parser!(u32).range(1..))]
    pub max_connections: u32,
    /// Connections served at once from one client address; more are closed at once.
    #[arg(long, default_value_t = crate::server::DEFAULT_MAX_CONNECTIONS_PER_ADDRESS, value_parser = clap::value_parser!(u32).range(1..))]
    pub max_connections_per_address: u32,
    /// Seconds a connection has to send a request's header; also how long an idle
    /// connection is kept open.
    #[arg(long, value_name = "SECS", default_value_t = crate::server::DEFAULT_HEADER_TIMEOUT_SECS, value_parser = clap::value_parser!(u64).range(1..))]
    pub header_timeout: u64,
    /// Seconds a request body may pause before the request fails.
    #[arg(long, value_name = "SECS", default_value_t = crate::server::DEFAULT_BODY_TIMEOUT_SECS, value_parser = clap::value_parser!(u64).range(1..))]
    pub body_timeout: u64,
}

impl ServeArgs {
    /// The database used when no --db is given; the only one created without --create.
    pub const DEFAULT_DB: &str = "sagline.db";

    /// The database to serve.
    pub fn db_path(&self) -> PathBuf {
        self.db
            .clone()
            .unwrap_or_else(|| PathBuf::from(Self::DEFAULT_DB))
    }

    /// Whether a missing database may be created: for the default path, or when asked
    /// with --create, so a mistyped --db never silently starts a new database.
    pub fn may_create(&self) -> bool {
        self.db.is_none() || self.create
    }

    /// The options the server runs with.
    pub fn options(&self) -> crate::server::ServeOptions {
        crate::server::ServeOptions {
            bind: self.bind,
            db_path: self.db_path(),
            may_create: self.may_create(),
            empty: self.empty,
            connections: crate::server::ConnectionSettings {
                header_timeout: std::time::Duration::from_secs(self.header_timeout),
                body_timeout: std::time::Duration::from_secs(self.body_timeout),
                limit: crate::server::ConnectionLimit::new(
                    self.max_connections as usize,
                    self.max_connections_per_address as usize,
                ),
            },
        }
    }
}

impl Default for ServeArgs {
    fn default() -> Self {
        ServeArgs {
            bind: "127.0.0.1:8080".parse().expect("a valid default address"),
            db: None,
            create: false,
            empty: false,
            max_connections: crate::server::DEFAULT_MAX_CONNECTIONS,
            max_connections_per_address: crate::server::DEFAULT_MAX_CONNECTIONS_PER_ADDRESS,
            header_timeout: crate::server::DEFAULT_HEADER_TIMEOUT_SECS,
            body_timeout: crate::server::DEFAULT_BODY_TIMEOUT_SECS,
        }
    }
}

pub fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli.command {
        Some(Command::Analyze(args)) => crate::batch::run(&args),
        Some(Command::Section(args)) => crate::section_batch::run(&args),
        Some(Command::BuildDemo(a)) => crate::demo_build::run(&a.spec, &a.out),
        Some(Command::Serve(args)) => serve_blocking(args),
        Some(Command::User(UserArgs {
            action: UserAction::Add(args),
        })) => user_add(&args),
        Some(Command::Backup(args)) => backup(&args),
        None => serve_blocking(ServeArgs::default()),
    }
}

/// The async runtime, or the failure to report.
fn runtime() -> Result<tokio::runtime::Runtime, ExitCode> {
    tokio::runtime::Runtime::new().map_err(|e| {
        eprintln!("error: cannot start the async runtime: {e}");
        ExitCode::FAILURE
    })
}

fn serve_blocking(args: ServeArgs) -> ExitCode {
    init_logging();
    let runtime = match runtime() {
        Ok(rt) => rt,
        Err(code) => return code,
    };
    match runtime.block_on(crate::server::run(args.options())) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e:#}");
            ExitCode::FAILURE
        }
    }
}

/// `sagline user add`: the account is recorded in the activity log as made from the command line.
fn user_add(args: &UserAddArgs) -> ExitCode {
    if !args.db.exists() {
        eprintln!(
            "error: there is no database at {}; start the server once to create it (`sagline serve --db PATH --create`), or give --db PATH",
            args.db.display()
        );
        return ExitCode::FAILURE;
    }
    let password = if args.password_stdin {
        let mut line = String::new();
        if let Err(e) = std::io::stdin().lock().read_line(&mut line) {
            eprintln!("error: cannot read the password from standard input: {e}");
            return ExitCode::FAILURE;
        }
        Some(line.trim_end_matches(['\r', '\n']).to_string())
    } else {
        None
    };
    let added = async {
        let db = crate::store::open(&args.db).await?;
        let created = accounts::create_user(
            &db,
            &args.name,
            args.role,
            password.as_deref(),
            accounts::COMMAND_LINE_ACTOR,
        )
        .await;
        db.close().await;
        anyhow::Ok(created?)
    };
    let runtime = match runtime() {
        Ok(rt) => rt,
        Err(code) => return code,
    };
    match runtime.block_on(added) {
        Ok(created) => {
            println!(
                "Added '{}' with the {} role to {}.",
                created.user.name,
                created.user.role,
                args.db.display()
            );
            if let Some(p) = created.generated_password {
                println!("Password, shown only this once:\n\n    {p}\n");
            }
            ExitCode::SUCCESS
        }
        Err(e) => {
            eprintln!("error: {e:#}");
            ExitCode::FAILURE
        }
    }
}

/// `sagline backup`: the copy is whole or not written at all.
fn backup(args: &BackupArgs) -> ExitCode {
    let runtime = match runtime() {
        Ok(rt) => rt,
        Err(code) => return code,
    };
    match runtime.block_on(crate::services::backup::backup(
        &args.db, &args.out, args.force,
    )) {
        Ok(made) => {
            println!(
                "Backed up {} to {} ({} bytes).",
                args.db.display(),
                made.path.display(),
                made.bytes
            );
            ExitCode::SUCCESS
        }
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::FAILURE
        }
    }
}

fn init_logging() {
    use tracing_subscriber::EnvFilter;
    let filter = EnvFilter::try_from_default_env()
        .unwrap_or_else(|_| EnvFilter::new("info,sqlx=warn,tower_http=info"));
    let _ = tracing_subscriber::fmt().with_env_filter(filter).try_init();
}
