//! The web layer's one error type and how it becomes an HTTP answer: a page with a clear
//! message for the browser, or `{"error": …}` for the JSON API. Store refusals are 4xx (nothing
//! was changed), a busy database is 503 with `Retry-After`, only real faults are 500.

use crate::store::StoreError;
use axum::http::{StatusCode, header};
use axum::response::{IntoResponse, Response};

/// Something a request could not do. Nothing was written when one of these is returned.
#[derive(Debug, thiserror::Error)]
pub enum WebError {
    /// Not logged in (or the session expired).
    #[error("please log in first")]
    LoginNeeded,
    /// Logged in, but the member's rights do not cover this.
    #[error("{0}")]
    Forbidden(String),
    /// A form or API call without the session's anti-forgery token.
    #[error("the form's security token is missing or stale; reload the page and try again")]
    BadCsrf,
    /// Too many failed logins; try again later.
    #[error("too many failed logins; try again in {0} s")]
    Throttled(u64),
    /// Bad input from the request itself.
    #[error("{0}")]
    BadInput(String),
    /// No such page or row.
    #[error("{0}")]
    NotFound(String),
    /// The database is busy for longer than the wait; the client should retry.
    #[error("the stock database is busy; try again in a moment")]
    Busy,
    /// The store refused (counts, holds, names): a 4xx with its message.
    #[error(transparent)]
    Store(StoreError),
    /// Anything else (a crashed worker, a database fault).
    #[error("internal error: {0}")]
    Internal(String),
}

/// Whether a store error is SQLite saying another writer holds the database.
pub fn is_busy(e: &StoreError) -> bool {
    let sql = match e {
        StoreError::Busy => return true,
        StoreError::Sql(s) => s,
        _ => return false,
    };
    matches!(
        sql.sqlite_error_code(),
        Some(rusqlite::ErrorCode::DatabaseBusy | rusqlite::ErrorCode::DatabaseLocked)
    )
}

impl From<StoreError> for WebError {
    fn from(e: StoreError) -> Self {
        if is_busy(&e) {
            return WebError::Busy;
        }
        match e {
            StoreError::NoSuchPart(_) => WebError::NotFound(e.to_string()),
            StoreError::Sql(_)
            | StoreError::Open { .. }
            | StoreError::Corrupt { .. }
            | StoreError::Migration { .. }
            | StoreError::CreateDir { .. }
            | StoreError::NoDataDir
            | StoreError::TooNew { .. } => WebError::Internal(e.to_string()),
            other => WebError::Store(other),
        }
    }
}

impl WebError {
    /// The HTTP status for this error.
    pub fn status(&self) -> StatusCode {
        match self {
            WebError::LoginNeeded => StatusCode::UNAUTHORIZED,
            WebError::Forbidden(_) | WebError::BadCsrf => StatusCode::FORBIDDEN,
            WebError::Throttled(_) => StatusCode::TOO_MANY_REQUESTS,
            WebError::BadInput(_) => StatusCode::BAD_REQUEST,
            WebError::NotFound(_) => StatusCode::NOT_FOUND,
            WebError::Busy => StatusCode::SERVICE_UNAVAILABLE,
            // The request was well formed but the stock says no (not enough, held, …).
            WebError::Store(StoreError::Invalid(_) | StoreError::Import(_)) => {
                StatusCode::UNPROCESSABLE_ENTITY
            }
            WebError::Store(StoreError::BadCount { .. }) => StatusCode::BAD_REQUEST,
            WebError::Store(_) => StatusCode::CONFLICT,
            WebError::Internal(_) => StatusCode::INTERNAL_SERVER_ERROR,
        }
    }

    /// Seconds to wait before retrying, for 429 and 503.
    pub fn retry_after(&self) -> Option<u64> {
        match self {
            WebError::Busy => Some(1),
            WebError::Throttled(s) => Some(*s),
            _ => None,
        }
    }

    /// Attach `Retry-After` when the error has one.
    pub fn finish(&self, mut r: Response) -> Response {
        *r.status_mut() = self.status();
        if let Some(s) = self.retry_after() {
            if let Ok(v) = header::HeaderValue::from_str(&s.to_string()) {
                r.headers_mut().insert(header::RETRY_AFTER, v);
            }
        }
        r
    }
}

/// An error answered as JSON (`{"error": "…", "status": 409}`), for the API.
#[derive(Debug)]
pub struct ApiError(pub WebError);

impl<E: Into<WebError>> From<E> for ApiError {
    fn from(e: E) -> Self {
        ApiError(e.into())
    }
}

impl IntoResponse for ApiError {
    fn into_response(self) -> Response {
        let body = serde_json::json!({
            "error": self.0.to_string(),
            "status": self.0.status().as_u16(),
        });
        self.0.finish(axum::Json(body).into_response())
    }
}
