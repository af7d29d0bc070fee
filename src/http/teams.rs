//! `/v1/teams`: squads and their time zones.

use axum::extract::State;
use axum::http::StatusCode;
use axum::response::Response;
use serde::Deserialize;
use utoipa::IntoParams;
use utoipa_axum::{router::OpenApiRouter, routes};
use uuid::Uuid;

use super::auth::Caller;
use super::extract::{IfMatch, JsonBody, MergePatch, PathIds, QueryParams};
use super::{apply_merge_patch, deleted, json, versioned, written};
use crate::AppState;
use crate::domain::paging::{Page, PageParams};
use crate::domain::team::{Team, TeamInput};
use crate::error::{ApiError, Result};
use crate::store::teams;

pub fn router() -> OpenApiRouter<AppState> {
    OpenApiRouter::new()
        .routes(routes!(list_teams, create_team))
        .routes(routes!(get_team, update_team, delete_team))
}

#[derive(Debug, Deserialize, IntoParams)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct TeamListParams {
    #[param(minimum = 1, maximum = 200)]
    limit: Option<u32>,
    cursor: Option<String>,
}

/// List the teams this token can see.
#[utoipa::path(get, path = "/v1/teams", tag = "teams", params(TeamListParams),
    responses((status = 200, description = "One page of teams", body = Page<Team>)))]
async fn list_teams(
    State(state): State<AppState>,
    caller: Caller,
    QueryParams(q): QueryParams<TeamListParams>,
) -> Result<Response> {
    let page = PageParams {
        limit: q.limit,
        cursor: q.cursor,
    };
    let limit = page.limit()?;
    let after: Option<Uuid> = page.after()?;
    let items = teams::list(&state.db, caller.scope(), after, limit).await?;
    Ok(json(
        StatusCode::OK,
        &Page::from_overfetch(items, limit, |t| t.id),
    ))
}

/// Create a team (administrators only).
#[utoipa::path(post, path = "/v1/teams", tag = "teams", request_body = TeamInput,
    responses((status = 201, description = "Created", body = Team, headers(("etag" = String), ("location" = String)))))]
async fn create_team(
    State(state): State<AppState>,
    caller: Caller,
    JsonBody(input): JsonBody<TeamInput>,
) -> Result<Response> {
    caller.admin()?;
    let input = input.normalised();
    input.validate()?;
    let team = teams::create(&state.db, caller.actor(), &input).await?;
    let location = format!("/v1/teams/{}", team.id);
    Ok(super::created(&location, team.version, &team))
}

/// Read a team.
#[utoipa::path(get, path = "/v1/teams/{team_id}", tag = "teams",
    params(("team_id" = Uuid, Path)),
    responses((status = 200, description = "The team", body = Team, headers(("etag" = String)))))]
async fn get_team(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(team_id): PathIds<Uuid>,
) -> Result<Response> {
    caller.read(team_id, "team")?;
    let team = teams::get(&state.db, team_id)
        .await?
        .ok_or(ApiError::NotFound("team"))?;
    Ok(versioned(team.version, &team))
}

/// Change a team (JSON merge patch, RFC 7396).
#[utoipa::path(patch, path = "/v1/teams/{team_id}", tag = "teams",
    params(("team_id" = Uuid, Path), ("if-match" = Option<String>, Header, description = "ETag last read; 412 if it changed since")),
    request_body(content = Object, content_type = "application/merge-patch+json", description = "Fields of TeamInput to change"),
    responses((status = 200, description = "The changed team", body = Team, headers(("etag" = String)))))]
async fn update_team(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(team_id): PathIds<Uuid>,
    IfMatch(expected): IfMatch,
    MergePatch(patch): MergePatch,
) -> Result<Response> {
    caller.admin().or_else(|_| caller.write(team_id, "team"))?;
    teams::get(&state.db, team_id)
        .await?
        .ok_or(ApiError::NotFound("team"))?;
    let outcome = teams::update(&state.db, caller.actor(), team_id, &expected, |current| {
        let input: TeamInput = apply_merge_patch(&current.input(), &patch)?;
        let input = input.normalised();
        input.validate()?;
        Ok::<_, ApiError>(input)
    })
    .await?;
    written(outcome, "team")
}

/// Delete a team and everything it holds.
#[utoipa::path(delete, path = "/v1/teams/{team_id}", tag = "teams",
    params(("team_id" = Uuid, Path), ("if-match" = Option<String>, Header)),
    responses((status = 204, description = "Deleted")))]
async fn delete_team(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(team_id): PathIds<Uuid>,
    IfMatch(expected): IfMatch,
) -> Result<Response> {
    caller.read(team_id, "team")?;
    caller.admin()?;
    deleted(
        teams::delete(&state.db, caller.actor(), team_id, &expected).await?,
        "team",
    )
}
