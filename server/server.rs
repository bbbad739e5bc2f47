//! Starting and stopping the web server.

use crate::services::accounts;
use crate::{demo, store, web};
use anyhow::Context;
use std::net::SocketAddr;
use std::path::PathBuf;
use tokio::net::TcpListener;

/// What `sagline serve` was asked to do, already resolved from the command line.
#[derive(Debug, Clone)]
pub struct ServeOptions {
    /// Address to listen on.
    pub bind: SocketAddr,
    /// The study database.
    pub db_path: PathBuf,
    /// Whether a missing database may be created.
    pub may_create: bool,
    /// A new database starts without the demo study.
    pub empty: bool,
}

/// Open the database (creating it when the default path is missing, or a missing
/// `--db` with `--create`), seed the demo study into a new one unless `--empty`, create
/// the first admin account if there is no account yet (its password is printed once),
/// then serve until Ctrl-C or SIGTERM.
pub async fn run(args: ServeOptions) -> anyhow::Result<()> {
    let path = args.db_path.clone();
    let is_new = !path.exists();
    if is_new && !args.may_create {
        anyhow::bail!(
            "no database at {}; pass --create to start a new one (or check the path)",
            path.display()
        );
    }
    let db = store::open_or_create(&path, args.may_create)
        .await
        .with_context(|| format!("cannot open the database {}", path.display()))?;
    if is_new && !args.empty {
        demo::seed(&db)
            .await
            .context("cannot build the demo study")?;
        tracing::info!(db = %path.display(), "created a new database holding the demo study");
    } else if is_new {
        tracing::info!(db = %path.display(), "created a new, empty database");
    }
    let first_admin_password = accounts::ensure_first_admin(&db)
        .await
        .context("cannot create the first admin account")?;
    let listener = TcpListener::bind(args.bind)
        .await
        .with_context(|| format!("cannot listen on {}", args.bind))?;
    let addr = listener.local_addr()?;
    let shutdown = shutdown_signal();
    let url = format!("http://{}/", display_addr(addr));
    println!("Sagline is serving {} at {url}", path.display());
    if let Some(password) = first_admin_password {
        // Printed, never logged: this console line is the only place the password appears.
        println!(
            "First start: an account '{}' with the admin role was created. Its password, shown only this once:\n\n    {password}\n\nSign in at {url}login and add your team's accounts under Users.",
            accounts::FIRST_ADMIN_NAME
        );
    }
    serve(listener, web::AppState::new(db.clone()), shutdown).await?;
    db.close().await;
    tracing::info!("stopped");
    Ok(())
}

/// Serve the app on a bound listener until `shutdown` completes. Tests call this
/// with a listener on port 0.
pub async fn serve(
    listener: TcpListener,
    state: web::AppState,
    shutdown: impl std::future::Future<Output = ()> + Send + 'static,
) -> std::io::Result<()> {
    // Live streams never end on their own: close them when the shutdown begins.
    let events = state.events.clone();
    let shutdown = async move {
        shutdown.await;
        events.close();
    };
    // The client address is what sign-in throttling counts failures by.
    axum::serve(
        listener,
        web::router(state).into_make_service_with_connect_info::<SocketAddr>(),
    )
    .with_graceful_shutdown(shutdown)
    .await
}

fn display_addr(addr: SocketAddr) -> String {
    if addr.ip().is_unspecified() {
        format!("127.0.0.1:{}", addr.port())
    } else {
        addr.to_string()
    }
}

/// Ctrl-C or SIGTERM (what `kill`, systemd and container runtimes send): either one
/// finishes the open requests, closes the live streams and the database, and stops.
/// The SIGTERM handler is installed here, before the server says it is serving, so a
/// signal sent the moment it is up is never missed (it would end the process unclean).
fn shutdown_signal() -> impl std::future::Future<Output = ()> + Send + 'static {
    #[cfg(unix)]
    let terminate = tokio::signal::unix::signal(tokio::signal::unix::SignalKind::terminate())
        .map_err(|e| {
            tracing::warn!(error = %e, "cannot listen for SIGTERM; only Ctrl-C stops the server cleanly");
        })
        .ok();
    async move {
        let ctrl_c = async {
            if tokio::signal::ctrl_c().await.is_err() {
                // No Ctrl-C handler could be installed: rely on SIGTERM alone.
                std::future::pending::<()>().await;
            }
        };
        let sigterm = async {
            #[cfg(unix)]
            if let Some(mut s) = terminate {
                s.recv().await;
                return;
            }
            std::future::pending::<()>().await;
        };
        tokio::select! {
            () = ctrl_c => tracing::info!("Ctrl-C received; finishing open requests and stopping"),
            () = sigterm => tracing::info!("SIGTERM received; finishing open requests and stopping"),
        }
    }
}
