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

/// Per-client request budget (token bucket): a client is its bearer token,
/// or its address when it sends none. Over budget answers 429 with
/// `Retry-After`.
pub struct RateLimiter {
    per_second: f64,
    burst: f64,
    buckets: std::sync::Mutex<std::collections::HashMap<[u8; 32], (f64, std::time::Instant)>>,
}

impl RateLimiter {
    pub fn new(per_minute: u32) -> Self {
        let per_minute = f64::from(per_minute);
        Self {
            per_second: per_minute / 60.0,
            // Ten seconds' worth of requests may come at once.
            burst: (per_minute / 6.0).max(10.0),
            buckets: Default::default(),
        }
    }

    /// Takes one request from `key`'s budget, or says how long to wait.
    pub fn check(&self, key: [u8; 32], now: std::time::Instant) -> Result<(), std::time::Duration> {
        let mut buckets = self
            .buckets
            .lock()
            .unwrap_or_else(|poisoned| poisoned.into_inner());
        if buckets.len() > 50_000 {
            // Forget clients whose bucket has refilled: they lose nothing.
            let (rate, burst) = (self.per_second, self.burst);
            buckets.retain(|_, (tokens, at)| {
                *tokens + now.duration_since(*at).as_secs_f64() * rate < burst
            });
        }
        let (tokens, at) = buckets.entry(key).or_insert((self.burst, now));
        *tokens =
            (*tokens + now.duration_since(*at).as_secs_f64() * self.per_second).min(self.burst);
        *at = now;
        if *tokens >= 1.0 {
            *tokens -= 1.0;
            Ok(())
        } else {
            Err(std::time::Duration::from_secs_f64(
                (1.0 - *tokens) / self.per_second,
            ))
        }
    }
}

/// Applies the [`RateLimiter`] to `/v1` routes.
pub async fn rate_limit(
    axum::extract::State(limiter): axum::extract::State<std::sync::Arc<RateLimiter>>,
    req: Request,
    next: Next,
) -> Response {
    use sha2::{Digest, Sha256};
    if !req.uri().path().starts_with("/v1/") {
        return next.run(req).await;
    }
    let key: [u8; 32] = match req.headers().get(header::AUTHORIZATION) {
        Some(auth) => Sha256::digest(auth.as_bytes()).into(),
        None => {
            let peer = req
                .extensions()
                .get::<axum::extract::ConnectInfo<std::net::SocketAddr>>()
                .map(|c| c.0.ip().to_string())
                .unwrap_or_default();
            Sha256::digest(peer.as_bytes()).into()
        }
    };
    match limiter.check(key, std::time::Instant::now()) {
        Ok(()) => next.run(req).await,
        Err(wait) => {
            let mut res = Response::new(Body::empty());
            *res.status_mut() = StatusCode::TOO_MANY_REQUESTS;
            let seconds = wait.as_secs().max(1).to_string();
            if let Ok(v) = HeaderValue::from_str(&seconds) {
                res.headers_mut().insert(header::RETRY_AFTER, v);
            }
            res
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::time::{Duration, Instant};

    #[test]
    fn a_client_over_budget_waits_and_then_gets_through() {
        let limiter = RateLimiter::new(60); // one a second, burst of ten
        let t0 = Instant::now();
        for _ in 0..10 {
            assert!(limiter.check([1; 32], t0).is_ok());
        }
        let wait = limiter.check([1; 32], t0).unwrap_err();
        assert!(wait <= Duration::from_secs(1));
        assert!(
            limiter.check([2; 32], t0).is_ok(),
            "another client has its own budget"
        );
        assert!(
            limiter
                .check([1; 32], t0 + Duration::from_millis(1100))
                .is_ok()
        );
    }
}
