//! Energy availability: the energy left for the body's other functions once
//! exercise is paid for, per kg of fat-free mass.
//!
//! EA = (energy intake - exercise energy expenditure) / fat-free mass,
//! kcal/kg FFM/day (Loucks & Thuma 2003; IOC consensus on relative energy
//! deficiency in sport, Mountjoy et al. 2014, 2018, 2023). The 2023 statement
//! avoids one universal cut-off, so the thresholds are settings.
//!
//! The 45 and 30 edges come from studies in women; in men thresholds are
//! not established (Burke et al. 2018, Int J Sport Nutr Exerc Metab 28:350).
//! Men in energy balance on a training day commonly sit near 40 (the
//! non-exercise expenditure of `500 + 22 FFM` kcal at a 1.5 activity factor
//! is 41-44 kcal/kg FFM), so the default adequate edge for men is 40
//! (common practice), a setting like the others.

use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

use crate::engine::Issues;
use crate::engine::day::energy::FatFreeMass;
use crate::engine::profile::Sex;

/// Band edges in kcal per kg fat-free mass per day.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct EnergyAvailabilityThresholds {
    /// At or above this the day is adequate (default 45; applies to women).
    #[serde(default = "default_adequate")]
    pub adequate_at_or_above: f64,
    /// The adequate edge for men (default 40, common practice: male
    /// thresholds are not established).
    #[serde(default = "default_adequate_male")]
    pub male_adequate_at_or_above: f64,
    /// Below this the day is low (default 30).
    #[serde(default = "default_low")]
    pub low_below: f64,
}

fn default_adequate() -> f64 {
    45.0
}
fn default_adequate_male() -> f64 {
    40.0
}
fn default_low() -> f64 {
    30.0
}

impl Default for EnergyAvailabilityThresholds {
    fn default() -> Self {
        Self {
            adequate_at_or_above: default_adequate(),
            male_adequate_at_or_above: default_adequate_male(),
            low_below: default_low(),
        }
    }
}

impl EnergyAvailabilityThresholds {
    pub(crate) fn validate(&self, field: &str, issues: &mut Issues) {
        issues.range_with(
            || format!("{field}.adequate_at_or_above"),
            self.adequate_at_or_above,
            20.0,
            70.0,
            "kcal/kg FFM/day",
        );
        issues.range_with(
            || format!("{field}.male_adequate_at_or_above"),
            self.male_adequate_at_or_above,
            20.0,
            70.0,
            "kcal/kg FFM/day",
        );
        issues.range_with(
            || format!("{field}.low_below"),
            self.low_below,
            10.0,
            60.0,
            "kcal/kg FFM/day",
        );
        if self.low_below
            > self
                .adequate_at_or_above
                .min(self.male_adequate_at_or_above)
        {
            issues.push(
                format!("{field}.low_below"),
                "must not be above adequate_at_or_above or male_adequate_at_or_above",
            );
        }
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum EnergyAvailabilityBand {
    Adequate,
    /// Between the low and adequate thresholds.
    Reduced,
    Low,
}

/// Which session energy counts as exercise energy expenditure.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum ExerciseEnergyBasis {
    /// The whole session cost. Default: it never overstates energy availability.
    #[default]
    Gross,
    /// Only the cost above resting expenditure.
    Net,
}

/// (energy intake - exercise energy) / fat-free mass, kcal/kg FFM/day.
pub fn energy_availability(intake_kcal: f64, exercise_kcal: f64, fat_free_mass_kg: f64) -> f64 {
    (intake_kcal - exercise_kcal) / fat_free_mass_kg
}

impl EnergyAvailabilityThresholds {
    /// The adequate edge for an athlete of `sex`.
    pub fn adequate_for(&self, sex: Sex) -> f64 {
        match sex {
            Sex::Male => self.male_adequate_at_or_above,
            Sex::Female => self.adequate_at_or_above,
        }
    }
}

pub fn classify(
    value: f64,
    thresholds: &EnergyAvailabilityThresholds,
    sex: Sex,
) -> EnergyAvailabilityBand {
    if value < thresholds.low_below {
        EnergyAvailabilityBand::Low
    } else if value >= thresholds.adequate_for(sex) {
        EnergyAvailabilityBand::Adequate
    } else {
        EnergyAvailabilityBand::Reduced
    }
}

/// The planned day's energy availability.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct EnergyAvailability {
    /// kcal per kg fat-free mass per day (an estimate).
    pub kcal_per_kg_fat_free_mass: f64,
    /// Adequate, reduced or low, by the thresholds.
    pub band: EnergyAvailabilityBand,
    /// Planned energy intake, kcal.
    pub intake_kcal: f64,
    /// Exercise energy expenditure subtracted, kcal.
    pub exercise_kcal: f64,
    /// Whether gross or net session energy was subtracted.
    pub exercise_energy_basis: ExerciseEnergyBasis,
    /// Fat-free mass used, and whether it was estimated.
    pub fat_free_mass: FatFreeMass,
    /// The thresholds used.
    pub thresholds: EnergyAvailabilityThresholds,
}

/// Largest intake (kcal) that keeps energy availability at `threshold`.
pub fn intake_for(threshold: f64, exercise_kcal: f64, fat_free_mass_kg: f64) -> f64 {
    threshold * fat_free_mass_kg + exercise_kcal
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn worked_example() {
        // Domain brief section 5 (after Loucks & Thuma 2003, J Clin Endocrinol Metab 88:297):
        // (2800 - 800) / 55 = 36.4 kcal/kg FFM/day.
        let value = energy_availability(2800.0, 800.0, 55.0);
        assert!((value - 36.36).abs() < 0.01, "{value}");
        // Between 30 and 45 (Mountjoy et al. 2014/2018): reduced, not adequate, not low.
        assert_eq!(
            classify(value, &EnergyAvailabilityThresholds::default(), Sex::Female),
            EnergyAvailabilityBand::Reduced
        );
    }

    #[test]
    fn bands_follow_the_default_thresholds() {
        // Loucks & Thuma (2003); Mountjoy et al. (2014, 2018): about 45 adequate, under 30 low.
        let t = EnergyAvailabilityThresholds::default();
        assert_eq!(
            classify(45.0, &t, Sex::Female),
            EnergyAvailabilityBand::Adequate
        );
        assert_eq!(classify(29.9, &t, Sex::Female), EnergyAvailabilityBand::Low);
        assert_eq!(
            classify(30.0, &t, Sex::Female),
            EnergyAvailabilityBand::Reduced
        );
        // intake_for inverts the equation: 30 x 55 + 800 = 2450 kcal gives exactly 30.
        let intake = intake_for(30.0, 800.0, 55.0);
        assert!((energy_availability(intake, 800.0, 55.0) - 30.0).abs() < 1e-9);
    }
}
