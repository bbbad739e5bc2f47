//! Starting and stopping the web server.

use crate::cli::ServeArgs;
use crate::{demo, store, web};
use anyhow::Context;
use std::net::SocketAddr;
use tokio::net::TcpListener;

/// Open (or create) the database, seed the demo study into a new one unless
/// `--empty`, then serve until Ctrl-C.
pub async fn run(args: ServeArgs) -> anyhow::Result<()> {
    let is_new = !args.db.exists();
    let db = store::open(&args.db)
        .await
        .with_context(|| format!("cannot open the database {}", args.db.display()))?;
    if is_new && !args.empty {
        demo::seed(&db).await.context("cannot build the demo study")?;
        tracing::info!(db = %args.db.display(), "created a new database holding the demo study");
    } else if is_new {
        tracing::info!(db = %args.db.display(), "created a new, empty database");
    }
    let listener = TcpListener::bind(args.bind)
        .await
        .with_context(|| format!("cannot listen on {}", args.bind))?;
    let addr = listener.local_addr()?;
    println!("Sagline is serving {} at http://{}/", args.db.display(), display_addr(addr));
    serve(listener, web::AppState::new(db.clone()), shutdown_signal()).await?;
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
    axum::serve(listener, web::router(state))
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

async fn shutdown_signal() {
    if tokio::signal::ctrl_c().await.is_ok() {
        tracing::info!("Ctrl-C received; finishing open requests and stopping");
    }
}
