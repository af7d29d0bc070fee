//! What the day planner takes: the athlete on the date, the work of that day
//! and its neighbours, settings, pins and declared health conditions.

use chrono::NaiveDate;
use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

use crate::engine::day::session_work::SessionWork;
use crate::engine::day::settings::{DayPins, HealthFlag, PlanSettings};
use crate::engine::profile::AthleteProfile;

/// Everything needed to plan one athlete's day.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct DayInput {
    /// The athlete on the planned date.
    pub profile: AthleteProfile,
    /// The planned date (local).
    pub date: NaiveDate,
    /// This athlete's sessions on the date.
    #[serde(default)]
    pub sessions: Vec<SessionWork>,
    /// Sessions on the next date (key sessions and matches shape today).
    #[serde(default)]
    pub next_day_sessions: Vec<SessionWork>,
    /// Sessions two dates ahead (only for carbohydrate loading's 36-48 h).
    #[serde(default)]
    pub day_after_next_sessions: Vec<SessionWork>,
    /// Sessions on the previous date (for short overnight gaps).
    #[serde(default)]
    pub previous_day_sessions: Vec<SessionWork>,
    /// Settings; omitted fields take their documented defaults.
    #[serde(default)]
    pub settings: PlanSettings,
    /// Working-muscle glycogen missing at the start of the day, g (estimate;
    /// the week planner passes its simulated state, 0 when not known).
    #[serde(default)]
    pub glycogen_to_restore_g: f64,
    /// The dietitian's pinned values, if any.
    #[serde(default)]
    pub pins: DayPins,
    /// Declared health conditions; each adds a caution.
    #[serde(default)]
    pub health_flags: Vec<HealthFlag>,
}
