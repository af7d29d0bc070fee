use chrono::{DateTime, Utc};
use serde::{Deserialize, Serialize};
use utoipa::ToSchema;
use uuid::Uuid;

use super::check_text;
use crate::engine::{InvalidInput, Issues};

/// A squad. Dates and session start times of the team are local to `time_zone`.
#[derive(Debug, Clone, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct TeamInput {
    #[schema(example = "Kestrel Vale FC senior squad")]
    #[schema(min_length = 1, max_length = 120)]
    pub name: String,
    /// IANA time zone name.
    #[schema(example = "Europe/Lisbon")]
    pub time_zone: String,
}

impl TeamInput {
    pub fn validate(&self) -> Result<(), InvalidInput> {
        let mut issues = Issues::default();
        check_text(&mut issues, "name", &self.name, 1, 120);
        if self.time_zone.parse::<chrono_tz::Tz>().is_err() {
            issues.push(
                "time_zone",
                "must be an IANA time zone name such as Europe/London",
            );
        }
        issues.finish()
    }

    pub fn normalised(mut self) -> Self {
        self.name = self.name.trim().to_owned();
        self
    }
}

#[derive(Debug, Clone, Serialize, ToSchema)]
pub struct Team {
    pub id: Uuid,
    pub name: String,
    pub time_zone: String,
    pub version: i64,
    pub created_at: DateTime<Utc>,
    pub updated_at: DateTime<Utc>,
}

impl Team {
    pub fn input(&self) -> TeamInput {
        TeamInput {
            name: self.name.clone(),
            time_zone: self.time_zone.clone(),
        }
    }

    pub fn tz(&self) -> chrono_tz::Tz {
        self.time_zone.parse().unwrap_or(chrono_tz::UTC)
    }
}
