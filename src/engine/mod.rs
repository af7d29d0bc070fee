//! The planning engine: pure physiology and planning computation.
//!
//! Plain structs in, plain structs out. Nothing in this module tree touches
//! the database, HTTP, the clock or any other I/O, so every function here can
//! be tested against published values and benchmarked on its own.
//!
//! Guided tour, one folder per concept (dependencies point down the list's
//! arrows only; `scripts/engine-shape.py` checks there are no circles):
//! - [`profile`]: the athlete and session inputs the engine understands.
//! - [`physiology`] -> [`glycogen`]: who the athlete is (VO2max, HRmax,
//!   working-muscle glycogen capacity), every intensity form as oxygen
//!   uptake, the fuel mix, and one session simulated through time.
//! - [`glycogen`]: capacity of the working muscles and liver, and how eaten
//!   carbohydrate refills them between sessions.
//! - [`day`]: one athlete's day from its session work: the energy budget,
//!   the work-driven daily carbohydrate (one smooth curve through the
//!   position stand's bands), protein and fat, fuelling around sessions,
//!   eating occasions, warnings, explanations and cautions.
//! - [`week`] -> [`day`], [`physiology`], [`glycogen`]: one athlete over a
//!   span, with glycogen carried over from the week before, the day loop, the
//!   glycogen simulation and the warnings a dietitian acts on.
//! - [`hydration`]: the sweat-rate calculator.
//! - [`estimate`] and [`sources`]: what was estimated, and shared citations;
//!   [`decimal`]: numbers in texts, written fast.

pub mod day;
pub mod decimal;
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

    /// [`Issues::range`] with the field's path built only when the value is
    /// out of range: validation on the planner's hot path allocates nothing.
    pub fn range_with(
        &mut self,
        field: impl FnOnce() -> String,
        value: f64,
        min: f64,
        max: f64,
        unit: &str,
    ) {
        if !value.is_finite() || value < min || value > max {
            self.push(field(), format!("must be between {min} and {max} {unit}"));
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

/// Counts the bytes written to it without storing them (to weigh a
/// serialised value).
pub struct ByteCounter(pub usize);

impl std::io::Write for ByteCounter {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        self.0 += buf.len();
        Ok(buf.len())
    }
    fn flush(&mut self) -> std::io::Result<()> {
        Ok(())
    }
}
