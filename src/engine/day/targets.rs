//! Daily targets: load band, carbohydrate, protein and fat.
//!
//! Guided tour:
//! - [`classify_day`]: puts a day into one of the load bands of Thomas,
//!   Erdman & Burke (2016) from the minutes and intensity of the athlete's work.
//! - [`daily_carbohydrate`]: "fuel for the work required". Inside the band the
//!   day sits at the band's low end plus the carbohydrate its work oxidises
//!   and the carbohydrate tomorrow's key sessions will need (both per kg),
//!   capped at the band's top. Competition rules (team-sport match practice,
//!   fuelling up, carbohydrate loading) then take over where they apply.
//! - [`daily_protein`] and [`fat_for_energy`]: protein 1.2-2.0 g/kg/d and fat as
//!   the energy left over, never below 20% of energy.
//!
//! Why this positioning keeps "more work never lowers carbohydrate": every
//! band's low and high edge is at least the lighter band's, the demand term
//! only grows with work, and each competition rule is a fixed range.

use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

use crate::engine::day::session_work::{
    RelativeDay, ResolvedPreparation, SessionRef, SessionWork, sorted, total,
};
use crate::engine::profile::GoalDirection;
use crate::engine::sources::THOMAS_2016;

/// A range in grams per kg body mass.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct GramsPerKgRange {
    /// Low end, g/kg.
    pub min: f64,
    /// High end, g/kg.
    pub max: f64,
}

impl GramsPerKgRange {
    pub const fn new(min: f64, max: f64) -> Self {
        Self { min, max }
    }

    pub fn contains(&self, value: f64) -> bool {
        value >= self.min - 1e-9 && value <= self.max + 1e-9
    }

    fn position(&self, value: f64) -> f64 {
        value.clamp(self.min, self.max)
    }
}

/// Daily carbohydrate load bands of Thomas, Erdman & Burke (2016).
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum LoadBand {
    /// Low intensity or skill-based activities: 3-5 g/kg/d.
    Light,
    /// Moderate exercise, about 1 h a day: 5-7 g/kg/d.
    Moderate,
    /// 1-3 h a day of moderate to high intensity: 6-10 g/kg/d.
    High,
    /// Over 4-5 h a day of moderate to high intensity: 8-12 g/kg/d.
    VeryHigh,
}

impl LoadBand {
    /// The band's range, g/kg/d (Thomas, Erdman & Burke 2016) [confirmed].
    pub fn range(self) -> GramsPerKgRange {
        match self {
            Self::Light => GramsPerKgRange::new(3.0, 5.0),
            Self::Moderate => GramsPerKgRange::new(5.0, 7.0),
            Self::High => GramsPerKgRange::new(6.0, 10.0),
            Self::VeryHigh => GramsPerKgRange::new(8.0, 12.0),
        }
    }

    pub fn name(self) -> &'static str {
        match self {
            Self::Light => "light",
            Self::Moderate => "moderate",
            Self::High => "high",
            Self::VeryHigh => "very high",
        }
    }
}

/// Team-sport match day and the day before: 6-8 g/kg (expert group statement
/// on nutrition in elite football, 2021) [from memory].
pub const TEAM_SPORT_MATCH_RANGE: GramsPerKgRange = GramsPerKgRange::new(6.0, 8.0);
/// General fuelling up before competition under 90 min: 7-12 g/kg in the 24 h
/// before (Thomas et al. 2016) [from memory].
pub const FUELLING_UP_RANGE: GramsPerKgRange = GramsPerKgRange::new(7.0, 12.0);
/// Carbohydrate loading for events over 90 min: 10-12 g/kg per 24 h for 36-48 h
/// (Thomas et al. 2016) [from memory].
pub const CARBOHYDRATE_LOADING_RANGE: GramsPerKgRange = GramsPerKgRange::new(10.0, 12.0);
/// Protein 1.2-2.0 g/kg/d (Thomas et al. 2016) [confirmed].
pub const PROTEIN_RANGE: GramsPerKgRange = GramsPerKgRange::new(1.2, 2.0);
/// Fat not below 20% of energy (Thomas et al. 2016) [from memory].
pub const FAT_MIN_SHARE: f64 = 0.20;
/// Usual upper end of fat, 35% of energy (Thomas et al. 2016) [from memory].
pub const FAT_USUAL_MAX_SHARE: f64 = 0.35;

/// Minutes of moderate-or-higher work that mark the edges between bands.
/// Common practice reading of the statement's "about 1 h", "1-3 h" and
/// "over 4-5 h": up to 75 min is about an hour, over 4 h is very high.
const MODERATE_DAY_MAX_MINUTES: f64 = 75.0;
const HIGH_DAY_MAX_MINUTES: f64 = 240.0;

/// The day's load as the planner sees it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct DayLoad {
    /// The day's load band.
    pub band: LoadBand,
    /// The band's range, g/kg/d.
    pub band_range: GramsPerKgRange,
    /// All of the athlete's session minutes on the day.
    pub total_minutes: f64,
    /// Minutes in sessions at or above the moderate-intensity threshold.
    pub moderate_or_higher_minutes: f64,
    /// Carbohydrate the day's sessions oxidise, g per kg body mass.
    pub carbohydrate_oxidised_g_per_kg: f64,
    /// Carbohydrate the next day's key sessions and matches will oxidise, g/kg.
    pub next_day_key_carbohydrate_g_per_kg: f64,
    /// Sessions that set the band (the moderate-or-higher ones, else all).
    pub driving_sessions: Vec<SessionRef>,
}

/// Classifies the day. `moderate_fraction_vo2max` is the intensity from
/// which a session counts as moderate (default 0.46: the lower edge of
/// "moderate" in the ACSM table, Garber et al. 2011, Med Sci Sports Exerc
/// 43:1334, from memory).
pub fn classify_day(
    today: &[SessionWork],
    next_day: &[SessionWork],
    body_mass_kg: f64,
    moderate_fraction_vo2max: f64,
) -> DayLoad {
    let total_minutes = total(today.iter().map(|s| s.minutes));
    let demanding: Vec<&SessionWork> = sorted(today)
        .into_iter()
        .filter(|s| s.mean_fraction_vo2max >= moderate_fraction_vo2max)
        .collect();
    let moderate_or_higher_minutes = total(demanding.iter().map(|s| s.minutes));
    let band = if moderate_or_higher_minutes <= 0.0 {
        LoadBand::Light
    } else if moderate_or_higher_minutes <= MODERATE_DAY_MAX_MINUTES {
        LoadBand::Moderate
    } else if moderate_or_higher_minutes <= HIGH_DAY_MAX_MINUTES {
        LoadBand::High
    } else {
        LoadBand::VeryHigh
    };
    let driving_sessions = if demanding.is_empty() {
        sorted(today)
            .iter()
            .map(|s| s.reference(RelativeDay::SameDay))
            .collect()
    } else {
        demanding
            .iter()
            .map(|s| s.reference(RelativeDay::SameDay))
            .collect()
    };
    DayLoad {
        band,
        band_range: band.range(),
        total_minutes,
        moderate_or_higher_minutes,
        carbohydrate_oxidised_g_per_kg: total(today.iter().map(|s| s.carbohydrate_g))
            / body_mass_kg,
        next_day_key_carbohydrate_g_per_kg: total(
            next_day
                .iter()
                .filter(|s| s.is_key())
                .map(|s| s.carbohydrate_g),
        ) / body_mass_kg,
        driving_sessions,
    }
}

/// Which rule set the day's carbohydrate.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum CarbohydrateRule {
    RestDay,
    LoadBand,
    TeamSportMatchDay,
    TeamSportMatchEve,
    FuellingUp,
    CarbohydrateLoading,
}

/// The computed daily carbohydrate with its reasons.
#[derive(Debug, Clone, PartialEq)]
pub struct CarbohydrateDecision {
    /// Carbohydrate, g per kg body mass per day.
    pub g_per_kg: f64,
    /// The rule that set the value.
    pub rule: CarbohydrateRule,
    /// The range of the rule that set the value.
    pub range: GramsPerKgRange,
    /// Sessions that drove the value (today's work and the event prepared for).
    pub sessions: Vec<SessionRef>,
    /// Plain-language explanation.
    pub text: String,
    /// Published source or practice label.
    pub source: String,
}

/// Competition sessions in the next two days that shape today's carbohydrate.
pub struct Upcoming<'a> {
    /// Tomorrow's sessions.
    pub next_day: &'a [SessionWork],
    /// Sessions the day after tomorrow.
    pub day_after_next: &'a [SessionWork],
    /// Hours of carbohydrate loading before the event (36 to 48).
    pub loading_hours: f64,
    /// Noon of the planned day: loading for an event the day after next
    /// reaches today only when it starts before this noon.
    pub today_noon: chrono::NaiveDateTime,
}

/// Daily carbohydrate in g/kg: load band first, then competition rules.
pub fn daily_carbohydrate(
    today: &[SessionWork],
    load: &DayLoad,
    upcoming: &Upcoming<'_>,
) -> CarbohydrateDecision {
    let demand = load.carbohydrate_oxidised_g_per_kg + load.next_day_key_carbohydrate_g_per_kg;
    let range = load.band_range;
    let band_value = range.position(range.min + demand);
    let mut sessions = load.driving_sessions.clone();
    sessions.extend(
        upcoming
            .next_day
            .iter()
            .filter(|s| s.is_key())
            .map(|s| s.reference(RelativeDay::NextDay)),
    );
    let demand_text = format!(
        "today's sessions oxidise about {:.1} g/kg and tomorrow's key sessions about {:.1} g/kg",
        load.carbohydrate_oxidised_g_per_kg, load.next_day_key_carbohydrate_g_per_kg
    );
    let mut decision = if today.is_empty() {
        CarbohydrateDecision {
            g_per_kg: band_value,
            rule: CarbohydrateRule::RestDay,
            range,
            sessions: sessions.clone(),
            text: format!(
                "Rest day: light band ({:.0}-{:.0} g/kg), low end, raised only by tomorrow's key work ({:.1} g/kg): {:.2} g/kg.",
                range.min, range.max, load.next_day_key_carbohydrate_g_per_kg, band_value
            ),
            source: format!("{THOMAS_2016}; rest-day placement is common practice"),
        }
    } else {
        CarbohydrateDecision {
            g_per_kg: band_value,
            rule: CarbohydrateRule::LoadBand,
            range,
            sessions: sessions.clone(),
            text: format!(
                "{} load band ({:.0}-{:.0} g/kg): {:.0} min of work, {:.0} min at moderate or higher intensity; {demand_text}; band low end plus that demand, capped at the band's top: {:.2} g/kg.",
                capitalise(load.band.name()),
                range.min,
                range.max,
                load.total_minutes,
                load.moderate_or_higher_minutes,
                band_value
            ),
            source: format!(
                "{THOMAS_2016}; positioning inside the band by fuel demand is common practice (fuel for the work required)"
            ),
        }
    };

    // Competition rules, strongest first: loading, fuelling up, team-sport match.
    let loading_event = upcoming
        .next_day
        .iter()
        .map(|s| (s, RelativeDay::NextDay))
        .chain(
            upcoming
                .day_after_next
                .iter()
                .filter(|s| {
                    crate::engine::day::session_work::add_hours(s.start, -upcoming.loading_hours)
                        < upcoming.today_noon
                })
                .map(|s| (s, RelativeDay::DayAfterNext)),
        )
        .find(|(s, _)| s.preparation() == ResolvedPreparation::CarbohydrateLoading);
    if let Some((event, day)) = loading_event {
        let rule_value =
            CARBOHYDRATE_LOADING_RANGE.position(CARBOHYDRATE_LOADING_RANGE.min + demand);
        let value = decision.g_per_kg.max(rule_value);
        decision = CarbohydrateDecision {
            g_per_kg: value,
            rule: CarbohydrateRule::CarbohydrateLoading,
            range: CARBOHYDRATE_LOADING_RANGE,
            sessions: with(sessions, event.reference(day)),
            text: format!(
                "Carbohydrate loading for '{}' ({:.0} min, over 90 min, loading enabled) within the {:.0} h before it: 10-12 g/kg, positioned by demand ({demand_text}): {value:.2} g/kg.",
                event.title, event.minutes, upcoming.loading_hours
            ),
            source: format!(
                "{THOMAS_2016} (carbohydrate loading 10-12 g/kg for 36-48 h, from memory)"
            ),
        };
        return decision;
    }
    if let Some(event) = upcoming
        .next_day
        .iter()
        .find(|s| s.preparation() == ResolvedPreparation::FuellingUp)
    {
        let rule_value = FUELLING_UP_RANGE.position(FUELLING_UP_RANGE.min + demand);
        let value = decision.g_per_kg.max(rule_value);
        return CarbohydrateDecision {
            g_per_kg: value,
            rule: CarbohydrateRule::FuellingUp,
            range: FUELLING_UP_RANGE,
            sessions: with(sessions, event.reference(RelativeDay::NextDay)),
            text: format!(
                "General fuelling up for '{}' ({:.0} min competition) tomorrow: 7-12 g/kg in the 24 h before, positioned by demand ({demand_text}): {value:.2} g/kg.",
                event.title, event.minutes
            ),
            source: format!("{THOMAS_2016} (general fuelling up 7-12 g/kg per 24 h, from memory)"),
        };
    }
    let match_today = today
        .iter()
        .find(|s| s.preparation() == ResolvedPreparation::TeamSportMatch);
    let match_tomorrow = upcoming
        .next_day
        .iter()
        .find(|s| s.preparation() == ResolvedPreparation::TeamSportMatch);
    if let Some((event, rule, day)) = match_today
        .map(|s| (s, CarbohydrateRule::TeamSportMatchDay, RelativeDay::SameDay))
        .or(match_tomorrow.map(|s| (s, CarbohydrateRule::TeamSportMatchEve, RelativeDay::NextDay)))
    {
        // A very high band day (over 4 h of hard work) keeps its own, higher range.
        if load.band == LoadBand::VeryHigh {
            return decision;
        }
        let value = TEAM_SPORT_MATCH_RANGE.position(TEAM_SPORT_MATCH_RANGE.min + demand);
        let when = if rule == CarbohydrateRule::TeamSportMatchDay {
            "today"
        } else {
            "tomorrow"
        };
        return CarbohydrateDecision {
            g_per_kg: value,
            rule,
            range: TEAM_SPORT_MATCH_RANGE,
            sessions: with(sessions, event.reference(day)),
            text: format!(
                "Team-sport match '{}' {when}: 6-8 g/kg on match day and the day before, positioned by this athlete's demand ({demand_text}): {value:.2} g/kg (the {} band alone would give {:.2}).",
                event.title,
                load.band.name(),
                band_value
            ),
            source: "Expert group statement on nutrition in elite football (2021), 6-8 g/kg on match day and the day before [from memory]".into(),
        };
    }
    decision
}

fn with(mut sessions: Vec<SessionRef>, extra: SessionRef) -> Vec<SessionRef> {
    if !sessions.contains(&extra) {
        sessions.push(extra);
    }
    sessions
}

fn capitalise(text: &str) -> String {
    let mut chars = text.chars();
    match chars.next() {
        Some(first) => first.to_uppercase().chain(chars).collect(),
        None => String::new(),
    }
}

/// Protein g/kg/d: the settings' everyday value, or the loss value (upper end
/// of 1.2-2.0) while body mass is being reduced.
pub fn daily_protein(goal: GoalDirection, everyday: f64, during_loss: f64) -> f64 {
    match goal {
        GoalDirection::Reduce => during_loss,
        _ => everyday,
    }
}

/// Fat and final energy.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FatAndEnergy {
    /// Fat, g.
    pub fat_g: f64,
    /// Energy after the fat floor, kcal.
    pub energy_kcal: f64,
    /// kcal the 20% floor added above the requested energy.
    pub floor_added_kcal: f64,
}

/// Atwater general factors, kcal per g (Atwater 1900s; common practice).
pub const KCAL_PER_G_CARBOHYDRATE: f64 = 4.0;
pub const KCAL_PER_G_PROTEIN: f64 = 4.0;
pub const KCAL_PER_G_FAT: f64 = 9.0;

/// Fat is what energy leaves after carbohydrate and protein. When that is
/// under 20% of energy, fat is raised to 20% of the new total (energy rises)
/// unless the energy is pinned, in which case the pin is kept and fat is the
/// remainder (never negative); the caller warns in both cases.
pub fn fat_for_energy(
    energy_kcal: f64,
    carbohydrate_g: f64,
    protein_g: f64,
    energy_pinned: bool,
) -> FatAndEnergy {
    let other = carbohydrate_g * KCAL_PER_G_CARBOHYDRATE + protein_g * KCAL_PER_G_PROTEIN;
    let remainder = energy_kcal - other;
    if remainder >= FAT_MIN_SHARE * energy_kcal {
        return FatAndEnergy {
            fat_g: remainder / KCAL_PER_G_FAT,
            energy_kcal,
            floor_added_kcal: 0.0,
        };
    }
    if energy_pinned {
        return FatAndEnergy {
            fat_g: remainder.max(0.0) / KCAL_PER_G_FAT,
            energy_kcal,
            floor_added_kcal: 0.0,
        };
    }
    // fat = 20% of E and E = other + fat, so E = other / 0.8.
    let raised = other / (1.0 - FAT_MIN_SHARE);
    FatAndEnergy {
        fat_g: FAT_MIN_SHARE * raised / KCAL_PER_G_FAT,
        energy_kcal: raised,
        floor_added_kcal: raised - energy_kcal,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::profile::SessionKind;
    use chrono::NaiveDate;

    fn session(minutes: f64, fraction: f64, carbohydrate_g: f64) -> SessionWork {
        SessionWork {
            session_id: None,
            title: "pitch session".into(),
            kind: SessionKind::Training,
            start: NaiveDate::from_ymd_opt(2026, 3, 10)
                .unwrap()
                .and_hms_opt(10, 0, 0)
                .unwrap(),
            minutes,
            clock_minutes: None,
            mean_fraction_vo2max: fraction,
            gross_kcal: 10.0 * minutes,
            net_kcal: 9.0 * minutes,
            carbohydrate_g,
            key_session: false,
            train_low: false,
            event_preparation: Default::default(),
        }
    }

    #[test]
    fn load_bands_match_the_position_statement() {
        // Thomas, Erdman & Burke (2016): light 3-5, moderate 5-7, high 6-10, very high 8-12 g/kg/d.
        assert_eq!(LoadBand::Light.range(), GramsPerKgRange::new(3.0, 5.0));
        assert_eq!(LoadBand::Moderate.range(), GramsPerKgRange::new(5.0, 7.0));
        assert_eq!(LoadBand::High.range(), GramsPerKgRange::new(6.0, 10.0));
        assert_eq!(LoadBand::VeryHigh.range(), GramsPerKgRange::new(8.0, 12.0));
        let m = 70.0;
        let band = |s: Vec<SessionWork>| classify_day(&s, &[], m, 0.46).band;
        assert_eq!(band(vec![]), LoadBand::Light);
        // Skill session at low intensity: light ("low intensity or skill-based").
        assert_eq!(band(vec![session(60.0, 0.40, 40.0)]), LoadBand::Light);
        // About 1 h moderate: moderate.
        assert_eq!(band(vec![session(60.0, 0.60, 120.0)]), LoadBand::Moderate);
        // 1-3 h moderate to high: high.
        assert_eq!(band(vec![session(120.0, 0.70, 300.0)]), LoadBand::High);
        // Over 4 h moderate to high: very high.
        assert_eq!(
            band(vec![
                session(150.0, 0.65, 300.0),
                session(150.0, 0.65, 300.0)
            ]),
            LoadBand::VeryHigh
        );
    }

    #[test]
    fn fat_floor_raises_energy_to_keep_twenty_percent() {
        // Thomas et al. (2016): fat not below 20% of energy (from memory).
        // 700 g CHO + 120 g protein = 3280 kcal; energy 3500 leaves 220 kcal (6%).
        let result = fat_for_energy(3500.0, 700.0, 120.0, false);
        let share = result.fat_g * 9.0 / result.energy_kcal;
        assert!((share - 0.20).abs() < 1e-9);
        assert!((result.energy_kcal - 4100.0).abs() < 1e-9);
        assert!((result.floor_added_kcal - 600.0).abs() < 1e-9);
        // Enough energy: fat is the remainder, energy unchanged.
        let result = fat_for_energy(3000.0, 400.0, 120.0, false);
        assert!((result.fat_g - (3000.0 - 2080.0) / 9.0).abs() < 1e-9);
        assert_eq!(result.floor_added_kcal, 0.0);
    }
}
