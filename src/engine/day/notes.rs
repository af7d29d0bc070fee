//! What the planner says about its numbers: structured warnings with stable
//! codes (for programs) and explanations naming the rule, the load band and the
//! sessions behind each target (for people).

use serde::{Deserialize, Serialize};
use utoipa::ToSchema;
use uuid::Uuid;

use crate::engine::day::session_work::SessionRef;
use crate::engine::day::targets::{GramsPerKgRange, LoadBand};

/// How much a warning matters.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum Severity {
    /// Worth knowing; the plan is still within published practice.
    Notice,
    /// Something in the plan needs a practitioner's look.
    Warning,
    /// Possible harm to the athlete: needs a registered dietitian or physician.
    Safety,
}

/// Stable machine-readable warning codes. New codes may be added; existing
/// codes keep their meaning.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
#[schema(as = PlanWarningCode)]
pub enum WarningCode {
    /// The athlete is under 18: adult targets do not simply apply.
    UnderEighteen,
    /// A health condition was declared (pregnancy, diabetes, other, disordered eating history).
    HealthCondition,
    /// Fat-free mass was estimated, not measured.
    FatFreeMassEstimated,
    /// A body-mass loss goal for an athlete under 18 was not applied.
    BodyMassLossNotPlannedUnder18,
    /// The requested body-mass change is faster than the safe rate; the rate was capped.
    GoalRateAboveSafe,
    /// The energy deficit for body-mass loss was reduced to keep energy availability out of the low band.
    DeficitLimitedByEnergyAvailability,
    /// Planned energy availability is in the low band.
    EnergyAvailabilityLow,
    /// Planned energy availability is between the low and adequate thresholds.
    EnergyAvailabilityReduced,
    /// The energy deficit for body-mass loss was reduced because carbohydrate
    /// (at its range's low end) and protein would leave under 20% fat.
    DeficitLimitedByMacronutrients,
    /// Keeping fat at 20% of energy raised energy above the computed target.
    FatFloorRaisedEnergy,
    /// Fat is above 35% of energy (usual range 20-35%).
    FatAboveUsualRange,
    /// Fat is below 20% of energy (only possible with a pinned energy target).
    FatBelowRange,
    /// Pinned energy is lower than the energy in the carbohydrate and protein targets.
    PinnedEnergyBelowMacronutrients,
    /// A dietitian's pin lies outside the published range for that target.
    PinOutsidePublishedRange,
    /// Two sessions are too close together for the planned refuelling and pre-session meal.
    ShortGapBetweenSessions,
    /// There is no room 1-4 h before a session for the pre-session meal.
    PreSessionWindowTooShort,
    /// Fuelling around the sessions needs more carbohydrate than the day's target; it was scaled down.
    SessionFuellingExceedsDayCarbohydrate,
    /// A train-low session comes less than 24 h before a key session or match.
    TrainLowBeforeKeySession,
    /// A train-low session is planned on a high or very high load day.
    TrainLowOnHighLoadDay,
    /// Carbohydrate loading was asked for an event of 90 minutes or less; fuelling up is used instead.
    CarbohydrateLoadingNotIndicated,
    /// Sweat-rate test: body mass fell more than 2%.
    BodyMassLossOverTwoPercent,
    /// Sweat-rate test: body mass rose (more drunk than sweated).
    BodyMassGainedDuringSession,
}

/// One warning about the plan.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct Warning {
    /// Stable snake_case code.
    pub code: WarningCode,
    /// How much it matters.
    pub severity: Severity,
    /// Plain-language message.
    pub message: String,
    /// The session concerned, when there is one and it has an id.
    pub session_id: Option<Uuid>,
}

impl Warning {
    pub(crate) fn new(code: WarningCode, severity: Severity, message: impl Into<String>) -> Self {
        Self {
            code,
            severity,
            message: message.into(),
            session_id: None,
        }
    }

    pub(crate) fn for_session(mut self, session_id: Option<Uuid>) -> Self {
        self.session_id = session_id;
        self
    }
}

/// Which target an explanation is about.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum Topic {
    LoadBand,
    Carbohydrate,
    Protein,
    Fat,
    Energy,
    RestingMetabolicRate,
    EnergyAvailability,
    SessionFuelling,
    EatingOccasions,
    TrainLow,
}

/// The rule that produced a target.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum TargetRule {
    /// The day's fuel demand (work, next-day key work, glycogen to restore) and its band.
    LoadBandClassification,
    /// No sessions: low end of the light band.
    RestDay,
    /// Carbohydrate from the day's fuel demand by the work curve.
    LoadBand,
    /// Protein or carbohydrate raised so that fat stays at or under 35% of energy.
    EnergyFill,
    /// Team-sport match today: 6-8 g/kg.
    TeamSportMatchDay,
    /// Team-sport match tomorrow: 6-8 g/kg.
    TeamSportMatchEve,
    /// Competition under 90 minutes tomorrow: 7-12 g/kg.
    FuellingUp,
    /// Event over 90 minutes within 36-48 h: 10-12 g/kg.
    CarbohydrateLoading,
    /// A dietitian pinned the value.
    DietitianPin,
    /// Protein inside 1.2-2.0 g/kg/d.
    ProteinRange,
    /// Fat is the energy left after carbohydrate and protein, at least 20%.
    FatRemainder,
    /// Energy from resting metabolic rate, activity factor, exercise and goal.
    EnergyBalance,
    /// Cunningham (1980) with fat-free mass.
    Cunningham,
    /// Mifflin-St Jeor (1990).
    MifflinStJeor,
    /// Revised Harris-Benedict (Roza & Shizgal 1984).
    RevisedHarrisBenedict,
    /// (intake - exercise energy) / fat-free mass.
    EnergyAvailability,
    /// Carbohydrate 1-4 g/kg, 1-4 h before a session over 60 minutes.
    PreSession,
    /// Carbohydrate during a session by its duration.
    DuringSession,
    /// 1.0-1.2 g/kg/h for up to 4 h when the next session is under 8 h away.
    SpeedyRefuelling,
    /// A normal meal with about 0.3 g/kg protein after the session.
    RecoveryMeal,
    /// Targets split into a timeline of eating occasions.
    OccasionTimeline,
    /// Carbohydrate withheld before a train-low session.
    TrainLow,
}

/// Why a target has its value.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct Explanation {
    /// Which target the explanation is about.
    pub topic: Topic,
    /// The rule that produced it.
    pub rule: TargetRule,
    /// The day's load band, when the rule depends on it.
    pub band: Option<LoadBand>,
    /// The published or practice range the rule uses, g/kg (per day unless the text says otherwise).
    pub range_g_per_kg: Option<GramsPerKgRange>,
    /// Sessions that drove the value.
    pub sessions: Vec<SessionRef>,
    /// Plain-language explanation with the numbers.
    pub text: String,
    /// Published source or `common practice` / `from memory` label.
    pub source: String,
}

impl Explanation {
    pub(crate) fn new(
        topic: Topic,
        rule: TargetRule,
        text: impl Into<String>,
        source: impl Into<String>,
    ) -> Self {
        Self {
            topic,
            rule,
            band: None,
            range_g_per_kg: None,
            sessions: Vec::new(),
            text: text.into(),
            source: source.into(),
        }
    }

    pub(crate) fn with_band(mut self, band: LoadBand) -> Self {
        self.band = Some(band);
        self
    }

    pub(crate) fn with_range(mut self, range: GramsPerKgRange) -> Self {
        self.range_g_per_kg = Some(range);
        self
    }

    pub(crate) fn with_sessions(mut self, sessions: Vec<SessionRef>) -> Self {
        self.sessions = sessions;
        self
    }
}
