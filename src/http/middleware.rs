//! Cross-cutting HTTP behaviour: every error response becomes problem+json
//! carrying the request id, and responses get security headers.

use axum::body::{Body, to_bytes};
use axum::extract::Request;
use axum::http::{HeaderValue, StatusCode, header};
use axum::middleware::Next;
use axum::response::Response;
use tower_http::request_id::RequestId;

use crate::error::Problem;

/// Largest problem body we re-read to add the request id.
const PROBLEM_MAX_BYTES: usize = 64 * 1024;

/// Rewrites error responses from any layer (router 404/405, body limit,
/// timeout, panics) into problem+json, and stamps every problem with the
/// request id so support can find it in the logs.
pub async fn problems(req: Request, next: Next) -> Response {
    let request_id = req
        .extensions()
        .get::<RequestId>()
        .and_then(|id| id.header_value().to_str().ok())
        .map(str::to_owned);
    let res = next.run(req).await;
    let status = res.status();
    if !(status.is_client_error() || status.is_server_error()) {
        return res;
    }
    let is_problem = res
        .headers()
        .get(header::CONTENT_TYPE)
        .is_some_and(|v| v.as_bytes().starts_with(b"application/problem+json"));
    let (mut parts, body) = res.into_parts();
    let mut problem: serde_json::Value = if is_problem {
        match to_bytes(body, PROBLEM_MAX_BYTES).await {
            Ok(bytes) => serde_json::from_slice(&bytes).unwrap_or_else(|_| generic(status)),
            Err(_) => generic(status),
        }
    } else {
        generic(status)
    };
    if let (Some(id), Some(map)) = (request_id, problem.as_object_mut()) {
        map.insert("request_id".into(), id.into());
    }
    let bytes = serde_json::to_vec(&problem).unwrap_or_default();
    parts.headers.insert(
        header::CONTENT_TYPE,
        HeaderValue::from_static("application/problem+json"),
    );
    parts.headers.remove(header::CONTENT_LENGTH);
    Response::from_parts(parts, Body::from(bytes))
}

fn generic(status: StatusCode) -> serde_json::Value {
    let (slug, title, detail) = match status {
        StatusCode::NOT_FOUND => (
            "not-found",
            "Not found",
            "No such route. See /openapi.json.",
        ),
        StatusCode::METHOD_NOT_ALLOWED => (
            "method-not-allowed",
            "Method not allowed",
            "This route does not accept that method. See /openapi.json.",
        ),
        StatusCode::PAYLOAD_TOO_LARGE => (
            "payload-too-large",
            "Request body too large",
            "The request body exceeds the configured limit.",
        ),
        StatusCode::REQUEST_TIMEOUT => (
            "timeout",
            "Request timed out",
            "The request took longer than the configured limit. Nothing was left half-done.",
        ),
        StatusCode::TOO_MANY_REQUESTS => (
            "rate-limited",
            "Too many requests",
            "Slow down and retry after the time in Retry-After.",
        ),
        s if s.is_server_error() => (
            "internal",
            "Internal error",
            "Something went wrong on our side. The request id identifies it in the logs.",
        ),
        _ => (
            "bad-request",
            "Bad request",
            "The request could not be processed.",
        ),
    };
    let body = Problem {
        problem_type: format!("/problems/{slug}"),
        title: title.into(),
        status: status.as_u16(),
        detail: detail.into(),
        errors: Vec::new(),
        request_id: None,
    };
    serde_json::to_value(body).unwrap_or_default()
}
