//! The board's view model: the only place that knows the shapes of the
//! API's JSON (plans, summaries, sessions, fuel, changes). Each struct
//! mirrors just the fields the pages show, so when the engine's output
//! gains or loses fields, this file is the one to adapt. Nothing here
//! computes a target: it selects, groups, orders and averages what the
//! API returned.

use std::collections::{BTreeMap, HashMap};

use chrono::{Datelike, NaiveDate, NaiveDateTime};
use serde::Deserialize;
use uuid::Uuid;

// ------------------------------------------------------------- API shapes

/// Plan times arrive as RFC 3339 local times with the team zone's offset
/// (`2026-12-07T10:00:00+00:00`); the board shows the wall-clock part, which
/// is what was planned. A time without an offset is read as it is.
mod local_time {
    use chrono::{DateTime, NaiveDateTime};
    use serde::{Deserialize, Deserializer, de::Error};

    pub fn parse(text: &str) -> Option<NaiveDateTime> {
        DateTime::parse_from_rfc3339(text)
            .map(|t| t.naive_local())
            .ok()
            .or_else(|| text.parse().ok())
    }

    pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<NaiveDateTime, D::Error> {
        let text = String::deserialize(d)?;
        parse(&text).ok_or_else(|| D::Error::custom(format!("not a local date-time: {text}")))
    }

    pub mod option {
        use super::*;

        pub fn deserialize<'de, D: Deserializer<'de>>(
            d: D,
        ) -> Result<Option<NaiveDateTime>, D::Error> {
            match Option::<String>::deserialize(d)? {
                None => Ok(None),
                Some(text) => super::parse(&text)
                    .map(Some)
                    .ok_or_else(|| D::Error::custom(format!("not a local date-time: {text}"))),
            }
        }
    }
}

/// RFC 9457 problem as the API sends it.
#[derive(Debug, Clone, Deserialize)]
pub struct Problem {
    #[serde(default)]
    pub title: String,
    #[serde(default)]
    pub status: u16,
    #[serde(default)]
    pub detail: String,
    #[serde(default)]
    pub errors: Vec<FieldError>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct FieldError {
    #[serde(default)]
    pub field: String,
    #[serde(default)]
    pub reason: String,
}

/// A list page (`{"items": […], "next_cursor": …}`).
#[derive(Debug, Deserialize)]
pub struct Page<T> {
    pub items: Vec<T>,
    #[serde(default)]
    pub next_cursor: Option<String>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct Team {
    pub id: Uuid,
    pub name: String,
    pub time_zone: String,
}

#[derive(Debug, Clone, Deserialize)]
pub struct BodyMass {
    pub body_mass_kg: f64,
    pub measured_on: NaiveDate,
}

#[derive(Debug, Clone, Deserialize)]
pub struct Athlete {
    pub id: Uuid,
    pub team_id: Uuid,
    pub display_name: String,
    pub date_of_birth: NaiveDate,
    #[serde(default)]
    pub position_group: Option<String>,
    #[serde(default)]
    pub dietary_notes: Option<String>,
    #[serde(default)]
    pub health_flags: Vec<String>,
    #[serde(default)]
    pub goal: Option<String>,
    #[serde(default)]
    pub goal_rate_kg_per_week: Option<f64>,
    #[serde(default)]
    pub latest_body_mass: Option<BodyMass>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct SegmentInfo {
    #[serde(default)]
    pub label: Option<String>,
    pub minutes: f64,
}

#[derive(Debug, Clone, Deserialize)]
pub struct Session {
    pub id: Uuid,
    pub team_id: Uuid,
    pub local_date: NaiveDate,
    /// "HH:MM".
    pub start_time: String,
    pub kind: String,
    pub title: String,
    #[serde(default)]
    pub key_session: bool,
    #[serde(default)]
    pub train_low: bool,
    #[serde(default)]
    pub segments: Vec<SegmentInfo>,
    pub total_minutes: f64,
    pub version: i64,
}

#[derive(Debug, Clone, Deserialize)]
pub struct Participation {
    pub athlete_id: Uuid,
    pub mode: String,
    #[serde(default)]
    pub minutes: Option<f64>,
    #[serde(default)]
    pub portion: Option<String>,
    #[serde(default)]
    pub note: Option<String>,
    pub version: i64,
}

#[derive(Debug, Clone, Deserialize)]
pub struct Pin {
    pub local_date: NaiveDate,
    #[serde(default)]
    pub carbohydrate_g_per_kg: Option<f64>,
    #[serde(default)]
    pub protein_g_per_kg: Option<f64>,
    #[serde(default)]
    pub energy_kcal: Option<f64>,
    #[serde(default)]
    pub note: Option<String>,
    pub version: i64,
}

/// One athlete-day of the squad summary (the rows of the CSV).
#[derive(Debug, Clone, Deserialize)]
pub struct SummaryRow {
    pub athlete_id: Uuid,
    pub display_name: String,
    pub date: NaiveDate,
    pub load_band: String,
    pub carbohydrate_g_per_kg: f64,
    pub carbohydrate_g: f64,
    #[serde(default)]
    pub carbohydrate_pinned: bool,
    pub protein_g: f64,
    pub fat_g: f64,
    pub energy_kcal: f64,
    pub energy_availability: f64,
    pub energy_availability_band: String,
    #[serde(default)]
    pub training_minutes: f64,
    #[serde(default)]
    pub sessions: usize,
    #[serde(default)]
    pub warnings: Vec<String>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct SessionRef {
    #[serde(default)]
    pub session_id: Option<Uuid>,
    pub title: String,
    #[serde(default, deserialize_with = "local_time::option::deserialize")]
    pub start: Option<NaiveDateTime>,
}

/// A week-level warning with its cause and fix.
#[derive(Debug, Clone, Deserialize)]
pub struct WeekWarning {
    pub code: String,
    pub severity: String,
    #[serde(default)]
    pub athlete_id: Option<Uuid>,
    pub date: NaiveDate,
    #[serde(default)]
    pub until: Option<NaiveDate>,
    #[serde(default, deserialize_with = "local_time::option::deserialize")]
    pub time: Option<NaiveDateTime>,
    #[serde(default)]
    pub session: Option<SessionRef>,
    pub cause: String,
    pub fix: String,
}

#[derive(Debug, Clone, Deserialize)]
pub struct Unplanned {
    pub athlete_id: Uuid,
    pub display_name: String,
    pub problems: Vec<String>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct Summary {
    pub from: NaiveDate,
    pub to: NaiveDate,
    pub version: i64,
    pub rows: Vec<SummaryRow>,
    #[serde(default)]
    pub unplanned: Vec<Unplanned>,
    #[serde(default)]
    pub warnings: Vec<WeekWarning>,
    #[serde(default)]
    pub cautions: Vec<String>,
}

#[derive(Debug, Clone, Copy, Deserialize)]
pub struct GlycogenLevel {
    pub muscle_fraction: f64,
}

#[derive(Debug, Clone, Deserialize)]
pub struct FuelSummary {
    pub minutes: f64,
    pub gross_energy_kcal: f64,
    pub carbohydrate_g: f64,
    pub fat_g: f64,
}

#[derive(Debug, Clone, Deserialize)]
pub struct WeekSession {
    #[serde(default)]
    pub session_id: Option<Uuid>,
    pub title: String,
    pub kind: String,
    #[serde(deserialize_with = "local_time::deserialize")]
    pub start: NaiveDateTime,
    #[serde(deserialize_with = "local_time::deserialize")]
    pub end: NaiveDateTime,
    #[serde(default)]
    pub key: bool,
    pub glycogen_at_start: GlycogenLevel,
    pub glycogen_at_end: GlycogenLevel,
    pub fuel_summary: FuelSummary,
}

#[derive(Debug, Clone, Deserialize)]
pub struct Range {
    pub min: f64,
    pub max: f64,
}

#[derive(Debug, Clone, Deserialize)]
pub struct Carbohydrate {
    pub g_per_kg: f64,
    pub g: f64,
    pub computed_g_per_kg: f64,
    pub pinned: bool,
    pub rule: String,
    pub range_g_per_kg: Range,
}

#[derive(Debug, Clone, Deserialize)]
pub struct Protein {
    pub g_per_kg: f64,
    pub g: f64,
    pub computed_g_per_kg: f64,
    pub pinned: bool,
}

#[derive(Debug, Clone, Deserialize)]
pub struct Fat {
    pub g: f64,
    pub percent_of_energy: f64,
}

#[derive(Debug, Clone, Deserialize)]
pub struct Energy {
    pub kcal: f64,
    pub computed_kcal: f64,
    pub pinned: bool,
}

#[derive(Debug, Clone, Deserialize)]
pub struct EnergyAvailability {
    pub kcal_per_kg_fat_free_mass: f64,
    pub band: String,
}

#[derive(Debug, Clone, Deserialize)]
pub struct Load {
    pub band: String,
}

#[derive(Debug, Clone, Deserialize)]
pub struct Occasion {
    #[serde(deserialize_with = "local_time::deserialize")]
    pub time: NaiveDateTime,
    pub kind: String,
    #[serde(default)]
    pub also_serves_as: Option<String>,
    #[serde(default)]
    pub session: Option<SessionRef>,
    pub carbohydrate_g: f64,
    pub protein_g: f64,
    pub fat_g: f64,
    pub energy_kcal: f64,
    #[serde(default)]
    pub carbohydrate_withheld_for_train_low: bool,
    #[serde(default)]
    pub note: String,
}

#[derive(Debug, Clone, Deserialize)]
pub struct Explanation {
    pub topic: String,
    pub text: String,
    #[serde(default)]
    pub source: String,
}

#[derive(Debug, Clone, Deserialize)]
pub struct DayWarning {
    pub code: String,
    pub severity: String,
    pub message: String,
}

#[derive(Debug, Clone, Deserialize)]
pub struct DayPlan {
    pub load: Load,
    pub carbohydrate: Carbohydrate,
    pub protein: Protein,
    pub fat: Fat,
    pub energy: Energy,
    pub energy_availability: EnergyAvailability,
    #[serde(default)]
    pub eating_occasions: Vec<Occasion>,
    #[serde(default)]
    pub explanations: Vec<Explanation>,
    #[serde(default)]
    pub warnings: Vec<DayWarning>,
    #[serde(default)]
    pub cautions: Vec<String>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct WeekDay {
    pub date: NaiveDate,
    pub body_mass_kg: f64,
    pub glycogen_at_start: GlycogenLevel,
    pub glycogen_at_end: GlycogenLevel,
    #[serde(default)]
    pub sessions: Vec<WeekSession>,
    pub plan: DayPlan,
}

#[derive(Debug, Clone, Copy, Deserialize)]
pub struct GlycogenPoint {
    #[serde(deserialize_with = "local_time::deserialize")]
    pub time: NaiveDateTime,
    pub muscle_fraction: f64,
}

#[derive(Debug, Clone, Copy, Deserialize)]
pub struct Thresholds {
    pub key_session_min_muscle_fraction: f64,
    pub near_empty_muscle_fraction: f64,
}

#[derive(Debug, Clone, Deserialize)]
pub struct StartAssumption {
    pub text: String,
}

#[derive(Debug, Clone, Deserialize)]
pub struct WeekPlan {
    pub from: NaiveDate,
    pub to: NaiveDate,
    pub start_assumption: StartAssumption,
    pub thresholds: Thresholds,
    pub days: Vec<WeekDay>,
    #[serde(default)]
    pub glycogen_series: Vec<GlycogenPoint>,
    #[serde(default)]
    pub warnings: Vec<WeekWarning>,
    #[serde(default)]
    pub cautions: Vec<String>,
}

/// One athlete's plan (`/v1/athletes/{id}/plan`, and each entry of the squad plan).
#[derive(Debug, Clone, Deserialize)]
pub struct AthletePlan {
    pub athlete_id: Uuid,
    pub display_name: String,
    #[serde(default)]
    pub plan: Option<WeekPlan>,
    #[serde(default)]
    pub problems: Vec<String>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct TeamPlan {
    pub from: NaiveDate,
    pub to: NaiveDate,
    pub version: i64,
    pub athletes: Vec<AthletePlan>,
    #[serde(default)]
    pub cautions: Vec<String>,
}

#[derive(Debug, Clone, Copy, Deserialize)]
pub struct FuelPoint {
    pub minute: f64,
    pub carbohydrate_share: f64,
}

#[derive(Debug, Clone, Deserialize)]
pub struct SegmentFuel {
    #[serde(default)]
    pub label: Option<String>,
    pub minutes: f64,
    pub carbohydrate_g: f64,
    pub fat_g: f64,
}

#[derive(Debug, Clone, Deserialize)]
pub struct SessionWarning {
    pub code: String,
    pub message: String,
}

#[derive(Debug, Clone, Deserialize)]
pub struct SessionFuel {
    pub total_minutes: f64,
    pub gross_energy_kcal: f64,
    pub carbohydrate_g: f64,
    pub fat_g: f64,
    pub mean_carbohydrate_share: f64,
    pub muscle_glycogen_used_fraction: f64,
    #[serde(default)]
    pub time_series: Vec<FuelPoint>,
    #[serde(default)]
    pub segments: Vec<SegmentFuel>,
    #[serde(default)]
    pub warnings: Vec<SessionWarning>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct AthleteSessionFuel {
    pub athlete_id: Uuid,
    pub display_name: String,
    pub takes_part: String,
    #[serde(default)]
    pub fuel: Option<SessionFuel>,
    #[serde(default)]
    pub notes: Vec<String>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct StoredSessionFuel {
    pub athletes: Vec<AthleteSessionFuel>,
    #[serde(default)]
    pub cautions: Vec<String>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct FieldChange {
    pub field: String,
    pub before: serde_json::Value,
    pub after: serde_json::Value,
}

#[derive(Debug, Clone, Deserialize)]
pub struct DayChange {
    pub athlete_id: Uuid,
    pub display_name: String,
    pub date: NaiveDate,
    pub kind: String,
    #[serde(default)]
    pub fields: Vec<FieldChange>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct InputChange {
    pub action: String,
    pub entity_type: String,
}

#[derive(Debug, Clone, Deserialize)]
pub struct PlanChanges {
    pub from_version: i64,
    pub to_version: i64,
    #[serde(default)]
    pub input_changes: Vec<InputChange>,
    pub days: Vec<DayChange>,
}

// ------------------------------------------------------- derived for pages

/// Words for how a day stands to the nearest match: a match today, in the
/// next three days, or in the last two.
pub fn match_distance(date: NaiveDate, match_dates: &[NaiveDate]) -> Option<String> {
    let days: Vec<i64> = match_dates.iter().map(|m| (*m - date).num_days()).collect();
    if days.contains(&0) {
        return Some("match day".into());
    }
    if let Some(ahead) = days.iter().filter(|d| (1..=3).contains(*d)).min() {
        return Some(if *ahead == 1 {
            "match tomorrow".into()
        } else {
            format!("match in {ahead} days")
        });
    }
    if let Some(after) = days.iter().filter(|d| (-2..=-1).contains(*d)).max() {
        return Some(if *after == -1 {
            "day after match".into()
        } else {
            format!("{} days after match", -after)
        });
    }
    None
}

/// Warnings that concern an athlete on a date, from the week warnings.
pub fn week_warnings_on(
    warnings: &[WeekWarning],
    athlete: Uuid,
    date: NaiveDate,
) -> impl Iterator<Item = &WeekWarning> {
    warnings.iter().filter(move |w| {
        w.athlete_id == Some(athlete) && w.date <= date && w.until.unwrap_or(w.date) >= date
    })
}

/// How to order the squad grid.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SquadOrder {
    Name,
    Position,
}

/// One row of the squad grid: an athlete and their days, in date order.
pub struct SquadRow<'a> {
    pub athlete_id: Uuid,
    pub display_name: &'a str,
    pub position_group: Option<&'a str>,
    pub days: Vec<Option<&'a SummaryRow>>,
}

/// The squad grid: athletes by days, grouped by position group when asked.
pub fn squad_rows<'a>(
    summary: &'a Summary,
    athletes: &'a [Athlete],
    dates: &[NaiveDate],
    order: SquadOrder,
) -> Vec<SquadRow<'a>> {
    let mut by_key: HashMap<(Uuid, NaiveDate), &SummaryRow> = HashMap::new();
    for r in &summary.rows {
        by_key.insert((r.athlete_id, r.date), r);
    }
    let positions: HashMap<Uuid, &str> = athletes
        .iter()
        .filter_map(|a| a.position_group.as_deref().map(|p| (a.id, p)))
        .collect();
    let mut names: BTreeMap<Uuid, &str> = BTreeMap::new();
    for r in &summary.rows {
        names.entry(r.athlete_id).or_insert(&r.display_name);
    }
    let mut rows: Vec<SquadRow<'a>> = names
        .into_iter()
        .map(|(id, name)| SquadRow {
            athlete_id: id,
            display_name: name,
            position_group: positions.get(&id).copied(),
            days: dates
                .iter()
                .map(|d| by_key.get(&(id, *d)).copied())
                .collect(),
        })
        .collect();
    rows.sort_by(|a, b| match order {
        SquadOrder::Name => a.display_name.cmp(b.display_name),
        SquadOrder::Position => (a.position_group.is_none(), a.position_group, a.display_name)
            .cmp(&(b.position_group.is_none(), b.position_group, b.display_name)),
    });
    rows
}

/// The dates of a span.
pub fn dates(from: NaiveDate, to: NaiveDate) -> Vec<NaiveDate> {
    from.iter_days().take_while(|d| *d <= to).collect()
}

/// "Tue 8 Dec".
pub fn short_date(d: NaiveDate) -> String {
    d.format("%a %-d %b").to_string()
}

/// "Tuesday 8 December 2026".
pub fn long_date(d: NaiveDate) -> String {
    d.format("%A %-d %B %Y").to_string()
}

/// ISO week of a date, e.g. "2026-W50".
pub fn iso_week(d: NaiveDate) -> String {
    let w = d.iso_week();
    format!("{}-W{:02}", w.year(), w.week())
}

/// Whether an athlete is under 18 on a date (from the stored date of birth).
pub fn under_18(date_of_birth: NaiveDate, on: NaiveDate) -> bool {
    on.years_since(date_of_birth).is_none_or(|y| y < 18)
}

/// A caution to show on the athlete page and beside their targets.
pub struct Caution {
    /// Short heading ("Under 18", "Medical flag: diabetes", …).
    pub heading: String,
    pub text: String,
}

/// The athlete's cautions: age, declared health flags, low energy
/// availability days, and body-mass change faster than the safe rate, each
/// taken from the stored athlete or the plan's own warnings.
pub fn athlete_cautions(athlete: &Athlete, plan: Option<&WeekPlan>) -> Vec<Caution> {
    let mut out = Vec::new();
    let first_day = plan.map_or(athlete.date_of_birth, |p| p.from);
    if under_18(athlete.date_of_birth, first_day) {
        out.push(Caution {
            heading: "Under 18".into(),
            text: "Adult targets do not simply apply to athletes under 18. Plan with a registered dietitian and the athlete's physician, following local rules for minors.".into(),
        });
    }
    for flag in &athlete.health_flags {
        out.push(Caution {
            heading: format!("Medical flag: {}", crate::board::html::words(flag)),
            text: "A declared health condition needs individual clinical care: use these figures only with the athlete's physician and a registered dietitian.".into(),
        });
    }
    if let Some(plan) = plan {
        let low: Vec<String> = plan
            .days
            .iter()
            .filter(|d| d.plan.energy_availability.band == "low")
            .map(|d| short_date(d.date))
            .collect();
        if !low.is_empty() {
            out.push(Caution {
                heading: "Low energy availability".into(),
                text: format!(
                    "Planned energy availability is in the low band on {}. Review intake with a registered dietitian; persistent low energy availability harms health and performance.",
                    low.join(", ")
                ),
            });
        }
        let mut rate: Vec<&str> = plan
            .warnings
            .iter()
            .filter(|w| w.code == "body_mass_change_above_safe_rate")
            .map(|w| w.cause.as_str())
            .collect();
        for day in &plan.days {
            for w in &day.plan.warnings {
                if w.code == "goal_rate_above_safe" && !rate.contains(&w.message.as_str()) {
                    rate.push(&w.message);
                }
            }
        }
        if let Some(first) = rate.first() {
            out.push(Caution {
                heading: "Rapid body-mass change".into(),
                text: format!("{first} Refer to a registered dietitian before continuing."),
            });
        }
    }
    out
}

/// The fuel mix of a session across its elapsed time, averaged over the
/// athletes who take full part (their clocks line up minute for minute).
pub struct SquadFuelMix {
    pub athletes: usize,
    /// (minute, mean carbohydrate share, lowest, highest) every 5 minutes.
    pub share: Vec<(f64, f64, f64, f64)>,
    /// Per segment: (start minute, end minute, label, carbohydrate g/min, fat g/min), squad means.
    pub segments: Vec<(f64, f64, String, f64, f64)>,
}

pub fn squad_fuel_mix(fuel: &StoredSessionFuel) -> SquadFuelMix {
    let full: Vec<&SessionFuel> = fuel
        .athletes
        .iter()
        .filter(|a| a.takes_part == "full")
        .filter_map(|a| a.fuel.as_ref())
        .collect();
    let mut share = Vec::new();
    if let Some(first) = full.first() {
        for (i, point) in first.time_series.iter().enumerate() {
            let values: Vec<f64> = full
                .iter()
                .filter_map(|f| f.time_series.get(i))
                .filter(|p| (p.minute - point.minute).abs() < 1e-6)
                .map(|p| p.carbohydrate_share)
                .collect();
            if values.is_empty() {
                continue;
            }
            let mean = values.iter().sum::<f64>() / values.len() as f64;
            let lo = values.iter().copied().fold(f64::INFINITY, f64::min);
            let hi = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
            share.push((point.minute, mean, lo, hi));
        }
    }
    let mut segments = Vec::new();
    if let Some(first) = full.first() {
        let mut start = 0.0;
        for (i, seg) in first.segments.iter().enumerate() {
            let per_min: Vec<(f64, f64)> = full
                .iter()
                .filter_map(|f| f.segments.get(i))
                .filter(|s| s.minutes > 0.0)
                .map(|s| (s.carbohydrate_g / s.minutes, s.fat_g / s.minutes))
                .collect();
            let n = per_min.len().max(1) as f64;
            let carbohydrate = per_min.iter().map(|p| p.0).sum::<f64>() / n;
            let fat = per_min.iter().map(|p| p.1).sum::<f64>() / n;
            let label = seg
                .label
                .clone()
                .unwrap_or_else(|| format!("part {}", i + 1));
            segments.push((start, start + seg.minutes, label, carbohydrate, fat));
            start += seg.minutes;
        }
    }
    SquadFuelMix {
        athletes: full.len(),
        share,
        segments,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn d(s: &str) -> NaiveDate {
        s.parse().unwrap()
    }

    #[test]
    fn days_are_named_by_their_distance_to_the_match() {
        let matches = [d("2026-12-12")];
        assert_eq!(
            match_distance(d("2026-12-12"), &matches).as_deref(),
            Some("match day")
        );
        assert_eq!(
            match_distance(d("2026-12-11"), &matches).as_deref(),
            Some("match tomorrow")
        );
        assert_eq!(
            match_distance(d("2026-12-09"), &matches).as_deref(),
            Some("match in 3 days")
        );
        assert_eq!(match_distance(d("2026-12-08"), &matches), None);
        assert_eq!(
            match_distance(d("2026-12-13"), &matches).as_deref(),
            Some("day after match")
        );
        assert_eq!(
            match_distance(d("2026-12-14"), &matches).as_deref(),
            Some("2 days after match")
        );
        // The coming match wins over the last one.
        let two = [d("2026-12-05"), d("2026-12-08")];
        assert_eq!(
            match_distance(d("2026-12-06"), &two).as_deref(),
            Some("match in 2 days")
        );
    }

    #[test]
    fn under_18_counts_the_birthday_itself() {
        assert!(under_18(d("2008-12-09"), d("2026-12-08")));
        assert!(!under_18(d("2008-12-08"), d("2026-12-08")));
    }
}
