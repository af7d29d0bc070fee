//! Energy: resting metabolic rate, fat-free mass and the body-mass goal.
//!
//! Guided tour:
//! - [`cunningham`], [`mifflin_st_jeor`], [`revised_harris_benedict`]: the
//!   published resting metabolic rate equations, kcal per day.
//! - [`fat_free_mass`]: measured, from body fat %, or estimated from a
//!   documented default body fat % (and labelled as an estimate).
//! - [`resting_metabolic_rate`]: picks the equation (Cunningham when fat-free
//!   mass is known, else Mifflin-St Jeor, unless the settings choose one).
//! - [`goal_adjustment`]: the daily energy change for a body-mass goal, capped
//!   at a safe weekly rate.

use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

use crate::engine::profile::{AthleteProfile, GoalDirection, Sex};

/// kcal per kg of body-mass change. Common practice: the classic "3500 kcal
/// per pound" rule (Wishnofsky 1958, from memory), about 7700 kcal/kg. Real
/// change slows as the body adapts, so this overstates the speed of change.
pub const KCAL_PER_KG_BODY_MASS: f64 = 7700.0;

/// Cunningham (1980): RMR = 500 + 22 x fat-free mass (kg), kcal/d.
pub fn cunningham(fat_free_mass_kg: f64) -> f64 {
    500.0 + 22.0 * fat_free_mass_kg
}

/// Mifflin-St Jeor (1990): 10 W + 6.25 H - 5 A + 5 (men) / - 161 (women), kcal/d.
pub fn mifflin_st_jeor(sex: Sex, body_mass_kg: f64, height_cm: f64, age_years: f64) -> f64 {
    let base = 10.0 * body_mass_kg + 6.25 * height_cm - 5.0 * age_years;
    match sex {
        Sex::Male => base + 5.0,
        Sex::Female => base - 161.0,
    }
}

/// Revised Harris-Benedict (Roza & Shizgal 1984), kcal/d.
pub fn revised_harris_benedict(sex: Sex, body_mass_kg: f64, height_cm: f64, age_years: f64) -> f64 {
    match sex {
        Sex::Male => 88.362 + 13.397 * body_mass_kg + 4.799 * height_cm - 5.677 * age_years,
        Sex::Female => 447.593 + 9.247 * body_mass_kg + 3.098 * height_cm - 4.330 * age_years,
    }
}

/// Which resting metabolic rate equation to use.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum RestingMetabolicRateChoice {
    /// Cunningham when fat-free mass is measured or follows from a measured
    /// body fat %, otherwise Mifflin-St Jeor.
    #[default]
    Automatic,
    /// Cunningham (1980); needs a measured fat-free mass or body fat %.
    Cunningham,
    MifflinStJeor,
    RevisedHarrisBenedict,
}

/// The equation actually used.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum RestingMetabolicRateMethod {
    Cunningham,
    MifflinStJeor,
    RevisedHarrisBenedict,
}

impl RestingMetabolicRateMethod {
    pub fn source(self) -> &'static str {
        match self {
            Self::Cunningham => {
                "Cunningham (1980), Am J Clin Nutr 33:2372 (from memory for the journal reference)"
            }
            Self::MifflinStJeor => {
                "Mifflin et al. (1990), Am J Clin Nutr 51:241 (from memory for the journal reference)"
            }
            Self::RevisedHarrisBenedict => {
                "Roza & Shizgal (1984), Am J Clin Nutr 40:168 (from memory for the journal reference)"
            }
        }
    }
}

/// Resting metabolic rate with the equation used.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct RestingMetabolicRate {
    /// kcal per day (an estimate from a population equation).
    pub kcal_per_day: f64,
    /// The equation used.
    pub method: RestingMetabolicRateMethod,
}

/// Where the fat-free mass came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum FatFreeMassSource {
    /// The profile's measured fat-free mass.
    Measured,
    /// Body mass x (1 - measured body fat %).
    FromBodyFatPercent,
    /// Body mass x (1 - a default body fat % for the athlete's sex): an estimate.
    EstimatedFromDefaultBodyFat,
}

/// Fat-free mass used by the plan.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct FatFreeMass {
    /// Fat-free mass, kg.
    pub kg: f64,
    /// Where the value came from.
    pub source: FatFreeMassSource,
    /// True when no body-composition measurement was available.
    pub estimated: bool,
}

/// Default body fat % when nothing is measured. Common practice: an
/// assumption for trained team-sport athletes, not a measurement. A lean
/// assumption gives a larger fat-free mass and so a lower, more cautious
/// energy availability. Configurable in the settings.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct DefaultBodyFat {
    /// Percent body fat assumed for men (default 12).
    #[serde(default = "default_male_body_fat")]
    pub male_percent: f64,
    /// Percent body fat assumed for women (default 20).
    #[serde(default = "default_female_body_fat")]
    pub female_percent: f64,
}

fn default_male_body_fat() -> f64 {
    12.0
}
fn default_female_body_fat() -> f64 {
    20.0
}

impl Default for DefaultBodyFat {
    fn default() -> Self {
        Self {
            male_percent: default_male_body_fat(),
            female_percent: default_female_body_fat(),
        }
    }
}

/// Fat-free mass: measured wins, then body fat %, then the default estimate.
pub fn fat_free_mass(profile: &AthleteProfile, defaults: &DefaultBodyFat) -> FatFreeMass {
    if let Some(kg) = profile.fat_free_mass_kg {
        return FatFreeMass {
            kg,
            source: FatFreeMassSource::Measured,
            estimated: false,
        };
    }
    if let Some(percent) = profile.body_fat_percent {
        return FatFreeMass {
            kg: profile.body_mass_kg * (1.0 - percent / 100.0),
            source: FatFreeMassSource::FromBodyFatPercent,
            estimated: false,
        };
    }
    let percent = match profile.sex {
        Sex::Male => defaults.male_percent,
        Sex::Female => defaults.female_percent,
    };
    FatFreeMass {
        kg: profile.body_mass_kg * (1.0 - percent / 100.0),
        source: FatFreeMassSource::EstimatedFromDefaultBodyFat,
        estimated: true,
    }
}

/// Resting metabolic rate by the chosen equation. `Cunningham` with only an
/// estimated fat-free mass is rejected by validation, not here.
pub fn resting_metabolic_rate(
    profile: &AthleteProfile,
    choice: RestingMetabolicRateChoice,
    fat_free_mass: &FatFreeMass,
) -> RestingMetabolicRate {
    let method = match choice {
        RestingMetabolicRateChoice::Automatic if !fat_free_mass.estimated => {
            RestingMetabolicRateMethod::Cunningham
        }
        RestingMetabolicRateChoice::Automatic => RestingMetabolicRateMethod::MifflinStJeor,
        RestingMetabolicRateChoice::Cunningham => RestingMetabolicRateMethod::Cunningham,
        RestingMetabolicRateChoice::MifflinStJeor => RestingMetabolicRateMethod::MifflinStJeor,
        RestingMetabolicRateChoice::RevisedHarrisBenedict => {
            RestingMetabolicRateMethod::RevisedHarrisBenedict
        }
    };
    let p = profile;
    let kcal_per_day = match method {
        RestingMetabolicRateMethod::Cunningham => cunningham(fat_free_mass.kg),
        RestingMetabolicRateMethod::MifflinStJeor => {
            mifflin_st_jeor(p.sex, p.body_mass_kg, p.height_cm, p.age_years)
        }
        RestingMetabolicRateMethod::RevisedHarrisBenedict => {
            revised_harris_benedict(p.sex, p.body_mass_kg, p.height_cm, p.age_years)
        }
    };
    RestingMetabolicRate {
        kcal_per_day,
        method,
    }
}

/// Daily energy change for the athlete's body-mass goal.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct GoalAdjustment {
    /// Maintain, reduce or gain.
    pub direction: GoalDirection,
    /// Rate asked for in the profile, kg per week (none when not given).
    pub requested_kg_per_week: Option<f64>,
    /// Rate the plan uses, kg per week (after the safety cap).
    pub applied_kg_per_week: f64,
    /// kcal per day added (gain) or removed (reduce, negative).
    pub kcal_per_day: f64,
    /// True when the requested rate was above the safe cap.
    pub capped: bool,
    /// True when a body-mass loss goal was not applied because the athlete
    /// is under 18 (growth needs energy; loss is for the clinical team).
    pub withheld_under_18: bool,
}

/// Goal adjustment, capped at `max_percent_per_week` of body mass.
/// Without a requested rate, a reduce or gain goal uses half the cap.
pub fn goal_adjustment(profile: &AthleteProfile, max_percent_per_week: f64) -> GoalAdjustment {
    let cap_kg = profile.body_mass_kg * max_percent_per_week / 100.0;
    let requested = profile.goal_rate_kg_per_week;
    let withheld_under_18 = profile.goal == GoalDirection::Reduce && profile.age_years < 18.0;
    let (applied, capped) = match profile.goal {
        _ if withheld_under_18 => (0.0, false),
        GoalDirection::Maintain => (0.0, false),
        GoalDirection::Reduce | GoalDirection::Gain => {
            let wanted = requested.unwrap_or(cap_kg / 2.0);
            if wanted > cap_kg {
                (cap_kg, true)
            } else {
                (wanted, false)
            }
        }
    };
    let sign = match profile.goal {
        GoalDirection::Reduce => -1.0,
        _ => 1.0,
    };
    GoalAdjustment {
        direction: profile.goal,
        requested_kg_per_week: requested,
        applied_kg_per_week: applied,
        kcal_per_day: sign * applied * KCAL_PER_KG_BODY_MASS / 7.0,
        capped,
        withheld_under_18,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::profile::TrainingStatus;

    fn man() -> AthleteProfile {
        AthleteProfile {
            sex: Sex::Male,
            age_years: 25.0,
            height_cm: 180.0,
            body_mass_kg: 80.0,
            body_fat_percent: None,
            fat_free_mass_kg: Some(70.4),
            vo2max: None,
            hr_max: None,
            hr_rest: None,
            training_status: TrainingStatus::Trained,
            goal: GoalDirection::Maintain,
            goal_rate_kg_per_week: None,
            team_sport_work_factor: None,
        }
    }

    // Check values: domain brief section 5, man 80 kg, 180 cm, 25 y, FFM 70.4 kg.
    #[test]
    fn cunningham_worked_example() {
        // Cunningham (1980): 500 + 22 x 70.4 = 2048.8 kcal/d.
        assert!((cunningham(70.4) - 2048.8).abs() < 0.01);
    }

    #[test]
    fn mifflin_st_jeor_worked_examples() {
        // Mifflin et al. (1990): man 80 kg, 180 cm, 25 y = 1805.0 kcal/d.
        assert!((mifflin_st_jeor(Sex::Male, 80.0, 180.0, 25.0) - 1805.0).abs() < 0.01);
        // Woman 60 kg, 165 cm, 22 y = 1360.25 kcal/d.
        assert!((mifflin_st_jeor(Sex::Female, 60.0, 165.0, 22.0) - 1360.25).abs() < 0.01);
    }

    #[test]
    fn revised_harris_benedict_worked_examples() {
        // Roza & Shizgal (1984): man 80 kg, 180 cm, 25 y = 1882.02 kcal/d.
        let man = revised_harris_benedict(Sex::Male, 80.0, 180.0, 25.0);
        assert!((man - 1882.02).abs() < 0.01, "{man}");
        // Woman 60 kg, 165 cm, 22 y = 1418.32 kcal/d.
        let woman = revised_harris_benedict(Sex::Female, 60.0, 165.0, 22.0);
        assert!((woman - 1418.32).abs() < 0.01, "{woman}");
    }

    #[test]
    fn automatic_choice_uses_cunningham_only_with_measured_composition() {
        let defaults = DefaultBodyFat::default();
        let measured = man();
        let ffm = fat_free_mass(&measured, &defaults);
        let rmr = resting_metabolic_rate(&measured, RestingMetabolicRateChoice::Automatic, &ffm);
        assert_eq!(rmr.method, RestingMetabolicRateMethod::Cunningham);
        // Cunningham (1980) worked example, domain brief section 5: 2048.8 kcal/d.
        assert!((rmr.kcal_per_day - 2048.8).abs() < 0.01);

        let mut unknown = man();
        unknown.fat_free_mass_kg = None;
        let ffm = fat_free_mass(&unknown, &defaults);
        assert!(ffm.estimated);
        let rmr = resting_metabolic_rate(&unknown, RestingMetabolicRateChoice::Automatic, &ffm);
        // Mifflin et al. (1990) worked example, domain brief section 5: 1805.0 kcal/d.
        assert_eq!(rmr.method, RestingMetabolicRateMethod::MifflinStJeor);
        assert!((rmr.kcal_per_day - 1805.0).abs() < 0.01);
    }

    #[test]
    fn fat_free_mass_from_body_fat_percent() {
        let mut profile = man();
        profile.fat_free_mass_kg = None;
        profile.body_fat_percent = Some(12.0);
        // 80 kg x (1 - 0.12) = 70.4 kg: the same man as the Cunningham example.
        let ffm = fat_free_mass(&profile, &DefaultBodyFat::default());
        assert!((ffm.kg - 70.4).abs() < 1e-9);
        assert_eq!(ffm.source, FatFreeMassSource::FromBodyFatPercent);
    }

    #[test]
    fn goal_rate_is_capped_at_the_safe_weekly_rate() {
        // Common practice: loss faster than about 0.5-1% of body mass per week is unsafe.
        let mut profile = man();
        profile.goal = GoalDirection::Reduce;
        profile.goal_rate_kg_per_week = Some(1.5);
        let goal = goal_adjustment(&profile, 1.0);
        assert!(goal.capped);
        assert!((goal.applied_kg_per_week - 0.8).abs() < 1e-9);
        // 0.8 kg/week x 7700 kcal/kg / 7 d = 880 kcal/d deficit (common practice factor).
        assert!((goal.kcal_per_day + 880.0).abs() < 1e-9);
    }
}
