//! Idle or slow connections cannot hold the server: a connection that does not send a
//! request's header in time (at once, part-way, or after its previous answer) is
//! closed, a request body that stalls fails, and beyond the connection cap new
//! connections wait until others close, when a signed-in person is served again.
//!
//! The timeouts are shortened here (a second); the defaults are in `sagline::server`.

mod common;

use common::{ADMIN_NAME, ADMIN_PASSWORD, Agent, TestApp};
use reqwest::StatusCode;
use sagline::server::{ConnectionLimit, ConnectionSettings};
use std::net::{IpAddr, SocketAddr};
use std::time::Duration;
use tokio::io::{AsyncReadExt, AsyncWriteExt};
use tokio::net::{TcpSocket, TcpStream};

/// Longer than any timeout under test: a connection still open after this is a failure.
const GIVE_UP: Duration = Duration::from_secs(30);

fn settings(header_secs: u64, body_secs: u64, max_connections: usize) -> ConnectionSettings {
    ConnectionSettings {
        header_timeout: Duration::from_secs(header_secs),
        body_timeout: Duration::from_secs(body_secs),
        limit: ConnectionLimit::new(max_connections, max_connections),
    }
}

async fn raw_connection(app: &TestApp) -> TcpStream {
    let address = app.base.trim_start_matches("http://");
    TcpStream::connect(address).await.expect("connect")
}

/// A connection from another loopback address (another machine, as the server sees it).
async fn raw_connection_from(app: &TestApp, from: IpAddr) -> TcpStream {
    let server: SocketAddr = app
        .base
        .trim_start_matches("http://")
        .parse()
        .expect("server address");
    let socket = TcpSocket::new_v4().expect("socket");
    socket.bind(SocketAddr::new(from, 0)).expect("bind");
    socket.connect(server).await.expect("connect")
}

/// Everything the server sends until it closes the connection (panics if it keeps
/// the connection open longer than `GIVE_UP`).
async fn read_until_closed(stream: &mut TcpStream) -> String {
    let mut received = Vec::new();
    let read = tokio::time::timeout(GIVE_UP, async {
        let mut buffer = [0u8; 4096];
        loop {
            match stream.read(&mut buffer).await {
                Ok(0) | Err(_) => break,
                Ok(n) => received.extend_from_slice(&buffer[..n]),
            }
        }
    })
    .await;
    assert!(
        read.is_ok(),
        "the server kept the connection open for {GIVE_UP:?}"
    );
    String::from_utf8_lossy(&received).into_owned()
}

/// Wait (up to `GIVE_UP`) until `done()` holds.
async fn wait_until(what: &str, done: impl Fn() -> bool) {
    let waited = tokio::time::timeout(GIVE_UP, async {
        while !done() {
            tokio::time::sleep(Duration::from_millis(20)).await;
        }
    })
    .await;
    assert!(waited.is_ok(), "{what} did not happen within {GIVE_UP:?}");
}

#[tokio::test]
async fn connections_that_do_not_send_a_request_in_time_are_closed() {
    let settings = settings(1, 1, 64);
    let limit = settings.limit.clone();
    let app = TestApp::with_connections(settings).await;

    let mut silent = raw_connection(&app).await;
    let answer = read_until_closed(&mut silent).await;
    assert!(!answer.contains("200 OK"), "nothing was asked: {answer:?}");

    let mut half_a_header = raw_connection(&app).await;
    half_a_header
        .write_all(b"GET /login HTTP/1.1\r\nHost: 127.0.0.1\r\n")
        .await
        .expect("write");
    let answer = read_until_closed(&mut half_a_header).await;
    assert!(
        !answer.contains("200 OK"),
        "the header never ended: {answer:?}"
    );

    // Answered, then idle: closed too (a browser opens a new one when it needs to).
    let mut kept_alive = raw_connection(&app).await;
    kept_alive
        .write_all(b"GET /login HTTP/1.1\r\nHost: 127.0.0.1\r\n\r\n")
        .await
        .expect("write");
    let answer = read_until_closed(&mut kept_alive).await;
    assert!(
        answer.starts_with("HTTP/1.1 200 OK"),
        "the request was answered first: {answer:?}"
    );

    wait_until("every connection closed", || limit.open() == 0).await;
    // The signed-in admin just opens a new connection.
    let session = app.get_json("/api/session").await;
    assert_eq!(session["name"], ADMIN_NAME);
}

#[tokio::test]
async fn a_request_body_that_stalls_fails_and_its_connection_closes() {
    let app = TestApp::with_connections(settings(10, 1, 64)).await;
    let mut stalled = raw_connection(&app).await;
    stalled
        .write_all(
            b"POST /login HTTP/1.1\r\nHost: 127.0.0.1\r\n\
              Content-Type: application/x-www-form-urlencoded\r\n\
              Content-Length: 1000\r\n\r\nname=someone&pass",
        )
        .await
        .expect("write");
    let answer = read_until_closed(&mut stalled).await;
    let status_line = answer.lines().next().unwrap_or_default();
    assert!(
        status_line.starts_with("HTTP/1.1 4"),
        "refused as a bad request: {answer:?}"
    );
    assert!(
        !answer.contains("set-cookie"),
        "nobody signed in: {answer:?}"
    );
}

#[tokio::test]
async fn beyond_the_cap_connections_wait_and_a_signed_in_person_is_served_once_others_close() {
    let cap = 4;
    let settings = settings(60, 60, cap);
    let limit = settings.limit.clone();
    let app = TestApp::with_connections(settings).await;
    assert_eq!(limit.max(), cap);

    // A colleague whose browser keeps no connection open between requests.
    let client = reqwest::Client::builder()
        .no_proxy()
        .cookie_store(true)
        .redirect(reqwest::redirect::Policy::none())
        .pool_max_idle_per_host(0)
        .build()
        .expect("HTTP client");
    let mut colleague = Agent {
        base: app.base.clone(),
        client,
        csrf: None,
    };
    let signed_in = colleague.sign_in(ADMIN_NAME, ADMIN_PASSWORD).await;
    assert_eq!(
        signed_in.status,
        StatusCode::SEE_OTHER,
        "{}",
        signed_in.body
    );

    // Anonymous sockets that send nothing take every place (some may wait behind).
    let mut idle = Vec::new();
    for _ in 0..cap {
        idle.push(raw_connection(&app).await);
    }
    wait_until("the cap reached", || limit.open() == cap).await;

    let asked = tokio::spawn(async move { colleague.get("/api/session").await });
    // Not a speed check: with every place taken, the request must not be answered
    // however long it waits; a short look is enough to see it waiting.
    tokio::time::sleep(Duration::from_millis(500)).await;
    assert!(!asked.is_finished(), "answered beyond the cap");
    assert_eq!(limit.open(), cap, "never more open than the cap");

    drop(idle);
    let answer = tokio::time::timeout(GIVE_UP, asked)
        .await
        .expect("served once the idle sockets closed")
        .expect("the request task");
    assert_eq!(answer.status, StatusCode::OK, "{}", answer.body);
    assert!(answer.body.contains(ADMIN_NAME), "{}", answer.body);
}

#[tokio::test]
async fn one_address_gets_only_its_share_and_the_rest_of_the_office_is_served_at_once() {
    let share = 3;
    let settings = ConnectionSettings {
        limit: ConnectionLimit::new(64, share),
        ..settings(60, 60, 64)
    };
    let limit = settings.limit.clone();
    let app = TestApp::with_connections(settings).await;
    let flooder: IpAddr = "127.0.0.3".parse().expect("address");

    let mut held = Vec::new();
    for _ in 0..share {
        held.push(raw_connection_from(&app, flooder).await);
    }
    wait_until("the address's share taken", || {
        limit.open_from(flooder) == share
    })
    .await;

    // One more from there is closed at once, unanswered.
    let mut beyond = raw_connection_from(&app, flooder).await;
    let answer = read_until_closed(&mut beyond).await;
    assert_eq!(answer, "", "closed without an answer");
    assert_eq!(limit.open_from(flooder), share);

    // Everyone else is served meanwhile.
    let session = app.get_json("/api/session").await;
    assert_eq!(session["name"], ADMIN_NAME);

    // Once one of its connections closes, the address may open another.
    drop(held.pop());
    wait_until("a place given back", || {
        limit.open_from(flooder) == share - 1
    })
    .await;
    let mut again = raw_connection_from(&app, flooder).await;
    again
        .write_all(b"GET /login HTTP/1.1\r\nHost: 127.0.0.1\r\nConnection: close\r\n\r\n")
        .await
        .expect("write");
    let answer = read_until_closed(&mut again).await;
    assert!(answer.starts_with("HTTP/1.1 200 OK"), "{answer:?}");
}
