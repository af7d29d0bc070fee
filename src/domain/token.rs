use chrono::{DateTime, Utc};
use serde::{Deserialize, Serialize};
use utoipa::ToSchema;
use uuid::Uuid;

use super::check_text;
use crate::engine::{InvalidInput, Issues};

/// What a token may do.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema, clap::ValueEnum)]
#[serde(rename_all = "snake_case")]
pub enum Role {
    /// Every team, and tokens.
    Admin,
    /// Reads and writes one team's data and manages its tokens.
    Planner,
    /// Reads one team's data (club apps, integrators).
    Reader,
}

#[derive(Debug, Clone, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct TokenInput {
    /// What the token is for, e.g. "kitchen tablet".
    #[schema(example = "club app, read only", min_length = 1, max_length = 100)]
    pub label: String,
    pub role: Role,
    /// Required for planner and reader; absent for admin.
    #[serde(default)]
    pub team_id: Option<Uuid>,
}

impl TokenInput {
    pub fn validate(&self) -> Result<(), InvalidInput> {
        let mut issues = Issues::default();
        check_text(&mut issues, "label", &self.label, 1, 100);
        match (self.role, self.team_id) {
            (Role::Admin, Some(_)) => issues.push("team_id", "must be absent for an admin token"),
            (Role::Planner | Role::Reader, None) => {
                issues.push("team_id", "is required for planner and reader tokens")
            }
            _ => {}
        }
        issues.finish()
    }
}

#[derive(Debug, Clone, Serialize, ToSchema)]
pub struct TokenInfo {
    pub id: Uuid,
    pub label: String,
    pub role: Role,
    pub team_id: Option<Uuid>,
    pub created_at: DateTime<Utc>,
    pub revoked_at: Option<DateTime<Utc>>,
}

/// A new token. The secret is shown here once and never again.
#[derive(Debug, Clone, Serialize, ToSchema)]
pub struct CreatedToken {
    #[serde(flatten)]
    pub info: TokenInfo,
    /// Send as `Authorization: Bearer <secret>`. Store it now: only its hash is kept.
    pub secret: String,
}
