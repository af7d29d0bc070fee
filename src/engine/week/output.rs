//! What the week planner returns: days, sessions with glycogen at their
//! start and end, an hourly glycogen series and the week's warnings.

use super::*;

// ---------------------------------------------------------------- output

/// Estimated glycogen at one moment.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, ToSchema)]
pub struct GlycogenLevel {
    /// Whole-body muscle glycogen, g (estimate).
    pub muscle_g: f64,
    /// Liver glycogen, g (estimate).
    pub liver_g: f64,
    /// Muscle glycogen as a fraction of normal stores, 0-1.
    pub muscle_fraction: f64,
    /// Liver glycogen as a fraction of fed stores, 0-1.
    pub liver_fraction: f64,
}

impl GlycogenLevel {
    pub(super) fn of(stores: &CarbohydrateStores, capacity: &GlycogenCapacity) -> Self {
        Self {
            muscle_g: stores.muscle_g,
            liver_g: stores.liver_g,
            muscle_fraction: stores.muscle_g / capacity.muscle_g,
            liver_fraction: stores.liver_g / capacity.liver_g,
        }
    }
}

/// Where the start state came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum StartSource {
    /// Normal full stores, as after a rest day with normal eating (default).
    NormalStoresAfterRestDay,
    /// Given in the input.
    Given,
    /// Carried over from the plan of the days before the span, simulated from
    /// normal stores at `carry_from`.
    CarriedOver,
}

/// The state the simulation starts from.
#[derive(Debug, Clone, PartialEq, Serialize, ToSchema)]
pub struct StartAssumption {
    pub source: StartSource,
    /// Midnight before the first day (local).
    pub at: NaiveDateTime,
    pub glycogen: GlycogenLevel,
    /// The assumption in plain words.
    pub text: String,
}

/// The main numbers of a session's simulation (estimates).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, ToSchema)]
pub struct SessionFuelSummary {
    /// This athlete's minutes of work.
    pub minutes: f64,
    /// Time-weighted mean intensity, fraction of VO2max.
    pub mean_fraction_vo2max: f64,
    pub gross_energy_kcal: f64,
    pub net_energy_kcal: f64,
    pub carbohydrate_g: f64,
    pub fat_g: f64,
    /// Carbohydrate share of the session's energy, 0-1.
    pub mean_carbohydrate_share: f64,
    pub muscle_glycogen_used_g: f64,
    /// Blood glucose oxidised (charged to the liver), g.
    pub blood_glucose_carbohydrate_g: f64,
}

impl SessionFuelSummary {
    pub(super) fn of(fuel: &SessionFuel) -> Self {
        Self {
            minutes: fuel.total_minutes,
            mean_fraction_vo2max: fuel.mean_fraction_vo2max,
            gross_energy_kcal: fuel.gross_energy_kcal,
            net_energy_kcal: fuel.net_energy_kcal,
            carbohydrate_g: fuel.carbohydrate_g,
            fat_g: fuel.fat_g,
            mean_carbohydrate_share: fuel.mean_carbohydrate_share,
            muscle_glycogen_used_g: fuel.muscle_glycogen_used_g,
            blood_glucose_carbohydrate_g: fuel.blood_glucose_carbohydrate_g,
        }
    }
}

/// One session in the week, simulated from the glycogen state at its start.
#[derive(Debug, Clone, PartialEq, Serialize, ToSchema)]
pub struct WeekSession {
    pub session_id: Option<Uuid>,
    pub title: String,
    pub kind: SessionKind,
    /// Local start.
    pub start: NaiveDateTime,
    /// Local end on the clock.
    pub end: NaiveDateTime,
    /// Key session or match.
    pub key: bool,
    pub train_low: bool,
    /// Estimated glycogen at the start (intake before the session counted).
    pub glycogen_at_start: GlycogenLevel,
    /// Estimated glycogen at the end on the clock (intake during it counted).
    pub glycogen_at_end: GlycogenLevel,
    pub fuel_summary: SessionFuelSummary,
    /// The full simulation, when `include_session_fuel` was asked for. Its own
    /// `end_glycogen` leaves out intake during the session.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub fuel: Option<SessionFuel>,
}

/// One planned day.
#[derive(Debug, Clone, PartialEq, Serialize, ToSchema)]
pub struct WeekDay {
    pub date: NaiveDate,
    /// Body mass used on the day, kg.
    pub body_mass_kg: f64,
    /// Normal stores for that body mass (estimates).
    pub glycogen_capacity: GlycogenCapacity,
    /// Estimated glycogen at midnight at the start of the day.
    pub glycogen_at_start: GlycogenLevel,
    /// Estimated glycogen at midnight at the end of the day.
    pub glycogen_at_end: GlycogenLevel,
    /// Where the day's carbohydrate went (estimates).
    pub glycogen_flows: GlycogenFlows,
    /// The day's sessions in start order.
    pub sessions: Vec<WeekSession>,
    /// Targets, eating occasions, explanations, day warnings, cautions.
    // Shared, not copied, between the plans and the memo that reuse the day.
    #[schema(value_type = DayPlan)]
    pub plan: std::sync::Arc<DayPlan>,
}

/// One point of the glycogen series (estimates, rounded to 0.1 g).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, ToSchema)]
pub struct GlycogenPoint {
    /// Local time: every full hour, and each session's start and end.
    pub time: NaiveDateTime,
    pub muscle_g: f64,
    pub liver_g: f64,
    /// Muscle glycogen as a fraction of normal stores (3 decimals).
    pub muscle_fraction: f64,
}

/// Stable codes of the week's warnings. New codes may be added.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum WeekWarningCode {
    /// A key session or match starts with muscle glycogen below the alert level.
    KeySessionLowGlycogen,
    /// A session ends with muscle glycogen close to empty.
    MuscleGlycogenNearEmpty,
    /// A session ends with liver glycogen close to empty.
    LiverGlycogenNearEmpty,
    /// Two sessions are too close for the planned refuelling.
    SessionsTooClose,
    /// Energy availability is in the low band on consecutive days.
    LowEnergyAvailabilityDaysInARow,
    /// A planned body-mass change is faster than the safe rate.
    BodyMassChangeAboveSafeRate,
}

/// A session named in a warning.
#[derive(Debug, Clone, PartialEq, Serialize, ToSchema)]
pub struct WeekSessionRef {
    pub session_id: Option<Uuid>,
    pub title: String,
    /// Local start.
    pub start: NaiveDateTime,
}

/// A warning a dietitian acts on.
#[derive(Debug, Clone, PartialEq, Serialize, ToSchema)]
pub struct WeekWarning {
    pub code: WeekWarningCode,
    pub severity: Severity,
    /// The athlete, when the input named one.
    pub athlete_id: Option<Uuid>,
    /// Date the warning is about (the first, for runs of days).
    pub date: NaiveDate,
    /// Last date, for runs of days.
    pub until: Option<NaiveDate>,
    /// Local time, when the warning is about a moment.
    pub time: Option<NaiveDateTime>,
    /// The session concerned.
    pub session: Option<WeekSessionRef>,
    /// The other session, for two sessions too close.
    pub other_session: Option<WeekSessionRef>,
    /// The value behind the warning (fraction, hours, kcal/kg FFM/day, % per week).
    pub value: f64,
    /// The alert level it was compared with.
    pub threshold: f64,
    /// What is wrong, with the numbers.
    pub cause: String,
    /// The change that would fix it.
    pub fix: String,
}

/// One athlete's plan over the span.
#[derive(Debug, Clone, PartialEq, Serialize, ToSchema)]
pub struct WeekPlan {
    pub athlete_id: Option<Uuid>,
    pub from: NaiveDate,
    pub to: NaiveDate,
    pub start_assumption: StartAssumption,
    /// Parameters of the glycogen balance (see the science notes).
    pub glycogen_model: GlycogenModel,
    /// Alert levels used.
    pub thresholds: WeekThresholds,
    pub days: Vec<WeekDay>,
    /// Hourly estimated glycogen plus each session's start and end.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub glycogen_series: Vec<GlycogenPoint>,
    /// Warnings a dietitian acts on, by date and time.
    pub warnings: Vec<WeekWarning>,
    /// Warnings about the athlete rather than one day (fat-free mass
    /// estimated, under 18, a declared health condition, a capped goal rate,
    /// energy availability reduced by a planned deficit), each once for the
    /// span with the dates it applies to. The days' own warnings leave them out.
    pub athlete_warnings: Vec<AthleteWarning>,
    /// Plain-language cautions (the days' cautions, each once).
    pub cautions: Vec<String>,
    /// What was estimated about the athlete (first day's body mass).
    pub athlete_estimates: Vec<Estimate>,
}

/// A day-plan warning that is about the athlete, given once for the span.
#[derive(Debug, Clone, PartialEq, Serialize, ToSchema)]
pub struct AthleteWarning {
    pub code: crate::engine::day::notes::WarningCode,
    pub severity: Severity,
    /// The first day's message.
    pub message: String,
    /// Dates in the span it applies to, in order.
    pub dates: Vec<NaiveDate>,
}

/// The caution that goes with every glycogen figure.
pub const GLYCOGEN_CAUTION: &str = "Glycogen figures are estimates from a model (published resynthesis rates, a resting liver draw and the session model) of the working muscles (the lower body, about 55% of skeletal muscle) and the liver, not measurements. Use them to compare days and plans, and confirm decisions with a registered (sports) dietitian.";
