//! Bearer-token authentication and the team scope of every token.
//!
//! A token never sees another team's data: such resources answer 404, the
//! same as resources that do not exist, so ids cannot be probed.

use axum::extract::FromRequestParts;
use axum::http::header;
use axum::http::request::Parts;
use uuid::Uuid;

use crate::AppState;
use crate::domain::token::Role;
use crate::error::ApiError;
use crate::store::audit::Actor;
use crate::store::tokens;

/// The authenticated caller.
#[derive(Debug, Clone, Copy)]
pub struct Caller {
    pub token_id: Uuid,
    pub role: Role,
    pub team_id: Option<Uuid>,
}

impl FromRequestParts<AppState> for Caller {
    type Rejection = ApiError;

    async fn from_request_parts(
        parts: &mut Parts,
        state: &AppState,
    ) -> Result<Self, Self::Rejection> {
        if let Some(caller) = parts.extensions.get::<Caller>() {
            return Ok(*caller);
        }
        let secret = parts
            .headers
            .get(header::AUTHORIZATION)
            .and_then(|v| v.to_str().ok())
            .and_then(|v| {
                let (scheme, rest) = v.split_once(' ')?;
                scheme.eq_ignore_ascii_case("bearer").then(|| rest.trim())
            })
            .filter(|s| !s.is_empty() && s.len() <= 256)
            .ok_or(ApiError::Unauthorized)?;
        let info = tokens::authenticate(&state.db, secret)
            .await?
            .ok_or(ApiError::Unauthorized)?;
        let caller = Caller {
            token_id: info.id,
            role: info.role,
            team_id: info.team_id,
        };
        parts.extensions.insert(caller);
        Ok(caller)
    }
}

impl Caller {
    pub fn actor(&self) -> Actor {
        Actor {
            token_id: Some(self.token_id),
        }
    }

    pub fn is_admin(&self) -> bool {
        self.role == Role::Admin
    }

    /// The team this caller is limited to; `None` for an administrator.
    pub fn scope(&self) -> Option<Uuid> {
        if self.is_admin() { None } else { self.team_id }
    }

    /// May read the team's data; other teams look absent.
    pub fn read(&self, team_id: Uuid, what: &'static str) -> Result<(), ApiError> {
        if self.is_admin() || self.team_id == Some(team_id) {
            Ok(())
        } else {
            Err(ApiError::NotFound(what))
        }
    }

    /// May change the team's data.
    pub fn write(&self, team_id: Uuid, what: &'static str) -> Result<(), ApiError> {
        self.read(team_id, what)?;
        if self.role == Role::Reader {
            return Err(ApiError::Forbidden("This token is read-only."));
        }
        Ok(())
    }

    pub fn admin(&self) -> Result<(), ApiError> {
        if self.is_admin() {
            Ok(())
        } else {
            Err(ApiError::Forbidden(
                "Only an administrator token may do this.",
            ))
        }
    }
}
