//! Glycogen stores: how much an athlete holds when fully fed, and the state a
//! session starts from and ends at.
//!
//! Guided tour:
//! - [`glycogen_capacity`]: normal (fed, rested, not loaded) stores, estimated as
//!   skeletal-muscle mass x glycogen concentration x 0.162 g per mmol, plus the
//!   liver.
//! - [`GlycogenState`]: grams in muscle and liver at one moment. A session takes
//!   a starting state and returns the end state, so a weekly simulation can
//!   chain sessions and refuelling.
//!
//! Sources and labels:
//! - Skeletal muscle is about 38% of body mass in men and 31% in women
//!   (Janssen et al. 2000, J Appl Physiol 89:81) [`from memory`].
//! - Muscle glycogen in mmol glucosyl units per kg wet muscle: about 80-100
//!   untrained, 120-150 trained [`from memory`]; we take 90 for recreational,
//!   120 for trained and 135 for highly trained athletes (inside those ranges).
//! - 162 mg per mmol glucosyl unit (C6H10O5, 162.14 g/mol).
//! - Liver glycogen about 100-120 g when fed [confirmed]; we take 110 g.
//!
//! - The working muscles of running, team sports and cycling are the lower
//!   body: about 55% of skeletal muscle (Janssen et al. 2000: lower-body
//!   muscle about 55% of the total) [`from memory`].
//!
//! The model tracks the **working muscles**, not the whole body: a session
//! draws its muscle glycogen from the legs, and whole-body percentages would
//! understate how far those run down (a match empties a large part of the
//! thigh's glycogen, Krustrup et al. 2006, Med Sci Sports Exerc 38:1165:
//! about 40-45% lower after the match, from memory). The rest of the
//! muscle's glycogen is little used by the week's sessions and is reported
//! beside it, not simulated.

use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

use crate::engine::estimate::Estimate;
use crate::engine::profile::{Sex, TrainingStatus};

/// Grams of glycogen per mmol glucosyl unit.
pub const GRAMS_PER_MMOL_GLUCOSYL: f64 = 0.162;
/// Share of skeletal muscle in the lower body, the working muscles of the
/// sessions modelled (Janssen et al. 2000, from memory).
pub const WORKING_MUSCLE_FRACTION: f64 = 0.55;
/// Liver glycogen when fed, grams (middle of 100-120 g).
pub const LIVER_GLYCOGEN_FED_G: f64 = 110.0;

/// Glycogen in the body at one moment (estimates).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct GlycogenState {
    /// Whole-body skeletal-muscle glycogen, grams.
    pub muscle_g: f64,
    /// Liver glycogen, grams.
    pub liver_g: f64,
}

/// Normal glycogen stores of one athlete (estimates).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, ToSchema)]
pub struct GlycogenCapacity {
    /// Working (lower-body) muscle mass, kg.
    pub muscle_mass_kg: f64,
    /// mmol glucosyl units per kg wet muscle.
    pub muscle_concentration_mmol_per_kg: f64,
    /// Glycogen in the working muscles at normal stores, g: what the model tracks.
    pub muscle_g: f64,
    /// Glycogen in all skeletal muscle at normal stores, g (for reference).
    pub whole_body_muscle_g: f64,
    pub liver_g: f64,
}

impl GlycogenCapacity {
    /// Full normal stores as a state.
    pub fn full(&self) -> GlycogenState {
        GlycogenState {
            muscle_g: self.muscle_g,
            liver_g: self.liver_g,
        }
    }

    /// How these numbers were obtained, for the output's estimate list.
    pub fn estimates(&self) -> [Estimate; 3] {
        [
            Estimate {
                quantity: "working_muscle_mass_kg",
                segment: None,
                value: self.muscle_mass_kg,
                unit: "kg",
                method: "janssen_2000_lower_body_share_of_skeletal_muscle",
                source: "Janssen et al. (2000) J Appl Physiol 89:81 (from memory: skeletal muscle 38% of body mass in men, 31% in women; lower body about 55% of it)",
            },
            Estimate {
                quantity: "working_muscle_glycogen_capacity_g",
                segment: None,
                value: self.muscle_g,
                unit: "g",
                method: "muscle_mass_times_concentration_by_training_status",
                source: "from memory: 80-100 mmol/kg untrained, 120-150 trained; 0.162 g/mmol",
            },
            Estimate {
                quantity: "liver_glycogen_capacity_g",
                segment: None,
                value: self.liver_g,
                unit: "g",
                method: "fed_liver_typical",
                source: "about 100-120 g when fed (encyclopedic); middle value",
            },
        ]
    }
}

/// Skeletal-muscle fraction of body mass (Janssen et al. 2000; `from memory`).
pub fn skeletal_muscle_fraction(sex: Sex) -> f64 {
    match sex {
        Sex::Male => 0.38,
        Sex::Female => 0.31,
    }
}

/// Normal muscle glycogen concentration, mmol glucosyl units per kg wet muscle
/// (`from memory`, inside the ranges in the module doc).
pub fn muscle_glycogen_concentration(status: TrainingStatus) -> f64 {
    match status {
        TrainingStatus::Recreational => 90.0,
        TrainingStatus::Trained => 120.0,
        TrainingStatus::HighlyTrained => 135.0,
    }
}

/// Grams of glycogen in a muscle mass at a concentration.
pub fn muscle_glycogen_g(muscle_mass_kg: f64, concentration_mmol_per_kg: f64) -> f64 {
    muscle_mass_kg * concentration_mmol_per_kg * GRAMS_PER_MMOL_GLUCOSYL
}

/// Normal (fed, rested) glycogen stores for an athlete.
pub fn glycogen_capacity(sex: Sex, body_mass_kg: f64, status: TrainingStatus) -> GlycogenCapacity {
    let skeletal_muscle_kg = body_mass_kg * skeletal_muscle_fraction(sex);
    let muscle_mass_kg = skeletal_muscle_kg * WORKING_MUSCLE_FRACTION;
    let concentration = muscle_glycogen_concentration(status);
    GlycogenCapacity {
        muscle_mass_kg,
        muscle_concentration_mmol_per_kg: concentration,
        muscle_g: muscle_glycogen_g(muscle_mass_kg, concentration),
        whole_body_muscle_g: muscle_glycogen_g(skeletal_muscle_kg, concentration),
        liver_g: LIVER_GLYCOGEN_FED_G,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn domain_worked_example() {
        // 28 kg muscle x 100 mmol/kg x 0.162 g = 453.6 g.
        assert!((muscle_glycogen_g(28.0, 100.0) - 453.6).abs() < 1e-9);
    }

    #[test]
    fn seventy_kg_adult_holds_about_four_hundred_grams() {
        // About 400 g muscle glycogen in a 70 kg adult [confirmed]; a recreational man: 26.6 kg x 90 x 0.162 = 388 g.
        let capacity = glycogen_capacity(Sex::Male, 70.0, TrainingStatus::Recreational);
        assert!(
            (capacity.whole_body_muscle_g - 400.0).abs() < 40.0,
            "{}",
            capacity.whole_body_muscle_g
        );
        // The working muscles hold about 55% of it (Janssen et al. 2000, from memory).
        assert!((capacity.muscle_g / capacity.whole_body_muscle_g - 0.55).abs() < 1e-9);
        // Liver about 100-120 g fed [confirmed].
        assert!((100.0..=120.0).contains(&capacity.liver_g));
    }

    #[test]
    fn training_raises_capacity_and_women_hold_less_muscle() {
        let recreational = glycogen_capacity(Sex::Male, 75.0, TrainingStatus::Recreational);
        let trained = glycogen_capacity(Sex::Male, 75.0, TrainingStatus::Trained);
        let highly = glycogen_capacity(Sex::Male, 75.0, TrainingStatus::HighlyTrained);
        assert!(recreational.muscle_g < trained.muscle_g && trained.muscle_g < highly.muscle_g);
        // Janssen et al. (2000): 31% vs 38% of body mass (from memory).
        let female = glycogen_capacity(Sex::Female, 75.0, TrainingStatus::Trained);
        assert!((female.muscle_mass_kg / trained.muscle_mass_kg - 0.31 / 0.38).abs() < 1e-9);
        // Concentrations stay inside the from-memory ranges (80-100 untrained,
        // 120-150 trained, mmol/kg wet muscle).
        assert!((80.0..=100.0).contains(&recreational.muscle_concentration_mmol_per_kg));
        assert!((120.0..=150.0).contains(&trained.muscle_concentration_mmol_per_kg));
        assert!((120.0..=150.0).contains(&highly.muscle_concentration_mmol_per_kg));
    }

    #[test]
    fn state_round_trips_as_json() {
        let state = GlycogenState {
            muscle_g: 450.0,
            liver_g: 90.0,
        };
        let json = serde_json::to_string(&state).unwrap();
        assert_eq!(serde_json::from_str::<GlycogenState>(&json).unwrap(), state);
        assert!(
            serde_json::from_str::<GlycogenState>(r#"{"muscle_g":1,"liver_g":1,"x":1}"#).is_err()
        );
    }
}
