//! A small bounded pool of store connections. Every database call of the server runs on
//! tokio's blocking threads through [`Pool::run`], never on the async workers; at most `size`
//! run at once, each on its own [`Store`] (SQLite connection), reused between calls.

use super::error::WebError;
use crate::store::{Store, StoreError};
use std::path::PathBuf;
use std::sync::{Arc, Mutex};
use std::time::Duration;
use tokio::sync::Semaphore;

/// The pool: the database file, idle connections and the permits that bound them.
#[derive(Debug, Clone)]
pub struct Pool {
    inner: Arc<Inner>,
}

#[derive(Debug)]
struct Inner {
    path: PathBuf,
    idle: Mutex<Vec<Store>>,
    permits: Semaphore,
    busy_wait: Duration,
}

impl Pool {
    /// A pool of at most `size` connections (at least 1) to the store at `path`. Opens one
    /// connection at once, so a bad path or a too-new database fails here, not on the first
    /// request. `busy_wait` is how long a write waits for another writer before "busy".
    pub fn open(path: PathBuf, size: usize, busy_wait: Duration) -> Result<Pool, StoreError> {
        let mut first = Store::open(&path)?;
        first.set_busy_timeout(busy_wait)?;
        Ok(Pool {
            inner: Arc::new(Inner {
                path,
                idle: Mutex::new(vec![first]),
                permits: Semaphore::new(size.max(1)),
                busy_wait,
            }),
        })
    }

    /// The database file.
    pub fn path(&self) -> &std::path::Path {
        &self.inner.path
    }

    /// Run `f` on a pooled connection on a blocking thread. A busy database is retried once
    /// after a short pause, then answered as [`WebError::Busy`] (503 with `Retry-After`).
    pub async fn run<T, F>(&self, f: F) -> Result<T, WebError>
    where
        T: Send + 'static,
        F: Fn(&mut Store) -> Result<T, StoreError> + Send + Sync + 'static,
    {
        let f = Arc::new(f);
        match self.attempt(f.clone()).await {
            Err(WebError::Busy) => {
                tokio::time::sleep(Duration::from_millis(50)).await;
                self.attempt(f).await
            }
            other => other,
        }
    }

    async fn attempt<T, F>(&self, f: Arc<F>) -> Result<T, WebError>
    where
        T: Send + 'static,
        F: Fn(&mut Store) -> Result<T, StoreError> + Send + Sync + 'static,
    {
        let _permit = self
            .inner
            .permits
            .acquire()
            .await
            .map_err(|_| WebError::Internal("the connection pool is closed".into()))?;
        let inner = self.inner.clone();
        let job = tokio::task::spawn_blocking(move || {
            let taken = inner.idle.lock().ok().and_then(|mut v| v.pop());
            let mut store = match taken {
                Some(s) => s,
                None => {
                    let mut s = Store::open(&inner.path)?;
                    s.set_busy_timeout(inner.busy_wait)?;
                    s
                }
            };
            let out = f(&mut store);
            if let Ok(mut idle) = inner.idle.lock() {
                idle.push(store);
            }
            out
        });
        match job.await {
            Ok(r) => r.map_err(WebError::from),
            Err(e) => Err(WebError::Internal(format!(
                "a database worker stopped: {e}"
            ))),
        }
    }
}
