//! The makerspace's web page (`onhand serve`): HTML pages and a small JSON API over the same
//! store functions as the command line, so there is one set of rules and one ledger.
//!
//! Owns HTTP: routing, sessions, rights, forms and their escaping. Holds no stock rules of its
//! own: every store call goes through `calls.rs`, on the bounded blocking pool of `pool.rs`.
//! Must not print or read the terminal; `cli/serve.rs` does that.
//!
//! Rights: anonymous visitors may read only with [`Options::open_read`]; a member may look,
//! take, put back, hold and settle their own holds; an organiser also imports, recounts,
//! manages members, reads the whole log and settles anyone's hold. Every write needs a session
//! and that session's anti-forgery token (a form field, or the `x-csrf-token` header).

mod api;
pub mod auth;
pub mod calls;
pub mod design;
pub mod error;
pub mod pages;
pub mod pool;
mod routes;

pub use error::WebError;
pub use pool::Pool;

use crate::store::{Member, Session};
use axum::Router;
use axum::extract::FromRequestParts;
use axum::http::request::Parts;
use axum::http::{HeaderValue, header};
use std::net::{IpAddr, SocketAddr};
use std::sync::Arc;
use std::time::Duration;

/// How the server behaves, beyond where it listens.
#[derive(Debug, Clone)]
pub struct Options {
    /// Anonymous visitors may read the stock, part and design pages.
    pub open_read: bool,
    /// Mark cookies `Secure` (the page is served over TLS, directly or by a proxy).
    pub secure_cookies: bool,
    /// How long a login lasts.
    pub session_seconds: i64,
    /// The design search's time limit.
    pub design_time_limit: Duration,
}

impl Default for Options {
    fn default() -> Self {
        Self {
            open_read: false,
            secure_cookies: false,
            session_seconds: 12 * 3600,
            design_time_limit: Duration::from_secs(5),
        }
    }
}

/// What every handler shares.
#[derive(Debug, Clone)]
pub struct AppState {
    /// The store connections.
    pub pool: Pool,
    /// The options.
    pub options: Arc<Options>,
    /// Failed logins.
    pub throttle: Arc<auth::Throttle>,
}

impl AppState {
    /// State over a pool.
    pub fn new(pool: Pool, options: Options) -> Self {
        Self {
            pool,
            options: Arc::new(options),
            throttle: Arc::new(auth::Throttle::default()),
        }
    }
}

/// Who sent a request: their live session, if the cookie names one.
#[derive(Debug, Clone)]
pub struct Viewer {
    /// The session.
    pub session: Option<Session>,
    /// The cookie's token (to end the session on logout).
    pub token: Option<String>,
    /// The client's address, when the server knows it (for the login throttle).
    pub addr: Option<IpAddr>,
    /// The token the request carries in the `x-csrf-token` header (API calls).
    pub header_csrf: Option<String>,
}

impl Viewer {
    /// The member, or "please log in".
    pub fn member(&self) -> Result<&Member, WebError> {
        self.session
            .as_ref()
            .map(|s| &s.member)
            .ok_or(WebError::LoginNeeded)
    }

    /// Reading is allowed: open reading, or logged in.
    pub fn may_read(&self, options: &Options) -> Result<(), WebError> {
        if options.open_read || self.session.is_some() {
            Ok(())
        } else {
            Err(WebError::LoginNeeded)
        }
    }

    /// The member, when `token` (or the header's) is this session's anti-forgery token.
    pub fn writer(&self, token: Option<&str>) -> Result<&Member, WebError> {
        let s = self.session.as_ref().ok_or(WebError::LoginNeeded)?;
        let sent = token.or(self.header_csrf.as_deref()).unwrap_or("");
        if auth::same_token(sent, &s.csrf) {
            Ok(&s.member)
        } else {
            Err(WebError::BadCsrf)
        }
    }

    /// What the page templates need.
    pub fn who(&self) -> pages::Who<'_> {
        pages::Who {
            member: self.session.as_ref().map(|s| &s.member),
            csrf: self.session.as_ref().map_or("", |s| s.csrf.as_str()),
        }
    }
}

impl FromRequestParts<AppState> for Viewer {
    type Rejection = routes::PageError;

    async fn from_request_parts(
        parts: &mut Parts,
        state: &AppState,
    ) -> Result<Self, Self::Rejection> {
        let token = auth::cookie(&parts.headers, auth::SESSION_COOKIE)
            .filter(|t| t.len() == 64 && t.bytes().all(|b| b.is_ascii_hexdigit()));
        let session = match &token {
            Some(t) => calls::session(&state.pool, t)
                .await
                .map_err(routes::PageError::bare)?,
            None => None,
        };
        let addr = parts
            .extensions
            .get::<axum::extract::ConnectInfo<SocketAddr>>()
            .map(|c| c.0.ip());
        let header_csrf = parts
            .headers
            .get("x-csrf-token")
            .and_then(|v| v.to_str().ok())
            .map(str::to_string);
        Ok(Viewer {
            session,
            token,
            addr,
            header_csrf,
        })
    }
}

/// Headers on every answer: no framing, no sniffing, no scripts or outside assets at all.
async fn safety_headers(mut r: axum::response::Response) -> axum::response::Response {
    let h = r.headers_mut();
    h.insert(
        header::CONTENT_SECURITY_POLICY,
        HeaderValue::from_static(
            "default-src 'none'; style-src 'unsafe-inline'; img-src 'self' data:; \
             form-action 'self'; frame-ancestors 'none'; base-uri 'none'",
        ),
    );
    h.insert(
        header::X_CONTENT_TYPE_OPTIONS,
        HeaderValue::from_static("nosniff"),
    );
    h.insert(
        header::REFERRER_POLICY,
        HeaderValue::from_static("same-origin"),
    );
    h.entry(header::CACHE_CONTROL)
        .or_insert(HeaderValue::from_static("no-store"));
    r
}

/// Every page and API route.
pub fn router(state: AppState) -> Router {
    routes::pages()
        .merge(api::routes())
        .layer(axum::middleware::map_response(safety_headers))
        .with_state(state)
}

/// Whether an address is on this machine only (loopback).
pub fn is_loopback(addr: &SocketAddr) -> bool {
    addr.ip().is_loopback()
}

/// Serve `state` on `listener` until `shutdown` completes, then finish the requests in flight
/// (their writes included) before returning.
pub async fn serve(
    listener: tokio::net::TcpListener,
    state: AppState,
    shutdown: impl std::future::Future<Output = ()> + Send + 'static,
) -> std::io::Result<()> {
    let app = router(state).into_make_service_with_connect_info::<SocketAddr>();
    axum::serve(listener, app)
        .with_graceful_shutdown(shutdown)
        .await
}

/// A TLS server setting from a PEM certificate chain and its PEM private key (PKCS#8, PKCS#1 or
/// SEC1), with the `ring` provider and HTTP/1.1 only. Pure: the caller reads the files.
pub fn tls_config(
    cert_pem: &[u8],
    key_pem: &[u8],
) -> Result<Arc<rustls::ServerConfig>, TlsSetupError> {
    use rustls_pki_types::pem::PemObject;
    use rustls_pki_types::{CertificateDer, PrivateKeyDer};
    let chain = CertificateDer::pem_slice_iter(cert_pem)
        .collect::<Result<Vec<_>, _>>()
        .map_err(|e| TlsSetupError::Certificate(e.to_string()))?;
    if chain.is_empty() {
        return Err(TlsSetupError::Certificate(
            "no CERTIFICATE block in the file".to_string(),
        ));
    }
    let key =
        PrivateKeyDer::from_pem_slice(key_pem).map_err(|e| TlsSetupError::Key(e.to_string()))?;
    let provider = Arc::new(rustls::crypto::ring::default_provider());
    let mut config = rustls::ServerConfig::builder_with_provider(provider)
        .with_safe_default_protocol_versions()
        .map_err(|e| TlsSetupError::Setup(e.to_string()))?
        .with_no_client_auth()
        .with_single_cert(chain, key)
        .map_err(|e| TlsSetupError::Setup(e.to_string()))?;
    config.alpn_protocols = vec![b"http/1.1".to_vec()];
    Ok(Arc::new(config))
}

/// Why the certificate files cannot serve TLS.
#[derive(Debug, thiserror::Error)]
pub enum TlsSetupError {
    /// The certificate file holds no readable PEM certificate.
    #[error("the certificate file: {0}")]
    Certificate(String),
    /// The key file holds no readable PEM private key.
    #[error("the key file: {0}")]
    Key(String),
    /// The pair does not make a TLS setting (e.g. the key does not match the certificate).
    #[error("the certificate and key: {0}")]
    Setup(String),
}

/// [`serve`] over TLS (session cookie always `Secure`): the same routes, on `listener`, with `config`; on `shutdown`, stop
/// accepting and finish the requests in flight (writes included) before returning.
pub async fn serve_tls(
    listener: std::net::TcpListener,
    config: Arc<rustls::ServerConfig>,
    state: AppState,
    shutdown: impl std::future::Future<Output = ()> + Send + 'static,
) -> std::io::Result<()> {
    listener.set_nonblocking(true)?;
    // Served over TLS: the session cookie is Secure whatever the options said.
    let mut state = state;
    let mut options = (*state.options).clone();
    options.secure_cookies = true;
    state.options = Arc::new(options);
    let handle = axum_server::Handle::new();
    let stopper = handle.clone();
    tokio::spawn(async move {
        shutdown.await;
        stopper.graceful_shutdown(None);
    });
    let app = router(state).into_make_service_with_connect_info::<SocketAddr>();
    axum_server::tls_rustls::from_tcp_rustls(
        listener,
        axum_server::tls_rustls::RustlsConfig::from_config(config),
    )?
    .handle(handle)
    .serve(app)
    .await
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn only_loopback_addresses_escape_the_tls_caution() {
        let addr = |s: &str| s.parse::<SocketAddr>().expect("addr");
        assert!(is_loopback(&addr("127.0.0.1:8555")));
        assert!(is_loopback(&addr("127.1.2.3:80")));
        assert!(is_loopback(&addr("[::1]:8555")));
        assert!(!is_loopback(&addr("0.0.0.0:8555")));
        assert!(!is_loopback(&addr("[::]:8555")));
        assert!(!is_loopback(&addr("192.0.2.7:8555")));
    }

    #[test]
    fn tls_setting_refuses_files_without_pem_blocks() {
        assert!(matches!(
            tls_config(b"not a certificate", b"not a key"),
            Err(TlsSetupError::Certificate(_))
        ));
    }
}
