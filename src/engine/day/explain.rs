//! Why each of the day's numbers has its value: one [`Explanation`] per
//! target (band, carbohydrate, protein, fat, resting metabolic rate, energy,
//! energy availability), per session fuelling step and for the timeline,
//! each with its rule and source.

use crate::engine::day::budget::EnergyBudget;
use crate::engine::day::energy::{
    FatFreeMass, FatFreeMassSource, KCAL_PER_KG_BODY_MASS, RestingMetabolicRateMethod,
};
use crate::engine::day::energy_availability::{EnergyAvailabilityBand, ExerciseEnergyBasis};
use crate::engine::day::input::DayInput;
use crate::engine::day::notes::{Explanation, TargetRule, Topic};
use crate::engine::day::session_fuelling::{
    AfterGuidance, PROTEIN_PER_OCCASION_G_PER_KG, SessionFuelling,
};
use crate::engine::day::targets::{
    CarbohydrateDecision, CarbohydrateRule, DayLoad, GramsPerKgRange, MacroFit, PROTEIN_RANGE,
    WORK_CURVE_FLOOR, WORK_CURVE_SCALE, WORK_CURVE_SPAN,
};
use crate::engine::decimal::Dec;
use crate::engine::profile::GoalDirection;
use crate::engine::sources::THOMAS_2016;

/// What the explanations read.
pub(crate) struct ExplainInput<'a> {
    pub input: &'a DayInput,
    pub load: &'a DayLoad,
    pub decision: &'a CarbohydrateDecision,
    pub budget: &'a EnergyBudget,
    pub fit: &'a MacroFit,
    pub ffm: &'a FatFreeMass,
    pub carbohydrate_g: f64,
    pub protein_g: f64,
    pub protein_g_per_kg: f64,
    pub computed_protein: f64,
    pub fat_g: f64,
    pub fat_share: f64,
    pub energy_kcal: f64,
    pub ea_value: f64,
    pub ea_band: EnergyAvailabilityBand,
    pub session_plans: &'a [SessionFuelling],
    pub occasion_count: usize,
}

pub(crate) fn explanations(x: &ExplainInput<'_>) -> Vec<Explanation> {
    let input = x.input;
    let settings = &input.settings;
    let mass = input.profile.body_mass_kg;
    let load = x.load;
    let budget = x.budget;
    let mut out = Vec::new();
    out.push(
        Explanation::new(
            Topic::LoadBand,
            TargetRule::LoadBandClassification,
            format!(
                "Fuel demand {:.2} g/kg: {:.0} min of work oxidising {:.2} g/kg of carbohydrate (forecast from normal stores), {:.2} g/kg for tomorrow's key work, {:.2} g/kg of working-muscle glycogen to restore. The target it gives falls in the {} band.",
                Dec(load.fuel_demand_g_per_kg),
                Dec(load.total_minutes),
                Dec(load.carbohydrate_oxidised_g_per_kg),
                Dec(load.next_day_key_carbohydrate_g_per_kg),
                Dec(load.glycogen_to_restore_g_per_kg),
                load.band.name(),
            ),
            format!(
                "{THOMAS_2016} (bands); the demand and the curve {WORK_CURVE_FLOOR:.0} + {WORK_CURVE_SPAN:.0} x (1 - e^(-demand/{WORK_CURVE_SCALE:.0})) are our calibration (common practice)", WORK_CURVE_FLOOR = Dec(WORK_CURVE_FLOOR), WORK_CURVE_SPAN = Dec(WORK_CURVE_SPAN), WORK_CURVE_SCALE = Dec(WORK_CURVE_SCALE)
            ),
        )
        .with_band(load.band)
        .with_range(load.band_range)
        .with_sessions(load.driving_sessions.clone()),
    );
    let decision = x.decision;
    out.push(
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
                Dec(decision.g_per_kg * mass),
                mass = Dec(mass)
            ),
            decision.source.clone(),
        )
        .with_band(load.band)
        .with_range(decision.range)
        .with_sessions(decision.sessions.clone()),
    );
    let fit = x.fit;
    if fit.protein_added_g > 0.05 || fit.carbohydrate_moved_g.abs() > 0.05 {
        out.push(Explanation::new(
            Topic::Carbohydrate,
            TargetRule::EnergyFill,
            if fit.carbohydrate_moved_g < 0.0 {
                format!(
                    "Carbohydrate trimmed by {:.0} g (to {:.2} g/kg, inside the day's range) so that the body-mass loss deficit holds with fat at 20% of energy.",
                    Dec(-fit.carbohydrate_moved_g),
                    Dec(fit.carbohydrate_g / mass)
                )
            } else {
                format!(
                    "The day's energy leaves more than 35% for fat after the work's carbohydrate: protein raised by {:.0} g and carbohydrate by {:.0} g (to {:.2} g/kg, inside the day's range), so fat stays at or under 35% of energy.",
                    Dec(fit.protein_added_g),
                    Dec(fit.carbohydrate_moved_g),
                    Dec(fit.carbohydrate_g / mass)
                )
            },
            format!("{THOMAS_2016} (fat 20-35% of energy, protein 1.2-2.0 g/kg, from memory)"),
        ));
    }
    if let Some(pin) = input.pins.carbohydrate_g_per_kg {
        out.push(Explanation::new(
            Topic::Carbohydrate,
            TargetRule::DietitianPin,
            format!(
                "Carbohydrate pinned by the dietitian at {pin} g/kg ({:.1} g); the work alone calls for {:.2} g/kg.",
                Dec(x.carbohydrate_g), Dec(decision.g_per_kg)
            ),
            "Dietitian's decision",
        ));
    }
    out.push(
        Explanation::new(
            Topic::Protein,
            if input.pins.protein_g_per_kg.is_some() {
                TargetRule::DietitianPin
            } else {
                TargetRule::ProteinRange
            },
            format!(
                "Protein {:.2} g/kg = {:.1} g (setting {:.2} g/kg: {}), spread over the meals and recovery occasions at about 0.3 g/kg ({:.0} g) each.",
                Dec(x.protein_g_per_kg),
                Dec(x.protein_g),
                Dec(x.computed_protein),
                if input.profile.goal == GoalDirection::Reduce {
                    "upper end of 1.2-2.0 g/kg during planned body-mass loss"
                } else {
                    "inside 1.2-2.0 g/kg"
                },
                Dec(PROTEIN_PER_OCCASION_G_PER_KG * mass)
            ),
            format!("{THOMAS_2016}; 0.3 g/kg per occasion from memory"),
        )
        .with_range(PROTEIN_RANGE),
    );
    out.push(Explanation::new(
        Topic::Fat,
        TargetRule::FatRemainder,
        format!(
            "Fat is the energy left after carbohydrate and protein: {:.1} g, {:.0}% of energy (kept inside 20-35%).",
            Dec(x.fat_g),
            Dec(x.fat_share * 100.0)
        ),
        format!("{THOMAS_2016} (fat 20-35% of energy, from memory)"),
    ));
    let rmr = &budget.resting_metabolic_rate;
    let ffm = x.ffm;
    out.push(Explanation::new(
        Topic::RestingMetabolicRate,
        match rmr.method {
            RestingMetabolicRateMethod::Cunningham => TargetRule::Cunningham,
            RestingMetabolicRateMethod::MifflinStJeor => TargetRule::MifflinStJeor,
            RestingMetabolicRateMethod::RevisedHarrisBenedict => TargetRule::RevisedHarrisBenedict,
        },
        format!(
            "Resting metabolic rate {:.0} kcal/d by {}{}.",
            Dec(rmr.kcal_per_day),
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
    let goal = &budget.goal;
    out.push(Explanation::new(
        Topic::Energy,
        if input.pins.energy_kcal.is_some() {
            TargetRule::DietitianPin
        } else {
            TargetRule::EnergyBalance
        },
        format!(
            "Energy {:.0} kcal: RMR {:.0} x {:.2} for the {:.0} min outside sessions = {:.0} kcal, + {:.0} kcal gross session energy = {:.0} kcal estimated expenditure; {:+.0} kcal for the goal ({:.2} kg/week at {KCAL_PER_KG_BODY_MASS:.0} kcal/kg){}{}{}.",
            Dec(x.energy_kcal),
            Dec(rmr.kcal_per_day),
            Dec(budget.non_exercise_activity_factor),
            Dec(budget.non_exercise_minutes),
            Dec(budget.non_exercise_kcal),
            Dec(budget.exercise_kcal),
            Dec(budget.expenditure_kcal),
            Dec(goal.kcal_per_day),
            Dec(goal.applied_kg_per_week),
            if budget.deficit_limited_by_kcal > 0.0 {
                format!(", {:.0} kcal given back to keep energy availability out of the low band", budget.deficit_limited_by_kcal)
            } else {
                String::new()
            },
            if budget.raised_to_adequate_kcal > 0.0 {
                format!(", + {:.0} kcal so that energy availability reaches the adequate edge", budget.raised_to_adequate_kcal)
            } else {
                String::new()
            },
            if fit.energy_added_kcal > 0.5 {
                format!(", + {:.0} kcal to keep fat at 20%", fit.energy_added_kcal)
            } else {
                String::new()
            }, KCAL_PER_KG_BODY_MASS = Dec(KCAL_PER_KG_BODY_MASS),
        ),
        "Activity factor for non-exercise time: common practice (FAO/WHO/UNU 2004 physical activity levels, from memory); session energy from the session model; 7700 kcal/kg: common practice",
    ));
    out.push(Explanation::new(
        Topic::EnergyAvailability,
        TargetRule::EnergyAvailability,
        format!(
            "Energy availability ({:.0} - {:.0} kcal {} exercise energy) / {:.1} kg fat-free mass{} = {:.1} kcal/kg FFM/day: {}.",
            Dec(x.energy_kcal),
            Dec(budget.exercise_kcal_for_energy_availability),
            match settings.exercise_energy_basis {
                ExerciseEnergyBasis::Gross => "gross",
                ExerciseEnergyBasis::Net => "net",
            },
            Dec(ffm.kg),
            if ffm.estimated { " (estimated)" } else { "" },
            Dec(x.ea_value),
            match x.ea_band {
                EnergyAvailabilityBand::Adequate => "adequate",
                EnergyAvailabilityBand::Reduced => "reduced",
                EnergyAvailabilityBand::Low => "low",
            }
        ),
        "Loucks & Thuma (2003), J Clin Endocrinol Metab 88:297 (from memory); Mountjoy et al. (2014, 2018, 2023), IOC consensus on relative energy deficiency in sport; male edge: common practice (Burke et al. 2018, Int J Sport Nutr Exerc Metab 28:350)",
    ));
    for plan in x.session_plans {
        let rule = match plan.after.guidance {
            AfterGuidance::SpeedyRefuelling => TargetRule::SpeedyRefuelling,
            AfterGuidance::RecoveryMeal => TargetRule::RecoveryMeal,
        };
        out.push(
            Explanation::new(
                Topic::SessionFuelling,
                TargetRule::DuringSession,
                format!(
                    "'{}' ({:.0} min): {}",
                    plan.session.title,
                    Dec(plan.minutes),
                    plan.during.note
                ),
                THOMAS_2016,
            )
            .with_sessions(vec![plan.session.clone()]),
        );
        if plan.before.applies || plan.before.withheld_for_train_low {
            out.push(
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
        out.push(
            Explanation::new(
                Topic::SessionFuelling,
                rule,
                format!("'{}': {}", plan.session.title, plan.after.note),
                THOMAS_2016,
            )
            .with_sessions(vec![plan.session.clone()]),
        );
        if plan.train_low {
            out.push(
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
    let times = &settings.meal_times;
    out.push(Explanation::new(
        Topic::EatingOccasions,
        TargetRule::OccasionTimeline,
        format!(
            "{} eating occasions between {} and {}: session occasions get their planned amounts, the meals share the rest; no main meal in the 2 h before a session; totals add up to {:.1} g carbohydrate, {:.1} g protein, {:.1} g fat.",
            x.occasion_count,
            times.wake.format("%H:%M"),
            times.sleep.format("%H:%M"),
            Dec(x.carbohydrate_g),
            Dec(x.protein_g),
            Dec(x.fat_g)
        ),
        "Common practice",
    ));
    out
}
