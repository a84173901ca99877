//! `onhand serve`: the makerspace's web page and JSON API from the stock database.
//!
//! Converts the options into `web::Options`, opens the connection pool (so a bad database
//! fails before listening), prints where it listens (and a caution for any address beyond this
//! machine), and runs until Ctrl-C or SIGTERM, finishing the requests in flight first.

use super::stock::store_path;
use super::{Context, Status};
use crate::web::{AppState, Options, Pool, is_loopback, serve, serve_tls, tls_config};
use anyhow::{Context as _, bail};
use std::io::Write;
use std::net::SocketAddr;
use std::path::PathBuf;
use std::time::Duration;

const SERVE_EXAMPLES: &str = "\
Examples:
  onhand member add ada --organiser && onhand member password ada   first an account
  onhand serve                                  http://127.0.0.1:8555 on this machine only
  onhand serve --open-read                      anyone may look; writing needs a login
  onhand serve --listen 0.0.0.0:8555 --cert cert.pem --key key.pem   HTTPS itself
  onhand serve --listen 127.0.0.1:8555 --secure-cookies    behind a TLS reverse proxy

Members log in with the accounts made by `onhand member`; every take, hold and recount
they make is in the ledger under their name. Stop with Ctrl-C: requests in flight finish.";

/// Arguments of `serve`.
#[derive(Debug, clap::Args)]
#[command(after_help = SERVE_EXAMPLES)]
pub struct ServeArgs {
    /// Address and port to listen on. Anything but loopback should sit behind TLS.
    #[arg(long, default_value = "127.0.0.1:8555", value_name = "ADDR:PORT")]
    listen: SocketAddr,
    /// Let visitors who are not logged in read the stock, part and design pages.
    #[arg(long)]
    open_read: bool,
    /// Mark the session cookie Secure: use this when a TLS proxy serves the page (browsers
    /// then send it over HTTPS only).
    #[arg(long)]
    secure_cookies: bool,
    /// Serve HTTPS with this PEM certificate chain (needs --key); the session cookie is then
    /// marked Secure.
    #[arg(long, value_name = "FILE", requires = "key")]
    cert: Option<PathBuf>,
    /// The PEM private key of --cert.
    #[arg(long, value_name = "FILE", requires = "cert")]
    key: Option<PathBuf>,
    /// Most database connections at once (each request's store work runs on one).
    #[arg(long, default_value_t = 4, value_name = "N")]
    connections: usize,
    /// How long a login lasts, in hours.
    #[arg(long, default_value_t = 12, value_name = "HOURS")]
    session_hours: i64,
}

/// Run `serve`.
pub fn run(args: ServeArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    if !(1..=64).contains(&args.connections) {
        bail!("--connections must be 1 to 64");
    }
    if !(1..=24 * 90).contains(&args.session_hours) {
        bail!("--session-hours must be 1 to 2160");
    }
    let path = store_path(ctx)?;
    // Reading the certificate files (never writing them) is the only file work here.
    let tls = match (&args.cert, &args.key) {
        (Some(cert), Some(key)) => {
            let cert_pem = std::fs::read(cert)
                .with_context(|| format!("reading the certificate {}", cert.display()))?;
            let key_pem =
                std::fs::read(key).with_context(|| format!("reading the key {}", key.display()))?;
            Some(tls_config(&cert_pem, &key_pem).context("setting up TLS")?)
        }
        _ => None,
    };
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .worker_threads(2)
        .max_blocking_threads(args.connections + 8)
        .enable_all()
        .build()
        .context("starting the server's threads")?;
    let pool = Pool::open(path.clone(), args.connections, Duration::from_millis(2000))
        .with_context(|| format!("opening the stock database {}", path.display()))?;
    let options = Options {
        open_read: args.open_read,
        secure_cookies: args.secure_cookies || tls.is_some(),
        session_seconds: args.session_hours * 3600,
        ..Options::default()
    };
    let listener = std::net::TcpListener::bind(args.listen)
        .with_context(|| format!("listening on {}", args.listen))?;
    let local = listener
        .local_addr()
        .context("reading the listening address")?;
    let scheme = if tls.is_some() { "https" } else { "http" };
    writeln!(
        out,
        "onhand: serving {} at {scheme}://{local}/ (Ctrl-C to stop)",
        path.display()
    )?;
    if !is_loopback(&local) {
        writeln!(out, "{}", exposure_caution(&local, tls.is_some()))?;
    }
    out.flush()?;
    let state = AppState::new(pool, options);
    match tls {
        Some(config) => runtime
            .block_on(serve_tls(listener, config, state, stop_signal()))
            .context("serving over TLS")?,
        None => {
            listener
                .set_nonblocking(true)
                .context("preparing the listener")?;
            let _guard = runtime.enter();
            let listener =
                tokio::net::TcpListener::from_std(listener).context("preparing the listener")?;
            runtime
                .block_on(serve(listener, state, stop_signal()))
                .context("serving")?;
        }
    }
    writeln!(out, "onhand: stopped; every request in flight was finished")?;
    Ok(Status::Success)
}

/// The caution for an address other machines can reach: whether TLS is on, and what follows.
fn exposure_caution(local: &SocketAddr, tls: bool) -> String {
    if tls {
        format!(
            "caution: {local} is reachable from other machines. TLS is on (built in, from \
             --cert/--key): members must trust that certificate; the session cookie is Secure."
        )
    } else {
        format!(
            "caution: {local} is reachable from other machines and TLS is off. Passwords and \
             session cookies cross the network in clear unless the page sits behind TLS: give \
             --cert FILE --key FILE, or a reverse proxy with a certificate (see the README) and \
             --secure-cookies."
        )
    }
}

/// Ctrl-C, or SIGTERM on Unix (a service manager stopping us).
async fn stop_signal() {
    let ctrl_c = async {
        let _ = tokio::signal::ctrl_c().await;
    };
    #[cfg(unix)]
    {
        let term = async {
            match tokio::signal::unix::signal(tokio::signal::unix::SignalKind::terminate()) {
                Ok(mut s) => {
                    s.recv().await;
                }
                Err(_) => std::future::pending::<()>().await,
            }
        };
        tokio::select! { () = ctrl_c => {}, () = term => {} }
    }
    #[cfg(not(unix))]
    ctrl_c.await;
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_caution_says_whether_tls_is_on() {
        let addr: SocketAddr = "0.0.0.0:8555".parse().expect("addr");
        assert!(exposure_caution(&addr, true).contains("TLS is on"));
        assert!(exposure_caution(&addr, false).contains("TLS is off"));
    }
}
