//! What a dietitian sets for a team or a day: plan settings with documented
//! defaults, a day's pins, and declared health conditions.

use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

use crate::engine::Issues;
use crate::engine::day::energy::{DefaultBodyFat, RestingMetabolicRateChoice};
use crate::engine::day::energy_availability::{EnergyAvailabilityThresholds, ExerciseEnergyBasis};
use crate::engine::day::occasions::MealTimes;

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
    /// Share of team-sport play each position group covers (default:
    /// goalkeepers 0.5, Di Salvo et al. 2007, from memory; any group not
    /// listed does the full work). Matched case-insensitively.
    #[serde(default = "default_position_work")]
    pub team_sport_work_by_position: Vec<PositionWork>,
}

/// One position group's share of team-sport work.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct PositionWork {
    /// Position group as stored on athletes, e.g. `goalkeeper`.
    pub position_group: String,
    /// Share of the outfield work, 0.2 to 1.5.
    pub team_sport_work_factor: f64,
}

fn default_position_work() -> Vec<PositionWork> {
    vec![PositionWork {
        position_group: "goalkeeper".into(),
        team_sport_work_factor: 0.5,
    }]
}

impl PlanSettings {
    /// The team-sport work factor for an athlete's position group.
    pub fn team_sport_work_factor(&self, position_group: Option<&str>) -> Option<f64> {
        let group = position_group?.trim();
        self.team_sport_work_by_position
            .iter()
            .find(|p| p.position_group.trim().eq_ignore_ascii_case(group))
            .map(|p| p.team_sport_work_factor)
    }
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
            team_sport_work_by_position: default_position_work(),
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

impl PlanSettings {
    /// Adds every out-of-range setting to `issues`, named under `prefix`.
    pub fn validate(&self, prefix: &str, issues: &mut Issues) {
        issues.range_with(
            || format!("{prefix}.non_exercise_activity_factor"),
            self.non_exercise_activity_factor,
            1.1,
            2.0,
            "",
        );
        self.energy_availability
            .validate(&format!("{prefix}.energy_availability"), issues);
        issues.range_with(
            || format!("{prefix}.default_body_fat.male_percent"),
            self.default_body_fat.male_percent,
            3.0,
            50.0,
            "%",
        );
        issues.range_with(
            || format!("{prefix}.default_body_fat.female_percent"),
            self.default_body_fat.female_percent,
            3.0,
            50.0,
            "%",
        );
        issues.range_with(
            || format!("{prefix}.max_body_mass_change_percent_per_week"),
            self.max_body_mass_change_percent_per_week,
            0.1,
            1.5,
            "% per week",
        );
        issues.range_with(
            || format!("{prefix}.moderate_intensity_fraction_vo2max"),
            self.moderate_intensity_fraction_vo2max,
            0.3,
            0.7,
            "(fraction of VO2max)",
        );
        issues.range_with(
            || format!("{prefix}.protein_g_per_kg"),
            self.protein_g_per_kg,
            1.2,
            2.0,
            "g/kg",
        );
        issues.range_with(
            || format!("{prefix}.protein_g_per_kg_during_loss"),
            self.protein_g_per_kg_during_loss,
            1.2,
            2.0,
            "g/kg",
        );
        issues.range_with(
            || format!("{prefix}.carbohydrate_loading_hours"),
            self.carbohydrate_loading_hours,
            36.0,
            48.0,
            "h",
        );
        self.meal_times
            .validate(&format!("{prefix}.meal_times"), issues);
        if self.team_sport_work_by_position.len() > 50 {
            issues.push(
                format!("{prefix}.team_sport_work_by_position"),
                "at most 50 position groups",
            );
        }
        for (k, position) in self.team_sport_work_by_position.iter().enumerate() {
            let name = position.position_group.trim();
            if name.is_empty() || name.chars().count() > 60 {
                issues.push(
                    format!("{prefix}.team_sport_work_by_position[{k}].position_group"),
                    "must be 1 to 60 characters",
                );
            }
            issues.range_with(
                || format!("{prefix}.team_sport_work_by_position[{k}].team_sport_work_factor"),
                position.team_sport_work_factor,
                0.2,
                1.5,
                "",
            );
        }
    }
}

impl DayPins {
    /// Adds every out-of-range pin to `issues`, named under `prefix`.
    pub fn validate(&self, prefix: &str, issues: &mut Issues) {
        if let Some(pin) = self.carbohydrate_g_per_kg {
            issues.range_with(
                || format!("{prefix}.carbohydrate_g_per_kg"),
                pin,
                0.0,
                20.0,
                "g/kg",
            );
        }
        if let Some(pin) = self.protein_g_per_kg {
            issues.range_with(
                || format!("{prefix}.protein_g_per_kg"),
                pin,
                0.5,
                4.0,
                "g/kg",
            );
        }
        if let Some(pin) = self.energy_kcal {
            issues.range_with(
                || format!("{prefix}.energy_kcal"),
                pin,
                500.0,
                10_000.0,
                "kcal",
            );
        }
    }
}
