//! Glue between the store and the pure engine: loads what a computation
//! needs for a team and a date span, and turns stored records into engine
//! inputs (an athlete's profile on a date, the segments an athlete actually
//! does in a session).

use std::collections::HashMap;

use chrono::NaiveDate;
use uuid::Uuid;

use crate::domain::athlete::{Athlete, AthleteStatus, age_years};
use crate::domain::session::{Participation, ParticipationMode, Session};
use crate::domain::team::Team;
use crate::engine::profile::{AthleteProfile, Segment};
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
        },
        note,
    ))
}
