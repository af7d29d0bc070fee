//! Sweat-rate calculator (Sawka et al. 2007, ACSM position stand on exercise
//! and fluid replacement, Med Sci Sports Exerc 39:377).
//!
//! sweat loss (L) = mass before - mass after (kg, 1 kg ~ 1 L) + fluid drunk - urine;
//! sweat rate = sweat loss / hours. Body-mass loss over 2% is flagged
//! [confirmed]; fluid to replace afterwards is 1.25-1.5 L per kg lost
//! [secondary source].

use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

use crate::engine::day::notes::{Severity, Warning, WarningCode};
use crate::engine::{InvalidInput, Issues};

/// A weighed session: body mass before and after, fluid in and out.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct SweatRateInput {
    /// Nude body mass before the session, kg (25 to 250).
    #[schema(minimum = 25.0, maximum = 250.0)]
    pub body_mass_before_kg: f64,
    /// Nude body mass after the session, towel-dried, kg (25 to 250).
    #[schema(minimum = 25.0, maximum = 250.0)]
    pub body_mass_after_kg: f64,
    /// Fluid drunk during the session, litres (0 to 10).
    #[serde(default)]
    #[schema(minimum = 0.0, maximum = 10.0)]
    pub fluid_drunk_l: f64,
    /// Urine passed during the session, litres (0 to 5).
    #[serde(default)]
    #[schema(minimum = 0.0, maximum = 5.0)]
    pub urine_l: f64,
    /// Session duration, hours (over 0, at most 12).
    #[schema(minimum = 0.0834, maximum = 12.0)]
    pub duration_hours: f64,
}

/// Sweat loss and what to drink afterwards.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct SweatRate {
    /// Sweat lost, litres.
    pub sweat_loss_l: f64,
    /// Sweat rate, litres per hour.
    pub sweat_rate_l_per_hour: f64,
    /// Body-mass change as % of the starting mass (positive = loss).
    pub body_mass_loss_percent: f64,
    /// Fluid to drink after the session, litres: low end (1.25 L per kg lost).
    pub fluid_to_replace_min_l: f64,
    /// Fluid to drink after the session, litres: high end (1.5 L per kg lost).
    pub fluid_to_replace_max_l: f64,
    /// Loss over 2% of body mass, or a mass gain (over-drinking).
    pub warnings: Vec<Warning>,
    /// Where the numbers come from.
    pub source: String,
}

/// Shortest weighed session accepted, hours.
pub const MIN_DURATION_HOURS: f64 = 5.0 / 60.0;

/// Body-mass loss above which performance suffers (Sawka et al. 2007).
pub const MAX_BODY_MASS_LOSS_PERCENT: f64 = 2.0;

pub fn sweat_rate(input: &SweatRateInput) -> Result<SweatRate, InvalidInput> {
    let mut issues = Issues::default();
    issues.range(
        "body_mass_before_kg",
        input.body_mass_before_kg,
        25.0,
        250.0,
        "kg",
    );
    issues.range(
        "body_mass_after_kg",
        input.body_mass_after_kg,
        25.0,
        250.0,
        "kg",
    );
    issues.range("fluid_drunk_l", input.fluid_drunk_l, 0.0, 10.0, "L");
    issues.range("urine_l", input.urine_l, 0.0, 5.0, "L");
    // At least five minutes: a rate from a shorter weighing is noise.
    issues.range("duration_hours", input.duration_hours, 0.0, 12.0, "h");
    if input.duration_hours < MIN_DURATION_HOURS {
        issues.push("duration_hours", "must be at least 5 minutes (0.083 h)");
    }
    let mass_change = input.body_mass_before_kg - input.body_mass_after_kg;
    let sweat_loss_l = mass_change + input.fluid_drunk_l - input.urine_l;
    if sweat_loss_l.is_finite() && sweat_loss_l < 0.0 {
        issues.push(
            "body_mass_after_kg",
            "gives a negative sweat loss with the fluid and urine given; check the weighings",
        );
    }
    if mass_change.is_finite() && mass_change.abs() > 0.1 * input.body_mass_before_kg {
        issues.push(
            "body_mass_after_kg",
            "differs from the mass before by more than 10%; check the weighings",
        );
    }
    issues.finish()?;

    let loss_percent = mass_change / input.body_mass_before_kg * 100.0;
    let lost_kg = mass_change.max(0.0);
    let mut warnings = Vec::new();
    if loss_percent > MAX_BODY_MASS_LOSS_PERCENT {
        warnings.push(Warning::new(
            WarningCode::BodyMassLossOverTwoPercent,
            Severity::Warning,
            format!(
                "Body mass fell {loss_percent:.1}% (over 2%): drink more during sessions of this kind."
            ),
        ));
    } else if mass_change < 0.0 {
        warnings.push(Warning::new(
            WarningCode::BodyMassGainedDuringSession,
            Severity::Warning,
            "Body mass rose during the session: more was drunk than sweated; drinking beyond sweat losses risks hyponatraemia.",
        ));
    }
    Ok(SweatRate {
        sweat_loss_l,
        sweat_rate_l_per_hour: sweat_loss_l / input.duration_hours,
        body_mass_loss_percent: loss_percent,
        fluid_to_replace_min_l: 1.25 * lost_kg,
        fluid_to_replace_max_l: 1.5 * lost_kg,
        warnings,
        source: "Sawka et al. (2007), ACSM position stand: Exercise and fluid replacement, Med Sci Sports Exerc 39:377; replacement 1.25-1.5 L per kg lost (secondary source)".into(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn worked_example() {
        // Domain brief section 5, after Sawka et al. (2007), Med Sci Sports Exerc 39:377:
        // 75 -> 73.8 kg, 0.6 L drunk, 0.1 L urine, 1.5 h: 1.7 L, 1.13 L/h, 1.6% loss.
        let result = sweat_rate(&SweatRateInput {
            body_mass_before_kg: 75.0,
            body_mass_after_kg: 73.8,
            fluid_drunk_l: 0.6,
            urine_l: 0.1,
            duration_hours: 1.5,
        })
        .unwrap();
        assert!((result.sweat_loss_l - 1.7).abs() < 1e-9);
        assert!((result.sweat_rate_l_per_hour - 1.13).abs() < 0.005);
        assert!((result.body_mass_loss_percent - 1.6).abs() < 1e-9);
        // 1.25-1.5 L per kg lost (secondary source): 1.2 kg -> 1.5-1.8 L.
        assert!((result.fluid_to_replace_min_l - 1.5).abs() < 1e-9);
        assert!((result.fluid_to_replace_max_l - 1.8).abs() < 1e-9);
        // Under 2%: no warning (Sawka et al. 2007).
        assert!(result.warnings.is_empty());
    }

    #[test]
    fn loss_over_two_percent_is_flagged() {
        // Sawka et al. (2007): keep body-mass loss under 2%. 70 -> 68.2 kg = 2.57%.
        let result = sweat_rate(&SweatRateInput {
            body_mass_before_kg: 70.0,
            body_mass_after_kg: 68.2,
            fluid_drunk_l: 0.5,
            urine_l: 0.0,
            duration_hours: 2.0,
        })
        .unwrap();
        assert_eq!(
            result.warnings[0].code,
            WarningCode::BodyMassLossOverTwoPercent
        );
    }

    #[test]
    fn bad_inputs_name_their_fields() {
        let error = sweat_rate(&SweatRateInput {
            body_mass_before_kg: f64::NAN,
            body_mass_after_kg: 73.8,
            fluid_drunk_l: -1.0,
            urine_l: 0.1,
            duration_hours: 0.0,
        })
        .unwrap_err();
        let fields: Vec<&str> = error.issues.iter().map(|i| i.field.as_str()).collect();
        assert!(fields.contains(&"body_mass_before_kg"));
        assert!(fields.contains(&"fluid_drunk_l"));
        assert!(fields.contains(&"duration_hours"));
    }
}
