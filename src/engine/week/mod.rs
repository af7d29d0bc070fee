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
//! 1. **Forecast** the sessions of today, tomorrow and the day after (the
//!    day planner's look-ahead) with
//!    [`crate::engine::physiology::session::simulate_session_for`], each as
//!    prepared for (the whole match for a selected player) and from normal
//!    full stores: that is the state the plan aims to deliver, and
//!    forecasting from depleted stores would lower their carbohydrate demand
//!    and so, perversely, the target. Yesterday's sessions are passed as
//!    they were simulated.
//! 2. **Plan the day** with [`crate::engine::day::plan::plan_day`] (settings, pins and health flags
//!    passed through): targets and eating occasions.
//! 3. **Simulate the day** in steps of at most 30 minutes, split at every
//!    eating occasion and session boundary ([`crate::engine::glycogen::balance`]):
//!    intake is absorbed and refills the stores; the liver runs down at rest;
//!    at each session's start the session is simulated again from the state
//!    reached by then (so intake before it counts, and low stores shift the
//!    fuel mix toward fat from the first minute, [`crate::engine::physiology::fuel_mix`]), and its
//!    muscle and liver use is drawn evenly over its clock time.
//! 4. Keep what the day leaves: the state at midnight, the sessions as
//!    simulated (the next day's planner reads them as yesterday's), the day
//!    as shown. The day's own targets rest on the forecasts of step 1, never
//!    on the simulation, so a day is planned once.
//!
//! Steps 1-4 of one day read only the inputs of that day and its neighbours
//! and the state carried in, so [`plan_week_reusing`] can take a day
//! computed for an earlier plan whose day read exactly the same
//! ([`reuse`]): a change then costs the days it reaches, through the
//! look-ahead before it and the carried glycogen after it.
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

use chrono::{NaiveDate, NaiveDateTime, NaiveTime, TimeDelta};
use serde::{Deserialize, Serialize};
use utoipa::ToSchema;
use uuid::Uuid;

use crate::engine::day::energy_availability::EnergyAvailabilityBand;
use crate::engine::day::notes::{Severity, Warning, WarningCode};
use crate::engine::day::occasions::EatingOccasion;
use crate::engine::day::plan::{DayInput, DayPlan, Explain, plan_day_with, validate_day};
use crate::engine::day::session_fuelling::{
    SPEEDY_REFUELLING_GAP_HOURS, SPEEDY_REFUELLING_MAX_HOURS,
};
use crate::engine::day::session_work::{EventPreparation, SessionWork};
use crate::engine::day::settings::{DayPins, HealthFlag, PlanSettings};
use crate::engine::glycogen::balance::{
    CarbohydrateStores, GlycogenFlows, GlycogenModel, Interval, SessionDraw, advance,
};
use crate::engine::glycogen::stores::{GlycogenCapacity, GlycogenState};
use crate::engine::physiology::athlete::{Estimate, ResolvedAthlete, resolve_athlete};
use crate::engine::physiology::session::{
    Detail, LOW_LIVER_GLYCOGEN_FRACTION, LOW_MUSCLE_GLYCOGEN_FRACTION, SessionFuel,
    simulate_session_detail, validate_segments,
};
use crate::engine::profile::{AthleteProfile, GoalDirection, Segment, SessionKind};
use crate::engine::{FieldIssue, InvalidInput, Issues};

/// Longest span planned at once, days (inclusive of both ends).
pub const MAX_SPAN_DAYS: i64 = 120;
/// Most sessions in one request.
pub const MAX_SESSIONS: usize = 2000;
/// Longest clock duration of a session, minutes (as the day planner).
pub const MAX_CLOCK_MINUTES: f64 = 720.0;

mod digest;
mod input;
mod one_day;
mod output;
pub mod reuse;
mod simulate;
mod warnings;

pub use input::*;
pub use output::*;
use reuse::StoredTimeline;
pub use reuse::{DayKeys, DayOutcome, DayReuse};
use simulate::Timeline;

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

/// [`plan_week`] reusing the simulated days (and session forecasts) that
/// `reuse` kept from earlier plans whose days read exactly the same inputs
/// and carried-in state ([`reuse`]), and offering it the days computed now.
/// The plan is the one [`plan_week`] returns, bit for bit.
/// `keys`: [`DayKeys::new`] of this input with the default model.
pub fn plan_week_reusing(
    input: &WeekInput,
    keys: DayKeys,
    reuse: &dyn DayReuse,
) -> Result<WeekPlan, InvalidInput> {
    let first_athlete = validate(input)?;
    let mut planner = Planner::new(input, first_athlete)?;
    planner.keys = Some(keys);
    planner.reuse = Some(reuse);
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
    /// Days and forecasts kept from earlier plans, with this plan's keys.
    reuse: Option<&'a dyn DayReuse>,
    keys: Option<DayKeys>,
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
            reuse: None,
            keys: None,
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
        detail: Detail,
    ) -> Result<SessionFuel, InvalidInput> {
        let segments = &self.input.sessions[index].segments;
        simulate_session_detail(&self.for_session(athlete, index), segments, start, detail)
            .map_err(|error| remap(error, |field| format!("sessions[{index}].{field}")))
    }

    /// What a simulation of a session as it is done must record: the full
    /// result only when the plan returns it.
    fn detail(&self) -> Detail {
        if self.input.include_session_fuel {
            Detail::Full
        } else {
            Detail::Totals
        }
    }

    /// The athlete as they do session `index`: in a pitch session (training
    /// or match) a position's share of the work applies to the group's
    /// prescribed intensities too.
    fn for_session(&self, athlete: usize, index: usize) -> std::borrow::Cow<'_, ResolvedAthlete> {
        let resolved = &self.athletes[athlete];
        let pitch = matches!(
            self.input.sessions[index].kind,
            SessionKind::Training | SessionKind::Match
        );
        if pitch && resolved.team_sport_work_factor != 1.0 {
            let mut own = resolved.clone();
            own.prescription_work_factor = resolved.team_sport_work_factor;
            std::borrow::Cow::Owned(own)
        } else {
            std::borrow::Cow::Borrowed(resolved)
        }
    }

    /// The session as it is prepared for (the whole match for a selected
    /// player), simulated from normal stores.
    fn simulate_prepared(&self, athlete: usize, index: usize) -> Result<SessionFuel, InvalidInput> {
        let session = &self.input.sessions[index];
        // Only the totals of a forecast are read.
        let Some(prepared) = &session.prepared_segments else {
            return self.simulate(athlete, index, None, Detail::Totals);
        };
        simulate_session_detail(&self.athletes[athlete], prepared, None, Detail::Totals)
            .map_err(|error| remap(error, |field| format!("sessions[{index}].prepared_{field}")))
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
                let key = self
                    .keys
                    .as_ref()
                    .map(|keys| keys.forecast_key(index, self.athletes[athlete].body_mass_kg));
                let kept = match (key, self.reuse) {
                    (Some(key), Some(reuse)) => reuse.forecast(&key),
                    _ => None,
                };
                let work = match kept {
                    Some(work) => work,
                    None => {
                        let fuel = self.simulate_prepared(athlete, index)?;
                        let mut work = self.work(index, &fuel);
                        // Prepared for the whole session: timed by the whole clock too.
                        if self.input.sessions[index].prepared_segments.is_some() {
                            work.clock_minutes = None;
                        }
                        if let (Some(key), Some(reuse)) = (key, self.reuse) {
                            reuse.keep_forecast(key, work.clone());
                        }
                        work
                    }
                };
                self.full_forecast[index] = Some(work);
            }
            works.extend(self.full_forecast[index].clone());
        }
        Ok(works)
    }

    fn run(mut self) -> Result<WeekPlan, InvalidInput> {
        let input = self.input;
        let first_day = input.first_simulated_day();
        let first_capacity = self.athletes[0].glycogen_capacity;
        let start_state = input
            .start_glycogen
            .unwrap_or_else(|| first_capacity.full());
        let mut timeline = Timeline {
            stores: CarbohydrateStores {
                muscle_g: start_state.muscle_g,
                liver_g: start_state.liver_g,
                gut_g: 0.0,
            },
            last_session_end: None,
            active: None,
            pending_intake: Vec::new(),
            slowed_until: None,
        };
        let mut start_assumption = None;

        let simulated = (input.to - first_day).num_days() + 1;
        let span = (input.to - input.from).num_days() + 1;
        let mut days = Vec::with_capacity(span as usize);
        let mut series = Vec::with_capacity(span as usize * 26);
        let mut session_records: Vec<Option<WeekSession>> = vec![None; input.sessions.len()];
        let mut day_sessions: Vec<Vec<usize>> = Vec::with_capacity(span as usize);
        let mut athlete_level = Vec::new();

        for date in first_day.iter_days().take(simulated as usize) {
            let in_span = date >= input.from;
            let today = self.sessions_on(date);
            let key = self
                .keys
                .as_ref()
                .map(|keys| keys.key(&self, date, &timeline));
            let kept = match (key, self.reuse) {
                (Some(key), Some(reuse)) => reuse.day(&key),
                _ => None,
            };
            // Days and their plans are shared with the memo: the clone
            // copies the day's small parts and counts references to the rest.
            let outcome = match kept {
                Some(kept) => DayOutcome::clone(&kept),
                None => {
                    let outcome = self.compute_day(date, &timeline, &today)?;
                    if let (Some(key), Some(reuse)) = (key, self.reuse) {
                        reuse.keep_day(key, std::sync::Arc::new(outcome.clone()));
                    }
                    outcome
                }
            };

            let yesterday = self.sessions_on(date - TimeDelta::days(1));
            if let Some(assumption) = outcome.start_assumption {
                start_assumption = Some(assumption);
            }
            for (place, level, fuel) in outcome.starts {
                let index = today[place];
                let session = &input.sessions[index];
                self.simulated_work[index] = Some(self.work(index, &fuel));
                let summary = SessionFuelSummary::of(&fuel);
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
                    fuel_summary: summary,
                    fuel: input
                        .include_session_fuel
                        .then(|| std::sync::Arc::unwrap_or_clone(fuel)),
                });
            }
            for (from_yesterday, place, level) in outcome.ends {
                let index = if from_yesterday {
                    yesterday[place]
                } else {
                    today[place]
                };
                if let Some(record) = session_records[index].as_mut() {
                    record.glycogen_at_end = level;
                }
            }
            timeline = outcome.timeline.restore(&today);
            if !in_span {
                continue;
            }
            series.extend(outcome.series);
            if let Some(day) = &outcome.day {
                athlete_level.push((day.date, outcome.athlete_level));
            }
            day_sessions.push(today);
            days.extend(outcome.day);
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

        let athlete_warnings = athlete_warnings(athlete_level);
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
            start_assumption: start_assumption.expect("the span has a first day"),
            glycogen_model: self.model,
            thresholds: input.thresholds,
            days,
            glycogen_series: series,
            warnings,
            athlete_warnings,
            cautions,
            athlete_estimates: self.athletes[0].estimates.clone(),
        })
    }
}

/// Day-plan warnings that are about the athlete, not the day: moved out of
/// each day (as it is computed) into one entry per code for the span.
pub(super) const ATHLETE_LEVEL: [WarningCode; 6] = [
    WarningCode::BodyMassLossNotPlannedUnder18,
    WarningCode::FatFreeMassEstimated,
    WarningCode::UnderEighteen,
    WarningCode::HealthCondition,
    WarningCode::GoalRateAboveSafe,
    WarningCode::EnergyAvailabilityReduced,
];

/// One entry per code and severity for the span, from each shown day's
/// athlete-level warnings (in date order): the first day's message, and
/// every date.
fn athlete_warnings(by_day: Vec<(NaiveDate, Vec<Warning>)>) -> Vec<AthleteWarning> {
    let mut out: Vec<AthleteWarning> = Vec::new();
    for (date, warnings) in by_day {
        for warning in warnings {
            match out
                .iter_mut()
                .find(|w| w.code == warning.code && w.severity == warning.severity)
            {
                Some(found) => {
                    if found.dates.last() != Some(&date) {
                        found.dates.push(date);
                    }
                }
                None => out.push(AthleteWarning {
                    code: warning.code,
                    severity: warning.severity,
                    message: warning.message,
                    dates: vec![date],
                }),
            }
        }
    }
    out
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

#[cfg(test)]
mod plausibility_tests;
#[cfg(test)]
mod properties;
#[cfg(test)]
mod step_tolerance_tests;
#[cfg(test)]
mod tests;
