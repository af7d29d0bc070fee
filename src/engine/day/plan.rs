//! One athlete's day: the single entry point [`plan_day`] that turns a
//! profile and the work of today and the next days into daily targets,
//! fuelling around each session, eating occasions, explanations, warnings
//! and cautions.
//!
//! Order of work: validate everything (all field issues at once); fat-free
//! mass; the energy budget ([`super::budget`]: non-exercise energy for the
//! minutes outside sessions + gross session energy +/- the goal, with the
//! energy-availability floors); the day's fuel demand and carbohydrate
//! ([`super::targets`]); protein; the macronutrient fit (fat inside 20-35% of
//! energy, moving protein and carbohydrate within their ranges before
//! energy); energy availability; dietitian pins (kept as pinned, computed
//! value beside them); session fuelling; eating occasions; warnings,
//! explanations ([`super::explain`]) and cautions.

use crate::engine::decimal::Dec;
use chrono::{NaiveDate, NaiveTime, TimeDelta};
use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

use crate::engine::day::budget::{EnergyBudget, energy_budget};
use crate::engine::day::cautions::{loading_warnings, safety_notes, train_low_warnings};
use crate::engine::day::energy::{RestingMetabolicRateChoice, fat_free_mass};
use crate::engine::day::energy_availability::{
    EnergyAvailability, EnergyAvailabilityBand, classify, energy_availability,
};
use crate::engine::day::explain::{ExplainInput, explanations};
pub use crate::engine::day::input::DayInput;
use crate::engine::day::notes::{Explanation, Severity, Warning, WarningCode};
use crate::engine::day::occasions::{DayTotals, EatingOccasion, plan_eating_occasions};
use crate::engine::day::session_fuelling::{
    DayClock, PROTEIN_PER_OCCASION_G_PER_KG, SessionFuelling, plan_session_fuelling,
};
use crate::engine::day::session_work::validate_sessions;
use crate::engine::day::targets::{
    CarbohydrateRule, DayLoad, FAT_MIN_SHARE, FAT_USUAL_MAX_SHARE, GramsPerKgRange,
    KCAL_PER_G_CARBOHYDRATE, KCAL_PER_G_FAT, KCAL_PER_G_PROTEIN, LoadBand, MacroRequest,
    PROTEIN_RANGE, Upcoming, classify_day, daily_carbohydrate_with, daily_protein, fit_fat,
};
use crate::engine::profile::Sex;
use crate::engine::{InvalidInput, Issues};

/// Daily carbohydrate.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct CarbohydrateTarget {
    /// Target, g per kg body mass (the pin when pinned).
    pub g_per_kg: f64,
    /// Target, g (rounded to 0.1 g).
    pub g: f64,
    /// What the engine computed, g/kg, shown beside a pin.
    pub computed_g_per_kg: f64,
    /// What the day's work alone calls for, g/kg (before the energy fit).
    pub from_work_g_per_kg: f64,
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
    /// Expenditure, goal and floors behind the computed value (estimates).
    pub budget: EnergyBudget,
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

/// Carbohydrate for the meals that are not session occasions, g/kg.
const OTHER_MEALS_G_PER_KG: f64 = 1.0;

/// The highest carbohydrate the day may be moved to (energy fill, session
/// fuelling): on work-driven days up to 2 g/kg above what the work calls
/// for, at least to the moderate band's top (7) and at most 12, so that
/// energy goes to fuel rather than fat and the cap moves smoothly with the
/// work (common practice); competition days keep their rule's range.
fn range_top(decision: &crate::engine::day::targets::CarbohydrateDecision) -> f64 {
    match decision.rule {
        CarbohydrateRule::RestDay | CarbohydrateRule::LoadBand => (decision.g_per_kg + 2.0).clamp(
            LoadBand::Moderate.range().max,
            LoadBand::VeryHigh.range().max,
        ),
        _ => decision.range.max,
    }
}

fn round_to(value: f64, step: f64) -> f64 {
    (value / step).round() * step
}

/// Plans one athlete's day. Pure and deterministic.
pub fn plan_day(input: &DayInput) -> Result<DayPlan, InvalidInput> {
    plan_day_with(input, Explain::Yes)
}

/// Whether a day plan carries its explanations.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Explain {
    Yes,
    /// No explanation texts (the only part nothing else reads): for days the
    /// week planner simulates only to carry glycogen into the span.
    No,
}

/// [`plan_day`], leaving out the explanations when they will not be shown.
/// Every number is the same either way.
pub(crate) fn plan_day_with(input: &DayInput, explain: Explain) -> Result<DayPlan, InvalidInput> {
    validate_day(input)?;
    let profile = &input.profile;
    let settings = &input.settings;
    let mass = profile.body_mass_kg;
    let mut warnings = Vec::new();
    let mut cautions = vec![
        "These targets are estimates for healthy adult athletes, computed from published equations and position statements. Apply them with a registered (sports) dietitian, and defer to a physician and to local rules.".to_string(),
    ];

    // Energy budget.
    let ffm = fat_free_mass(profile, &settings.default_body_fat);
    let budget = energy_budget(profile, &input.sessions, settings, &ffm);
    let thresholds = settings.energy_availability;
    let goal = &budget.goal;
    if budget.deficit_limited_by_kcal > 0.0 {
        warnings.push(Warning::new(
            WarningCode::DeficitLimitedByEnergyAvailability,
            Severity::Safety,
            format!(
                "The body-mass loss deficit was reduced by {:.0} kcal so that planned energy availability does not fall below {:.0} kcal/kg FFM/day.",
                Dec(budget.deficit_limited_by_kcal), Dec(thresholds.low_below)
            ),
        ));
    }
    if goal.withheld_under_18 {
        warnings.push(Warning::new(
            WarningCode::BodyMassLossNotPlannedUnder18,
            Severity::Safety,
            "A body-mass loss goal is set for an athlete under 18: no deficit is planned. Growth needs energy; any body-mass change is for a registered dietitian and a physician, with parents or guardians as local rules require.",
        ));
    }
    if goal.capped {
        warnings.push(Warning::new(
            WarningCode::GoalRateAboveSafe,
            Severity::Safety,
            format!(
                "Requested {:.2} kg/week is faster than {:.1}% of body mass per week; the plan uses {:.2} kg/week.",
                Dec(goal.requested_kg_per_week.unwrap_or_default()),
                Dec(settings.max_body_mass_change_percent_per_week),
                Dec(goal.applied_kg_per_week)
            ),
        ));
    }

    // Carbohydrate from the day's fuel demand.
    let mut load = classify_day(
        &input.sessions,
        &input.next_day_sessions,
        mass,
        settings.moderate_intensity_fraction_vo2max,
        input.glycogen_to_restore_g,
    );
    let upcoming = Upcoming {
        next_day: &input.next_day_sessions,
        day_after_next: &input.day_after_next_sessions,
        loading_hours: settings.carbohydrate_loading_hours,
        today_noon: input
            .date
            .and_time(NaiveTime::from_hms_opt(12, 0, 0).expect("noon")),
        body_mass_kg: mass,
    };
    let decision =
        daily_carbohydrate_with(&input.sessions, &load, &upcoming, explain == Explain::Yes);
    let range = decision.range;
    let computed_protein = daily_protein(
        profile.goal,
        settings.protein_g_per_kg,
        settings.protein_g_per_kg_during_loss,
    );

    // Fuelling around the sessions (before, during, after).
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
    // The day holds its session fuelling plus about 0.5 g/kg at each of two
    // other meals (common practice), within the rule's range.
    let session_fuelling_g: f64 = session_plans
        .iter()
        .map(SessionFuelling::carbohydrate_g)
        .sum();
    let fuelling_floor =
        (session_fuelling_g / mass + OTHER_MEALS_G_PER_KG).min(range_top(&decision));
    let from_work_g_per_kg = decision.g_per_kg;
    let mut decision = decision;
    if fuelling_floor > decision.g_per_kg + 1e-9 && explain == Explain::Yes {
        decision.text = format!(
            "{}; raised to {fuelling_floor:.2} g/kg so that the day holds its session fuelling ({session_fuelling_g:.0} g before, during and after the sessions) and about {OTHER_MEALS_G_PER_KG:.1} g/kg for the other meals",
            decision.text,
            fuelling_floor = Dec(fuelling_floor),
            session_fuelling_g = Dec(session_fuelling_g),
            OTHER_MEALS_G_PER_KG = Dec(OTHER_MEALS_G_PER_KG)
        );
    }
    if fuelling_floor > decision.g_per_kg + 1e-9 {
        decision.g_per_kg = fuelling_floor;
    }

    // Macronutrients: fat fills the rest inside 20-35% of energy.
    let pins = &input.pins;
    let energy_pin = pins.energy_kcal;
    let request = |energy_kcal: f64, pinned: bool| MacroRequest {
        energy_kcal,
        carbohydrate_g: pins.carbohydrate_g_per_kg.unwrap_or(decision.g_per_kg) * mass,
        carbohydrate_min_g: range.min.min(decision.g_per_kg) * mass,
        // Energy left after protein may go to carbohydrate up to the
        // moderate band's top before fat rises above 35% (fuel rather than fat).
        carbohydrate_max_g: range_top(&decision).max(decision.g_per_kg) * mass,
        protein_g: pins.protein_g_per_kg.unwrap_or(computed_protein) * mass,
        protein_max_g: PROTEIN_RANGE.max.max(computed_protein) * mass,
        carbohydrate_pinned: pins.carbohydrate_g_per_kg.is_some(),
        protein_pinned: pins.protein_g_per_kg.is_some(),
        energy_pinned: pinned,
        hold_energy: goal.kcal_per_day < 0.0,
    };
    let fit = fit_fat(&request(
        energy_pin.unwrap_or(budget.planned_kcal),
        energy_pin.is_some(),
    ));
    // The engine's own figures, shown beside pins.
    let own = fit_fat(&MacroRequest {
        carbohydrate_g: decision.g_per_kg * mass,
        protein_g: computed_protein * mass,
        carbohydrate_pinned: false,
        protein_pinned: false,
        ..request(budget.planned_kcal, false)
    });
    let carbohydrate_g = round_to(fit.carbohydrate_g, 0.1);
    let carbohydrate_g_per_kg = pins
        .carbohydrate_g_per_kg
        .unwrap_or(fit.carbohydrate_g / mass);
    let protein_g = round_to(fit.protein_g, 0.1);
    let protein_g_per_kg = pins.protein_g_per_kg.unwrap_or(fit.protein_g / mass);
    let energy_kcal = match energy_pin {
        Some(pin) => pin,
        None => fit.energy_kcal.round(),
    };
    // The band is a label of the planned value.
    load.band = LoadBand::of(carbohydrate_g_per_kg);
    load.band_range = load.band.range();
    let fat_g = round_to(fit.fat_g, 0.1);
    let fat_share = fat_g * KCAL_PER_G_FAT / energy_kcal;
    if fit.energy_added_kcal > 0.5 {
        let (code, severity, text) = if goal.kcal_per_day < 0.0 {
            (
                WarningCode::DeficitLimitedByMacronutrients,
                Severity::Warning,
                format!(
                    "The body-mass loss deficit was reduced by {:.0} kcal: with carbohydrate at the low end of its range for this day and protein at {:.1} g/kg, fat would fall under 20% of energy. Lower the carbohydrate (pin) or accept a slower loss.",
                    Dec(fit.energy_added_kcal),
                    Dec(protein_g_per_kg)
                ),
            )
        } else {
            (
                WarningCode::FatFloorRaisedEnergy,
                Severity::Notice,
                format!(
                    "Carbohydrate and protein leave under 20% of energy for fat: energy was raised by {:.0} kcal to keep fat at 20%.",
                    Dec(fit.energy_added_kcal)
                ),
            )
        };
        warnings.push(Warning::new(code, severity, text));
    }
    if energy_pin.is_some() {
        let macro_kcal = carbohydrate_g * KCAL_PER_G_CARBOHYDRATE + protein_g * KCAL_PER_G_PROTEIN;
        if macro_kcal > energy_kcal {
            warnings.push(Warning::new(
                WarningCode::PinnedEnergyBelowMacronutrients,
                Severity::Warning,
                format!(
                    "Pinned energy {energy_kcal:.0} kcal is below the {macro_kcal:.0} kcal in the carbohydrate and protein targets: fat is planned at 0 g and the occasions carry {macro_kcal:.0} kcal.", energy_kcal = Dec(energy_kcal), macro_kcal = Dec(macro_kcal)
                ),
            ));
        } else if fat_share < FAT_MIN_SHARE - 1e-6 {
            warnings.push(Warning::new(
                WarningCode::FatBelowRange,
                Severity::Warning,
                format!(
                    "With the pinned energy, fat is {:.0}% of energy, below the 20% minimum.",
                    Dec(fat_share * 100.0)
                ),
            ));
        }
    }
    if fat_share > FAT_USUAL_MAX_SHARE + 1e-3 {
        warnings.push(Warning::new(
            WarningCode::FatAboveUsualRange,
            Severity::Notice,
            format!(
                "Fat is {:.0}% of energy, above the usual 20-35%: {}",
                Dec(fat_share * 100.0),
                if pins.carbohydrate_g_per_kg.is_some() || energy_pin.is_some() {
                    "the pinned values leave the energy to fat; swap some for carbohydrate or protein if preferred."
                } else {
                    "protein and carbohydrate are at the top of their ranges for this day."
                }
            ),
        ));
    }

    // Energy availability.
    let exercise_for_ea = budget.exercise_kcal_for_energy_availability;
    let ea_value = energy_availability(energy_kcal, exercise_for_ea, ffm.kg);
    let ea_band = classify(ea_value, &thresholds, profile.sex);
    match ea_band {
        EnergyAvailabilityBand::Low => {
            warnings.push(Warning::new(
                WarningCode::EnergyAvailabilityLow,
                Severity::Safety,
                format!(
                    "Planned energy availability is {ea_value:.1} kcal/kg FFM/day, under {:.0} (low).",
                    Dec(thresholds.low_below), ea_value = Dec(ea_value)
                ),
            ));
            cautions.push(format!(
                "Low energy availability: this plan gives {ea_value:.1} kcal/kg fat-free mass per day, under the {:.0} threshold. Low energy availability harms health and performance (relative energy deficiency in sport, IOC consensus). Do not follow this plan without review by a registered dietitian or a physician.",
                Dec(thresholds.low_below), ea_value = Dec(ea_value)
            ));
        }
        // The plan meets its own adequate edge unless a deficit or a pin moves it.
        EnergyAvailabilityBand::Reduced => warnings.push(Warning::new(
            WarningCode::EnergyAvailabilityReduced,
            Severity::Notice,
            format!(
                "Planned energy availability is {ea_value:.1} kcal/kg FFM/day, between {:.0} and {:.0}, because of {}.",
                Dec(thresholds.low_below),
                Dec(thresholds.adequate_for(profile.sex)),
                if energy_pin.is_some() {
                    "the pinned energy"
                } else {
                    "the planned body-mass loss"
                }, ea_value = Dec(ea_value)
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
                Dec(ffm.kg),
                percent = Dec(percent)
            ),
        ));
        cautions.push(format!(
            "Fat-free mass is an estimate ({percent:.0}% body fat assumed, no measurement): energy availability is an estimate too. Measure body composition for a firmer figure.", percent = Dec(percent)
        ));
    }

    // Pins: kept as given, checked against the published ranges.
    if let Some(pin) = pins.carbohydrate_g_per_kg
        && !range.contains(pin)
    {
        warnings.push(Warning::new(
            WarningCode::PinOutsidePublishedRange,
            Severity::Warning,
            format!(
                "Pinned carbohydrate {pin:.2} g/kg is outside the {:.0}-{:.0} g/kg range for this day (computed {:.2} g/kg).",
                Dec(range.min), Dec(range.max), Dec(own.carbohydrate_g / mass), pin = Dec(pin)
            ),
        ));
    }
    if let Some(pin) = pins.protein_g_per_kg
        && !PROTEIN_RANGE.contains(pin)
    {
        warnings.push(Warning::new(
            WarningCode::PinOutsidePublishedRange,
            Severity::Warning,
            format!(
                "Pinned protein {pin:.2} g/kg is outside the published 1.2-2.0 g/kg/d (computed {computed_protein:.2} g/kg).", pin = Dec(pin), computed_protein = Dec(computed_protein)
            ),
        ));
    }

    // Eating occasions.
    let times = &settings.meal_times;
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
                    Dec(grams / mass),
                    time.format("%H:%M"),
                    Dec((plan.start - time).num_minutes() as f64 / 60.0),
                    grams = Dec(grams)
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
    safety_notes(input, goal, &mut warnings, &mut cautions);

    let explanations: Vec<Explanation> = if explain == Explain::No {
        Vec::new()
    } else {
        explanations(&ExplainInput {
            input,
            load: &load,
            decision: &decision,
            budget: &budget,
            fit: &fit,
            ffm: &ffm,
            carbohydrate_g,
            protein_g,
            protein_g_per_kg,
            computed_protein,
            fat_g,
            fat_share,
            energy_kcal,
            ea_value,
            ea_band,
            session_plans: &session_plans,
            occasion_count: occasions.len(),
        })
    };

    Ok(DayPlan {
        date: input.date,
        body_mass_kg: mass,
        carbohydrate: CarbohydrateTarget {
            g_per_kg: carbohydrate_g_per_kg,
            g: carbohydrate_g,
            computed_g_per_kg: own.carbohydrate_g / mass,
            from_work_g_per_kg,
            pinned: pins.carbohydrate_g_per_kg.is_some(),
            rule: decision.rule,
            range_g_per_kg: decision.range,
        },
        protein: ProteinTarget {
            g_per_kg: protein_g_per_kg,
            g: protein_g,
            computed_g_per_kg: own.protein_g / mass,
            pinned: pins.protein_g_per_kg.is_some(),
            range_g_per_kg: PROTEIN_RANGE,
            per_occasion_g: round_to(PROTEIN_PER_OCCASION_G_PER_KG * mass, 0.1),
        },
        fat: FatTarget {
            g: fat_g,
            percent_of_energy: fat_share * 100.0,
        },
        energy: EnergyTarget {
            kcal: energy_kcal,
            computed_kcal: own.energy_kcal.round(),
            pinned: energy_pin.is_some(),
            fat_floor_added_kcal: fit.energy_added_kcal,
            budget,
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

/// Every check [`plan_day`] makes of its input, all issues at once: a day
/// plan can fail only here.
pub(crate) fn validate_day(input: &DayInput) -> Result<(), InvalidInput> {
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
mod properties;
#[cfg(test)]
mod tests;
