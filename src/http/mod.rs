//! The HTTP layer: one module per resource, each with its own router, all
//! registered through `utoipa_axum` so the OpenAPI document is generated
//! from the code that serves. Handlers are short: extract, call the store or
//! the engine, map to a response.

pub mod athletes;
pub mod auth;
pub mod calendar;
pub mod extract;
pub mod fuel;
pub mod middleware;
pub mod openapi;
pub mod output;
pub mod plan;
pub mod plan_cache;
pub mod sessions;
pub mod single_flight;
pub mod targets;
pub mod teams;
pub mod tokens;
mod wire;

use axum::extract::State;
use axum::http::{HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Response};
use chrono::NaiveDate;
use serde::Serialize;
use serde::de::DeserializeOwned;
use utoipa::ToSchema;
use utoipa_axum::{router::OpenApiRouter, routes};
use uuid::Uuid;

use crate::AppState;
use crate::domain::team::Team;
use crate::error::{ApiError, Result};
use crate::store::Write;
use auth::Caller;

/// All API routes with their OpenAPI description.
pub fn api_router() -> OpenApiRouter<AppState> {
    OpenApiRouter::with_openapi(openapi::base())
        .routes(routes!(health))
        .merge(teams::router())
        .merge(athletes::router())
        .merge(sessions::router())
        .merge(tokens::router())
        .merge(fuel::router())
        .merge(targets::router())
        .merge(plan::router())
        .merge(calendar::router())
}

/// A JSON response. Numbers are rounded to 3 decimals: the engine's
/// estimates carry no more precision than that, and 15 digits of noise make
/// responses larger and harder to read. Citations are listed once per
/// response (see [`output`]).
pub fn json<T: Serialize>(status: StatusCode, body: &T) -> Response {
    match to_wire_bytes(body, None) {
        Ok(bytes) => {
            let mut res = (status, bytes).into_response();
            res.headers_mut().insert(
                header::CONTENT_TYPE,
                HeaderValue::from_static("application/json"),
            );
            res
        }
        Err(e) => ApiError::internal(e).into_response(),
    }
}

/// The bytes of a response body: [`output::shape`]'s rules (sources once,
/// local times placed in `zone`) applied while writing ([`wire`]), floats
/// rounded to 3 decimals.
pub fn to_wire_bytes<T: Serialize>(
    body: &T,
    zone: Option<&chrono_tz::Tz>,
) -> Result<Vec<u8>, serde_json::Error> {
    let shaping = wire::Shaping {
        sources: Default::default(),
        zone,
        labels: output::enum_labels(),
    };
    let mut out = Vec::with_capacity(4096);
    let mut ser = serde_json::Serializer::with_formatter(&mut out, RoundingFormatter);
    body.serialize(wire::Shaper {
        inner: &mut ser,
        shaping: &shaping,
        root: true,
    })?;
    Ok(out)
}

/// Serialises with floats rounded to 3 decimals, streaming (no value tree).
pub fn to_json_bytes<T: Serialize>(body: &T) -> Result<Vec<u8>, serde_json::Error> {
    let mut out = Vec::with_capacity(4096);
    let mut ser = serde_json::Serializer::with_formatter(&mut out, RoundingFormatter);
    body.serialize(&mut ser)?;
    Ok(out)
}

struct RoundingFormatter;

impl serde_json::ser::Formatter for RoundingFormatter {
    fn write_f64<W: ?Sized + std::io::Write>(
        &mut self,
        writer: &mut W,
        value: f64,
    ) -> std::io::Result<()> {
        let rounded = (value * 1000.0).round() / 1000.0;
        // -0.0 reads oddly in a plan.
        let rounded = if rounded == 0.0 { 0.0 } else { rounded };
        serde_json::ser::CompactFormatter.write_f64(writer, rounded)
    }

    fn write_f32<W: ?Sized + std::io::Write>(
        &mut self,
        writer: &mut W,
        value: f32,
    ) -> std::io::Result<()> {
        self.write_f64(writer, f64::from(value))
    }
}

/// A resource with its ETag.
pub fn versioned<T: Serialize>(version: i64, body: &T) -> Response {
    let mut res = json(StatusCode::OK, body);
    res.headers_mut()
        .insert(header::ETAG, extract::etag(version));
    res
}

pub fn created<T: Serialize>(location: &str, version: i64, body: &T) -> Response {
    let mut res = json(StatusCode::CREATED, body);
    res.headers_mut()
        .insert(header::ETAG, extract::etag(version));
    if let Ok(v) = HeaderValue::from_str(location) {
        res.headers_mut().insert(header::LOCATION, v);
    }
    res
}

pub trait Versioned {
    fn version(&self) -> i64;
}

macro_rules! versioned_types {
    ($($t:ty),*) => { $(impl Versioned for $t { fn version(&self) -> i64 { self.version } })* };
}
versioned_types!(
    Team,
    crate::domain::athlete::Athlete,
    crate::domain::session::Session,
    crate::domain::session::Participation
);

pub fn written<T: Serialize + Versioned>(w: Write<T>, what: &'static str) -> Result<Response> {
    match w {
        Write::Done(v) => Ok(versioned(v.version(), &v)),
        Write::NotFound => Err(ApiError::NotFound(what)),
        Write::Stale => Err(ApiError::PreconditionFailed),
    }
}

pub fn deleted(w: Write<()>, what: &'static str) -> Result<Response> {
    match w {
        Write::Done(()) => Ok(StatusCode::NO_CONTENT.into_response()),
        Write::NotFound => Err(ApiError::NotFound(what)),
        Write::Stale => Err(ApiError::PreconditionFailed),
    }
}

/// Applies a JSON merge patch (RFC 7396) to the current input shape and
/// parses the result, so a patch is validated exactly like a create.
pub fn apply_merge_patch<T: Serialize + DeserializeOwned>(
    current: &T,
    patch: &serde_json::Value,
) -> Result<T> {
    if !patch.is_object() {
        return Err(ApiError::field("", "a merge patch must be a JSON object"));
    }
    let original = serde_json::to_value(current).map_err(ApiError::internal)?;
    let mut target = original.clone();
    merge(&mut target, patch);
    let bytes = serde_json::to_vec(&target).map_err(ApiError::internal)?;
    let merged = extract::parse_json(&bytes)?;
    // A null removes a member (RFC 7396), so a null for a member the current
    // value does not have changes nothing and its name never reaches the parse
    // above: `{"shoe_size": null}` would be accepted. Each such name is tried
    // on its own, set to null in the merged document; only an unknown-field
    // rejection counts (a null for a known optional member is a removal, and a
    // type error for a known required one is not what the caller asked).
    let mut absent = Vec::new();
    nulls_for_absent_members(&original, patch, &mut Vec::new(), &mut absent);
    for path in absent {
        let mut probe = target.clone();
        set_null(&mut probe, &path);
        let bytes = serde_json::to_vec(&probe).map_err(ApiError::internal)?;
        if let Some(unknown) = extract::unknown_field::<T>(&bytes) {
            return Err(unknown);
        }
    }
    Ok(merged)
}

/// Paths of the patch's null members that `target` does not have.
fn nulls_for_absent_members(
    target: &serde_json::Value,
    patch: &serde_json::Value,
    prefix: &mut Vec<String>,
    found: &mut Vec<Vec<String>>,
) {
    let serde_json::Value::Object(fields) = patch else {
        return;
    };
    for (key, value) in fields {
        let present = target.get(key);
        prefix.push(key.clone());
        match (value, present) {
            (serde_json::Value::Null, None) => found.push(prefix.clone()),
            (serde_json::Value::Object(_), Some(inner)) => {
                nulls_for_absent_members(inner, value, prefix, found)
            }
            // A new object member is merged whole: its nulls are dropped, and
            // the member's own name is checked by the parse of the merge.
            (serde_json::Value::Object(_), None) => {
                nulls_for_absent_members(&serde_json::Value::Null, value, prefix, found)
            }
            _ => {}
        }
        prefix.pop();
    }
}

fn set_null(document: &mut serde_json::Value, path: &[String]) {
    let mut at = document;
    for key in &path[..path.len() - 1] {
        match at.get_mut(key) {
            Some(inner) if inner.is_object() => at = inner,
            _ => return,
        }
    }
    if let (Some(map), Some(last)) = (at.as_object_mut(), path.last()) {
        map.insert(last.clone(), serde_json::Value::Null);
    }
}

fn merge(target: &mut serde_json::Value, patch: &serde_json::Value) {
    use serde_json::Value;
    match patch {
        Value::Object(fields) => {
            if !target.is_object() {
                *target = Value::Object(Default::default());
            }
            let map = target.as_object_mut().expect("object");
            for (key, value) in fields {
                if value.is_null() {
                    map.remove(key);
                } else {
                    merge(map.entry(key.clone()).or_insert(Value::Null), value);
                }
            }
        }
        other => *target = other.clone(),
    }
}

/// The team, if this caller may see it; 404 otherwise.
pub async fn visible_team(state: &AppState, caller: &Caller, team_id: Uuid) -> Result<Team> {
    caller.read(team_id, "team")?;
    crate::store::teams::get(&state.db, team_id)
        .await?
        .ok_or(ApiError::NotFound("team"))
}

/// Today's date where the team lives.
pub fn team_today(team: &Team) -> NaiveDate {
    chrono::Utc::now().with_timezone(&team.tz()).date_naive()
}

#[derive(Serialize, ToSchema)]
pub struct Health {
    /// `ok` when the service and its database answer.
    #[schema(example = "ok")]
    status: &'static str,
    #[schema(example = "0.1.0")]
    version: &'static str,
}

/// Liveness and readiness: answers 200 when the database answers.
#[utoipa::path(get, path = "/health", tag = "service", security(()),
    responses((status = 200, description = "Healthy", body = Health)))]
async fn health(State(state): State<AppState>) -> Result<Response> {
    state
        .db
        .ping()
        .await
        .map_err(|_| ApiError::StorageUnavailable)?;
    Ok(json(
        StatusCode::OK,
        &Health {
            status: "ok",
            version: env!("CARGO_PKG_VERSION"),
        },
    ))
}

#[derive(serde::Deserialize)]
pub struct CeilingParams {
    bytes: Option<usize>,
}

/// A pre-built JSON response of about `bytes` bytes behind the same
/// authentication and middleware as the API: the throughput ceiling that the
/// HTTP stack allows, for the load script (served only with `--ceiling-endpoint`).
pub async fn ceiling(
    _caller: Caller,
    extract::QueryParams(q): extract::QueryParams<CeilingParams>,
) -> Result<Response> {
    use std::sync::{Mutex, OnceLock};
    static BODIES: OnceLock<Mutex<std::collections::HashMap<usize, axum::body::Bytes>>> =
        OnceLock::new();
    let bytes = q.bytes.unwrap_or(100_000).clamp(16, 16 * 1024 * 1024);
    let body = {
        let mut cache = BODIES
            .get_or_init(Default::default)
            .lock()
            .unwrap_or_else(|p| p.into_inner());
        cache
            .entry(bytes)
            .or_insert_with(|| {
                let padding = "x".repeat(bytes.saturating_sub(14));
                axum::body::Bytes::from(format!("{{\"padding\":\"{padding}\"}}"))
            })
            .clone()
    };
    let mut res = (StatusCode::OK, body).into_response();
    res.headers_mut().insert(
        header::CONTENT_TYPE,
        HeaderValue::from_static("application/json"),
    );
    Ok(res)
}
