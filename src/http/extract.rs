//! Extractors whose rejections are problem+json with the field at fault, and
//! the ETag / If-Match helpers of optimistic concurrency.

use axum::body::Bytes;
use axum::extract::{FromRequest, FromRequestParts, Request};
use axum::http::request::Parts;
use axum::http::{HeaderMap, HeaderValue, StatusCode, header};
use serde::de::DeserializeOwned;

use crate::error::ApiError;
use crate::store::Precondition;

/// A JSON body. Syntax errors answer 400; values of the wrong type, missing
/// or unknown fields answer 422 naming the field.
pub struct JsonBody<T>(pub T);

impl<S: Send + Sync, T: DeserializeOwned> FromRequest<S> for JsonBody<T> {
    type Rejection = ApiError;

    async fn from_request(req: Request, state: &S) -> Result<Self, Self::Rejection> {
        if !is_json(req.headers()) {
            return Err(ApiError::UnsupportedMediaType);
        }
        let bytes = Bytes::from_request(req, state).await.map_err(|rejection| {
            if rejection.status() == StatusCode::PAYLOAD_TOO_LARGE {
                ApiError::PayloadTooLarge
            } else {
                ApiError::BadRequest("The request body could not be read.".into())
            }
        })?;
        parse_json(&bytes).map(JsonBody)
    }
}

fn is_json(headers: &HeaderMap) -> bool {
    let Some(value) = headers
        .get(header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
    else {
        return false;
    };
    let essence = value
        .split(';')
        .next()
        .unwrap_or("")
        .trim()
        .to_ascii_lowercase();
    essence == "application/json"
        || (essence.starts_with("application/") && essence.ends_with("+json"))
}

pub fn parse_json<T: DeserializeOwned>(bytes: &[u8]) -> Result<T, ApiError> {
    let de = &mut serde_json::Deserializer::from_slice(bytes);
    match serde_path_to_error::deserialize(&mut *de) {
        // Anything but whitespace after the value is not JSON (RFC 8259).
        Ok(value) => de
            .end()
            .map(|()| value)
            .map_err(|e| ApiError::BadRequest(format!("The body is not valid JSON ({e})."))),
        Err(err) => {
            let path = err.path().to_string();
            let inner = err.into_inner();
            use serde_json::error::Category;
            match inner.classify() {
                Category::Data => {
                    let message = inner.to_string();
                    let mut field = if path == "." { String::new() } else { path };
                    // A missing field is reported at its parent: name the field itself.
                    if let Some(name) = message
                        .strip_prefix("missing field `")
                        .and_then(|rest| rest.split('`').next())
                    {
                        field = if field.is_empty() {
                            name.to_owned()
                        } else {
                            format!("{field}.{name}")
                        };
                    }
                    Err(ApiError::field(field, clean_serde_message(&message)))
                }
                Category::Syntax | Category::Eof | Category::Io => Err(ApiError::BadRequest(
                    format!("The body is not valid JSON ({}).", inner),
                )),
            }
        }
    }
}

/// The rejection of `bytes` as a `T`, if its first error is an unknown field.
pub fn unknown_field<T: DeserializeOwned>(bytes: &[u8]) -> Option<ApiError> {
    let de = &mut serde_json::Deserializer::from_slice(bytes);
    let err = serde_path_to_error::deserialize::<_, T>(&mut *de).err()?;
    let path = err.path().to_string();
    let message = err.into_inner().to_string();
    message.starts_with("unknown field").then(|| {
        let field = if path == "." { String::new() } else { path };
        ApiError::field(field, clean_serde_message(&message))
    })
}

/// serde's messages end with " at line L column C"; the path already says where.
fn clean_serde_message(message: &str) -> String {
    match message.rfind(" at line ") {
        Some(i) => message[..i].to_owned(),
        None => message.to_owned(),
    }
}

/// Query-string parameters, with the parameter at fault on error.
pub struct QueryParams<T>(pub T);

impl<S: Send + Sync, T: DeserializeOwned> FromRequestParts<S> for QueryParams<T> {
    type Rejection = ApiError;

    async fn from_request_parts(parts: &mut Parts, _state: &S) -> Result<Self, Self::Rejection> {
        let query = parts.uri.query().unwrap_or("");
        let de = serde_urlencoded::Deserializer::new(form_urlencoded_parse(query));
        serde_path_to_error::deserialize(de)
            .map(QueryParams)
            .map_err(|err| {
                let path = err.path().to_string();
                let message = err.into_inner().to_string();
                // Unknown-field and missing-field messages name the field themselves.
                let field = if path == "." {
                    message
                        .split('`')
                        .nth(1)
                        .map(str::to_owned)
                        .unwrap_or_default()
                } else {
                    path
                };
                ApiError::field(field, clean_serde_message(&message))
            })
    }
}

fn form_urlencoded_parse(query: &str) -> form_urlencoded::Parse<'_> {
    form_urlencoded::parse(query.as_bytes())
}

/// Path parameters. An id (`..._id`) must be a UUID in its canonical
/// hyphenated form (the form this API writes); anything else, including the
/// braced, URN and unhyphenated forms a UUID parser would accept, answers
/// 404, exactly as an id that does not exist would.
pub struct PathIds<T>(pub T);

impl<S: Send + Sync, T: DeserializeOwned + Send> FromRequestParts<S> for PathIds<T> {
    type Rejection = ApiError;

    async fn from_request_parts(parts: &mut Parts, state: &S) -> Result<Self, Self::Rejection> {
        let raw = axum::extract::RawPathParams::from_request_parts(parts, state)
            .await
            .map_err(|_| ApiError::NotFound("resource"))?;
        if raw
            .iter()
            .any(|(name, value)| name.ends_with("_id") && !is_canonical_uuid(value))
        {
            return Err(ApiError::NotFound("resource"));
        }
        axum::extract::Path::<T>::from_request_parts(parts, state)
            .await
            .map(|axum::extract::Path(v)| PathIds(v))
            .map_err(|_| ApiError::NotFound("resource"))
    }
}

/// `xxxxxxxx-xxxx-xxxx-xxxx-xxxxxxxxxxxx` in hexadecimal digits (either case).
pub fn is_canonical_uuid(s: &str) -> bool {
    s.len() == 36
        && s.bytes().enumerate().all(|(i, b)| match i {
            8 | 13 | 18 | 23 => b == b'-',
            _ => b.is_ascii_hexdigit(),
        })
}

/// The precondition of `If-Match`: absent or `*` writes unconditionally;
/// otherwise the stored version must match one of the listed tags. Tags are
/// compared strongly (RFC 9110): a weak tag `W/"v3"` never matches.
pub struct IfMatch(pub Precondition);

impl<S: Send + Sync> FromRequestParts<S> for IfMatch {
    type Rejection = ApiError;

    async fn from_request_parts(parts: &mut Parts, _state: &S) -> Result<Self, Self::Rejection> {
        let values: Vec<&str> = parts
            .headers
            .get_all(header::IF_MATCH)
            .iter()
            .filter_map(|v| v.to_str().ok())
            .collect();
        if values.is_empty() || values.iter().any(|v| v.trim() == "*") {
            return Ok(IfMatch(Precondition::None));
        }
        // Tags that are weak, foreign or not tags at all can never match the
        // current version: the precondition is false (412), as RFC 9110 has it.
        let versions = values
            .iter()
            .flat_map(|v| v.split(','))
            .map(str::trim)
            .filter(|tag| is_entity_tag(tag))
            .filter_map(parse_etag)
            .collect();
        Ok(IfMatch(Precondition::OneOf(versions)))
    }
}

/// `"opaque"` or `W/"opaque"` (RFC 9110 section 8.8.3).
pub fn is_entity_tag(tag: &str) -> bool {
    let quoted = tag.strip_prefix("W/").unwrap_or(tag);
    quoted.len() >= 2
        && quoted.starts_with('"')
        && quoted.ends_with('"')
        && !quoted[1..quoted.len() - 1].contains('"')
}

/// A JSON merge patch (RFC 7396): must be a JSON object.
pub struct MergePatch(pub serde_json::Value);

impl<S: Send + Sync> FromRequest<S> for MergePatch {
    type Rejection = ApiError;

    async fn from_request(req: Request, state: &S) -> Result<Self, Self::Rejection> {
        let JsonBody(value) = JsonBody::<serde_json::Value>::from_request(req, state).await?;
        if !value.is_object() {
            return Err(ApiError::field("", "a merge patch must be a JSON object"));
        }
        Ok(MergePatch(value))
    }
}

/// ETags are the row's version: `"v3"`.
pub fn etag(version: i64) -> HeaderValue {
    HeaderValue::from_str(&format!("\"v{version}\"")).expect("ascii")
}

fn parse_etag(tag: &str) -> Option<i64> {
    tag.strip_prefix("\"v")?.strip_suffix('"')?.parse().ok()
}
