//! Cross-site request refusal: a change (POST, PUT, PATCH, DELETE) that a browser says
//! comes from another site is refused before anything reads it, the sign-in form
//! included (so another site cannot sign a visitor in to an account of its choosing).
//!
//! Browsers send `Origin` on every change they make from a page, and `Sec-Fetch-Site`
//! on nearly every request. A change is refused with 403 when its `Origin` names
//! another host than the one it was sent to (`Host`), or is `null` (sandboxed frames,
//! local files); without `Origin`, when `Sec-Fetch-Site` says `cross-site` or
//! `same-site` (another port or sub-domain of the same site is another program).
//! Requests carrying neither header (command-line tools, scripts, the tests' HTTP
//! client) are not browsers' and pass; the CSRF token still guards them.

use super::AppError;
use axum::extract::Request;
use axum::http::header::{HOST, ORIGIN};
use axum::http::{HeaderMap, Uri};
use axum::middleware::Next;
use axum::response::{IntoResponse, Response};

/// The header browsers send saying where a request comes from, relative to its target.
const SEC_FETCH_SITE: &str = "sec-fetch-site";

/// The middleware (layered in `web::router`, outside the sign-in guard).
pub async fn same_origin(request: Request, next: Next) -> Response {
    if is_change(request.method().as_str())
        && let Err(why) = check(request.headers(), request.uri())
    {
        tracing::warn!(
            method = %request.method(),
            path = %request.uri().path(),
            why,
            "cross-site change refused"
        );
        return refused(request.uri().path());
    }
    next.run(request).await
}

fn is_change(method: &str) -> bool {
    !matches!(method, "GET" | "HEAD" | "OPTIONS")
}

fn refused(path: &str) -> Response {
    let error = AppError::Forbidden(
        "This change was refused: it was sent from another site's page. Open Sagline itself and make the change there.".into(),
    );
    if path == "/api" || path.starts_with("/api/") {
        error.into_response()
    } else {
        error.into_html()
    }
}

/// `Ok` when the request may go on; `Err` says why not (for the log).
fn check(headers: &HeaderMap, uri: &Uri) -> Result<(), &'static str> {
    if let Some(origin) = headers.get(ORIGIN) {
        let origin = origin.to_str().map_err(|_| "unreadable Origin")?;
        let own = own_host(headers, uri).ok_or("no Host to compare the Origin with")?;
        return match origin_authority(origin) {
            Some(theirs) if theirs.eq_ignore_ascii_case(&strip_default_port(&own, origin)) => {
                Ok(())
            }
            _ => Err("Origin is another site"),
        };
    }
    match headers.get(SEC_FETCH_SITE).map(|v| v.as_bytes()) {
        None | Some(b"same-origin") | Some(b"none") => Ok(()),
        Some(_) => Err("Sec-Fetch-Site is not same-origin"),
    }
}

/// The host (and port) the request was sent to: `Host`, or the URI's authority (HTTP/2).
fn own_host(headers: &HeaderMap, uri: &Uri) -> Option<String> {
    headers
        .get(HOST)
        .and_then(|h| h.to_str().ok())
        .map(str::to_string)
        .or_else(|| uri.authority().map(|a| a.to_string()))
}

/// `http://host:port` → `host:port`, the default port of the scheme left out (as in
/// `Host`). `None` for `null` or anything that is not a plain web origin.
fn origin_authority(origin: &str) -> Option<String> {
    let (scheme, rest) = origin.split_once("://")?;
    if !matches!(scheme, "http" | "https") || rest.is_empty() || rest.contains(['/', '?', '#', '@'])
    {
        return None;
    }
    Some(strip_default_port(rest, origin))
}

/// `host:80` → `host` when `origin` is `http://…` (`:443` for `https://…`).
fn strip_default_port(authority: &str, origin: &str) -> String {
    let default = if origin.starts_with("https://") {
        ":443"
    } else {
        ":80"
    };
    authority
        .strip_suffix(default)
        .unwrap_or(authority)
        .to_string()
}

#[cfg(test)]
mod tests {
    use super::*;
    use axum::http::HeaderValue;

    fn headers(pairs: &[(&'static str, &'static str)]) -> HeaderMap {
        let mut h = HeaderMap::new();
        for (k, v) in pairs {
            h.insert(*k, HeaderValue::from_static(v));
        }
        h
    }

    fn verdict(pairs: &[(&'static str, &'static str)]) -> bool {
        check(&headers(pairs), &Uri::from_static("/studies")).is_ok()
    }

    #[test]
    fn an_origin_of_the_same_host_and_port_passes() {
        assert!(verdict(&[
            ("host", "127.0.0.1:8080"),
            ("origin", "http://127.0.0.1:8080")
        ]));
        assert!(verdict(&[
            ("host", "Sagline.Office.Example:8080"),
            ("origin", "http://sagline.office.example:8080")
        ]));
        assert!(verdict(&[
            ("host", "office.example"),
            ("origin", "http://office.example")
        ]));
        assert!(verdict(&[
            ("host", "office.example:80"),
            ("origin", "http://office.example")
        ]));
    }

    #[test]
    fn another_host_port_or_a_null_origin_is_refused() {
        for origin in [
            "http://elsewhere.example",
            "http://127.0.0.1:9090",
            "http://127.0.0.1",
            "null",
            "http://127.0.0.1:8080.elsewhere.example",
            "http://evil@127.0.0.1:8080",
            "file://",
            "",
        ] {
            let mut h = headers(&[("host", "127.0.0.1:8080")]);
            h.insert(ORIGIN, HeaderValue::from_str(origin).unwrap());
            assert!(
                check(&h, &Uri::from_static("/")).is_err(),
                "{origin:?} passed"
            );
        }
    }

    #[test]
    fn without_origin_sec_fetch_site_decides() {
        assert!(verdict(&[("host", "h"), ("sec-fetch-site", "same-origin")]));
        assert!(verdict(&[("host", "h"), ("sec-fetch-site", "none")]));
        assert!(!verdict(&[("host", "h"), ("sec-fetch-site", "cross-site")]));
        assert!(!verdict(&[("host", "h"), ("sec-fetch-site", "same-site")]));
        assert!(verdict(&[("host", "h")]));
    }
}
