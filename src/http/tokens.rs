//! `/v1/tokens`: API tokens, and `/v1/teams/{team_id}/audit`: the change trail.
//!
//! Administrators manage every token; a planner manages its own team's
//! planner and reader tokens. Other teams' tokens answer 404.

use axum::extract::State;
use axum::http::StatusCode;
use axum::response::Response;
use serde::Deserialize;
use utoipa::IntoParams;
use utoipa_axum::{router::OpenApiRouter, routes};
use uuid::Uuid;

use super::auth::Caller;
use super::extract::{JsonBody, PathIds, QueryParams};
use super::json;
use crate::AppState;
use crate::domain::paging::{Page, PageParams};
use crate::domain::token::{CreatedToken, Role, TokenInfo, TokenInput};
use crate::error::{ApiError, Result};
use crate::store::{Write, audit, tokens};

pub fn router() -> OpenApiRouter<AppState> {
    OpenApiRouter::new()
        .routes(routes!(list_tokens, create_token))
        .routes(routes!(get_token, revoke_token))
        .routes(routes!(list_audit))
}

#[derive(Debug, Deserialize, IntoParams)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct TokenListParams {
    #[param(minimum = 1, maximum = 200)]
    limit: Option<u32>,
    cursor: Option<String>,
}

fn may_manage(caller: &Caller, token_team: Option<Uuid>) -> Result<()> {
    if caller.is_admin() {
        return Ok(());
    }
    match token_team {
        Some(team) => caller.write(team, "token"),
        None => Err(ApiError::NotFound("token")),
    }
}

/// List tokens (never their secrets).
#[utoipa::path(get, path = "/v1/tokens", tag = "tokens", params(TokenListParams),
    responses((status = 200, description = "One page of tokens", body = Page<TokenInfo>)))]
async fn list_tokens(
    State(state): State<AppState>,
    caller: Caller,
    QueryParams(q): QueryParams<TokenListParams>,
) -> Result<Response> {
    if !caller.is_admin() {
        caller.write(caller.team_id.unwrap_or_default(), "token")?;
    }
    let page = PageParams {
        limit: q.limit,
        cursor: q.cursor,
    };
    let limit = page.limit()?;
    let after: Option<Uuid> = page.after()?;
    let items = tokens::list(&state.db, caller.scope(), after, limit).await?;
    Ok(json(
        StatusCode::OK,
        &Page::from_overfetch(items, limit, |t| t.id),
    ))
}

/// Create a token. The secret is in this response only.
#[utoipa::path(post, path = "/v1/tokens", tag = "tokens",
    request_body(content = TokenInput, example = json!({"label": "kitchen tablet", "role": "reader", "team_id": "0193a5b0-7c1e-7d3a-9c2b-3f4e5a6b7c8d"})),
    responses((status = 201, description = "Created; keep the secret now", body = CreatedToken)))]
async fn create_token(
    State(state): State<AppState>,
    caller: Caller,
    JsonBody(input): JsonBody<TokenInput>,
) -> Result<Response> {
    input.validate()?;
    if input.role == Role::Admin {
        caller.admin()?;
    }
    may_manage(&caller, input.team_id)?;
    if let Some(team) = input.team_id {
        super::visible_team(&state, &caller, team)
            .await
            .map_err(|_| ApiError::field("team_id", "no such team"))?;
    }
    let created = tokens::create(&state.db, caller.actor(), &input).await?;
    Ok(json(StatusCode::CREATED, &created))
}

async fn visible_token(state: &AppState, caller: &Caller, id: Uuid) -> Result<TokenInfo> {
    let info = tokens::get(&state.db, id)
        .await?
        .ok_or(ApiError::NotFound("token"))?;
    may_manage(caller, info.team_id).map_err(|e| match e {
        ApiError::Forbidden(_) if info.team_id != caller.team_id => ApiError::NotFound("token"),
        other => other,
    })?;
    Ok(info)
}

/// Read a token's metadata.
#[utoipa::path(get, path = "/v1/tokens/{token_id}", tag = "tokens",
    params(("token_id" = Uuid, Path)),
    responses((status = 200, description = "The token", body = TokenInfo)))]
async fn get_token(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
) -> Result<Response> {
    let info = visible_token(&state, &caller, id).await?;
    Ok(json(StatusCode::OK, &info))
}

/// Revoke a token; it stops working at once.
#[utoipa::path(delete, path = "/v1/tokens/{token_id}", tag = "tokens",
    params(("token_id" = Uuid, Path)),
    responses((status = 200, description = "Revoked", body = TokenInfo)))]
async fn revoke_token(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
) -> Result<Response> {
    visible_token(&state, &caller, id).await?;
    match tokens::revoke(&state.db, caller.actor(), id).await? {
        Write::Done(info) => Ok(json(StatusCode::OK, &info)),
        Write::NotFound | Write::Stale => Err(ApiError::NotFound("token")),
    }
}

#[derive(Debug, Deserialize, IntoParams)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct AuditParams {
    /// Entries after this sequence number (the `seq` of the last one you have).
    #[param(minimum = 0)]
    after: Option<i64>,
    /// Items per page, 1 to 200 (default 50).
    #[param(minimum = 1, maximum = 200)]
    limit: Option<u32>,
    /// The `next_cursor` of the previous page.
    cursor: Option<String>,
}

/// The team's change trail: who changed what and when, oldest first.
#[utoipa::path(get, path = "/v1/teams/{team_id}/audit", tag = "teams",
    params(("team_id" = Uuid, Path), AuditParams),
    responses((status = 200, description = "One page of entries, oldest first", body = Page<audit::AuditEntry>)))]
async fn list_audit(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(team_id): PathIds<Uuid>,
    QueryParams(q): QueryParams<AuditParams>,
) -> Result<Response> {
    caller.write(team_id, "team")?;
    super::visible_team(&state, &caller, team_id).await?;
    let page = PageParams {
        limit: q.limit,
        cursor: q.cursor,
    };
    let limit = page.limit()?;
    let cursor: Option<i64> = page.after()?;
    if q.after.is_some_and(|a| a < 0) {
        return Err(ApiError::field("after", "must be 0 or more"));
    }
    let after = q.after.unwrap_or(0).max(cursor.unwrap_or(0));
    let entries = audit::list(&state.db.read, Some(team_id), after, limit + 1).await?;
    Ok(json(
        StatusCode::OK,
        &Page::from_overfetch(entries, limit, |e| e.seq),
    ))
}
