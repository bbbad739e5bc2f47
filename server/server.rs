//! Starting and stopping the web server.

use crate::services::accounts;
use crate::{demo, store, web};
use anyhow::Context;
use axum::extract::connect_info::ConnectInfo;
use axum::http::Request;
use hyper::body::Incoming;
use hyper::server::conn::http1;
use hyper_util::rt::{TokioIo, TokioTimer};
use hyper_util::server::graceful::GracefulShutdown;
use hyper_util::service::TowerToHyperService;
use std::collections::HashMap;
use std::future::Future;
use std::net::{IpAddr, SocketAddr};
use std::path::PathBuf;
use std::pin::pin;
use std::sync::{Arc, Mutex};
use std::time::Duration;
use tokio::net::TcpListener;
use tokio::sync::{OwnedSemaphorePermit, Semaphore};
use tower::{ServiceBuilder, ServiceExt};
use tower_http::timeout::RequestBodyTimeoutLayer;

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
    /// Timeouts and the cap on open connections.
    pub connections: ConnectionSettings,
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
    serve_with(
        listener,
        web::AppState::new(db.clone()),
        args.connections.clone(),
        shutdown,
    )
    .await?;
    db.close().await;
    tracing::info!("stopped");
    Ok(())
}

/// How connections are held: limits that keep idle or slow clients from using up the
/// server's connections and file descriptors.
#[derive(Debug, Clone)]
pub struct ConnectionSettings {
    /// A connection must send a request's whole header within this time of opening, or
    /// of its previous answer (an idle kept-alive connection), or it is closed.
    pub header_timeout: Duration,
    /// A request body that sends nothing for this long fails.
    pub body_timeout: Duration,
    /// Connections open at once (more wait in the system's queue until one closes), and
    /// from one address (more are closed at once).
    pub limit: ConnectionLimit,
}

/// Seconds to send a request's header (and the longest a kept-alive connection idles).
pub const DEFAULT_HEADER_TIMEOUT_SECS: u64 = 10;
/// Seconds a request body may pause.
pub const DEFAULT_BODY_TIMEOUT_SECS: u64 = 30;
/// Connections served at once (half of the usual limit of 1,024 open files, leaving room
/// for the database, the logs and staged files).
pub const DEFAULT_MAX_CONNECTIONS: u32 = 512;
/// Connections served at once from one client address: one machine opening hundreds of
/// idle connections takes only its share, the rest are closed at once.
pub const DEFAULT_MAX_CONNECTIONS_PER_ADDRESS: u32 = 128;

impl Default for ConnectionSettings {
    fn default() -> Self {
        ConnectionSettings {
            header_timeout: Duration::from_secs(DEFAULT_HEADER_TIMEOUT_SECS),
            body_timeout: Duration::from_secs(DEFAULT_BODY_TIMEOUT_SECS),
            limit: ConnectionLimit::new(
                DEFAULT_MAX_CONNECTIONS as usize,
                DEFAULT_MAX_CONNECTIONS_PER_ADDRESS as usize,
            ),
        }
    }
}

/// The caps on open connections, in all and from one address, shared by the accept
/// loop and whoever watches it.
#[derive(Debug, Clone)]
pub struct ConnectionLimit {
    permits: Arc<Semaphore>,
    max: usize,
    per_address: usize,
    open: Arc<Mutex<OpenCount>>,
}

#[derive(Debug, Default)]
struct OpenCount {
    all: usize,
    by_address: HashMap<IpAddr, usize>,
}

/// One accepted connection's place under the caps, given back when it is dropped.
struct Place {
    _permit: OwnedSemaphorePermit,
    address: IpAddr,
    open: Arc<Mutex<OpenCount>>,
}

impl Drop for Place {
    fn drop(&mut self) {
        let mut open = self.open.lock().expect("connection count lock");
        open.all -= 1;
        if let Some(n) = open.by_address.get_mut(&self.address) {
            *n -= 1;
            if *n == 0 {
                open.by_address.remove(&self.address);
            }
        }
    }
}

impl ConnectionLimit {
    /// At most `max` connections open at once, `per_address` of them from one client
    /// address (both at least one).
    pub fn new(max: usize, per_address: usize) -> Self {
        let max = max.max(1);
        ConnectionLimit {
            permits: Arc::new(Semaphore::new(max)),
            max,
            per_address: per_address.max(1),
            open: Arc::new(Mutex::new(OpenCount::default())),
        }
    }

    pub fn max(&self) -> usize {
        self.max
    }

    /// Connections open now.
    pub fn open(&self) -> usize {
        self.open.lock().expect("connection count lock").all
    }

    /// Connections open now from this address.
    pub fn open_from(&self, address: IpAddr) -> usize {
        let open = self.open.lock().expect("connection count lock");
        open.by_address.get(&address).copied().unwrap_or(0)
    }

    /// Wait for room for one more connection.
    async fn room(&self) -> Option<OwnedSemaphorePermit> {
        self.permits.clone().acquire_owned().await.ok()
    }

    /// A place for an accepted connection, unless its address holds its share already.
    fn take(&self, permit: OwnedSemaphorePermit, address: IpAddr) -> Option<Place> {
        let mut open = self.open.lock().expect("connection count lock");
        let from_there = open.by_address.entry(address).or_insert(0);
        if *from_there >= self.per_address {
            return None;
        }
        *from_there += 1;
        open.all += 1;
        Some(Place {
            _permit: permit,
            address,
            open: self.open.clone(),
        })
    }
}

/// Serve the app on a bound listener until `shutdown` completes, with the default
/// connection settings. Tests call this with a listener on port 0.
pub async fn serve(
    listener: TcpListener,
    state: web::AppState,
    shutdown: impl Future<Output = ()> + Send + 'static,
) -> std::io::Result<()> {
    serve_with(listener, state, ConnectionSettings::default(), shutdown).await
}

/// Serve the app (HTTP/1.1) with these connection settings until `shutdown` completes;
/// then stop accepting, end the live streams, and let open requests finish.
///
/// A connection is accepted only when there is room under the cap, so beyond it new
/// connections wait in the system's listen queue (using no file descriptor of ours)
/// until one closes; one from an address that holds its share already is closed at
/// once; the header timeout closes connections that never send a request.
pub async fn serve_with(
    listener: TcpListener,
    state: web::AppState,
    settings: ConnectionSettings,
    shutdown: impl Future<Output = ()> + Send + 'static,
) -> std::io::Result<()> {
    let events = state.events.clone();
    let app = ServiceBuilder::new()
        .layer(RequestBodyTimeoutLayer::new(settings.body_timeout))
        .service(web::router(state));
    let mut http = http1::Builder::new();
    http.timer(TokioTimer::new())
        .header_read_timeout(settings.header_timeout);
    let graceful = GracefulShutdown::new();
    let mut shutdown = pin!(shutdown);
    loop {
        let permit = tokio::select! {
            () = &mut shutdown => break,
            permit = settings.limit.room() => match permit {
                Some(p) => p,
                None => break,
            },
        };
        let (stream, peer) = tokio::select! {
            () = &mut shutdown => break,
            accepted = listener.accept() => match accepted {
                Ok(a) => a,
                Err(e) => {
                    accept_failed(e).await;
                    continue;
                }
            },
        };
        let Some(place) = settings.limit.take(permit, peer.ip()) else {
            tracing::debug!(%peer, "connection closed: its address holds its share of connections");
            drop(stream);
            continue;
        };
        // The client address is what sign-in throttling counts failures by.
        let service = app.clone().map_request(move |mut r: Request<Incoming>| {
            r.extensions_mut().insert(ConnectInfo(peer));
            r
        });
        let connection = graceful
            .watch(http.serve_connection(TokioIo::new(stream), TowerToHyperService::new(service)));
        tokio::spawn(async move {
            if let Err(e) = connection.await {
                tracing::debug!(%peer, error = %e, "connection closed on an error");
            }
            drop(place);
        });
    }
    drop(listener);
    // Live streams never end on their own: close them, then wait for open requests.
    events.close();
    graceful.shutdown().await;
    Ok(())
}

/// A failed accept: a client that gave up is nothing; running out of file descriptors
/// (or another failure of the listener) is logged, and accepting pauses a moment.
async fn accept_failed(e: std::io::Error) {
    use std::io::ErrorKind::{ConnectionAborted, ConnectionRefused, ConnectionReset};
    if matches!(
        e.kind(),
        ConnectionAborted | ConnectionRefused | ConnectionReset
    ) {
        return;
    }
    tracing::error!(error = %e, "cannot accept a connection; trying again in a second");
    tokio::time::sleep(Duration::from_secs(1)).await;
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
