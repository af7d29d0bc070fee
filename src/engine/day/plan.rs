//! One athlete's day: the single entry point [`plan_day`] that turns a
//! profile and the work of today and the next days into daily targets,
//! fuelling around each session, eating occasions, explanations, warnings
//! and cautions.
//!
//! Order of work: validate everything (all field issues at once); resting
//! metabolic rate and fat-free mass; energy (RMR x non-exercise activity
//! factor + net session energy +/- the goal, never pushed into low energy
//! availability by the goal); load band and carbohydrate; protein; fat as
//! the remainder (at least 20%); energy availability; dietitian pins
//! (kept as pinned, computed value beside them); session fuelling; eating
//! occasions; warnings and cautions.

use chrono::{NaiveDate, NaiveTime, TimeDelta};
use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

use crate::engine::day::energy::{
    DefaultBodyFat, FatFreeMassSource, GoalAdjustment, KCAL_PER_KG_BODY_MASS, RestingMetabolicRate,
    RestingMetabolicRateChoice, RestingMetabolicRateMethod, fat_free_mass, goal_adjustment,
    resting_metabolic_rate,
};
use crate::engine::day::energy_availability::{
    EnergyAvailability, EnergyAvailabilityBand, EnergyAvailabilityThresholds, ExerciseEnergyBasis,
    classify, energy_availability, intake_for,
};
use crate::engine::day::notes::{Explanation, Severity, TargetRule, Topic, Warning, WarningCode};
use crate::engine::day::occasions::{DayTotals, EatingOccasion, MealTimes, plan_eating_occasions};
use crate::engine::day::session_fuelling::{
    AfterGuidance, DayClock, PROTEIN_PER_OCCASION_G_PER_KG, SessionFuelling, plan_session_fuelling,
};
use crate::engine::day::session_work::{EventPreparation, SessionWork, total, validate_sessions};
use crate::engine::day::targets::{
    CarbohydrateRule, DayLoad, FAT_MIN_SHARE, FAT_USUAL_MAX_SHARE, GramsPerKgRange,
    KCAL_PER_G_CARBOHYDRATE, KCAL_PER_G_FAT, KCAL_PER_G_PROTEIN, LoadBand, PROTEIN_RANGE, Upcoming,
    classify_day, daily_carbohydrate, daily_protein, fat_for_energy,
};
use crate::engine::profile::{AthleteProfile, GoalDirection, Sex};
use crate::engine::sources::THOMAS_2016;
use crate::engine::{InvalidInput, Issues};

/// Health conditions that the adult-athlete targets do not cover.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum HealthFlag {
    Pregnancy,
    Diabetes,
    OtherMedicalCondition,
    DisorderedEatingHistory,
}

/// Settings with documented defaults; every field may be omitted.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct PlanSettings {
    /// Resting metabolic rate equation (default `automatic`).
    #[serde(default)]
    pub resting_metabolic_rate: RestingMetabolicRateChoice,
    /// Multiplier of RMR for the non-exercise part of the day, 1.1 to 2.0
    /// (default 1.5: common practice, inside the FAO/WHO/UNU 2004 range of
    /// 1.40-1.69 for sedentary-to-light lifestyles, from memory).
    #[serde(default = "default_activity_factor")]
    pub non_exercise_activity_factor: f64,
    /// Energy availability band edges (defaults 45 and 30 kcal/kg FFM/day).
    #[serde(default)]
    pub energy_availability: EnergyAvailabilityThresholds,
    /// Which session energy counts as exercise energy for energy availability (default `gross`).
    #[serde(default)]
    pub exercise_energy_basis: ExerciseEnergyBasis,
    /// Body fat % assumed when nothing is measured (defaults 12 men, 20 women).
    #[serde(default)]
    pub default_body_fat: DefaultBodyFat,
    /// Fastest planned body-mass change, % of body mass per week, 0.1 to 1.5
    /// (default 1.0: common practice "about 0.5-1% per week").
    #[serde(default = "default_max_rate")]
    pub max_body_mass_change_percent_per_week: f64,
    /// Intensity from which a session counts as moderate, fraction of VO2max,
    /// 0.3 to 0.7 (default 0.46: ACSM table, Garber et al. 2011, from memory).
    #[serde(default = "default_moderate_fraction")]
    pub moderate_intensity_fraction_vo2max: f64,
    /// Everyday protein, g/kg/d, 1.2 to 2.0 (default 1.6, the middle of the range).
    #[serde(default = "default_protein")]
    pub protein_g_per_kg: f64,
    /// Protein during planned body-mass loss, g/kg/d, 1.2 to 2.0 (default 2.0, the upper end).
    #[serde(default = "default_protein_during_loss")]
    pub protein_g_per_kg_during_loss: f64,
    /// Hours of carbohydrate loading before an event, 36 to 48 (default 36).
    #[serde(default = "default_loading_hours")]
    pub carbohydrate_loading_hours: f64,
    /// Waking, meal and bed times.
    #[serde(default)]
    pub meal_times: MealTimes,
}

fn default_activity_factor() -> f64 {
    1.5
}
fn default_max_rate() -> f64 {
    1.0
}
fn default_moderate_fraction() -> f64 {
    0.46
}
fn default_protein() -> f64 {
    1.6
}
fn default_protein_during_loss() -> f64 {
    2.0
}
fn default_loading_hours() -> f64 {
    36.0
}

impl Default for PlanSettings {
    fn default() -> Self {
        Self {
            resting_metabolic_rate: RestingMetabolicRateChoice::default(),
            non_exercise_activity_factor: default_activity_factor(),
            energy_availability: EnergyAvailabilityThresholds::default(),
            exercise_energy_basis: ExerciseEnergyBasis::default(),
            default_body_fat: DefaultBodyFat::default(),
            max_body_mass_change_percent_per_week: default_max_rate(),
            moderate_intensity_fraction_vo2max: default_moderate_fraction(),
            protein_g_per_kg: default_protein(),
            protein_g_per_kg_during_loss: default_protein_during_loss(),
            carbohydrate_loading_hours: default_loading_hours(),
            meal_times: MealTimes::default(),
        }
    }
}

/// A dietitian's fixed values for the day. The plan keeps them exactly.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct DayPins {
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
    /// The dietitian's pinned values, if any.
    #[serde(default)]
    pub pins: DayPins,
    /// Declared health conditions; each adds a caution.
    #[serde(default)]
    pub health_flags: Vec<HealthFlag>,
}

/// Daily carbohydrate.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct CarbohydrateTarget {
    /// Target, g per kg body mass (the pin when pinned).
    pub g_per_kg: f64,
    /// Target, g (rounded to 0.1 g).
    pub g: f64,
    /// What the engine computed, g/kg, shown beside a pin.
    pub computed_g_per_kg: f64,
    /// True when the value is a dietitian's pin.
    pub pinned: bool,
    /// Rule that set the computed value.
    pub rule: CarbohydrateRule,
    /// Range of that rule, g/kg/d.
    pub range_g_per_kg: GramsPerKgRange,
}

/// Daily protein.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct ProteinTarget {
    /// Target, g/kg (the pin when pinned).
    pub g_per_kg: f64,
    /// Target, g (rounded to 0.1 g).
    pub g: f64,
    /// What the engine computed, g/kg.
    pub computed_g_per_kg: f64,
    /// True when the value is a dietitian's pin.
    pub pinned: bool,
    /// Published range, 1.2-2.0 g/kg/d.
    pub range_g_per_kg: GramsPerKgRange,
    /// About 0.3 g/kg per eating occasion, g.
    pub per_occasion_g: f64,
}

/// Daily fat.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct FatTarget {
    /// Target, g (rounded to 0.1 g).
    pub g: f64,
    /// Share of the day's energy, %.
    pub percent_of_energy: f64,
}

/// Daily energy intake and how it was built.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct EnergyTarget {
    /// Planned intake, kcal (the pin when pinned; otherwise rounded to 1 kcal).
    pub kcal: f64,
    /// What the engine computed, kcal.
    pub computed_kcal: f64,
    /// True when the value is a dietitian's pin.
    pub pinned: bool,
    /// Resting metabolic rate and the equation used.
    pub resting_metabolic_rate: RestingMetabolicRate,
    /// Multiplier of RMR for the non-exercise part of the day.
    pub non_exercise_activity_factor: f64,
    /// RMR x activity factor, kcal.
    pub non_exercise_kcal: f64,
    /// Net energy of the day's sessions, kcal.
    pub exercise_kcal: f64,
    /// Body-mass goal and its daily energy change.
    pub goal: GoalAdjustment,
    /// kcal of the goal deficit given back to keep energy availability out of the low band.
    pub deficit_limited_by_kcal: f64,
    /// kcal added to keep fat at 20% of energy.
    pub fat_floor_added_kcal: f64,
}

/// One athlete's planned day.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct DayPlan {
    /// The planned date (local).
    pub date: NaiveDate,
    /// Body mass the targets are scaled by, kg.
    pub body_mass_kg: f64,
    /// The day's load band and fuel demand.
    pub load: DayLoad,
    /// Daily carbohydrate.
    pub carbohydrate: CarbohydrateTarget,
    /// Daily protein.
    pub protein: ProteinTarget,
    /// Daily fat.
    pub fat: FatTarget,
    /// Daily energy intake and how it was built.
    pub energy: EnergyTarget,
    /// The planned day's energy availability.
    pub energy_availability: EnergyAvailability,
    /// Before, during and after each session, in start order.
    pub sessions: Vec<SessionFuelling>,
    /// The day's timeline; carbohydrate, protein and fat add up to the targets.
    pub eating_occasions: Vec<EatingOccasion>,
    /// Why each target has its value: rule, band, sessions, source.
    pub explanations: Vec<Explanation>,
    /// Structured warnings with stable codes.
    pub warnings: Vec<Warning>,
    /// Plain-language cautions; always present.
    pub cautions: Vec<String>,
}

fn round_to(value: f64, step: f64) -> f64 {
    (value / step).round() * step
}

/// Plans one athlete's day. Pure and deterministic.
pub fn plan_day(input: &DayInput) -> Result<DayPlan, InvalidInput> {
    validate(input)?;
    let profile = &input.profile;
    let settings = &input.settings;
    let mass = profile.body_mass_kg;
    let mut warnings = Vec::new();
    let mut explanations = Vec::new();
    let mut cautions = vec![
        "These targets are estimates for healthy adult athletes, computed from published equations and position statements. Apply them with a registered (sports) dietitian, and defer to a physician and to local rules.".to_string(),
    ];

    // Energy.
    let ffm = fat_free_mass(profile, &settings.default_body_fat);
    let rmr = resting_metabolic_rate(profile, settings.resting_metabolic_rate, &ffm);
    let exercise_net = total(input.sessions.iter().map(|s| s.net_kcal));
    let exercise_for_ea: f64 = match settings.exercise_energy_basis {
        ExerciseEnergyBasis::Gross => total(input.sessions.iter().map(|s| s.gross_kcal)),
        ExerciseEnergyBasis::Net => exercise_net,
    };
    let non_exercise_kcal = rmr.kcal_per_day * settings.non_exercise_activity_factor;
    let maintenance = non_exercise_kcal + exercise_net;
    let goal = goal_adjustment(profile, settings.max_body_mass_change_percent_per_week);
    let mut computed_energy = maintenance + goal.kcal_per_day;
    let mut deficit_limited_by = 0.0;
    let thresholds = settings.energy_availability;
    if goal.kcal_per_day < 0.0 {
        // Rounded up so that the whole-kcal target cannot dip under the threshold.
        let floor = intake_for(thresholds.low_below, exercise_for_ea, ffm.kg)
            .ceil()
            .min(maintenance);
        if computed_energy < floor {
            deficit_limited_by = floor - computed_energy;
            computed_energy = floor;
            warnings.push(Warning::new(
                WarningCode::DeficitLimitedByEnergyAvailability,
                Severity::Safety,
                format!(
                    "The body-mass loss deficit was reduced by {deficit_limited_by:.0} kcal so that planned energy availability does not fall below {:.0} kcal/kg FFM/day.",
                    thresholds.low_below
                ),
            ));
        }
    }
    if goal.capped {
        warnings.push(Warning::new(
            WarningCode::GoalRateAboveSafe,
            Severity::Safety,
            format!(
                "Requested {:.2} kg/week is faster than {:.1}% of body mass per week; the plan uses {:.2} kg/week.",
                goal.requested_kg_per_week.unwrap_or_default(),
                settings.max_body_mass_change_percent_per_week,
                goal.applied_kg_per_week
            ),
        ));
    }

    // Carbohydrate.
    let load = classify_day(
        &input.sessions,
        &input.next_day_sessions,
        mass,
        settings.moderate_intensity_fraction_vo2max,
    );
    let upcoming = Upcoming {
        next_day: &input.next_day_sessions,
        day_after_next: &input.day_after_next_sessions,
        loading_hours: settings.carbohydrate_loading_hours,
        today_noon: input
            .date
            .and_time(NaiveTime::from_hms_opt(12, 0, 0).expect("noon")),
    };
    let decision = daily_carbohydrate(&input.sessions, &load, &upcoming);
    let carbohydrate_g_per_kg = input
        .pins
        .carbohydrate_g_per_kg
        .unwrap_or(decision.g_per_kg);
    let carbohydrate_g = round_to(carbohydrate_g_per_kg * mass, 0.1);

    // Protein.
    let computed_protein = daily_protein(
        profile.goal,
        settings.protein_g_per_kg,
        settings.protein_g_per_kg_during_loss,
    );
    let protein_g_per_kg = input.pins.protein_g_per_kg.unwrap_or(computed_protein);
    let protein_g = round_to(protein_g_per_kg * mass, 0.1);

    // Fat and final energy.
    let energy_pin = input.pins.energy_kcal;
    let requested_energy = energy_pin.unwrap_or(computed_energy);
    let fat_energy = fat_for_energy(
        requested_energy,
        carbohydrate_g,
        protein_g,
        energy_pin.is_some(),
    );
    // The engine's own figure, shown beside an energy pin.
    let computed_kcal = if energy_pin.is_some() {
        fat_for_energy(computed_energy, carbohydrate_g, protein_g, false).energy_kcal
    } else {
        fat_energy.energy_kcal
    }
    .round();
    let energy_kcal = match energy_pin {
        Some(pin) => pin,
        None => fat_energy.energy_kcal.round(),
    };
    let fat_g = round_to(fat_energy.fat_g, 0.1);
    let fat_share = fat_g * KCAL_PER_G_FAT / energy_kcal;
    if fat_energy.floor_added_kcal > 0.5 {
        warnings.push(Warning::new(
            WarningCode::FatFloorRaisedEnergy,
            Severity::Notice,
            format!(
                "Carbohydrate and protein leave under 20% of energy for fat: energy was raised by {:.0} kcal to keep fat at 20%.",
                fat_energy.floor_added_kcal
            ),
        ));
    }
    if energy_pin.is_some() {
        let macro_kcal = carbohydrate_g * KCAL_PER_G_CARBOHYDRATE + protein_g * KCAL_PER_G_PROTEIN;
        if macro_kcal > energy_kcal {
            warnings.push(Warning::new(
                WarningCode::PinnedEnergyBelowMacronutrients,
                Severity::Warning,
                format!(
                    "Pinned energy {energy_kcal:.0} kcal is below the {macro_kcal:.0} kcal in the carbohydrate and protein targets: fat is planned at 0 g and the occasions carry {macro_kcal:.0} kcal."
                ),
            ));
        } else if fat_share < FAT_MIN_SHARE - 1e-6 {
            warnings.push(Warning::new(
                WarningCode::FatBelowRange,
                Severity::Warning,
                format!(
                    "With the pinned energy, fat is {:.0}% of energy, below the 20% minimum.",
                    fat_share * 100.0
                ),
            ));
        }
    }
    if fat_share > FAT_USUAL_MAX_SHARE + 1e-6 {
        warnings.push(Warning::new(
            WarningCode::FatAboveUsualRange,
            Severity::Notice,
            format!(
                "Fat is {:.0}% of energy, above the usual 20-35%: a low-carbohydrate day fills energy with fat; swap some for carbohydrate or protein if preferred.",
                fat_share * 100.0
            ),
        ));
    }

    // Energy availability.
    let ea_value = energy_availability(energy_kcal, exercise_for_ea, ffm.kg);
    let ea_band = classify(ea_value, &thresholds);
    match ea_band {
        EnergyAvailabilityBand::Low => {
            warnings.push(Warning::new(
                WarningCode::EnergyAvailabilityLow,
                Severity::Safety,
                format!(
                    "Planned energy availability is {ea_value:.1} kcal/kg FFM/day, under {:.0} (low).",
                    thresholds.low_below
                ),
            ));
            cautions.push(format!(
                "Low energy availability: this plan gives {ea_value:.1} kcal/kg fat-free mass per day, under the {:.0} threshold. Low energy availability harms health and performance (relative energy deficiency in sport, IOC consensus). Do not follow this plan without review by a registered dietitian or a physician.",
                thresholds.low_below
            ));
        }
        EnergyAvailabilityBand::Reduced => warnings.push(Warning::new(
            WarningCode::EnergyAvailabilityReduced,
            Severity::Notice,
            format!(
                "Planned energy availability is {ea_value:.1} kcal/kg FFM/day, between {:.0} and {:.0}.",
                thresholds.low_below, thresholds.adequate_at_or_above
            ),
        )),
        EnergyAvailabilityBand::Adequate => {}
    }
    if ffm.estimated {
        let percent = match profile.sex {
            Sex::Male => settings.default_body_fat.male_percent,
            Sex::Female => settings.default_body_fat.female_percent,
        };
        warnings.push(Warning::new(
            WarningCode::FatFreeMassEstimated,
            Severity::Notice,
            format!(
                "Fat-free mass estimated at {:.1} kg from an assumed {percent:.0}% body fat.",
                ffm.kg
            ),
        ));
        cautions.push(format!(
            "Fat-free mass is an estimate ({percent:.0}% body fat assumed, no measurement): energy availability is an estimate too. Measure body composition for a firmer figure."
        ));
    }

    // Pins: kept as given, checked against the published ranges.
    let carbohydrate_range = decision.range;
    if let Some(pin) = input.pins.carbohydrate_g_per_kg
        && !carbohydrate_range.contains(pin)
    {
        warnings.push(Warning::new(
            WarningCode::PinOutsidePublishedRange,
            Severity::Warning,
            format!(
                "Pinned carbohydrate {pin:.2} g/kg is outside the {:.0}-{:.0} g/kg range for this day (computed {:.2} g/kg).",
                carbohydrate_range.min, carbohydrate_range.max, decision.g_per_kg
            ),
        ));
    }
    if let Some(pin) = input.pins.protein_g_per_kg
        && !PROTEIN_RANGE.contains(pin)
    {
        warnings.push(Warning::new(
            WarningCode::PinOutsidePublishedRange,
            Severity::Warning,
            format!(
                "Pinned protein {pin:.2} g/kg is outside the published 1.2-2.0 g/kg/d (computed {computed_protein:.2} g/kg)."
            ),
        ));
    }

    // Sessions and eating occasions.
    let times = &settings.meal_times;
    let clock = DayClock {
        wake: input.date.and_time(times.wake),
        sleep: input.date.and_time(times.sleep),
    };
    let (mut session_plans, session_warnings) = plan_session_fuelling(
        &input.sessions,
        &input.previous_day_sessions,
        &input.next_day_sessions,
        mass,
        clock,
    );
    warnings.extend(session_warnings);
    let occasion_plan = plan_eating_occasions(
        input.date,
        &input.sessions,
        &session_plans,
        DayTotals {
            carbohydrate_g,
            protein_g,
            fat_g,
        },
        mass,
        times,
    );
    warnings.extend(occasion_plan.warnings);
    let occasions = occasion_plan.occasions;
    // The suggestion follows the timeline: a meal in the window became the pre-session meal.
    for (plan, pre) in session_plans.iter_mut().zip(occasion_plan.pre_session) {
        let before = &mut plan.before;
        if !before.applies || before.suggested_time.is_none() {
            continue;
        }
        match pre {
            Some((time, grams)) => {
                before.suggested_time = Some(time);
                before.suggested_g = grams;
                before.suggested_g_per_kg = grams / mass;
                before.note = format!(
                    "Over 60 min: 1-4 g/kg 1-4 h before; planned {:.1} g/kg ({grams:.0} g) at {}, {:.1} h before the start.",
                    grams / mass,
                    time.format("%H:%M"),
                    (plan.start - time).num_minutes() as f64 / 60.0
                );
            }
            None => {
                before.suggested_time = None;
                before.suggested_g = 0.0;
                before.suggested_g_per_kg = 0.0;
                before.note = "The previous session's speedy-refuelling feeds fall in this session's 1-4 h window and serve as its pre-session fuel.".into();
            }
        }
    }

    train_low_warnings(input, &load, &mut warnings);
    loading_warnings(input, &mut warnings);
    safety_notes(input, &goal, &mut warnings, &mut cautions);

    // Explanations.
    explanations.push(
        Explanation::new(
            Topic::LoadBand,
            TargetRule::LoadBandClassification,
            format!(
                "{} load band: {:.0} min of work, {:.0} min at or above {:.0}% VO2max (moderate). Up to 75 min of moderate-or-higher work is about an hour (moderate), up to 4 h is high, more is very high; none is light.",
                load.band.name(),
                load.total_minutes,
                load.moderate_or_higher_minutes,
                settings.moderate_intensity_fraction_vo2max * 100.0
            ),
            format!("{THOMAS_2016}; minute edges are a common practice reading of the statement"),
        )
        .with_band(load.band)
        .with_range(load.band_range)
        .with_sessions(load.driving_sessions.clone()),
    );
    explanations.push(
        Explanation::new(
            Topic::Carbohydrate,
            match decision.rule {
                CarbohydrateRule::RestDay => TargetRule::RestDay,
                CarbohydrateRule::LoadBand => TargetRule::LoadBand,
                CarbohydrateRule::TeamSportMatchDay => TargetRule::TeamSportMatchDay,
                CarbohydrateRule::TeamSportMatchEve => TargetRule::TeamSportMatchEve,
                CarbohydrateRule::FuellingUp => TargetRule::FuellingUp,
                CarbohydrateRule::CarbohydrateLoading => TargetRule::CarbohydrateLoading,
            },
            format!(
                "{} = {:.0} g for {mass:.1} kg.",
                decision.text,
                decision.g_per_kg * mass
            ),
            decision.source.clone(),
        )
        .with_band(load.band)
        .with_range(decision.range)
        .with_sessions(decision.sessions.clone()),
    );
    if let Some(pin) = input.pins.carbohydrate_g_per_kg {
        explanations.push(Explanation::new(
            Topic::Carbohydrate,
            TargetRule::DietitianPin,
            format!(
                "Carbohydrate pinned by the dietitian at {pin} g/kg ({carbohydrate_g:.1} g); the engine computed {:.2} g/kg.",
                decision.g_per_kg
            ),
            "Dietitian's decision",
        ));
    }
    explanations.push(Explanation::new(
        Topic::Protein,
        if input.pins.protein_g_per_kg.is_some() {
            TargetRule::DietitianPin
        } else {
            TargetRule::ProteinRange
        },
        format!(
            "Protein {protein_g_per_kg:.2} g/kg = {protein_g:.1} g (computed {computed_protein:.2} g/kg: {}), spread over the eating occasions at about 0.3 g/kg ({:.0} g) each.",
            if profile.goal == GoalDirection::Reduce {
                "upper end of 1.2-2.0 g/kg during planned body-mass loss"
            } else {
                "inside 1.2-2.0 g/kg"
            },
            PROTEIN_PER_OCCASION_G_PER_KG * mass
        ),
        format!("{THOMAS_2016}; 0.3 g/kg per occasion from memory"),
    ).with_range(PROTEIN_RANGE));
    explanations.push(Explanation::new(
        Topic::Fat,
        TargetRule::FatRemainder,
        format!(
            "Fat is the energy left after carbohydrate and protein: {fat_g:.1} g, {:.0}% of energy (not below 20%).",
            fat_share * 100.0
        ),
        format!("{THOMAS_2016} (fat 20-35% of energy, from memory)"),
    ));
    let rmr_rule = match rmr.method {
        RestingMetabolicRateMethod::Cunningham => TargetRule::Cunningham,
        RestingMetabolicRateMethod::MifflinStJeor => TargetRule::MifflinStJeor,
        RestingMetabolicRateMethod::RevisedHarrisBenedict => TargetRule::RevisedHarrisBenedict,
    };
    explanations.push(Explanation::new(
        Topic::RestingMetabolicRate,
        rmr_rule,
        format!(
            "Resting metabolic rate {:.0} kcal/d by {}{}.",
            rmr.kcal_per_day,
            match rmr.method {
                RestingMetabolicRateMethod::Cunningham => "Cunningham, 500 + 22 x fat-free mass",
                RestingMetabolicRateMethod::MifflinStJeor => "Mifflin-St Jeor",
                RestingMetabolicRateMethod::RevisedHarrisBenedict => "revised Harris-Benedict",
            },
            if rmr.method == RestingMetabolicRateMethod::Cunningham {
                format!(" ({:.1} kg)", ffm.kg)
            } else if ffm.source == FatFreeMassSource::EstimatedFromDefaultBodyFat {
                " (no measured body composition)".to_string()
            } else {
                String::new()
            }
        ),
        rmr.method.source(),
    ));
    explanations.push(Explanation::new(
        Topic::Energy,
        if energy_pin.is_some() { TargetRule::DietitianPin } else { TargetRule::EnergyBalance },
        format!(
            "Energy {energy_kcal:.0} kcal (computed {:.0}): RMR {:.0} x {:.2} = {non_exercise_kcal:.0} kcal, + {exercise_net:.0} kcal net session energy, {:+.0} kcal for the goal ({:.2} kg/week at {KCAL_PER_KG_BODY_MASS:.0} kcal/kg){}{}.",
            computed_kcal,
            rmr.kcal_per_day,
            settings.non_exercise_activity_factor,
            goal.kcal_per_day,
            goal.applied_kg_per_week,
            if deficit_limited_by > 0.0 { format!(", {deficit_limited_by:.0} kcal given back to protect energy availability") } else { String::new() },
            if fat_energy.floor_added_kcal > 0.5 { format!(", + {:.0} kcal to keep fat at 20%", fat_energy.floor_added_kcal) } else { String::new() },
        ),
        "Activity factor: common practice (FAO/WHO/UNU 2004 range, from memory); 7700 kcal/kg: common practice",
    ));
    explanations.push(Explanation::new(
        Topic::EnergyAvailability,
        TargetRule::EnergyAvailability,
        format!(
            "Energy availability ({energy_kcal:.0} - {exercise_for_ea:.0} kcal {} exercise energy) / {:.1} kg fat-free mass{} = {ea_value:.1} kcal/kg FFM/day: {}.",
            match settings.exercise_energy_basis { ExerciseEnergyBasis::Gross => "gross", ExerciseEnergyBasis::Net => "net" },
            ffm.kg,
            if ffm.estimated { " (estimated)" } else { "" },
            match ea_band { EnergyAvailabilityBand::Adequate => "adequate", EnergyAvailabilityBand::Reduced => "reduced", EnergyAvailabilityBand::Low => "low" }
        ),
        "Loucks & Thuma (2003), J Clin Endocrinol Metab 88:297 (from memory); Mountjoy et al. (2014, 2018, 2023), IOC consensus on relative energy deficiency in sport",
    ));
    for plan in &session_plans {
        let (rule, text) = match plan.after.guidance {
            AfterGuidance::SpeedyRefuelling => {
                (TargetRule::SpeedyRefuelling, plan.after.note.clone())
            }
            AfterGuidance::RecoveryMeal => (TargetRule::RecoveryMeal, plan.after.note.clone()),
        };
        explanations.push(
            Explanation::new(
                Topic::SessionFuelling,
                TargetRule::DuringSession,
                format!(
                    "'{}' ({:.0} min): {}",
                    plan.session.title, plan.minutes, plan.during.note
                ),
                THOMAS_2016,
            )
            .with_sessions(vec![plan.session.clone()]),
        );
        if plan.before.applies || plan.before.withheld_for_train_low {
            explanations.push(
                Explanation::new(
                    Topic::SessionFuelling,
                    if plan.train_low {
                        TargetRule::TrainLow
                    } else {
                        TargetRule::PreSession
                    },
                    format!("'{}': {}", plan.session.title, plan.before.note),
                    THOMAS_2016,
                )
                .with_range(GramsPerKgRange::new(1.0, 4.0))
                .with_sessions(vec![plan.session.clone()]),
            );
        }
        explanations.push(
            Explanation::new(
                Topic::SessionFuelling,
                rule,
                format!("'{}': {text}", plan.session.title),
                THOMAS_2016,
            )
            .with_sessions(vec![plan.session.clone()]),
        );
        if plan.train_low {
            explanations.push(
                Explanation::new(
                    Topic::TrainLow,
                    TargetRule::TrainLow,
                    format!(
                        "'{}' is a train-low session: no carbohydrate in the occasions before it or during it; the day's carbohydrate total is unchanged and moves to the occasions after it.",
                        plan.session.title
                    ),
                    "Train low is a deliberate periodization choice by the dietitian (common practice)",
                )
                .with_sessions(vec![plan.session.clone()]),
            );
        }
    }
    explanations.push(Explanation::new(
        Topic::EatingOccasions,
        TargetRule::OccasionTimeline,
        format!(
            "{} eating occasions between {} and {}: session occasions get their planned amounts, the meals share the rest; no main meal in the 2 h before a session; totals add up to {carbohydrate_g:.1} g carbohydrate, {protein_g:.1} g protein, {fat_g:.1} g fat.",
            occasions.len(),
            times.wake.format("%H:%M"),
            times.sleep.format("%H:%M")
        ),
        "Common practice",
    ));

    Ok(DayPlan {
        date: input.date,
        body_mass_kg: mass,
        carbohydrate: CarbohydrateTarget {
            g_per_kg: carbohydrate_g_per_kg,
            g: carbohydrate_g,
            computed_g_per_kg: decision.g_per_kg,
            pinned: input.pins.carbohydrate_g_per_kg.is_some(),
            rule: decision.rule,
            range_g_per_kg: decision.range,
        },
        protein: ProteinTarget {
            g_per_kg: protein_g_per_kg,
            g: protein_g,
            computed_g_per_kg: computed_protein,
            pinned: input.pins.protein_g_per_kg.is_some(),
            range_g_per_kg: PROTEIN_RANGE,
            per_occasion_g: round_to(PROTEIN_PER_OCCASION_G_PER_KG * mass, 0.1),
        },
        fat: FatTarget {
            g: fat_g,
            percent_of_energy: fat_share * 100.0,
        },
        energy: EnergyTarget {
            kcal: energy_kcal,
            computed_kcal,
            pinned: energy_pin.is_some(),
            resting_metabolic_rate: rmr,
            non_exercise_activity_factor: settings.non_exercise_activity_factor,
            non_exercise_kcal,
            exercise_kcal: exercise_net,
            goal,
            deficit_limited_by_kcal: deficit_limited_by,
            fat_floor_added_kcal: fat_energy.floor_added_kcal,
        },
        energy_availability: EnergyAvailability {
            kcal_per_kg_fat_free_mass: ea_value,
            band: ea_band,
            intake_kcal: energy_kcal,
            exercise_kcal: exercise_for_ea,
            exercise_energy_basis: settings.exercise_energy_basis,
            fat_free_mass: ffm,
            thresholds,
        },
        load,
        sessions: session_plans,
        eating_occasions: occasions,
        explanations,
        warnings,
        cautions,
    })
}

fn train_low_warnings(input: &DayInput, load: &DayLoad, warnings: &mut Vec<Warning>) {
    for session in input.sessions.iter().filter(|s| s.train_low) {
        let end = session.end();
        let key_soon = input
            .sessions
            .iter()
            .chain(&input.next_day_sessions)
            .find(|k| k.is_key() && k.start >= end && k.start < end + TimeDelta::hours(24));
        if let Some(key) = key_soon {
            warnings.push(
                Warning::new(
                    WarningCode::TrainLowBeforeKeySession,
                    Severity::Warning,
                    format!(
                        "Train-low session '{}' comes less than 24 h before the key session '{}': glycogen may not be restored in time.",
                        session.title, key.title
                    ),
                )
                .for_session(session.session_id),
            );
        }
        if load.band >= LoadBand::High {
            warnings.push(
                Warning::new(
                    WarningCode::TrainLowOnHighLoadDay,
                    Severity::Warning,
                    format!(
                        "Train-low session '{}' is on a {} load day: quality of the other work may suffer.",
                        session.title,
                        load.band.name()
                    ),
                )
                .for_session(session.session_id),
            );
        }
    }
}

fn loading_warnings(input: &DayInput, warnings: &mut Vec<Warning>) {
    let all = input
        .sessions
        .iter()
        .chain(&input.next_day_sessions)
        .chain(&input.day_after_next_sessions);
    for session in all {
        if session.event_preparation == EventPreparation::CarbohydrateLoading
            && session.minutes <= 90.0
        {
            warnings.push(
                Warning::new(
                    WarningCode::CarbohydrateLoadingNotIndicated,
                    Severity::Warning,
                    format!(
                        "Carbohydrate loading was asked for '{}' ({:.0} min) but it is for events over 90 min; general fuelling up is used instead.",
                        session.title, session.minutes
                    ),
                )
                .for_session(session.session_id),
            );
        }
    }
}

fn safety_notes(
    input: &DayInput,
    goal: &GoalAdjustment,
    warnings: &mut Vec<Warning>,
    cautions: &mut Vec<String>,
) {
    if input.profile.age_years < 18.0 {
        warnings.push(Warning::new(
            WarningCode::UnderEighteen,
            Severity::Safety,
            format!(
                "The athlete is {:.0}: these adult targets are not validated for under-18s.",
                input.profile.age_years.floor()
            ),
        ));
        cautions.push("The athlete is under 18: adult targets do not simply apply and growth needs energy. Plan with a registered dietitian and a physician, involve parents or guardians as local rules require, and do not plan body-mass loss without them.".into());
    }
    if input.profile.goal == GoalDirection::Reduce {
        cautions.push(format!(
            "Planned body-mass loss of {:.2} kg/week: keep it at or under about 0.5-1% of body mass per week (common practice), under a registered dietitian's supervision, and watch for signs of low energy availability.",
            goal.applied_kg_per_week
        ));
    }
    let mut flags = input.health_flags.clone();
    flags.sort_by_key(|f| *f as u8);
    flags.dedup();
    for flag in flags {
        let text = match flag {
            HealthFlag::Pregnancy => {
                "Pregnancy: these athlete targets do not apply; energy and nutrient needs must be set by a physician and a registered dietitian."
            }
            HealthFlag::Diabetes => {
                "Diabetes: carbohydrate targets and timing interact with medication and blood glucose; plan them with the athlete's physician and diabetes team."
            }
            HealthFlag::OtherMedicalCondition => {
                "A medical condition was declared: check these targets with the athlete's physician before use."
            }
            HealthFlag::DisorderedEatingHistory => {
                "History of disordered eating: gram targets and body-mass goals can do harm; use them only under a registered dietitian and the clinical team, and consider not sharing numbers with the athlete."
            }
        };
        warnings.push(Warning::new(
            WarningCode::HealthCondition,
            Severity::Safety,
            text,
        ));
        cautions.push(text.to_string());
    }
}

impl PlanSettings {
    /// Adds every out-of-range setting to `issues`, named under `prefix`.
    pub fn validate(&self, prefix: &str, issues: &mut Issues) {
        issues.range(
            format!("{prefix}.non_exercise_activity_factor"),
            self.non_exercise_activity_factor,
            1.1,
            2.0,
            "",
        );
        self.energy_availability
            .validate(&format!("{prefix}.energy_availability"), issues);
        issues.range(
            format!("{prefix}.default_body_fat.male_percent"),
            self.default_body_fat.male_percent,
            3.0,
            50.0,
            "%",
        );
        issues.range(
            format!("{prefix}.default_body_fat.female_percent"),
            self.default_body_fat.female_percent,
            3.0,
            50.0,
            "%",
        );
        issues.range(
            format!("{prefix}.max_body_mass_change_percent_per_week"),
            self.max_body_mass_change_percent_per_week,
            0.1,
            1.5,
            "% per week",
        );
        issues.range(
            "settingself.moderate_intensity_fraction_vo2max",
            self.moderate_intensity_fraction_vo2max,
            0.3,
            0.7,
            "(fraction of VO2max)",
        );
        issues.range(
            format!("{prefix}.protein_g_per_kg"),
            self.protein_g_per_kg,
            1.2,
            2.0,
            "g/kg",
        );
        issues.range(
            format!("{prefix}.protein_g_per_kg_during_loss"),
            self.protein_g_per_kg_during_loss,
            1.2,
            2.0,
            "g/kg",
        );
        issues.range(
            format!("{prefix}.carbohydrate_loading_hours"),
            self.carbohydrate_loading_hours,
            36.0,
            48.0,
            "h",
        );
        self.meal_times
            .validate(&format!("{prefix}.meal_times"), issues);
    }
}

impl DayPins {
    /// Adds every out-of-range pin to `issues`, named under `prefix`.
    pub fn validate(&self, prefix: &str, issues: &mut Issues) {
        if let Some(pin) = self.carbohydrate_g_per_kg {
            issues.range(
                format!("{prefix}.carbohydrate_g_per_kg"),
                pin,
                0.0,
                20.0,
                "g/kg",
            );
        }
        if let Some(pin) = self.protein_g_per_kg {
            issues.range(format!("{prefix}.protein_g_per_kg"), pin, 0.5, 4.0, "g/kg");
        }
        if let Some(pin) = self.energy_kcal {
            issues.range(
                format!("{prefix}.energy_kcal"),
                pin,
                500.0,
                10_000.0,
                "kcal",
            );
        }
    }
}

fn validate(input: &DayInput) -> Result<(), InvalidInput> {
    let mut issues = Issues::default();
    let p = &input.profile;
    issues.range("profile.age_years", p.age_years, 10.0, 100.0, "years");
    issues.range("profile.height_cm", p.height_cm, 100.0, 250.0, "cm");
    issues.range("profile.body_mass_kg", p.body_mass_kg, 25.0, 250.0, "kg");
    if let Some(percent) = p.body_fat_percent {
        issues.range("profile.body_fat_percent", percent, 3.0, 60.0, "%");
    }
    if let Some(kg) = p.fat_free_mass_kg {
        issues.range("profile.fat_free_mass_kg", kg, 15.0, 200.0, "kg");
        if kg >= p.body_mass_kg {
            issues.push("profile.fat_free_mass_kg", "must be below body_mass_kg");
        }
    }
    if let Some(rate) = p.goal_rate_kg_per_week {
        issues.range("profile.goal_rate_kg_per_week", rate, 0.0, 2.0, "kg/week");
    }

    input.settings.validate("settings", &mut issues);
    let s = &input.settings;
    if s.resting_metabolic_rate == RestingMetabolicRateChoice::Cunningham
        && p.fat_free_mass_kg.is_none()
        && p.body_fat_percent.is_none()
    {
        issues.push(
            "settings.resting_metabolic_rate",
            "cunningham needs profile.fat_free_mass_kg or profile.body_fat_percent",
        );
    }

    input.pins.validate("pins", &mut issues);
    let day = TimeDelta::days(1);
    validate_sessions(&input.sessions, "sessions", input.date, &mut issues);
    validate_sessions(
        &input.next_day_sessions,
        "next_day_sessions",
        input.date + day,
        &mut issues,
    );
    validate_sessions(
        &input.day_after_next_sessions,
        "day_after_next_sessions",
        input.date + day + day,
        &mut issues,
    );
    validate_sessions(
        &input.previous_day_sessions,
        "previous_day_sessions",
        input.date - day,
        &mut issues,
    );
    issues.finish()
}

#[cfg(test)]
mod tests;
