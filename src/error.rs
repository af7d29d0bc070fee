//! The one error type of the API, rendered as RFC 9457 `application/problem+json`.
//!
//! Every failure a client can see goes through [`ApiError`]: validation, auth,
//! not found, conflicts, limits and internal faults. Internal causes are
//! logged with their chain and never echoed to the client.

use axum::http::{HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Response};
use serde::Serialize;
use utoipa::ToSchema;

use crate::engine::{FieldIssue, InvalidInput};

pub type Result<T, E = ApiError> = std::result::Result<T, E>;

/// Problem details (RFC 9457) with the fields at fault.
#[derive(Debug, Serialize, ToSchema)]
pub struct Problem {
    /// A URI reference naming the problem type (relative to the API).
    #[serde(rename = "type")]
    #[schema(example = "/problems/validation")]
    pub problem_type: String,
    #[schema(example = "Request failed validation")]
    pub title: String,
    #[schema(example = 422)]
    pub status: u16,
    /// What went wrong with this request.
    pub detail: String,
    /// Every offending field with the reason, when the input was at fault.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub errors: Vec<FieldIssue>,
    /// Id of the request, also sent as `x-request-id`, to quote when asking for support.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub request_id: Option<String>,
}

#[derive(Debug, thiserror::Error)]
pub enum ApiError {
    #[error("request failed validation")]
    Validation(Vec<FieldIssue>),
    #[error("malformed request: {0}")]
    BadRequest(String),
    #[error("missing or invalid bearer token")]
    Unauthorized,
    #[error("forbidden: {0}")]
    Forbidden(&'static str),
    #[error("not found")]
    NotFound(&'static str),
    #[error("conflict: {0}")]
    Conflict(String),
    #[error("the resource has changed since it was read")]
    PreconditionFailed,
    #[error("If-Match header required")]
    PreconditionRequired,
    #[error("unsupported media type")]
    UnsupportedMediaType,
    #[error("payload too large")]
    PayloadTooLarge,
    #[error("database busy")]
    Busy,
    #[error("database is read-only or full")]
    StorageUnavailable,
    #[error("internal error")]
    Internal(#[source] anyhow_like::Error),
}

/// A tiny boxed error so internal causes keep their chain for the log.
pub mod anyhow_like {
    pub type Error = Box<dyn std::error::Error + Send + Sync + 'static>;
}

impl ApiError {
    pub fn field(field: impl Into<String>, reason: impl Into<String>) -> Self {
        Self::Validation(vec![FieldIssue {
            field: field.into(),
            reason: reason.into(),
        }])
    }

    pub fn internal(e: impl Into<anyhow_like::Error>) -> Self {
        Self::Internal(e.into())
    }

    fn parts(&self) -> (StatusCode, &'static str, &'static str, String) {
        use ApiError::*;
        match self {
            Validation(issues) => (
                StatusCode::UNPROCESSABLE_ENTITY,
                "validation",
                "Request failed validation",
                format!("{} field(s) are invalid; see `errors`", issues.len()),
            ),
            BadRequest(d) => (
                StatusCode::BAD_REQUEST,
                "malformed-request",
                "Malformed request",
                d.clone(),
            ),
            Unauthorized => (
                StatusCode::UNAUTHORIZED,
                "unauthorized",
                "Authentication required",
                "Send a valid API token as `Authorization: Bearer <token>`.".into(),
            ),
            Forbidden(d) => (
                StatusCode::FORBIDDEN,
                "forbidden",
                "Not allowed for this token",
                (*d).into(),
            ),
            NotFound(what) => (
                StatusCode::NOT_FOUND,
                "not-found",
                "Not found",
                format!("No {what} with that id is visible to this token."),
            ),
            Conflict(d) => (StatusCode::CONFLICT, "conflict", "Conflict", d.clone()),
            PreconditionFailed => (
                StatusCode::PRECONDITION_FAILED,
                "stale-version",
                "The resource has changed",
                "`If-Match` does not match the current ETag: someone else changed it. Read it again and reapply your change.".into(),
            ),
            PreconditionRequired => (
                StatusCode::PRECONDITION_REQUIRED,
                "precondition-required",
                "If-Match required",
                "This change needs an `If-Match` header with the ETag you read.".into(),
            ),
            UnsupportedMediaType => (
                StatusCode::UNSUPPORTED_MEDIA_TYPE,
                "unsupported-media-type",
                "Unsupported media type",
                "Send the body as `Content-Type: application/json`.".into(),
            ),
            PayloadTooLarge => (
                StatusCode::PAYLOAD_TOO_LARGE,
                "payload-too-large",
                "Request body too large",
                "The request body exceeds the configured limit.".into(),
            ),
            Busy => (
                StatusCode::SERVICE_UNAVAILABLE,
                "busy",
                "Service busy",
                "The database is busy; retry shortly.".into(),
            ),
            StorageUnavailable => (
                StatusCode::SERVICE_UNAVAILABLE,
                "storage-unavailable",
                "Storage unavailable",
                "The database cannot accept writes right now (read-only or full). Nothing was changed.".into(),
            ),
            Internal(_) => (
                StatusCode::INTERNAL_SERVER_ERROR,
                "internal",
                "Internal error",
                "Something went wrong on our side. The request id identifies it in the logs.".into(),
            ),
        }
    }
}

impl From<InvalidInput> for ApiError {
    fn from(e: InvalidInput) -> Self {
        Self::Validation(e.issues)
    }
}

impl From<sqlx::Error> for ApiError {
    fn from(e: sqlx::Error) -> Self {
        if let sqlx::Error::Database(db) = &e {
            // SQLite primary result codes: 5 BUSY, 6 LOCKED, 8 READONLY, 13 FULL.
            let code = db.code().and_then(|c| c.parse::<i32>().ok()).unwrap_or(0) & 0xff;
            match code {
                5 | 6 => return Self::Busy,
                8 | 13 => return Self::StorageUnavailable,
                _ => {}
            }
            if let Some(mapped) = constraint_error(db.as_ref()) {
                return mapped;
            }
        }
        if matches!(e, sqlx::Error::PoolTimedOut) {
            return Self::Busy;
        }
        Self::Internal(Box::new(e))
    }
}

/// Maps a named constraint violation to the error a client can act on.
fn constraint_error(db: &dyn sqlx::error::DatabaseError) -> Option<ApiError> {
    let message = db.message();
    let named = |name: &str| message.contains(name) || db.constraint() == Some(name);
    if named("teams_name_unique") || message.contains("teams.name") {
        return Some(ApiError::Conflict(
            "A team with this name already exists.".into(),
        ));
    }
    if named("body_mass_one_per_day") || message.contains("body_mass_measurements.athlete_id") {
        return Some(ApiError::Conflict(
            "This athlete already has a body-mass reading on that date; update or delete it instead.".into(),
        ));
    }
    if db.kind() == sqlx::error::ErrorKind::ForeignKeyViolation {
        return Some(ApiError::field(
            "",
            "refers to a record that does not exist",
        ));
    }
    None
}

impl IntoResponse for ApiError {
    fn into_response(self) -> Response {
        let (status, slug, title, detail) = self.parts();
        match &self {
            ApiError::Internal(cause) => {
                tracing::error!(error = %cause, cause = ?cause.source(), "internal error")
            }
            ApiError::Busy | ApiError::StorageUnavailable => {
                tracing::warn!(%self, "storage refused a request")
            }
            _ => {}
        }
        let errors = match self {
            ApiError::Validation(issues) => issues,
            _ => Vec::new(),
        };
        let body = Problem {
            problem_type: format!("/problems/{slug}"),
            title: title.into(),
            status: status.as_u16(),
            detail,
            errors,
            request_id: None,
        };
        problem_response(status, body)
    }
}

/// Serialises a problem with the right content type. The request id is filled
/// in by the middleware that owns it.
pub fn problem_response(status: StatusCode, body: Problem) -> Response {
    let json = serde_json::to_vec(&body).unwrap_or_else(|_| b"{}".to_vec());
    let mut res = (status, json).into_response();
    res.headers_mut().insert(
        header::CONTENT_TYPE,
        HeaderValue::from_static("application/problem+json"),
    );
    if status == StatusCode::SERVICE_UNAVAILABLE {
        res.headers_mut()
            .insert(header::RETRY_AFTER, HeaderValue::from_static("1"));
    }
    res
}
