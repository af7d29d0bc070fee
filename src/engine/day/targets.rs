//! Daily targets: carbohydrate from the day's work, its load band, protein
//! and fat.
//!
//! Guided tour:
//! - [`classify_day`]: measures the day's fuel demand in g/kg: the
//!   carbohydrate today's sessions oxidise (forecast from normal stores, so the
//!   demand is the work's, not the state's), a share of tomorrow's key work,
//!   all of tomorrow's competition, and the working-muscle glycogen still
//!   missing at the start of the day.
//! - [`work_curve`]: turns that demand into g/kg/day with one smooth,
//!   saturating curve through the position stand's bands (light 3-5,
//!   moderate 5-7, high 6-10, very high 8-12 g/kg/d). There are no edges in
//!   minutes or intensity, so one more minute or a slightly different fitness
//!   test moves the target by a little, never by a band.
//! - [`LoadBand::of`]: the band a value falls in (the band whose range holds it
//!   and whose middle is nearest), a label for people, not a step.
//! - [`daily_carbohydrate`]: competition rules (team-sport match practice,
//!   fuelling up, carbohydrate loading) hold the curve inside their published
//!   ranges on the days they apply.
//! - [`daily_protein`] and [`fit_fat`]: protein 1.2-2.0 g/kg/d and fat as the
//!   energy left over, kept inside 20-35% of energy.
//!
//! Why "more work never lowers carbohydrate": the demand only grows with
//! work, the curve is increasing, and each competition rule is a clamp into a
//! fixed range.

use crate::engine::decimal::Dec;
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

    /// The band a daily value falls in: of the bands whose range holds it,
    /// the one whose middle is nearest (the ranges overlap). Below 3 g/kg is
    /// light, above 12 very high.
    pub fn of(g_per_kg: f64) -> Self {
        let all = [Self::Light, Self::Moderate, Self::High, Self::VeryHigh];
        if g_per_kg <= 3.0 {
            return Self::Light;
        }
        all.into_iter()
            .filter(|band| band.range().contains(g_per_kg))
            .min_by(|a, b| {
                let mid = |band: &Self| (band.range().min + band.range().max) / 2.0;
                (mid(a) - g_per_kg)
                    .abs()
                    .total_cmp(&(mid(b) - g_per_kg).abs())
            })
            .unwrap_or(Self::VeryHigh)
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

/// The work curve: `WORK_CURVE_FLOOR + WORK_CURVE_SPAN x (1 - exp(-demand /
/// WORK_CURVE_SCALE))`, demand in g/kg. Calibrated (ours, common practice) so
/// that a rest day sits at the light band's low end (3 g/kg), about 1.5 g/kg of
/// work (an hour at moderate intensity) gives about 5 (moderate), 3-4 g/kg
/// (1.5-2.5 h of hard work) 6.5-7.5 (high) and 9 g/kg (4-5 h) about 9.6 (very
/// high), the bands of Thomas, Erdman & Burke (2016). The span keeps the
/// steepest change at 0.29 g/kg per 10% more work (`SPAN / e / 10`).
pub const WORK_CURVE_FLOOR: f64 = 3.0;
pub const WORK_CURVE_SPAN: f64 = 8.0;
pub const WORK_CURVE_SCALE: f64 = 5.0;
/// Share of tomorrow's key training sessions counted today (ours): the day
/// before a key session raises carbohydrate a little, its own day carries it.
pub const NEXT_DAY_KEY_SHARE: f64 = 0.25;
/// Share of tomorrow's competition counted today: all of it, the day before
/// is when stores are filled for it (fuelling up, common practice).
pub const NEXT_DAY_COMPETITION_SHARE: f64 = 1.0;

/// Daily carbohydrate, g/kg, for a fuel demand in g/kg (see the constants).
pub fn work_curve(demand_g_per_kg: f64) -> f64 {
    let demand = demand_g_per_kg.max(0.0);
    WORK_CURVE_FLOOR + WORK_CURVE_SPAN * (1.0 - (-demand / WORK_CURVE_SCALE).exp())
}

/// The day's load as the planner sees it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct DayLoad {
    /// The load band the day's carbohydrate falls in (a label, see `LoadBand::of`).
    pub band: LoadBand,
    /// The band's range, g/kg/d.
    pub band_range: GramsPerKgRange,
    /// All of the athlete's session minutes on the day.
    pub total_minutes: f64,
    /// Minutes in sessions at or above the moderate-intensity threshold (information).
    pub moderate_or_higher_minutes: f64,
    /// Carbohydrate the day's sessions oxidise from normal stores, g per kg body mass.
    pub carbohydrate_oxidised_g_per_kg: f64,
    /// Carbohydrate the next day's key sessions and competitions will oxidise, g/kg.
    pub next_day_key_carbohydrate_g_per_kg: f64,
    /// Working-muscle glycogen missing at the start of the day, g/kg (estimate).
    pub glycogen_to_restore_g_per_kg: f64,
    /// The fuel demand the work curve reads: today's work, 25% of tomorrow's
    /// key training, all of tomorrow's competition and the glycogen to restore, g/kg.
    pub fuel_demand_g_per_kg: f64,
    /// Sessions that drive the demand.
    pub driving_sessions: Vec<SessionRef>,
}

/// Measures the day. `moderate_fraction_vo2max` only labels minutes (default
/// 0.46: the lower edge of "moderate" in the ACSM table, Garber et al. 2011,
/// Med Sci Sports Exerc 43:1334, from memory); it sets no edge in the target.
pub fn classify_day(
    today: &[SessionWork],
    next_day: &[SessionWork],
    body_mass_kg: f64,
    moderate_fraction_vo2max: f64,
    glycogen_to_restore_g: f64,
) -> DayLoad {
    let total_minutes = total(today.iter().map(|s| s.minutes));
    let moderate_or_higher_minutes = total(
        today
            .iter()
            .filter(|s| s.mean_fraction_vo2max >= moderate_fraction_vo2max)
            .map(|s| s.minutes),
    );
    let oxidised = total(today.iter().map(|s| s.carbohydrate_g)) / body_mass_kg;
    let next_key = total(
        next_day
            .iter()
            .filter(|s| s.is_key())
            .map(|s| s.carbohydrate_g * next_day_share(s)),
    ) / body_mass_kg;
    let restore = glycogen_to_restore_g.max(0.0) / body_mass_kg;
    let demand = oxidised + next_key + restore;
    let band = LoadBand::of(work_curve(demand));
    let mut driving_sessions: Vec<SessionRef> = sorted(today)
        .iter()
        .map(|s| s.reference(RelativeDay::SameDay))
        .collect();
    driving_sessions.extend(
        next_day
            .iter()
            .filter(|s| s.is_key())
            .map(|s| s.reference(RelativeDay::NextDay)),
    );
    DayLoad {
        band,
        band_range: band.range(),
        total_minutes,
        moderate_or_higher_minutes,
        carbohydrate_oxidised_g_per_kg: oxidised,
        next_day_key_carbohydrate_g_per_kg: next_key,
        glycogen_to_restore_g_per_kg: restore,
        fuel_demand_g_per_kg: demand,
        driving_sessions,
    }
}

/// The share of a next-day key session's carbohydrate counted today.
fn next_day_share(session: &SessionWork) -> f64 {
    match session.preparation() {
        ResolvedPreparation::None => NEXT_DAY_KEY_SHARE,
        _ => NEXT_DAY_COMPETITION_SHARE,
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
    /// The athlete's body mass, kg (sizes an event two days ahead).
    pub body_mass_kg: f64,
}

/// Daily carbohydrate in g/kg: the work curve first, then competition rules.
pub fn daily_carbohydrate(
    today: &[SessionWork],
    load: &DayLoad,
    upcoming: &Upcoming<'_>,
) -> CarbohydrateDecision {
    daily_carbohydrate_with(today, load, upcoming, true)
}

/// [`daily_carbohydrate`]; with `texts` false the decision's `text` and
/// `source` stay empty (they feed only the day's explanations). Every
/// number is the same either way.
pub(crate) fn daily_carbohydrate_with(
    today: &[SessionWork],
    load: &DayLoad,
    upcoming: &Upcoming<'_>,
    texts: bool,
) -> CarbohydrateDecision {
    let say = |text: &dyn Fn() -> String| if texts { text() } else { String::new() };
    let demand = load.fuel_demand_g_per_kg;
    let curve = work_curve(demand);
    let sessions = load.driving_sessions.clone();
    let demand_text = say(&|| {
        format!(
            "fuel demand {demand:.2} g/kg (today's sessions oxidise {:.2} g/kg, tomorrow's key work counts {:.2} g/kg, {:.2} g/kg of working-muscle glycogen to restore)",
            Dec(load.carbohydrate_oxidised_g_per_kg),
            Dec(load.next_day_key_carbohydrate_g_per_kg),
            Dec(load.glycogen_to_restore_g_per_kg),
            demand = Dec(demand)
        )
    });
    let curve_text = say(&|| {
        format!(
            "{WORK_CURVE_FLOOR:.0} + {WORK_CURVE_SPAN:.0} x (1 - e^(-{demand:.2}/{WORK_CURVE_SCALE:.0})) = {curve:.2} g/kg",
            WORK_CURVE_FLOOR = Dec(WORK_CURVE_FLOOR),
            WORK_CURVE_SPAN = Dec(WORK_CURVE_SPAN),
            demand = Dec(demand),
            WORK_CURVE_SCALE = Dec(WORK_CURVE_SCALE),
            curve = Dec(curve)
        )
    });
    let range = load.band_range;
    let decision = CarbohydrateDecision {
        g_per_kg: curve,
        rule: if today.is_empty() {
            CarbohydrateRule::RestDay
        } else {
            CarbohydrateRule::LoadBand
        },
        range,
        sessions: sessions.clone(),
        text: say(&|| {
            format!(
                "{}: {demand_text}; work curve {curve_text}, in the {} band ({:.0}-{:.0} g/kg)",
                if today.is_empty() {
                    "Rest day"
                } else {
                    "Fuel for the work"
                },
                load.band.name(),
                Dec(range.min),
                Dec(range.max),
            )
        }),
        source: say(&|| {
            format!(
                "{THOMAS_2016} (load bands); the work curve through them is our calibration (common practice: fuel for the work required)"
            )
        }),
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
        let extra = if day == RelativeDay::DayAfterNext {
            event.carbohydrate_g / upcoming.body_mass_kg
        } else {
            0.0
        };
        let value = CARBOHYDRATE_LOADING_RANGE.position(work_curve(demand + extra));
        return CarbohydrateDecision {
            g_per_kg: value,
            rule: CarbohydrateRule::CarbohydrateLoading,
            range: CARBOHYDRATE_LOADING_RANGE,
            sessions: with(sessions, event.reference(day)),
            text: say(&|| {
                format!(
                    "Carbohydrate loading for '{}' ({:.0} min, over 90 min, loading enabled) within the {:.0} h before it: the work curve ({curve_text}) held inside 10-12 g/kg: {value:.2} g/kg",
                    event.title,
                    Dec(event.minutes),
                    Dec(upcoming.loading_hours),
                    value = Dec(value)
                )
            }),
            source: say(&|| {
                format!("{THOMAS_2016} (carbohydrate loading 10-12 g/kg for 36-48 h, from memory)")
            }),
        };
    }
    if let Some(event) = upcoming
        .next_day
        .iter()
        .find(|s| s.preparation() == ResolvedPreparation::FuellingUp)
    {
        let value = FUELLING_UP_RANGE.position(curve);
        return CarbohydrateDecision {
            g_per_kg: value,
            rule: CarbohydrateRule::FuellingUp,
            range: FUELLING_UP_RANGE,
            sessions: with(sessions, event.reference(RelativeDay::NextDay)),
            text: say(&|| {
                format!(
                    "General fuelling up for '{}' ({:.0} min competition) tomorrow: {demand_text}; the work curve ({curve_text}) held inside 7-12 g/kg: {value:.2} g/kg",
                    event.title,
                    Dec(event.minutes),
                    value = Dec(value)
                )
            }),
            source: say(&|| {
                format!("{THOMAS_2016} (general fuelling up 7-12 g/kg per 24 h, from memory)")
            }),
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
        // A day whose own work is beyond what the match range covers (over
        // 4-5 h of hard work) keeps the curve's higher value.
        if work_curve(load.carbohydrate_oxidised_g_per_kg) > TEAM_SPORT_MATCH_RANGE.max {
            return decision;
        }
        let value = TEAM_SPORT_MATCH_RANGE.position(curve);
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
            text: say(&|| {
                format!(
                    "Team-sport match '{}' {when}: {demand_text}; the work curve ({curve_text}) held inside 6-8 g/kg for match day and the day before: {value:.2} g/kg",
                    event.title,
                    value = Dec(value),
                )
            }),
            source: say(&|| {
                "Expert group statement on nutrition in elite football (2021), 6-8 g/kg on match day and the day before [from memory]".into()
            }),
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

/// Protein g/kg/d: the settings' everyday value, or the loss value (upper end
/// of 1.2-2.0) while body mass is being reduced.
pub fn daily_protein(goal: GoalDirection, everyday: f64, during_loss: f64) -> f64 {
    match goal {
        GoalDirection::Reduce => during_loss,
        _ => everyday,
    }
}

/// What the macronutrient fit may move.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MacroRequest {
    /// Planned energy, kcal.
    pub energy_kcal: f64,
    /// Carbohydrate from the day's work, g, and how far it may move, g.
    pub carbohydrate_g: f64,
    pub carbohydrate_min_g: f64,
    pub carbohydrate_max_g: f64,
    /// Protein, g, and the most it may rise to, g.
    pub protein_g: f64,
    pub protein_max_g: f64,
    /// Pinned values are never moved.
    pub carbohydrate_pinned: bool,
    pub protein_pinned: bool,
    pub energy_pinned: bool,
    /// Keep energy (a body-mass loss deficit): trim carbohydrate toward its
    /// range's low end before raising energy to keep fat at 20%.
    pub hold_energy: bool,
}

/// The fitted day: carbohydrate, protein, fat and energy.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MacroFit {
    pub carbohydrate_g: f64,
    pub protein_g: f64,
    pub fat_g: f64,
    pub energy_kcal: f64,
    /// Carbohydrate added (+) or trimmed (-) to keep fat inside 20-35%, g.
    pub carbohydrate_moved_g: f64,
    /// Protein added to keep fat at or under 35%, g.
    pub protein_added_g: f64,
    /// Energy added to keep fat at 20% of energy, kcal.
    pub energy_added_kcal: f64,
}

/// Atwater general factors, kcal per g (Atwater 1900s; common practice).
pub const KCAL_PER_G_CARBOHYDRATE: f64 = 4.0;
pub const KCAL_PER_G_PROTEIN: f64 = 4.0;
pub const KCAL_PER_G_FAT: f64 = 9.0;

/// Fat fills what energy leaves after carbohydrate and protein, inside 20-35%
/// of energy (Thomas et al. 2016, from memory):
/// - over 35%: protein rises toward its maximum, then carbohydrate toward its
///   range's top, so a light day is filled with food the plan wants rather
///   than with fat; only what is left beyond both goes to fat;
/// - under 20%: a pinned energy is kept (fat is the remainder, never
///   negative); a held energy (body-mass loss) first trims carbohydrate toward
///   its range's low end; otherwise, or when that is not enough, energy rises
///   to keep fat at 20%. The caller explains and warns.
pub fn fit_fat(request: &MacroRequest) -> MacroFit {
    let energy = request.energy_kcal;
    let mut carbohydrate = request.carbohydrate_g;
    let mut protein = request.protein_g;
    let kcal = |c: f64, p: f64| c * KCAL_PER_G_CARBOHYDRATE + p * KCAL_PER_G_PROTEIN;
    let mut fit = MacroFit {
        carbohydrate_g: carbohydrate,
        protein_g: protein,
        fat_g: 0.0,
        energy_kcal: energy,
        carbohydrate_moved_g: 0.0,
        protein_added_g: 0.0,
        energy_added_kcal: 0.0,
    };
    let remainder = energy - kcal(carbohydrate, protein);
    if remainder > FAT_USUAL_MAX_SHARE * energy {
        let mut excess = remainder - FAT_USUAL_MAX_SHARE * energy;
        if !request.protein_pinned {
            let add = (excess / KCAL_PER_G_PROTEIN).min((request.protein_max_g - protein).max(0.0));
            protein += add;
            fit.protein_added_g = add;
            excess -= add * KCAL_PER_G_PROTEIN;
        }
        if !request.carbohydrate_pinned {
            let add = (excess / KCAL_PER_G_CARBOHYDRATE)
                .min((request.carbohydrate_max_g - carbohydrate).max(0.0));
            carbohydrate += add;
            fit.carbohydrate_moved_g = add;
        }
    } else if remainder < FAT_MIN_SHARE * energy && !request.energy_pinned {
        if request.hold_energy && !request.carbohydrate_pinned {
            let short = FAT_MIN_SHARE * energy - remainder;
            let trim = (short / KCAL_PER_G_CARBOHYDRATE)
                .min((carbohydrate - request.carbohydrate_min_g).max(0.0));
            carbohydrate -= trim;
            fit.carbohydrate_moved_g = -trim;
        }
        let other = kcal(carbohydrate, protein);
        if energy - other < FAT_MIN_SHARE * energy {
            // fat = 20% of E and E = other + fat, so E = other / 0.8.
            let raised = other / (1.0 - FAT_MIN_SHARE);
            fit.energy_added_kcal = raised - energy;
            fit.energy_kcal = raised;
        }
    }
    fit.carbohydrate_g = carbohydrate;
    fit.protein_g = protein;
    fit.fat_g = (fit.energy_kcal - kcal(carbohydrate, protein)).max(0.0) / KCAL_PER_G_FAT;
    fit
}

#[cfg(test)]
mod tests;
