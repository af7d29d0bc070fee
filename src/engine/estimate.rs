//! A value the engine estimated rather than took as measured, with its method
//! and source. Shared by the physiology and glycogen modules.

use serde::Serialize;
use utoipa::ToSchema;

/// A value the engine estimated rather than took as measured.
#[derive(Debug, Clone, PartialEq, Serialize, ToSchema)]
pub struct Estimate {
    /// What was estimated, stable snake_case, e.g. `vo2max_ml_per_kg_min`.
    pub quantity: &'static str,
    /// Segment index when the estimate belongs to one segment.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub segment: Option<usize>,
    pub value: f64,
    pub unit: &'static str,
    /// Stable snake_case code of the method, e.g. `tanaka_2001`.
    pub method: &'static str,
    /// The published source or the label `common practice` / `from memory`.
    pub source: &'static str,
}
