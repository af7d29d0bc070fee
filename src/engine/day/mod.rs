//! One athlete's day: daily targets, fuelling around each session, eating
//! occasions, warnings and explanations. Entry point: [`plan::plan_day`].
//!
//! - [`session_work`]: a session's already computed work, as the day reads it.
//! - [`targets`]: work-driven daily carbohydrate, load bands, protein and fat.
//! - [`energy`]: resting metabolic rate, fat-free mass, body-mass goal.
//! - [`energy_availability`]: energy availability and its bands.
//! - [`session_fuelling`]: before, during and after each session.
//! - [`occasions`]: the day's targets as a timeline of eating occasions.
//! - [`notes`]: warnings with stable codes, and explanations.
//! - [`plan`]: puts them together for one date.
//!
//! Depends on [`crate::engine::profile`] and [`super::sources`] only; the week planner
//! feeds it session work computed by [`super::physiology`].

pub mod budget;
pub mod cautions;
pub mod energy;
pub mod energy_availability;
pub mod explain;
pub mod input;
pub mod notes;
pub mod occasions;
pub mod plan;
pub mod session_fuelling;
pub mod session_work;
pub mod settings;
pub mod targets;
