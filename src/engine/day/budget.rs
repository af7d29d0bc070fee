//! The day's energy budget: what the athlete is estimated to spend, what the
//! body-mass goal changes, and the floors that protect energy availability.
//!
//! - Non-exercise energy: resting metabolic rate x the activity factor for
//!   the minutes of the day outside sessions only, so session time is never
//!   paid twice (once in the factor, once as session energy).
//! - Exercise energy: the sessions' gross energy (the session model).
//! - Goal: a reduce or gain goal changes the balance by its rate at 7700
//!   kcal/kg (common practice), capped at the safe rate.
//! - Floors: a deficit never takes energy availability under the low edge
//!   (the deficit is limited and the planner warns); without a deficit the
//!   plan meets its own adequate edge (intake is raised to it, explained).

use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

use crate::engine::day::energy::{
    FatFreeMass, GoalAdjustment, RestingMetabolicRate, goal_adjustment, resting_metabolic_rate,
};
use crate::engine::day::energy_availability::{ExerciseEnergyBasis, intake_for};
use crate::engine::day::session_work::{SessionWork, total};
use crate::engine::day::settings::PlanSettings;
use crate::engine::profile::AthleteProfile;

/// Minutes in a day.
const DAY_MINUTES: f64 = 1440.0;

/// The day's energy budget before macronutrients are fitted.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct EnergyBudget {
    /// Resting metabolic rate and the equation used.
    pub resting_metabolic_rate: RestingMetabolicRate,
    /// Multiplier of RMR for the part of the day outside sessions.
    pub non_exercise_activity_factor: f64,
    /// Minutes of the day outside the athlete's session work.
    pub non_exercise_minutes: f64,
    /// RMR x factor x non-exercise minutes / 1440, kcal.
    pub non_exercise_kcal: f64,
    /// Gross energy of the day's sessions, kcal (estimate).
    pub exercise_kcal: f64,
    /// Estimated expenditure: non-exercise + exercise, kcal.
    pub expenditure_kcal: f64,
    /// Body-mass goal and its daily energy change.
    pub goal: GoalAdjustment,
    /// kcal of the goal deficit given back to keep energy availability out of the low band.
    pub deficit_limited_by_kcal: f64,
    /// kcal added so that the plan's energy availability reaches the adequate edge.
    pub raised_to_adequate_kcal: f64,
    /// Planned energy before the macronutrient fit, kcal.
    pub planned_kcal: f64,
    /// Exercise energy subtracted for energy availability (gross or net), kcal.
    pub exercise_kcal_for_energy_availability: f64,
}

/// Computes the budget for `profile` with `sessions` on the day.
pub fn energy_budget(
    profile: &AthleteProfile,
    sessions: &[SessionWork],
    settings: &PlanSettings,
    fat_free_mass: &FatFreeMass,
) -> EnergyBudget {
    let rmr = resting_metabolic_rate(profile, settings.resting_metabolic_rate, fat_free_mass);
    let work_minutes = total(sessions.iter().map(|s| s.minutes)).min(DAY_MINUTES);
    let non_exercise_minutes = DAY_MINUTES - work_minutes;
    let factor = settings.non_exercise_activity_factor;
    let non_exercise_kcal = rmr.kcal_per_day * factor * non_exercise_minutes / DAY_MINUTES;
    let exercise_kcal = total(sessions.iter().map(|s| s.gross_kcal));
    let exercise_for_ea = match settings.exercise_energy_basis {
        ExerciseEnergyBasis::Gross => exercise_kcal,
        ExerciseEnergyBasis::Net => total(sessions.iter().map(|s| s.net_kcal)),
    };
    let expenditure = non_exercise_kcal + exercise_kcal;
    let goal = goal_adjustment(profile, settings.max_body_mass_change_percent_per_week);
    let mut planned = expenditure + goal.kcal_per_day;
    let thresholds = settings.energy_availability;
    let mut deficit_limited_by = 0.0;
    let mut raised = 0.0;
    if goal.kcal_per_day < 0.0 {
        // Rounded up so that the whole-kcal target cannot dip under the edge.
        let floor = intake_for(thresholds.low_below, exercise_for_ea, fat_free_mass.kg)
            .ceil()
            .min(expenditure);
        if planned < floor {
            deficit_limited_by = floor - planned;
            planned = floor;
        }
    } else {
        let floor = intake_for(
            thresholds.adequate_for(profile.sex),
            exercise_for_ea,
            fat_free_mass.kg,
        )
        .ceil();
        if planned < floor {
            raised = floor - planned;
            planned = floor;
        }
    }
    EnergyBudget {
        resting_metabolic_rate: rmr,
        non_exercise_activity_factor: factor,
        non_exercise_minutes,
        non_exercise_kcal,
        exercise_kcal,
        expenditure_kcal: expenditure,
        goal,
        deficit_limited_by_kcal: deficit_limited_by,
        raised_to_adequate_kcal: raised,
        planned_kcal: planned,
        exercise_kcal_for_energy_availability: exercise_for_ea,
    }
}
