//! One athlete over a span of days (one day to 120): sessions, daily plans and
//! estimated glycogen carried from day to day, with the warnings a dietitian
//! acts on. Entry point: [`plan_week`].
//!
//! Guided tour:
//! - [`WeekInput`]: the athlete's profile (and, optionally, planned body mass
//!   by date), the span, the athlete's [`PlannedSession`]s (the span plus the
//!   day before for look-back and two days after for look-ahead), settings,
//!   pins, health flags, an optional start state and the alert levels
//!   ([`WeekThresholds`]).
//! - [`WeekPlan`]: the start assumption, one [`WeekDay`] per date (the
//!   [`DayPlan`], glycogen at the start and end of the day and of each
//!   session, where the carbohydrate went), an hourly [`GlycogenPoint`]
//!   series for charts, [`WeekWarning`]s with a cause and a fix, and cautions.
//! - [`plan_week_with_model`]: the same with other glycogen-balance
//!   parameters, for sensitivity checks.
//!
//! ## Order of work for each day
//!
//! 1. **Forecast** today's sessions with [`simulate_session_for`], chaining
//!    them from the glycogen state at midnight (no intake counted yet).
//!    Sessions tomorrow and the day after (look-ahead for the day planner) are
//!    forecast from normal full stores: that is the state the plan aims to
//!    deliver, and forecasting them from depleted stores would lower their
//!    carbohydrate demand and so, perversely, today's target. Yesterday's
//!    sessions are passed as they were simulated.
//! 2. **Plan the day** with [`plan_day`] (settings, pins and health flags
//!    passed through): targets and eating occasions.
//! 3. **Simulate the day** in steps of at most 15 minutes, split at every
//!    eating occasion and session boundary ([`crate::engine::glycogen::balance`]):
//!    intake is absorbed and refills the stores; the liver runs down at rest;
//!    at each session's start the session is simulated again from the state
//!    reached by then (so intake before it counts, and low stores shift the
//!    fuel mix toward fat from the first minute, [`crate::engine::physiology::fuel_mix`]), and its
//!    muscle and liver use is drawn evenly over its clock time.
//! 4. If a session's simulated carbohydrate differs from the forecast by more
//!    than 5% (and 2 g), the day is planned again with the simulated sessions
//!    and simulated again, once. The day's targets therefore rest on session
//!    figures within a few percent of the ones reported.
//!
//! The start state, unless given, is normal full stores (muscle and liver) at
//! midnight before the first day, as after a rest day with normal eating.
//!
//! ## Warnings
//!
//! Day-level warnings stay in each [`DayPlan`]. The week adds its own, each
//! with the date and time, the session, the cause and a `fix`
//! ([`WeekWarningCode`]): a key session or match starting with muscle glycogen
//! below [`WeekThresholds::key_session_min_muscle_fraction`]; a session that
//! runs muscle or liver glycogen close to empty; two sessions too close for
//! the planned refuelling (one warning per pair, where the day planner flags
//! the pair on both days); energy availability in the low band on
//! consecutive days; a body-mass change faster than the safe rate.
//!
//! Every glycogen figure is an estimate of whole-body stores from a model,
//! not a measurement.

use std::collections::BTreeMap;

use chrono::{NaiveDate, NaiveDateTime, NaiveTime, TimeDelta, Timelike};
use serde::{Deserialize, Serialize};
use utoipa::ToSchema;
use uuid::Uuid;

use crate::engine::day::energy_availability::EnergyAvailabilityBand;
use crate::engine::day::notes::Severity;
use crate::engine::day::occasions::EatingOccasion;
use crate::engine::day::plan::{DayInput, DayPins, DayPlan, HealthFlag, PlanSettings, plan_day};
use crate::engine::day::session_fuelling::{
    SPEEDY_REFUELLING_GAP_HOURS, SPEEDY_REFUELLING_MAX_HOURS,
};
use crate::engine::day::session_work::{EventPreparation, SessionWork};
use crate::engine::glycogen::balance::{
    CarbohydrateStores, GlycogenFlows, GlycogenModel, Interval, SessionDraw, advance,
};
use crate::engine::glycogen::stores::{GlycogenCapacity, GlycogenState};
use crate::engine::physiology::athlete::{Estimate, ResolvedAthlete, resolve_athlete};
use crate::engine::physiology::session::{
    LOW_LIVER_GLYCOGEN_FRACTION, LOW_MUSCLE_GLYCOGEN_FRACTION, SessionFuel, simulate_session_for,
    validate_segments,
};
use crate::engine::profile::{AthleteProfile, GoalDirection, Segment, SessionKind};
use crate::engine::{FieldIssue, InvalidInput, Issues};

/// Longest span planned at once, days (inclusive of both ends).
pub const MAX_SPAN_DAYS: i64 = 120;
/// Most sessions in one request.
pub const MAX_SESSIONS: usize = 2000;
/// Longest clock duration of a session, minutes (as the day planner).
pub const MAX_CLOCK_MINUTES: f64 = 720.0;
/// Relative change of a session's carbohydrate that triggers re-planning a day.
const REPLAN_RELATIVE: f64 = 0.05;
/// ... and the absolute change, g.
const REPLAN_ABSOLUTE_G: f64 = 2.0;

// ---------------------------------------------------------------- input

/// One session as this athlete will do it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct PlannedSession {
    /// Id of the stored session, echoed in the output and warnings.
    #[serde(default)]
    pub session_id: Option<Uuid>,
    /// Short name, 1 to 200 characters.
    pub title: String,
    pub kind: SessionKind,
    /// Local date of the start.
    pub date: NaiveDate,
    /// Local start time.
    pub start_time: NaiveTime,
    /// What this athlete does, already adjusted for participation.
    pub segments: Vec<Segment>,
    /// The session's full length on the clock, minutes, when this athlete
    /// works fewer minutes (e.g. a substitute). At least the segments' total,
    /// at most 720.
    #[serde(default)]
    pub clock_minutes: Option<f64>,
    /// A session the coaches mark as important for performance.
    #[serde(default)]
    pub key_session: bool,
    /// Deliberately trained with low carbohydrate availability.
    #[serde(default)]
    pub train_low: bool,
    /// Carbohydrate loading enabled by the dietitian (events over 90 min).
    #[serde(default)]
    pub carbohydrate_loading: bool,
}

impl PlannedSession {
    fn start(&self) -> NaiveDateTime {
        self.date.and_time(self.start_time)
    }

    fn work_minutes(&self) -> f64 {
        self.segments.iter().map(|segment| segment.minutes).sum()
    }

    fn clock_minutes(&self) -> f64 {
        let work = self.work_minutes();
        self.clock_minutes.unwrap_or(work).max(work)
    }

    fn end(&self) -> NaiveDateTime {
        self.start() + TimeDelta::seconds((self.clock_minutes() * 60.0).round() as i64)
    }

    fn is_key(&self) -> bool {
        self.key_session || self.kind == SessionKind::Match
    }

    fn reference(&self) -> WeekSessionRef {
        WeekSessionRef {
            session_id: self.session_id,
            title: self.title.clone(),
            start: self.start(),
        }
    }
}

/// Planned (or measured) body mass from a date on.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct BodyMassEntry {
    pub date: NaiveDate,
    /// Body mass from this date until the next entry, kg (25 to 250).
    pub body_mass_kg: f64,
}

/// A dietitian's fixed values for one date.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct DatedPins {
    pub date: NaiveDate,
    /// Daily carbohydrate, g/kg (0 to 20).
    #[serde(default)]
    pub carbohydrate_g_per_kg: Option<f64>,
    /// Daily protein, g/kg (0.5 to 4).
    #[serde(default)]
    pub protein_g_per_kg: Option<f64>,
    /// Daily energy intake, kcal (500 to 10000).
    #[serde(default)]
    pub energy_kcal: Option<f64>,
}

impl DatedPins {
    fn day_pins(&self) -> DayPins {
        DayPins {
            carbohydrate_g_per_kg: self.carbohydrate_g_per_kg,
            protein_g_per_kg: self.protein_g_per_kg,
            energy_kcal: self.energy_kcal,
        }
    }
}

/// Alert levels of the week's warnings; every field may be omitted.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct WeekThresholds {
    /// A key session or match starting with estimated muscle glycogen below
    /// this fraction of normal stores is flagged, 0.2 to 1.0 (default 0.6).
    /// Our choice, not a published cut-off: a key session should start with
    /// near-normal stores, and 60% means a large part of a hard session's use
    /// was not replaced.
    #[serde(default = "default_key_fraction")]
    pub key_session_min_muscle_fraction: f64,
    /// A session ending with estimated muscle glycogen below this fraction of
    /// normal stores is flagged, 0.05 to 0.6 (default 0.25, the session
    /// model's own alert level).
    #[serde(default = "default_near_empty_muscle")]
    pub near_empty_muscle_fraction: f64,
    /// A session ending with estimated liver glycogen below this fraction of
    /// fed stores is flagged, 0.05 to 0.6 (default 0.2, the session model's
    /// own alert level).
    #[serde(default = "default_near_empty_liver")]
    pub near_empty_liver_fraction: f64,
    /// Consecutive days of planned energy availability in the low band that
    /// raise a week warning, 1 to 14 (default 2: common practice, one low day
    /// can be a deliberate choice, a run of them is a pattern).
    #[serde(default = "default_low_days")]
    pub low_energy_availability_days_in_a_row: u32,
}

fn default_key_fraction() -> f64 {
    0.6
}
fn default_near_empty_muscle() -> f64 {
    LOW_MUSCLE_GLYCOGEN_FRACTION
}
fn default_near_empty_liver() -> f64 {
    LOW_LIVER_GLYCOGEN_FRACTION
}
fn default_low_days() -> u32 {
    2
}

impl Default for WeekThresholds {
    fn default() -> Self {
        Self {
            key_session_min_muscle_fraction: default_key_fraction(),
            near_empty_muscle_fraction: default_near_empty_muscle(),
            near_empty_liver_fraction: default_near_empty_liver(),
            low_energy_availability_days_in_a_row: default_low_days(),
        }
    }
}

/// Everything needed to plan one athlete over a span of days.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct WeekInput {
    /// The athlete's id, echoed in the plan and its warnings.
    #[serde(default)]
    pub athlete_id: Option<Uuid>,
    /// The athlete; `body_mass_kg` applies from the first day.
    pub profile: AthleteProfile,
    /// Planned body mass from given dates on (dates unique, after `from`, at most `to`).
    #[serde(default)]
    pub body_mass_by_date: Vec<BodyMassEntry>,
    /// First planned date (local).
    pub from: NaiveDate,
    /// Last planned date (local), at most 119 days after `from`.
    pub to: NaiveDate,
    /// This athlete's sessions from the day before `from` to two days after `to`.
    #[serde(default)]
    pub sessions: Vec<PlannedSession>,
    /// Day-planner settings; omitted fields take their documented defaults.
    #[serde(default)]
    pub settings: PlanSettings,
    /// The dietitian's pinned values by date (dates unique, inside the span).
    #[serde(default)]
    pub pins: Vec<DatedPins>,
    /// Declared health conditions; each adds a caution every day.
    #[serde(default)]
    pub health_flags: Vec<HealthFlag>,
    /// Glycogen at midnight before `from`; default normal full stores.
    #[serde(default)]
    pub start_glycogen: Option<GlycogenState>,
    /// Alert levels of the week's warnings.
    #[serde(default)]
    pub thresholds: WeekThresholds,
    /// Include each session's full simulation (`fuel`), with its 5-minute
    /// series and estimates (default false: the summary only).
    #[serde(default)]
    pub include_session_fuel: bool,
}

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
    fn of(stores: &CarbohydrateStores, capacity: &GlycogenCapacity) -> Self {
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
    fn of(fuel: &SessionFuel) -> Self {
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
    pub plan: DayPlan,
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
    /// Plain-language cautions (the days' cautions, each once).
    pub cautions: Vec<String>,
    /// What was estimated about the athlete (first day's body mass).
    pub athlete_estimates: Vec<Estimate>,
}

/// The caution that goes with every glycogen figure.
pub const GLYCOGEN_CAUTION: &str = "Glycogen figures are estimates of whole-body stores from a model (published resynthesis rates, a resting liver draw and the session model), not measurements; the working muscles empty faster than the whole-body figure suggests. Use them to compare days and plans, and confirm decisions with a registered (sports) dietitian.";

// ---------------------------------------------------------------- planning

/// Plans one athlete over `from..=to`. Pure and deterministic.
pub fn plan_week(input: &WeekInput) -> Result<WeekPlan, InvalidInput> {
    plan_week_with_model(input, GlycogenModel::default())
}

/// [`plan_week`] with other glycogen-balance parameters (for calibration
/// and sensitivity checks; the service uses the defaults).
pub fn plan_week_with_model(
    input: &WeekInput,
    model: GlycogenModel,
) -> Result<WeekPlan, InvalidInput> {
    let first_athlete = validate(input)?;
    let mut planner = Planner::new(input, first_athlete)?;
    planner.model = model;
    planner.run()
}

/// Sessions and state shared by the day loop.
struct Planner<'a> {
    input: &'a WeekInput,
    model: GlycogenModel,
    /// Session indices by date, each list in start order.
    by_date: BTreeMap<NaiveDate, Vec<usize>>,
    pins: BTreeMap<NaiveDate, DayPins>,
    /// Body-mass entries sorted by date.
    masses: Vec<BodyMassEntry>,
    /// Athletes resolved per distinct body mass.
    athletes: Vec<ResolvedAthlete>,
    /// Each session forecast from full stores (look-ahead), computed lazily.
    full_forecast: Vec<Option<SessionWork>>,
    /// Each simulated session: its work as the day planner reads it.
    simulated_work: Vec<Option<SessionWork>>,
}

/// The part of the simulation that moves from one day to the next.
#[derive(Debug, Clone)]
struct Timeline {
    stores: CarbohydrateStores,
    last_session_end: Option<NaiveDateTime>,
    active: Option<ActiveSession>,
    /// Eaten at a time not yet reached (a late feed after midnight).
    pending_intake: Vec<(NaiveDateTime, f64)>,
}

#[derive(Debug, Clone, Copy)]
struct ActiveSession {
    index: usize,
    end: NaiveDateTime,
    draw: SessionDraw,
}

/// One simulated day, before it is kept.
struct DayRun {
    timeline: Timeline,
    starts: Vec<(usize, GlycogenLevel, SessionFuel)>,
    ends: Vec<(usize, GlycogenLevel)>,
    series: Vec<GlycogenPoint>,
    flows: GlycogenFlows,
}

impl<'a> Planner<'a> {
    fn new(input: &'a WeekInput, first: ResolvedAthlete) -> Result<Self, InvalidInput> {
        let mut order: Vec<usize> = (0..input.sessions.len()).collect();
        order.sort_by_key(|&i| (input.sessions[i].start(), i));
        let mut by_date: BTreeMap<NaiveDate, Vec<usize>> = BTreeMap::new();
        for i in order {
            by_date.entry(input.sessions[i].date).or_default().push(i);
        }
        let mut masses = input.body_mass_by_date.clone();
        masses.sort_by_key(|entry| entry.date);
        Ok(Self {
            input,
            model: GlycogenModel::default(),
            by_date,
            pins: input
                .pins
                .iter()
                .map(|pin| (pin.date, pin.day_pins()))
                .collect(),
            masses,
            athletes: vec![first],
            full_forecast: vec![None; input.sessions.len()],
            simulated_work: vec![None; input.sessions.len()],
        })
    }

    fn mass_on(&self, date: NaiveDate) -> f64 {
        self.masses
            .iter()
            .rev()
            .find(|entry| entry.date <= date)
            .map_or(self.input.profile.body_mass_kg, |entry| entry.body_mass_kg)
    }

    fn profile_on(&self, date: NaiveDate) -> AthleteProfile {
        let mut profile = self.input.profile.clone();
        profile.body_mass_kg = self.mass_on(date);
        profile
    }

    /// Index into `athletes` of the athlete with the day's body mass.
    fn athlete_on(&mut self, date: NaiveDate) -> Result<usize, InvalidInput> {
        let mass = self.mass_on(date);
        if let Some(found) = self
            .athletes
            .iter()
            .position(|athlete| athlete.body_mass_kg == mass)
        {
            return Ok(found);
        }
        let entry = self
            .input
            .body_mass_by_date
            .iter()
            .position(|entry| entry.body_mass_kg == mass);
        let athlete = resolve_athlete(&self.profile_on(date)).map_err(|error| {
            remap(error, |field| match entry {
                Some(k) if field == "profile.body_mass_kg" => {
                    format!("body_mass_by_date[{k}].body_mass_kg")
                }
                _ => field.to_string(),
            })
        })?;
        self.athletes.push(athlete);
        Ok(self.athletes.len() - 1)
    }

    fn sessions_on(&self, date: NaiveDate) -> Vec<usize> {
        self.by_date.get(&date).cloned().unwrap_or_default()
    }

    fn simulate(
        &self,
        athlete: usize,
        index: usize,
        start: Option<GlycogenState>,
    ) -> Result<SessionFuel, InvalidInput> {
        simulate_session_for(
            &self.athletes[athlete],
            &self.input.sessions[index].segments,
            start,
        )
        .map_err(|error| remap(error, |field| format!("sessions[{index}].{field}")))
    }

    fn work(&self, index: usize, fuel: &SessionFuel) -> SessionWork {
        let session = &self.input.sessions[index];
        SessionWork {
            session_id: session.session_id,
            title: session.title.clone(),
            kind: session.kind,
            start: session.start(),
            minutes: fuel.total_minutes,
            clock_minutes: session.clock_minutes,
            // The day planner reads intensities of 0.1-1.2 of VO2max; a seated
            // block (travel) is below that and counts as 0.1.
            mean_fraction_vo2max: fuel.mean_fraction_vo2max.clamp(0.1, 1.2),
            gross_kcal: fuel.gross_energy_kcal,
            net_kcal: fuel.net_energy_kcal.min(fuel.gross_energy_kcal),
            carbohydrate_g: fuel.carbohydrate_g,
            key_session: session.key_session,
            train_low: session.train_low,
            event_preparation: if session.carbohydrate_loading {
                EventPreparation::CarbohydrateLoading
            } else {
                EventPreparation::Automatic
            },
        }
    }

    /// Works of a date's sessions forecast from normal full stores.
    fn full_forecasts(&mut self, date: NaiveDate) -> Result<Vec<SessionWork>, InvalidInput> {
        let indices = self.sessions_on(date);
        if indices.is_empty() {
            return Ok(Vec::new());
        }
        let athlete = self.athlete_on(date)?;
        let mut works = Vec::with_capacity(indices.len());
        for index in indices {
            if self.full_forecast[index].is_none() {
                let fuel = self.simulate(athlete, index, None)?;
                self.full_forecast[index] = Some(self.work(index, &fuel));
            }
            works.extend(self.full_forecast[index].clone());
        }
        Ok(works)
    }

    fn run(mut self) -> Result<WeekPlan, InvalidInput> {
        let input = self.input;
        let first_capacity = self.athletes[0].glycogen_capacity;
        let (start_state, source, text) = match input.start_glycogen {
            Some(state) => (
                state,
                StartSource::Given,
                "Glycogen at midnight before the first day as given by the planner (estimates)."
                    .to_string(),
            ),
            None => (
                first_capacity.full(),
                StartSource::NormalStoresAfterRestDay,
                "Assumed: normal full muscle and liver glycogen at midnight before the first day, as after a rest day with normal eating (estimates). Give start_glycogen to override.".to_string(),
            ),
        };
        let start_at = input.from.and_time(NaiveTime::MIN);
        let mut timeline = Timeline {
            stores: CarbohydrateStores {
                muscle_g: start_state.muscle_g,
                liver_g: start_state.liver_g,
                gut_g: 0.0,
            },
            last_session_end: None,
            active: None,
            pending_intake: Vec::new(),
        };
        let start_assumption = StartAssumption {
            source,
            at: start_at,
            glycogen: GlycogenLevel::of(&timeline.stores, &first_capacity),
            text,
        };

        let span = (input.to - input.from).num_days() + 1;
        let mut days = Vec::with_capacity(span as usize);
        let mut series = Vec::with_capacity(span as usize * 26);
        let mut session_records: Vec<Option<WeekSession>> = vec![None; input.sessions.len()];
        let mut day_sessions: Vec<Vec<usize>> = Vec::with_capacity(span as usize);

        for date in input.from.iter_days().take(span as usize) {
            let athlete = self.athlete_on(date)?;
            let capacity = self.athletes[athlete].glycogen_capacity;
            // A lower body mass lowers capacity; stores cannot exceed it.
            timeline.stores.muscle_g = timeline.stores.muscle_g.min(capacity.muscle_g);
            timeline.stores.liver_g = timeline.stores.liver_g.min(capacity.liver_g);
            let at_start = GlycogenLevel::of(&timeline.stores, &capacity);
            let today = self.sessions_on(date);

            // 1. Forecast today's sessions, chained from the midnight state.
            let mut forecast = Vec::with_capacity(today.len());
            let mut state = GlycogenState {
                muscle_g: timeline.stores.muscle_g,
                liver_g: timeline.stores.liver_g,
            };
            for &index in &today {
                let fuel = self.simulate(athlete, index, Some(state))?;
                state = fuel.end_glycogen;
                forecast.push(self.work(index, &fuel));
            }
            let next_day = self.full_forecasts(date + TimeDelta::days(1))?;
            let day_after_next = self.full_forecasts(date + TimeDelta::days(2))?;
            let previous_date = date - TimeDelta::days(1);
            let previous_day = if previous_date < input.from {
                self.full_forecasts(previous_date)?
            } else {
                self.sessions_on(previous_date)
                    .into_iter()
                    .filter_map(|index| self.simulated_work[index].clone())
                    .collect()
            };
            let mut day_input = DayInput {
                profile: self.profile_on(date),
                date,
                sessions: forecast,
                next_day_sessions: next_day,
                day_after_next_sessions: day_after_next,
                previous_day_sessions: previous_day,
                settings: input.settings.clone(),
                pins: self.pins.get(&date).cloned().unwrap_or_default(),
                health_flags: input.health_flags.clone(),
            };

            // 2-3. Plan, then simulate the day with the plan's intake.
            let mut plan = self.plan(&day_input)?;
            let mut run =
                self.simulate_day(&timeline, date, &plan.eating_occasions, &today, athlete)?;
            // 4. Re-plan once when the simulated sessions differ from the forecast.
            let simulated: Vec<SessionWork> = run
                .starts
                .iter()
                .map(|(index, _, fuel)| self.work(*index, fuel))
                .collect();
            let differs = simulated
                .iter()
                .zip(&day_input.sessions)
                .any(|(actual, forecast)| {
                    let change = (actual.carbohydrate_g - forecast.carbohydrate_g).abs();
                    change > REPLAN_ABSOLUTE_G && change > REPLAN_RELATIVE * forecast.carbohydrate_g
                });
            if differs {
                day_input.sessions = simulated;
                plan = self.plan(&day_input)?;
                run =
                    self.simulate_day(&timeline, date, &plan.eating_occasions, &today, athlete)?;
            }

            for (index, level, fuel) in run.starts {
                let session = &input.sessions[index];
                self.simulated_work[index] = Some(self.work(index, &fuel));
                session_records[index] = Some(WeekSession {
                    session_id: session.session_id,
                    title: session.title.clone(),
                    kind: session.kind,
                    start: session.start(),
                    end: session.end(),
                    key: session.is_key(),
                    train_low: session.train_low,
                    glycogen_at_start: level,
                    // Replaced when the session's end is reached.
                    glycogen_at_end: level,
                    fuel_summary: SessionFuelSummary::of(&fuel),
                    fuel: input.include_session_fuel.then_some(fuel),
                });
            }
            for (index, level) in run.ends {
                if let Some(record) = session_records[index].as_mut() {
                    record.glycogen_at_end = level;
                }
            }
            timeline = run.timeline;
            series.extend(run.series);
            day_sessions.push(today);
            days.push(WeekDay {
                date,
                body_mass_kg: self.mass_on(date),
                glycogen_capacity: capacity,
                glycogen_at_start: at_start,
                glycogen_at_end: GlycogenLevel::of(&timeline.stores, &capacity),
                glycogen_flows: run.flows,
                sessions: Vec::new(),
                plan,
            });
        }
        // A session running past the last midnight ends with the state there.
        if let Some(active) = timeline.active
            && let Some(record) = session_records[active.index].as_mut()
            && let Some(day) = days.last()
        {
            record.glycogen_at_end = GlycogenLevel::of(&timeline.stores, &day.glycogen_capacity);
        }
        for (day, indices) in days.iter_mut().zip(day_sessions) {
            day.sessions = indices
                .into_iter()
                .filter_map(|index| session_records[index].take())
                .collect();
        }

        let warnings = self.warnings(&days);
        let mut cautions = vec![GLYCOGEN_CAUTION.to_string()];
        for day in &days {
            for caution in &day.plan.cautions {
                if !cautions.contains(caution) {
                    cautions.push(caution.clone());
                }
            }
        }
        Ok(WeekPlan {
            athlete_id: input.athlete_id,
            from: input.from,
            to: input.to,
            start_assumption,
            glycogen_model: self.model,
            thresholds: input.thresholds,
            days,
            glycogen_series: series,
            warnings,
            cautions,
            athlete_estimates: self.athletes[0].estimates.clone(),
        })
    }

    /// Calls the day planner, naming week fields in its errors.
    fn plan(&self, day: &DayInput) -> Result<DayPlan, InvalidInput> {
        plan_day(day).map_err(|error| {
            let lists: [(&str, &[SessionWork]); 4] = [
                ("sessions", &day.sessions),
                ("next_day_sessions", &day.next_day_sessions),
                ("day_after_next_sessions", &day.day_after_next_sessions),
                ("previous_day_sessions", &day.previous_day_sessions),
            ];
            let pin_index = self.input.pins.iter().position(|p| p.date == day.date);
            remap(error, |field| {
                for (name, works) in lists {
                    let Some(rest) = field.strip_prefix(&format!("{name}[")) else {
                        continue;
                    };
                    let Some((k, tail)) = rest.split_once(']') else {
                        continue;
                    };
                    let Some(work) = k.parse::<usize>().ok().and_then(|k| works.get(k)) else {
                        continue;
                    };
                    if let Some(index) = self
                        .input
                        .sessions
                        .iter()
                        .position(|s| s.start() == work.start && s.title == work.title)
                    {
                        return format!("sessions[{index}]{tail} (computed from its segments)");
                    }
                }
                match (field.strip_prefix("pins."), pin_index) {
                    (Some(tail), Some(k)) => format!("pins[{k}].{tail}"),
                    _ => field.to_string(),
                }
            })
        })
    }

    /// Simulates one day from `timeline` with the day's eating occasions.
    fn simulate_day(
        &self,
        timeline: &Timeline,
        date: NaiveDate,
        occasions: &[EatingOccasion],
        today: &[usize],
        athlete: usize,
    ) -> Result<DayRun, InvalidInput> {
        let model = &self.model;
        let resolved = &self.athletes[athlete];
        let capacity = resolved.glycogen_capacity;
        let day_start = date.and_time(NaiveTime::MIN);
        let day_end = day_start + TimeDelta::days(1);
        let mut timeline = timeline.clone();
        for occasion in occasions {
            if occasion.carbohydrate_g > 0.0 {
                timeline
                    .pending_intake
                    .push((occasion.time, occasion.carbohydrate_g));
            }
        }
        timeline.pending_intake.sort_by_key(|(time, _)| *time);

        // Breakpoints: the step grid, meals, session starts and ends, and the
        // end of the early resynthesis window.
        let step = TimeDelta::seconds((model.step_minutes * 60.0) as i64);
        let early = TimeDelta::seconds((model.early_resynthesis_hours * 3600.0) as i64);
        let mut points: Vec<NaiveDateTime> = Vec::with_capacity(128);
        let mut t = day_start;
        while t < day_end {
            points.push(t);
            t += step;
        }
        points.extend(
            timeline
                .pending_intake
                .iter()
                .map(|(time, _)| *time)
                .filter(|time| *time >= day_start && *time < day_end),
        );
        for &index in today {
            let session = &self.input.sessions[index];
            points.push(session.start());
            points.push(session.end());
            points.push(session.end() + early);
        }
        if let Some(active) = timeline.active {
            points.push(active.end);
            points.push(active.end + early);
        }
        if let Some(end) = timeline.last_session_end {
            points.push(end + early);
        }
        points.retain(|time| *time >= day_start && *time < day_end);
        points.sort();
        points.dedup();
        points.push(day_end);

        let mut starts = Vec::new();
        let mut ends = Vec::new();
        let mut series = Vec::with_capacity(26);
        let mut day_flows = GlycogenFlows::default();
        let mut starting = today.iter().peekable();
        for pair in points.windows(2) {
            let (now, next) = (pair[0], pair[1]);
            // Intake reached by now enters the gut.
            let due = timeline
                .pending_intake
                .iter()
                .take_while(|(time, _)| *time <= now)
                .count();
            for (_, grams) in timeline.pending_intake.drain(..due) {
                timeline.stores.gut_g += grams;
            }
            let mut event = false;
            if let Some(active) = timeline.active
                && active.end <= now
            {
                ends.push((active.index, GlycogenLevel::of(&timeline.stores, &capacity)));
                timeline.last_session_end = Some(active.end);
                timeline.active = None;
                event = true;
            }
            while let Some(&&index) = starting.peek() {
                let session = &self.input.sessions[index];
                if session.start() > now {
                    break;
                }
                starting.next();
                let state = GlycogenState {
                    muscle_g: timeline.stores.muscle_g,
                    liver_g: timeline.stores.liver_g,
                };
                let fuel = self.simulate(athlete, index, Some(state))?;
                let clock_hours = session.clock_minutes() / 60.0;
                starts.push((
                    index,
                    GlycogenLevel::of(&timeline.stores, &capacity),
                    fuel.clone(),
                ));
                timeline.active = Some(ActiveSession {
                    index,
                    end: session.end(),
                    draw: SessionDraw {
                        muscle_g_per_hour: fuel.muscle_glycogen_used_g / clock_hours,
                        liver_g_per_hour: fuel.blood_glucose_carbohydrate_g / clock_hours,
                        working_share: fuel.total_minutes / session.clock_minutes(),
                    },
                });
                event = true;
            }
            if event || (now.minute() == 0 && now.second() == 0) {
                series.push(GlycogenPoint {
                    time: now,
                    muscle_g: round_to(timeline.stores.muscle_g, 0.1),
                    liver_g: round_to(timeline.stores.liver_g, 0.1),
                    muscle_fraction: round_to(timeline.stores.muscle_g / capacity.muscle_g, 0.001),
                });
            }
            let hours = (next - now).num_seconds() as f64 / 3600.0;
            let interval = Interval {
                hours,
                body_mass_kg: resolved.body_mass_kg,
                muscle_mass_kg: capacity.muscle_mass_kg,
                muscle_capacity_g: capacity.muscle_g,
                liver_capacity_g: capacity.liver_g,
                early_after_session: timeline.active.is_none()
                    && timeline
                        .last_session_end
                        .is_some_and(|end| now >= end && now < end + early),
                session: timeline.active.map(|active| active.draw),
            };
            let (stores, flows) = advance(model, timeline.stores, &interval);
            timeline.stores = stores;
            day_flows.add(&flows);
        }
        Ok(DayRun {
            timeline,
            starts,
            ends,
            series,
            flows: day_flows,
        })
    }

    // ------------------------------------------------------------ warnings

    fn warnings(&self, days: &[WeekDay]) -> Vec<WeekWarning> {
        let input = self.input;
        let thresholds = &input.thresholds;
        let mut warnings = Vec::new();
        let new = |code, severity, date: NaiveDate, value: f64, threshold: f64| WeekWarning {
            code,
            severity,
            athlete_id: input.athlete_id,
            date,
            until: None,
            time: None,
            session: None,
            other_session: None,
            value,
            threshold,
            cause: String::new(),
            fix: String::new(),
        };

        for day in days {
            for session in &day.sessions {
                let planned = input
                    .sessions
                    .iter()
                    .find(|s| s.start() == session.start && s.title == session.title);
                let reference = planned.map(PlannedSession::reference);
                let start = session.glycogen_at_start;
                if session.key && start.muscle_fraction < thresholds.key_session_min_muscle_fraction
                {
                    let target_g =
                        thresholds.key_session_min_muscle_fraction * day.glycogen_capacity.muscle_g;
                    let before = self.previous_session(session.start);
                    let mut warning = new(
                        WeekWarningCode::KeySessionLowGlycogen,
                        Severity::Warning,
                        day.date,
                        start.muscle_fraction,
                        thresholds.key_session_min_muscle_fraction,
                    );
                    warning.time = Some(session.start);
                    warning.session = reference.clone();
                    warning.cause = format!(
                        "'{}' ({}) starts with estimated muscle glycogen at {:.0}% of normal stores ({:.0} g), under the {:.0}% alert level{}.",
                        session.title,
                        if session.kind == SessionKind::Match {
                            "match"
                        } else {
                            "key session"
                        },
                        start.muscle_fraction * 100.0,
                        start.muscle_g,
                        thresholds.key_session_min_muscle_fraction * 100.0,
                        before.map_or(String::new(), |s| format!(
                            " after '{}' on {}",
                            s.title,
                            s.start().format("%a %d %b %H:%M")
                        )),
                    );
                    warning.fix = format!(
                        "About {:.0} g more muscle glycogen is needed. Raise carbohydrate in the 24-36 h before (for example pin {} at 8-10 g/kg, inside the high-load range of Thomas, Erdman & Burke 2016){}; or move '{}' later or lighten the work before it.",
                        target_g - start.muscle_g,
                        (session.start.date() - TimeDelta::days(1)).format("%a %d %b"),
                        before.map_or(String::new(), |s| format!(
                            ", and plan speedy refuelling (1.0-1.2 g/kg/h for the first 4 h) after '{}'",
                            s.title
                        )),
                        session.title
                    );
                    warnings.push(warning);
                }
                let end = session.glycogen_at_end;
                if end.muscle_fraction < thresholds.near_empty_muscle_fraction {
                    let mut warning = new(
                        WeekWarningCode::MuscleGlycogenNearEmpty,
                        Severity::Warning,
                        day.date,
                        end.muscle_fraction,
                        thresholds.near_empty_muscle_fraction,
                    );
                    warning.time = Some(session.end);
                    warning.session = reference.clone();
                    warning.cause = format!(
                        "'{}' ends with estimated muscle glycogen at {:.0}% of normal stores ({:.0} g used, {:.0}% at the start): the working muscles are likely close to empty and performance late in the session suffers.",
                        session.title,
                        end.muscle_fraction * 100.0,
                        session.fuel_summary.muscle_glycogen_used_g,
                        start.muscle_fraction * 100.0
                    );
                    warning.fix = format!(
                        "Start '{}' with fuller stores (more carbohydrate in the 24 h before), take carbohydrate during it (30-60 g/h over 75 min, up to 90 g/h over 2.5 h), or shorten its hard part; refuel with 1.0-1.2 g/kg/h for the first 4 h after.",
                        session.title
                    );
                    warnings.push(warning);
                }
                if end.liver_fraction < thresholds.near_empty_liver_fraction {
                    let mut warning = new(
                        WeekWarningCode::LiverGlycogenNearEmpty,
                        Severity::Warning,
                        day.date,
                        end.liver_fraction,
                        thresholds.near_empty_liver_fraction,
                    );
                    warning.time = Some(session.end);
                    warning.session = reference.clone();
                    warning.cause = format!(
                        "'{}' ends with estimated liver glycogen at {:.0}% of fed stores ({:.0} g): blood glucose may fall toward the end.",
                        session.title,
                        end.liver_fraction * 100.0,
                        end.liver_g
                    );
                    warning.fix = format!(
                        "Plan 1-4 g/kg carbohydrate 1-4 h before '{}' (not after an overnight fast) and 30-60 g/h during it.",
                        session.title
                    );
                    warnings.push(warning);
                }
            }
        }

        self.gap_warnings(days, &new, &mut warnings);
        self.energy_availability_warnings(days, &new, &mut warnings);
        self.body_mass_warnings(&new, &mut warnings);
        warnings.sort_by_key(|w| (w.date, w.time, w.code as u8));
        warnings
    }

    fn previous_session(&self, before: NaiveDateTime) -> Option<&PlannedSession> {
        self.input
            .sessions
            .iter()
            .filter(|s| s.start() < before && before - s.start() < TimeDelta::hours(36))
            .max_by_key(|s| s.start())
    }

    fn gap_warnings(
        &self,
        days: &[WeekDay],
        new: &dyn Fn(WeekWarningCode, Severity, NaiveDate, f64, f64) -> WeekWarning,
        warnings: &mut Vec<WeekWarning>,
    ) {
        let input = self.input;
        let ordered: Vec<&PlannedSession> = self
            .by_date
            .values()
            .flatten()
            .map(|&i| &input.sessions[i])
            .collect();
        let in_span = |date: NaiveDate| date >= input.from && date <= input.to;
        for pair in ordered.windows(2) {
            let (first, second) = (pair[0], pair[1]);
            if !in_span(first.date) && !in_span(second.date) {
                continue;
            }
            let gap = (second.start() - first.end()).num_seconds() as f64 / 3600.0;
            // The day planner's two rules: under 4 h the refuelling and the
            // next pre-session meal collide; across midnight under 8 h the
            // refuelling runs into the night.
            let overnight = first.date != second.date;
            let limit = if overnight {
                SPEEDY_REFUELLING_GAP_HOURS
            } else {
                SPEEDY_REFUELLING_MAX_HOURS
            };
            if gap >= limit {
                continue;
            }
            let second_level = days
                .iter()
                .flat_map(|d| &d.sessions)
                .find(|s| s.start == second.start() && s.title == second.title)
                .map(|s| s.glycogen_at_start);
            let mut warning = new(
                WeekWarningCode::SessionsTooClose,
                Severity::Warning,
                second.date,
                gap,
                limit,
            );
            warning.time = Some(second.start());
            warning.session = Some(second.reference());
            warning.other_session = Some(first.reference());
            warning.cause = format!(
                "Only {gap:.1} h between the end of '{}' and the start of '{}'{}{}.",
                first.title,
                second.title,
                if overnight {
                    ": the refuelling after the first runs into the night and there is little time to eat before the second"
                } else {
                    ": the 4 h of speedy refuelling and the pre-session meal (1-4 h before) cannot both fit"
                },
                second_level.map_or(String::new(), |level| format!(
                    "; estimated muscle glycogen at the start of the second is {:.0}% of normal stores",
                    level.muscle_fraction * 100.0
                )),
            );
            let later = first.end() + TimeDelta::hours(limit as i64);
            warning.fix = format!(
                "Move '{}' to {} or later, or, if the times are fixed, start 1.0-1.2 g/kg/h of carbohydrate right after '{}' (small, familiar, easily digested feeds) and keep '{}' light.",
                second.title,
                later.format("%a %d %b %H:%M"),
                first.title,
                second.title
            );
            warnings.push(warning);
        }
    }

    fn energy_availability_warnings(
        &self,
        days: &[WeekDay],
        new: &dyn Fn(WeekWarningCode, Severity, NaiveDate, f64, f64) -> WeekWarning,
        warnings: &mut Vec<WeekWarning>,
    ) {
        let needed = self.input.thresholds.low_energy_availability_days_in_a_row as usize;
        let mut run: Vec<&WeekDay> = Vec::new();
        let mut flush = |run: &mut Vec<&WeekDay>| {
            if run.len() >= needed.max(1) {
                let first = run[0];
                let last = run[run.len() - 1];
                let ea = &first.plan.energy_availability;
                let lowest = run
                    .iter()
                    .map(|d| d.plan.energy_availability.kcal_per_kg_fat_free_mass)
                    .fold(f64::INFINITY, f64::min);
                let raise_kcal = run
                    .iter()
                    .map(|d| {
                        let ea = &d.plan.energy_availability;
                        (ea.thresholds.low_below - ea.kcal_per_kg_fat_free_mass)
                            * ea.fat_free_mass.kg
                    })
                    .fold(0.0, f64::max);
                let mut warning = new(
                    WeekWarningCode::LowEnergyAvailabilityDaysInARow,
                    Severity::Safety,
                    first.date,
                    lowest,
                    ea.thresholds.low_below,
                );
                warning.until = Some(last.date);
                warning.cause = format!(
                    "Planned energy availability is under {:.0} kcal/kg FFM/day (low) on {} days in a row, {} to {} (lowest {lowest:.1}): repeated low energy availability harms health and performance (relative energy deficiency in sport, IOC consensus).",
                    ea.thresholds.low_below,
                    run.len(),
                    first.date,
                    last.date
                );
                warning.fix = format!(
                    "Raise planned energy intake on these days by up to {:.0} kcal/day (to reach {:.0} kcal/kg FFM/day), reduce the planned body-mass deficit or lighten the training; review with a registered dietitian or a physician.",
                    raise_kcal.ceil(),
                    ea.thresholds.low_below
                );
                warnings.push(warning);
            }
            run.clear();
        };
        for day in days {
            if day.plan.energy_availability.band == EnergyAvailabilityBand::Low {
                run.push(day);
            } else {
                flush(&mut run);
            }
        }
        flush(&mut run);
    }

    fn body_mass_warnings(
        &self,
        new: &dyn Fn(WeekWarningCode, Severity, NaiveDate, f64, f64) -> WeekWarning,
        warnings: &mut Vec<WeekWarning>,
    ) {
        let input = self.input;
        let max_percent = input.settings.max_body_mass_change_percent_per_week;
        let profile = &input.profile;
        if let (GoalDirection::Reduce | GoalDirection::Gain, Some(rate)) =
            (profile.goal, profile.goal_rate_kg_per_week)
        {
            let percent = rate / profile.body_mass_kg * 100.0;
            if percent > max_percent {
                let safe = profile.body_mass_kg * max_percent / 100.0;
                let mut warning = new(
                    WeekWarningCode::BodyMassChangeAboveSafeRate,
                    if profile.goal == GoalDirection::Reduce {
                        Severity::Safety
                    } else {
                        Severity::Warning
                    },
                    input.from,
                    percent,
                    max_percent,
                );
                warning.cause = format!(
                    "The profile asks to {} {rate:.2} kg/week ({percent:.1}% of body mass), faster than {max_percent:.1}% per week (common practice: about 0.5-1%); each day's plan uses {safe:.2} kg/week instead.",
                    if profile.goal == GoalDirection::Reduce {
                        "lose"
                    } else {
                        "gain"
                    }
                );
                warning.fix = format!(
                    "Set the goal rate to {safe:.2} kg/week or less and plan the change over more weeks, supervised by a registered dietitian."
                );
                warnings.push(warning);
            }
        }
        // Planned masses: each step from the previous point, over at least a week
        // (day-to-day differences are mostly water).
        let mut previous = (input.from, profile.body_mass_kg);
        for entry in self.masses.iter().filter(|e| e.date > input.from) {
            let days = (entry.date - previous.0).num_days().max(7) as f64;
            let percent = (entry.body_mass_kg - previous.1).abs() / previous.1 * 100.0 * 7.0 / days;
            if percent > max_percent {
                let losing = entry.body_mass_kg < previous.1;
                let weeks = ((entry.body_mass_kg - previous.1).abs() / previous.1 * 100.0
                    / max_percent)
                    .ceil();
                let mut warning = new(
                    WeekWarningCode::BodyMassChangeAboveSafeRate,
                    if losing {
                        Severity::Safety
                    } else {
                        Severity::Warning
                    },
                    entry.date,
                    percent,
                    max_percent,
                );
                warning.cause = format!(
                    "Planned body mass goes from {:.1} kg on {} to {:.1} kg on {}: {percent:.1}% of body mass per week, faster than {max_percent:.1}% (common practice: about 0.5-1%).",
                    previous.1, previous.0, entry.body_mass_kg, entry.date
                );
                warning.fix = format!(
                    "Spread the change over at least {weeks:.0} weeks (no more than {max_percent:.1}% per week), supervised by a registered dietitian."
                );
                warnings.push(warning);
            }
            previous = (entry.date, entry.body_mass_kg);
        }
    }
}

fn round_to(value: f64, step: f64) -> f64 {
    (value / step).round() * step
}

/// Rewrites the field paths of an error.
fn remap(error: InvalidInput, rename: impl Fn(&str) -> String) -> InvalidInput {
    InvalidInput {
        issues: error
            .issues
            .into_iter()
            .map(|issue| FieldIssue {
                field: rename(&issue.field),
                reason: issue.reason,
            })
            .collect(),
    }
}

// ---------------------------------------------------------------- validation

/// Checks the whole input, reporting every issue at once; returns the
/// athlete resolved for the first day.
fn validate(input: &WeekInput) -> Result<ResolvedAthlete, InvalidInput> {
    let mut issues = Issues::default();
    let span = (input.to - input.from).num_days() + 1;
    if input.to < input.from {
        issues.push("to", "must not be before from");
    } else if span > MAX_SPAN_DAYS {
        issues.push(
            "to",
            format!("the span must be at most {MAX_SPAN_DAYS} days (got {span})"),
        );
    }

    // Profile and settings as the day planner and the athlete model see them.
    let athlete = resolve_athlete(&input.profile);
    if let Err(error) = &athlete {
        issues.0.extend(error.issues.iter().cloned());
    }
    let blank_day = DayInput {
        profile: input.profile.clone(),
        date: input.from,
        sessions: Vec::new(),
        next_day_sessions: Vec::new(),
        day_after_next_sessions: Vec::new(),
        previous_day_sessions: Vec::new(),
        settings: input.settings.clone(),
        pins: DayPins::default(),
        health_flags: Vec::new(),
    };
    if let Err(error) = plan_day(&blank_day) {
        for issue in error.issues {
            if !issues.0.iter().any(|known| known.field == issue.field) {
                issues.0.push(issue);
            }
        }
    }

    let mut mass_dates = Vec::new();
    for (k, entry) in input.body_mass_by_date.iter().enumerate() {
        let at = format!("body_mass_by_date[{k}]");
        issues.range(
            format!("{at}.body_mass_kg"),
            entry.body_mass_kg,
            25.0,
            250.0,
            "kg",
        );
        if let Some(ffm) = input.profile.fat_free_mass_kg
            && entry.body_mass_kg <= ffm
        {
            issues.push(
                format!("{at}.body_mass_kg"),
                "must be above profile.fat_free_mass_kg",
            );
        }
        if entry.date <= input.from || entry.date > input.to {
            issues.push(
                format!("{at}.date"),
                "must be after from (the profile's body mass applies on from) and not after to",
            );
        }
        if mass_dates.contains(&entry.date) {
            issues.push(format!("{at}.date"), "dates must be unique");
        }
        mass_dates.push(entry.date);
    }

    if input.sessions.len() > MAX_SESSIONS {
        issues.push("sessions", format!("at most {MAX_SESSIONS} sessions"));
    }
    let earliest = input.from - TimeDelta::days(1);
    let latest = input.to + TimeDelta::days(2);
    for (i, session) in input.sessions.iter().enumerate() {
        let at = format!("sessions[{i}]");
        let title = session.title.trim();
        if title.is_empty() || session.title.chars().count() > 200 {
            issues.push(format!("{at}.title"), "must be 1 to 200 characters");
        }
        if session.date < earliest || session.date > latest {
            issues.push(
                format!("{at}.date"),
                format!(
                    "must be between {earliest} and {latest} (the span, the day before it and two days after it)"
                ),
            );
        }
        let mut segment_issues = Issues::default();
        validate_segments(&session.segments, &mut segment_issues);
        for issue in segment_issues.0 {
            issues.push(format!("{at}.{}", issue.field), issue.reason);
        }
        if let Some(clock) = session.clock_minutes {
            issues.range(
                format!("{at}.clock_minutes"),
                clock,
                0.0,
                MAX_CLOCK_MINUTES,
                "minutes",
            );
            let work = session.work_minutes();
            if work.is_finite() && clock < work {
                issues.push(
                    format!("{at}.clock_minutes"),
                    format!("must not be below the segments' total of {work} minutes"),
                );
            }
        }
    }
    // An athlete cannot be in two sessions at once.
    let finite = |s: &PlannedSession| {
        s.segments
            .iter()
            .all(|segment| segment.minutes.is_finite() && segment.minutes.abs() <= 1e4)
            && s.clock_minutes
                .is_none_or(|c| c.is_finite() && c.abs() <= 1e4)
    };
    let mut order: Vec<usize> = (0..input.sessions.len())
        .filter(|&i| finite(&input.sessions[i]))
        .collect();
    order.sort_by_key(|&i| (input.sessions[i].start(), i));
    for pair in order.windows(2) {
        let (a, b) = (&input.sessions[pair[0]], &input.sessions[pair[1]]);
        if b.start() < a.end() {
            issues.push(
                format!("sessions[{}].start_time", pair[1]),
                format!("overlaps sessions[{}]", pair[0]),
            );
        }
    }

    let mut pin_dates = Vec::new();
    for (k, pin) in input.pins.iter().enumerate() {
        let at = format!("pins[{k}]");
        if pin.date < input.from || pin.date > input.to {
            issues.push(format!("{at}.date"), "must be inside from..to");
        }
        if pin_dates.contains(&pin.date) {
            issues.push(format!("{at}.date"), "dates must be unique");
        }
        pin_dates.push(pin.date);
        if let Some(value) = pin.carbohydrate_g_per_kg {
            issues.range(
                format!("{at}.carbohydrate_g_per_kg"),
                value,
                0.0,
                20.0,
                "g/kg",
            );
        }
        if let Some(value) = pin.protein_g_per_kg {
            issues.range(format!("{at}.protein_g_per_kg"), value, 0.5, 4.0, "g/kg");
        }
        if let Some(value) = pin.energy_kcal {
            issues.range(format!("{at}.energy_kcal"), value, 500.0, 10_000.0, "kcal");
        }
    }

    let t = &input.thresholds;
    issues.range(
        "thresholds.key_session_min_muscle_fraction",
        t.key_session_min_muscle_fraction,
        0.2,
        1.0,
        "(fraction of normal stores)",
    );
    issues.range(
        "thresholds.near_empty_muscle_fraction",
        t.near_empty_muscle_fraction,
        0.05,
        0.6,
        "(fraction of normal stores)",
    );
    issues.range(
        "thresholds.near_empty_liver_fraction",
        t.near_empty_liver_fraction,
        0.05,
        0.6,
        "(fraction of fed stores)",
    );
    if t.near_empty_muscle_fraction >= t.key_session_min_muscle_fraction {
        issues.push(
            "thresholds.near_empty_muscle_fraction",
            "must be below key_session_min_muscle_fraction",
        );
    }
    if !(1..=14).contains(&t.low_energy_availability_days_in_a_row) {
        issues.push(
            "thresholds.low_energy_availability_days_in_a_row",
            "must be between 1 and 14 days",
        );
    }

    if let (Some(state), Ok(athlete)) = (&input.start_glycogen, &athlete) {
        let capacity = athlete.glycogen_capacity;
        issues.range(
            "start_glycogen.muscle_g",
            state.muscle_g,
            0.0,
            capacity.muscle_g,
            "g (normal stores for this athlete; loading above them is not modelled)",
        );
        issues.range(
            "start_glycogen.liver_g",
            state.liver_g,
            0.0,
            capacity.liver_g,
            "g (fed liver stores)",
        );
    }

    issues.finish()?;
    athlete
}

#[cfg(test)]
mod tests;
