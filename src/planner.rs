//! Glue between the store and the pure engine: loads what a computation
//! needs for a team and a date span, and turns stored records into engine
//! inputs (an athlete's profile on a date, the segments an athlete actually
//! does in a session).

use std::collections::HashMap;

use chrono::{Datelike, NaiveDate};
use uuid::Uuid;

use crate::domain::athlete::{Athlete, AthleteStatus, age_years};
use crate::domain::session::{Participation, ParticipationMode, Session};
use crate::domain::team::Team;
use crate::engine::profile::{AthleteProfile, Segment, SessionKind};
use crate::store::{Db, athletes, sessions};

/// Cautions carried by every response that contains estimates.
pub const GENERAL_CAUTIONS: [&str; 3] = [
    "All figures are estimates for healthy adult athletes, computed from published equations and population averages; individual responses differ.",
    "Targets are a starting point for a qualified practitioner. Apply them with a registered (sports) dietitian, and defer to a physician and to local rules and regulations.",
    "Athletes under 18, pregnant athletes, athletes with diabetes or other medical conditions, and athletes with a history of disordered eating need individual clinical care: do not apply these numbers without it.",
];

pub fn general_cautions() -> Vec<String> {
    GENERAL_CAUTIONS.iter().map(|s| (*s).to_owned()).collect()
}

/// Everything stored about a team that a plan over `span` needs.
pub struct TeamData {
    pub team: Team,
    /// Active athletes, by display name.
    pub athletes: Vec<Athlete>,
    /// Body-mass readings per athlete, oldest first.
    pub body_mass: HashMap<Uuid, Vec<(NaiveDate, f64)>>,
    /// Sessions in the span, in calendar order.
    pub sessions: Vec<Session>,
    pub participation: HashMap<(Uuid, Uuid), Participation>,
}

impl TeamData {
    pub async fn load(
        db: &Db,
        team: Team,
        span: (NaiveDate, NaiveDate),
    ) -> Result<Self, sqlx::Error> {
        let mut all = Vec::new();
        let mut after = None;
        loop {
            let page = athletes::list(
                db,
                team.id,
                athletes::StatusFilter::Only(AthleteStatus::Active),
                after.clone(),
                500,
            )
            .await?;
            let more = page.len() > 500;
            all.extend(page.into_iter().take(500));
            if !more {
                break;
            }
            after = all.last().map(|a: &Athlete| (a.display_name.clone(), a.id));
        }
        let mut body_mass: HashMap<Uuid, Vec<(NaiveDate, f64)>> = HashMap::new();
        for (athlete, on, kg) in athletes::team_body_mass_up_to(db, team.id, span.1).await? {
            body_mass.entry(athlete).or_default().push((on, kg));
        }
        let sessions = sessions::all_in_span(db, team.id, span).await?;
        let participation = sessions::participation_in_span(db, team.id, span)
            .await?
            .into_iter()
            .map(|p| ((p.session_id, p.athlete_id), p))
            .collect();
        Ok(Self {
            team,
            athletes: all,
            body_mass,
            sessions,
            participation,
        })
    }

    /// The segments `athlete` does in `session`; `None` when skipped.
    pub fn segments_for(&self, session: &Session, athlete: Uuid) -> Option<Vec<Segment>> {
        segments_for(session, self.participation.get(&(session.id, athlete)))
    }
}

pub fn segments_for(session: &Session, exception: Option<&Participation>) -> Option<Vec<Segment>> {
    match exception {
        None => Some(session.segments.clone()),
        Some(p) if p.mode == ParticipationMode::Skipped => None,
        Some(p) => Some(p.apply(&session.segments)),
    }
}

/// The body mass the plan uses on `date`: the latest reading on or before
/// it; failing that, the earliest reading after it (said in the note).
pub fn body_mass_on(
    readings: &[(NaiveDate, f64)],
    date: NaiveDate,
) -> Option<(f64, Option<String>)> {
    if let Some((_, kg)) = readings.iter().rev().find(|(on, _)| *on <= date) {
        return Some((*kg, None));
    }
    readings.first().map(|(on, kg)| {
        (
            *kg,
            Some(format!(
                "no body-mass reading on or before {date}; used the reading of {on}"
            )),
        )
    })
}

/// The engine's view of an athlete on a date. `Err` says why no plan can be
/// made (no body mass at all).
pub fn profile_on(
    athlete: &Athlete,
    readings: &[(NaiveDate, f64)],
    date: NaiveDate,
) -> Result<(AthleteProfile, Option<String>), String> {
    let (body_mass_kg, note) = body_mass_on(readings, date)
        .ok_or_else(|| "no body-mass reading is stored for this athlete".to_owned())?;
    Ok((
        AthleteProfile {
            sex: athlete.sex,
            age_years: age_years(athlete.date_of_birth, date),
            height_cm: athlete.height_cm,
            body_mass_kg,
            body_fat_percent: athlete.body_fat_percent,
            fat_free_mass_kg: athlete.fat_free_mass_kg.filter(|ffm| *ffm < body_mass_kg),
            vo2max: athlete.vo2max.clone(),
            hr_max: athlete.hr_max,
            hr_rest: athlete.hr_rest,
            training_status: athlete.training_status,
            goal: athlete.goal,
            goal_rate_kg_per_week: athlete.goal_rate_kg_per_week,
            team_sport_work_factor: None,
        },
        note,
    ))
}

// ---------------------------------------------------------------------------
// Week plans for a team or one athlete.

use crate::engine::day::settings::PlanSettings;
use crate::engine::week::{
    BodyMassEntry, DatedPins, PlannedSession, WeekInput, WeekPlan, WeekThresholds, plan_week,
};

/// Days loaded before the span: the carry-over days (from the Thursday
/// before the Monday of the span's first week, see [`carry_from`]) and the
/// day before them. A span starting on a Sunday reaches furthest back.
pub const LOOK_BEHIND_DAYS: u64 = 6 + CARRY_OVER_DAYS + 1;
/// Days loaded after the span: next-day preparation and carbohydrate loading.
pub const LOOK_AHEAD_DAYS: u64 = 2;
/// Days simulated before the Monday of a span's first week.
pub const CARRY_OVER_DAYS: u64 = 4;

/// Where a plan's glycogen simulation starts: at normal stores on the
/// Thursday before the Monday of `from`'s week. Every span that starts in the
/// same week therefore reads the same day the same way, and the days before
/// carry their sessions and targets into the first day. Four days are
/// enough: stores converge within two to three days whatever the start
/// (refilling takes about 24 h on adequate intake, the post-match slowing
/// 48 h), and a test (`bench::tests`) checks that a full week of carry-over
/// changes no span figure a dietitian could see (the benchmark squad: at
/// most 0.0005 g/kg of carbohydrate and 0.02 g of muscle glycogen).
pub fn carry_from(from: NaiveDate) -> NaiveDate {
    let monday = from - chrono::Days::new(u64::from(from.weekday().num_days_from_monday()));
    monday - chrono::Days::new(CARRY_OVER_DAYS)
}

/// Options of one plan request.
#[derive(Debug, Clone)]
pub struct PlanOptions {
    pub span: (NaiveDate, NaiveDate),
    pub settings: PlanSettings,
    pub thresholds: WeekThresholds,
    /// Muscle and liver glycogen at the start, as a fraction of capacity;
    /// `None`: normal stores after a rest day.
    pub start_glycogen_fraction: Option<f64>,
    /// Include each session's full fuel result (5-minute series, segments, estimates).
    pub include_session_fuel: bool,
    /// Write each day's explanations (false for figure-only reads).
    pub explain_days: bool,
}

/// One athlete's plan, or why there is none.
pub struct AthleteWeek {
    pub athlete: Athlete,
    /// Shared with the plan memo: read it, never copy it whole.
    pub plan: Result<std::sync::Arc<WeekPlan>, Vec<String>>,
}

/// The engine input for one athlete.
pub fn week_input(
    data: &TeamData,
    pins: &HashMap<(Uuid, NaiveDate), crate::engine::day::settings::DayPins>,
    athlete: &Athlete,
    options: &PlanOptions,
) -> Result<WeekInput, Vec<String>> {
    let readings = data
        .body_mass
        .get(&athlete.id)
        .map(Vec::as_slice)
        .unwrap_or(&[]);
    let (mut profile, note) = profile_on(athlete, readings, options.span.0).map_err(|e| vec![e])?;
    profile.team_sport_work_factor = options
        .settings
        .team_sport_work_factor(athlete.position_group.as_deref());
    // Travel is planned by coaches but is not training: its small energy
    // cost sits inside the non-exercise activity factor, and it neither sets
    // the day's load band nor needs refuelling around it.
    let sessions = data
        .sessions
        .iter()
        .filter(|session| session.kind != SessionKind::Travel)
        .filter_map(|session| {
            let exception = data.participation.get(&(session.id, athlete.id));
            let segments = segments_for(session, exception)?;
            let mode = exception.map(|p| p.mode);
            let replaced = mode == Some(ParticipationMode::Replaced);
            // A replaced session (rehab instead of the match) is the athlete's
            // own work: no match rules, not a key session.
            let kind = match (replaced, session.kind) {
                (true, SessionKind::Match) => SessionKind::Training,
                (_, kind) => kind,
            };
            // A match is prepared as the whole match for every selected
            // player; the minutes played (once recorded) drive glycogen and
            // the days after.
            let prepared_segments = (mode == Some(ParticipationMode::Shortened)
                && session.kind == SessionKind::Match)
                .then(|| session.segments.clone());
            Some(PlannedSession {
                session_id: Some(session.id),
                title: session.title.clone(),
                kind,
                date: session.local_date,
                start_time: session.start_time,
                segments,
                prepared_segments,
                clock_minutes: exception.is_some().then_some(session.total_minutes),
                key_session: session.key_session && !replaced,
                train_low: session.train_low,
                carbohydrate_loading: session.carbohydrate_loading && !replaced,
            })
        })
        .collect();
    // The profile carries the mass on `from`; later readings change it day by day.
    let body_mass_by_date = readings
        .iter()
        .filter(|(date, _)| *date > options.span.0 && *date <= options.span.1)
        .map(|(date, kg)| BodyMassEntry {
            date: *date,
            body_mass_kg: *kg,
        })
        .collect();
    let mut athlete_pins: Vec<DatedPins> = pins
        .iter()
        .filter(|((id, _), _)| *id == athlete.id)
        .map(|((_, date), p)| DatedPins {
            date: *date,
            carbohydrate_g_per_kg: p.carbohydrate_g_per_kg,
            protein_g_per_kg: p.protein_g_per_kg,
            energy_kcal: p.energy_kcal,
        })
        .collect();
    athlete_pins.sort_by_key(|p| p.date);
    let start_glycogen = options.start_glycogen_fraction.map(|fraction| {
        let capacity = crate::engine::glycogen::stores::glycogen_capacity(
            profile.sex,
            profile.body_mass_kg,
            profile.training_status,
        );
        crate::engine::glycogen::stores::GlycogenState {
            muscle_g: capacity.muscle_g * fraction,
            liver_g: capacity.liver_g * fraction.min(1.0),
        }
    });
    let _ = note;
    let mut input = WeekInput {
        athlete_id: Some(athlete.id),
        profile,
        body_mass_by_date,
        from: options.span.0,
        to: options.span.1,
        sessions,
        settings: options.settings.clone(),
        pins: athlete_pins,
        health_flags: athlete.health_flags.clone(),
        carry_from: start_glycogen.is_none().then(|| carry_from(options.span.0)),
        start_glycogen,
        thresholds: options.thresholds,
        include_session_fuel: options.include_session_fuel,
        explain_days: options.explain_days,
    };
    // The engine reads sessions from the day before the first simulated day
    // (that day's "yesterday") to two days after the span; the store loads a
    // window wide enough for any span start, so trim it to what is read.
    let readable = (input.first_simulated_day() - chrono::Days::new(1))
        ..=(input.to + chrono::Days::new(LOOK_AHEAD_DAYS));
    input
        .sessions
        .retain(|session| readable.contains(&session.date));
    Ok(input)
}

/// Plans every athlete in `athletes`, spread over the machine's cores.
pub fn plan_athletes(
    data: &TeamData,
    pins: &HashMap<(Uuid, NaiveDate), crate::engine::day::settings::DayPins>,
    athletes: &[Athlete],
    options: &PlanOptions,
) -> Vec<AthleteWeek> {
    plan_athletes_with(data, pins, athletes, options, None)
}

/// [`plan_athletes`] reusing the plans of athletes whose engine input did
/// not change since `memo` planned them.
pub fn plan_athletes_with(
    data: &TeamData,
    pins: &HashMap<(Uuid, NaiveDate), crate::engine::day::settings::DayPins>,
    athletes: &[Athlete],
    options: &PlanOptions,
    memo: Option<&crate::plan_memo::PlanMemo>,
) -> Vec<AthleteWeek> {
    let plan_one = |athlete: &Athlete| AthleteWeek {
        athlete: athlete.clone(),
        plan: week_input(data, pins, athlete, options).and_then(|input| {
            match memo {
                Some(memo) => memo.plan(&input),
                None => plan_week(&input).map(std::sync::Arc::new),
            }
            .map_err(|e| {
                e.issues
                    .into_iter()
                    .map(|i| format!("{}: {}", i.field, i.reason))
                    .collect()
            })
        }),
    };
    // Athletes are planned on rayon's pool: its threads live as long as the
    // process, so their allocator caches stay warm (a thread spawned per plan
    // started each time from empty heaps, about a tenth of the service's time
    // under edits), and plans of different versions computed at once share
    // the same cores instead of adding threads.
    use rayon::prelude::*;
    if athletes.len() < 4 || rayon::current_num_threads() <= 1 {
        return athletes.iter().map(plan_one).collect();
    }
    athletes.par_iter().map(plan_one).collect()
}

/// Fluid guidance for an athlete's sessions from their latest sweat test
/// (Sawka et al. 2007: keep body-mass loss from sweat under 2 %).
#[derive(Debug, Clone, serde::Serialize, utoipa::ToSchema)]
pub struct FluidGuide {
    pub tested_on: NaiveDate,
    /// Estimated sweat rate, litres per hour, from that test.
    pub sweat_rate_l_per_hour: f64,
    pub sessions: Vec<SessionFluid>,
    pub source: String,
}

#[derive(Debug, Clone, serde::Serialize, utoipa::ToSchema)]
pub struct SessionFluid {
    pub session_id: Option<Uuid>,
    pub title: String,
    pub start: chrono::NaiveDateTime,
    /// Expected sweat loss, litres (estimate: tested rate x minutes).
    pub expected_sweat_loss_l: f64,
    /// Drink at least this much during the session to keep the loss under 2 % of body mass.
    pub drink_during_at_least_l: f64,
}

pub fn fluid_guide(
    test: &crate::store::planning::SweatTest,
    plan: &WeekPlan,
) -> Option<FluidGuide> {
    let rate = crate::engine::hydration::sweat_rate(&test.input())
        .ok()?
        .sweat_rate_l_per_hour;
    if !rate.is_finite() {
        return None;
    }
    let sessions = plan
        .days
        .iter()
        .flat_map(|day| {
            day.sessions.iter().map(move |s| {
                let loss = rate * s.fuel_summary.minutes / 60.0;
                let allowed = 0.02 * day.body_mass_kg;
                SessionFluid {
                    session_id: s.session_id,
                    title: s.title.clone(),
                    start: s.start,
                    expected_sweat_loss_l: (loss * 100.0).round() / 100.0,
                    drink_during_at_least_l: ((loss - allowed).max(0.0) * 100.0).round() / 100.0,
                }
            })
        })
        .collect();
    Some(FluidGuide {
        tested_on: test.tested_on,
        sweat_rate_l_per_hour: (rate * 100.0).round() / 100.0,
        sessions,
        source: "Sawka et al. (2007) Med Sci Sports Exerc 39:377: keep body-mass loss from sweat under 2 %; estimate, assumes the tested conditions".into(),
    })
}
