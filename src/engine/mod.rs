//! The planning engine: pure physiology and planning computation.
//!
//! Plain structs in, plain structs out. Nothing in this module tree touches
//! the database, HTTP, the clock or any other I/O, so every function here can
//! be tested against published values and benchmarked on its own.
//!
//! Guided tour:
//! - [`profile`]: the athlete and session inputs the engine understands.
//! - [`gas_exchange`]: Weir, the Zuntz/Lusk NPRQ table, Frayn and Jeukendrup &
//!   Wallis substrate equations, energy densities.
//! - [`catalogue`]: the activity catalogue with Compendium codes and METs.
//! - [`athlete`]: a profile resolved into VO2max, HRmax and glycogen capacity,
//!   with the estimates used to fill the gaps.
//! - [`intensity`]: every intensity form converted to oxygen uptake.
//! - [`fuel_mix`]: the carbohydrate share of energy by intensity, time,
//!   training status and muscle glycogen; the science is documented there.
//! - [`glycogen`]: glycogen capacity and the state a session starts and ends in.
//! - [`session`]: one athlete's session simulated minute by minute.
//! - [`day_plan`]: one athlete's day, [`day_plan::plan_day`]: daily targets,
//!   fuelling around sessions, eating occasions, warnings and cautions.
//! - [`session_work`]: a session's already computed work, as the day planner reads it.
//! - [`energy`]: resting metabolic rate, fat-free mass, body-mass goal.
//! - [`energy_availability`]: energy availability and its bands.
//! - [`day_targets`]: load bands, daily carbohydrate, protein and fat.
//! - [`session_fuelling`]: before, during and after each session.
//! - [`eating_occasions`]: the day's targets as a timeline of eating occasions.
//! - [`plan_notes`]: warnings with stable codes, and explanations.
//! - [`hydration`]: sweat-rate calculator, [`hydration::sweat_rate`].
//! - [`glycogen_balance`]: how eaten carbohydrate refills muscle and liver
//!   glycogen and how the liver runs down at rest; the science is documented there.
//! - [`week`]: one athlete over a span of days, [`week::plan_week`]: sessions
//!   simulated from the glycogen carried from day to day, daily plans, an
//!   hourly glycogen series and the warnings a dietitian acts on.

pub mod day;
pub mod estimate;
pub mod glycogen;
pub mod hydration;
pub mod physiology;
pub mod profile;
pub mod sources;
pub mod week;

use serde::Serialize;
use utoipa::ToSchema;

/// One input value the engine cannot work with, named by its JSON path.
#[derive(Debug, Clone, PartialEq, Serialize, ToSchema)]
pub struct FieldIssue {
    /// JSON path of the offending value, e.g. `segments[2].minutes`.
    pub field: String,
    /// Why it was rejected, in plain words.
    pub reason: String,
}

/// Input the engine refuses to compute with. Never clamped silently.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("invalid engine input: {} issue(s)", issues.len())]
pub struct InvalidInput {
    pub issues: Vec<FieldIssue>,
}

impl InvalidInput {
    pub fn single(field: impl Into<String>, reason: impl Into<String>) -> Self {
        Self {
            issues: vec![FieldIssue {
                field: field.into(),
                reason: reason.into(),
            }],
        }
    }
}

/// Collects field issues while validating, so callers report all of them at once.
#[derive(Debug, Default)]
pub struct Issues(pub Vec<FieldIssue>);

impl Issues {
    pub fn push(&mut self, field: impl Into<String>, reason: impl Into<String>) {
        self.0.push(FieldIssue {
            field: field.into(),
            reason: reason.into(),
        });
    }

    /// Checks that `value` is finite and inside `[min, max]`.
    pub fn range(&mut self, field: impl Into<String>, value: f64, min: f64, max: f64, unit: &str) {
        if !value.is_finite() || value < min || value > max {
            self.push(field, format!("must be between {min} and {max} {unit}"));
        }
    }

    pub fn finish(self) -> Result<(), InvalidInput> {
        if self.0.is_empty() {
            Ok(())
        } else {
            Err(InvalidInput { issues: self.0 })
        }
    }
}
