//! A team's planned sessions, the all-or-nothing week import, and each
//! athlete's participation exceptions.

use axum::extract::State;
use axum::http::StatusCode;
use axum::response::Response;
use chrono::NaiveDate;
use serde::Deserialize;
use utoipa::IntoParams;
use utoipa_axum::{router::OpenApiRouter, routes};
use uuid::Uuid;

use super::athletes::visible_athlete;
use super::auth::Caller;
use super::extract::{IfMatch, JsonBody, MergePatch, PathIds, QueryParams};
use super::{apply_merge_patch, deleted, json, versioned, written};
use crate::AppState;
use crate::domain::paging::{Page, PageParams};
use crate::domain::session::{
    ImportResult, Participation, ParticipationInput, Session, SessionImport, SessionInput,
};
use crate::engine::profile::SessionKind;
use crate::error::{ApiError, Result};
use crate::store::sessions::{self, SessionKey, key_of};

pub fn router() -> OpenApiRouter<AppState> {
    OpenApiRouter::new()
        .routes(routes!(list_sessions, create_session))
        .routes(routes!(import_sessions))
        .routes(routes!(get_session, update_session, delete_session))
        .routes(routes!(list_participation))
        .routes(routes!(
            get_participation,
            put_participation,
            delete_participation
        ))
}

#[derive(Debug, Deserialize, IntoParams)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct SessionListParams {
    /// First local date, inclusive (default: no lower bound).
    from: Option<NaiveDate>,
    /// Last local date, inclusive (default: no upper bound).
    to: Option<NaiveDate>,
    /// Only sessions of this kind.
    kind: Option<SessionKind>,
    #[param(minimum = 1, maximum = 200)]
    limit: Option<u32>,
    cursor: Option<String>,
}

/// Open ends of a date filter (stored dates compare as ISO text).
const EARLIEST: NaiveDate = NaiveDate::from_ymd_opt(1900, 1, 1).expect("valid");
const LATEST: NaiveDate = NaiveDate::from_ymd_opt(9999, 12, 31).expect("valid");

pub async fn visible_session(state: &AppState, caller: &Caller, id: Uuid) -> Result<Session> {
    let session = sessions::get(&state.db, id)
        .await?
        .ok_or(ApiError::NotFound("session"))?;
    caller.read(session.team_id, "session")?;
    Ok(session)
}

/// List a team's sessions in calendar order.
#[utoipa::path(get, path = "/v1/teams/{team_id}/sessions", tag = "sessions",
    params(("team_id" = Uuid, Path), SessionListParams),
    responses((status = 200, description = "One page of sessions", body = Page<Session>)))]
async fn list_sessions(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(team_id): PathIds<Uuid>,
    QueryParams(q): QueryParams<SessionListParams>,
) -> Result<Response> {
    caller.read(team_id, "team")?;
    super::visible_team(&state, &caller, team_id).await?;
    let page = PageParams {
        limit: q.limit,
        cursor: q.cursor,
    };
    let limit = page.limit()?;
    let after: Option<SessionKey> = page.after()?;
    crate::domain::check_filter_dates(&[("from", q.from), ("to", q.to)])?;
    let from = q.from.unwrap_or(EARLIEST);
    let to = q.to.unwrap_or(LATEST);
    if to < from {
        return Err(ApiError::field("to", "must not be before from"));
    }
    let kind = q.kind.map(|k| crate::domain::label_of(&k));
    let items = sessions::list(&state.db, team_id, (from, to), kind, after, limit).await?;
    Ok(json(
        StatusCode::OK,
        &Page::from_overfetch(items, limit, key_of),
    ))
}

/// Plan a session.
#[utoipa::path(post, path = "/v1/teams/{team_id}/sessions", tag = "sessions",
    params(("team_id" = Uuid, Path)),
    request_body(content = SessionInput, example = json!({
        "local_date": "2026-12-08", "start_time": "10:30", "kind": "training",
        "title": "Pitch: possession and transition", "key_session": false,
        "segments": [
            {"label": "warm-up", "minutes": 15, "intensity": {"form": "fraction_vo2max", "fraction": 0.5}},
            {"label": "small-sided games", "minutes": 40, "intensity": {"form": "heart_rate", "bpm": 168}},
            {"label": "finishing", "minutes": 20, "intensity": {"form": "session_rpe", "rating": 5}},
            {"label": "cool-down", "minutes": 10, "intensity": {"form": "mets", "mets": 3.0}}
        ]
    })),
    responses((status = 201, description = "Created", body = Session, headers(("etag" = String), ("location" = String)))))]
async fn create_session(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(team_id): PathIds<Uuid>,
    JsonBody(input): JsonBody<SessionInput>,
) -> Result<Response> {
    caller.write(team_id, "team")?;
    super::visible_team(&state, &caller, team_id).await?;
    let input = input.normalised();
    input.validate()?;
    let session = sessions::create(&state.db, caller.actor(), team_id, &input).await?;
    Ok(super::created(
        &format!("/v1/sessions/{}", session.id),
        session.version,
        &session,
    ))
}

/// Import many sessions (e.g. a week) all or nothing. With `replace`, the
/// team's sessions in that date span are removed in the same transaction.
#[utoipa::path(post, path = "/v1/teams/{team_id}/sessions/import", tag = "sessions",
    params(("team_id" = Uuid, Path)),
    request_body(content = SessionImport, example = json!({
        "replace": {"from": "2026-12-07", "to": "2026-12-13"},
        "sessions": [
            {"local_date": "2026-12-07", "start_time": "09:30", "kind": "training", "title": "Pitch AM",
             "segments": [{"minutes": 75, "intensity": {"form": "activity", "activity": "football_training"}}]},
            {"local_date": "2026-12-12", "start_time": "15:00", "kind": "match", "title": "League match",
             "key_session": true,
             "segments": [{"minutes": 90, "intensity": {"form": "activity", "activity": "football_match"}}]}
        ]
    })),
    responses((status = 201, description = "Imported", body = ImportResult)))]
async fn import_sessions(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(team_id): PathIds<Uuid>,
    JsonBody(input): JsonBody<SessionImport>,
) -> Result<Response> {
    caller.write(team_id, "team")?;
    super::visible_team(&state, &caller, team_id).await?;
    let SessionImport {
        replace,
        sessions: inputs,
    } = input;
    let import = SessionImport {
        replace,
        sessions: inputs.into_iter().map(SessionInput::normalised).collect(),
    };
    import.validate()?;
    let result = sessions::import(
        &state.db,
        caller.actor(),
        team_id,
        import.replace,
        &import.sessions,
    )
    .await?;
    Ok(json(StatusCode::CREATED, &result))
}

/// Read a session.
#[utoipa::path(get, path = "/v1/sessions/{session_id}", tag = "sessions",
    params(("session_id" = Uuid, Path)),
    responses((status = 200, description = "The session", body = Session, headers(("etag" = String)))))]
async fn get_session(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
) -> Result<Response> {
    let session = visible_session(&state, &caller, id).await?;
    Ok(versioned(session.version, &session))
}

/// Change a session (JSON merge patch), e.g. move it: `{"start_time": "16:00"}`.
#[utoipa::path(patch, path = "/v1/sessions/{session_id}", tag = "sessions",
    params(("session_id" = Uuid, Path), ("if-match" = Option<String>, Header, description = "ETag last read; 412 if it changed since")),
    request_body(content = Object, content_type = "application/merge-patch+json", description = "Fields of SessionInput to change",
        example = json!({"local_date": "2026-12-09", "start_time": "16:00"})),
    responses((status = 200, description = "The changed session", body = Session, headers(("etag" = String)))))]
async fn update_session(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
    IfMatch(expected): IfMatch,
    MergePatch(patch): MergePatch,
) -> Result<Response> {
    let current = visible_session(&state, &caller, id).await?;
    caller.write(current.team_id, "session")?;
    let outcome = sessions::update(&state.db, caller.actor(), id, &expected, |current| {
        let input: SessionInput = apply_merge_patch(&current.input(), &patch)?;
        let input = input.normalised();
        input.validate()?;
        Ok::<_, ApiError>(input)
    })
    .await?;
    written(outcome, "session")
}

/// Delete a session.
#[utoipa::path(delete, path = "/v1/sessions/{session_id}", tag = "sessions",
    params(("session_id" = Uuid, Path), ("if-match" = Option<String>, Header)),
    responses((status = 204, description = "Deleted")))]
async fn delete_session(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
    IfMatch(expected): IfMatch,
) -> Result<Response> {
    let current = visible_session(&state, &caller, id).await?;
    caller.write(current.team_id, "session")?;
    deleted(
        sessions::delete(&state.db, caller.actor(), id, &expected).await?,
        "session",
    )
}

/// The participation exceptions of a session; athletes not listed take full part.
#[utoipa::path(get, path = "/v1/sessions/{session_id}/participation", tag = "sessions",
    params(("session_id" = Uuid, Path), PageParams),
    responses((status = 200, description = "One page of exceptions, by athlete id", body = Page<Participation>)))]
async fn list_participation(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
    QueryParams(page): QueryParams<PageParams>,
) -> Result<Response> {
    visible_session(&state, &caller, id).await?;
    let items = sessions::list_participation(&state.db, id).await?;
    let page = Page::from_sorted(items, &page, false, |p| p.athlete_id)?;
    Ok(json(StatusCode::OK, &page))
}

async fn session_and_athlete(
    state: &AppState,
    caller: &Caller,
    session_id: Uuid,
    athlete_id: Uuid,
) -> Result<Session> {
    let session = visible_session(state, caller, session_id).await?;
    let athlete = visible_athlete(state, caller, athlete_id).await?;
    if athlete.team_id != session.team_id {
        return Err(ApiError::NotFound("athlete"));
    }
    Ok(session)
}

/// One athlete's participation exception.
#[utoipa::path(get, path = "/v1/sessions/{session_id}/participation/{athlete_id}", tag = "sessions",
    params(("session_id" = Uuid, Path), ("athlete_id" = Uuid, Path)),
    responses((status = 200, description = "The exception", body = Participation, headers(("etag" = String)))))]
async fn get_participation(
    State(state): State<AppState>,
    caller: Caller,
    PathIds((session_id, athlete_id)): PathIds<(Uuid, Uuid)>,
) -> Result<Response> {
    session_and_athlete(&state, &caller, session_id, athlete_id).await?;
    let p = sessions::get_participation(&state.db, session_id, athlete_id)
        .await?
        .ok_or(ApiError::NotFound("participation exception"))?;
    Ok(versioned(p.version, &p))
}

/// Set how an athlete departs from the full session (skipped, shortened, replaced).
#[utoipa::path(put, path = "/v1/sessions/{session_id}/participation/{athlete_id}", tag = "sessions",
    params(("session_id" = Uuid, Path), ("athlete_id" = Uuid, Path), ("if-match" = Option<String>, Header)),
    request_body(content = ParticipationInput, example = json!({"mode": "shortened", "minutes": 25, "portion": "until_end", "note": "second-half substitute"})),
    responses((status = 200, description = "Stored", body = Participation, headers(("etag" = String)))))]
async fn put_participation(
    State(state): State<AppState>,
    caller: Caller,
    PathIds((session_id, athlete_id)): PathIds<(Uuid, Uuid)>,
    IfMatch(expected): IfMatch,
    JsonBody(input): JsonBody<ParticipationInput>,
) -> Result<Response> {
    let session = session_and_athlete(&state, &caller, session_id, athlete_id).await?;
    caller.write(session.team_id, "session")?;
    input.validate(session.total_minutes)?;
    written(
        sessions::put_participation(
            &state.db,
            caller.actor(),
            session.team_id,
            session_id,
            athlete_id,
            &expected,
            &input,
        )
        .await?,
        "participation exception",
    )
}

/// Remove the exception: the athlete takes full part again.
#[utoipa::path(delete, path = "/v1/sessions/{session_id}/participation/{athlete_id}", tag = "sessions",
    params(("session_id" = Uuid, Path), ("athlete_id" = Uuid, Path), ("if-match" = Option<String>, Header)),
    responses((status = 204, description = "Removed")))]
async fn delete_participation(
    State(state): State<AppState>,
    caller: Caller,
    PathIds((session_id, athlete_id)): PathIds<(Uuid, Uuid)>,
    IfMatch(expected): IfMatch,
) -> Result<Response> {
    let session = session_and_athlete(&state, &caller, session_id, athlete_id).await?;
    caller.write(session.team_id, "session")?;
    deleted(
        sessions::delete_participation(
            &state.db,
            caller.actor(),
            session.team_id,
            session_id,
            athlete_id,
            &expected,
        )
        .await?,
        "participation exception",
    )
}
