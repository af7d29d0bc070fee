//! The board's way to the data: it sends requests to the API's own router
//! in-process, as the signed-in token. Every read and write therefore goes
//! through the same handlers, validation, visibility rules, audit entries
//! and ETag preconditions as an integrator's request, and the numbers on
//! the board are the API's numbers.

use axum::Router;
use axum::body::{Body, to_bytes};
use axum::http::{HeaderValue, Method, Request, StatusCode, header};
use serde::de::DeserializeOwned;
use tower::ServiceExt;

use super::view::Problem;
use crate::http::auth::Caller;

/// Largest API answer the board reads (a 16-week squad plan is far smaller).
const MAX_BODY: usize = 64 * 1024 * 1024;

#[derive(Clone)]
pub struct Api {
    router: Router,
}

/// What the API answered.
pub struct Reply {
    pub status: StatusCode,
    pub etag: Option<String>,
    pub body: axum::body::Bytes,
}

/// Why a call did not give the board what it asked for.
#[derive(Debug)]
pub enum ApiFailure {
    /// The API refused, with its problem+json (404, 403, 412, 422, 503…).
    Refused(StatusCode, Problem),
    /// The API's answer could not be read: a bug, logged, never shown raw.
    Unreadable(String),
}

impl ApiFailure {
    pub fn status(&self) -> StatusCode {
        match self {
            Self::Refused(s, _) => *s,
            Self::Unreadable(_) => StatusCode::INTERNAL_SERVER_ERROR,
        }
    }
}

impl Api {
    pub fn new(router: Router) -> Self {
        Self { router }
    }

    /// Sends one request as `caller`. `body` is JSON.
    pub fn send(
        &self,
        caller: Caller,
        method: Method,
        uri: impl Into<String>,
        if_match: Option<&str>,
        body: Option<serde_json::Value>,
        content_type: &'static str,
    ) -> impl Future<Output = Result<Reply, ApiFailure>> + Send + 'static {
        let uri: String = uri.into();
        let if_match = if_match.map(str::to_owned);
        let router = self.router.clone();
        send(router, caller, method, uri, if_match, body, content_type)
    }

    /// GET and decode JSON; also returns the ETag.
    pub fn get<T: DeserializeOwned>(
        &self,
        caller: Caller,
        uri: impl Into<String>,
    ) -> impl Future<Output = Result<(T, Option<String>), ApiFailure>> + Send + 'static {
        let uri: String = uri.into();
        let router = self.router.clone();
        async move {
            let reply = send(
                router,
                caller,
                Method::GET,
                uri.clone(),
                None,
                None,
                "application/json",
            )
            .await?;
            let value = decode(&reply.body, &uri)?;
            Ok((value, reply.etag))
        }
    }
}

async fn send(
    router: Router,
    caller: Caller,
    method: Method,
    uri: String,
    if_match: Option<String>,
    body: Option<serde_json::Value>,
    content_type: &'static str,
) -> Result<Reply, ApiFailure> {
    let mut builder = Request::builder().method(method).uri(uri);
    if let Some(tag) = if_match {
        builder = builder.header(header::IF_MATCH, tag);
    }
    let body = match body {
        Some(value) => {
            builder = builder.header(header::CONTENT_TYPE, content_type);
            Body::from(serde_json::to_vec(&value).unwrap_or_default())
        }
        None => Body::empty(),
    };
    let mut request = builder
        .body(body)
        .map_err(|e| ApiFailure::Unreadable(e.to_string()))?;
    // The API's Caller extractor takes an identity already established.
    request.extensions_mut().insert(caller);
    let response = match router.oneshot(request).await {
        Ok(r) => r,
        Err(never) => match never {},
    };
    let status = response.status();
    let etag = response
        .headers()
        .get(header::ETAG)
        .and_then(|v: &HeaderValue| v.to_str().ok())
        .map(str::to_owned);
    let body = to_bytes(response.into_body(), MAX_BODY)
        .await
        .map_err(|e| ApiFailure::Unreadable(e.to_string()))?;
    if status.is_success() {
        Ok(Reply { status, etag, body })
    } else {
        let problem = serde_json::from_slice::<Problem>(&body).unwrap_or_else(|_| Problem {
            title: status.canonical_reason().unwrap_or("Error").to_owned(),
            status: status.as_u16(),
            detail: String::new(),
            errors: Vec::new(),
        });
        Err(ApiFailure::Refused(status, problem))
    }
}

pub fn decode<T: DeserializeOwned>(bytes: &[u8], what: &str) -> Result<T, ApiFailure> {
    let unreadable = |e: serde_json::Error| {
        // The board and the API disagree on a shape: a bug to fix in view.rs.
        tracing::error!(error = %e, "board could not read an API answer");
        ApiFailure::Unreadable(format!("{what}: {e}"))
    };
    let mut value: serde_json::Value = serde_json::from_slice(bytes).map_err(unreadable)?;
    cite_in_place(&mut value);
    serde_json::from_value(value).map_err(unreadable)
}

/// Undoes the wire's "sources once per response" (`http::output`): every
/// `source_id` becomes the `source` text of the top-level `sources` table,
/// so the view model reads each number's source beside it.
fn cite_in_place(value: &mut serde_json::Value) {
    use serde_json::Value;
    let Value::Object(root) = value else { return };
    let Some(Value::Array(table)) = root.remove(crate::http::output::SOURCES_FIELD) else {
        return;
    };
    let texts: Vec<Value> = table
        .into_iter()
        .map(|entry| entry.get("text").cloned().unwrap_or(Value::Null))
        .collect();
    fn walk(value: &mut Value, texts: &[Value]) {
        match value {
            Value::Object(map) => {
                if let Some(id) = map
                    .get(crate::http::output::SOURCE_ID_FIELD)
                    .and_then(Value::as_u64)
                    && let Some(text) = texts.get(id as usize)
                {
                    map.remove(crate::http::output::SOURCE_ID_FIELD);
                    map.insert(crate::http::output::SOURCE_FIELD.into(), text.clone());
                }
                map.values_mut().for_each(|v| walk(v, texts));
            }
            Value::Array(items) => items.iter_mut().for_each(|v| walk(v, texts)),
            _ => {}
        }
    }
    walk(value, &texts);
}
