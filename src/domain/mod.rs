//! What the service stores and serves: teams, athletes, body-mass readings,
//! planned sessions, participation exceptions and tokens.
//!
//! Each resource has an `...Input` shape (what a client sends, also the base
//! for merge-patch updates) with a `validate` that reports every field at
//! fault at once, and a representation the API returns. The store converts
//! rows into these types; handlers never see SQL rows.

pub mod athlete;
pub mod paging;
pub mod session;
pub mod team;
pub mod token;

use serde::{Deserialize, Deserializer, Serializer};

/// Serde for a local wall-clock time as `HH:MM`.
pub mod hhmm {
    use super::*;
    use chrono::NaiveTime;

    pub fn serialize<S: Serializer>(t: &NaiveTime, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(&t.format("%H:%M").to_string())
    }

    pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<NaiveTime, D::Error> {
        let raw = String::deserialize(d)?;
        NaiveTime::parse_from_str(&raw, "%H:%M")
            .map_err(|_| serde::de::Error::custom("expected a local time as HH:MM (24-hour)"))
    }
}

/// Trims a text field and checks its length in characters.
pub fn check_text(
    issues: &mut crate::engine::Issues,
    field: &str,
    value: &str,
    min: usize,
    max: usize,
) {
    let n = value.trim().chars().count();
    if n < min || n > max {
        if min > 0 && n == 0 {
            issues.push(field, "must not be empty");
        } else {
            issues.push(field, format!("must be {min} to {max} characters long"));
        }
    }
}

/// Turns a stored snake_case label back into its enum.
pub fn parse_label<T: serde::de::DeserializeOwned>(label: &str) -> Result<T, serde_json::Error> {
    serde_json::from_value(serde_json::Value::String(label.to_owned()))
}

/// Turns an enum into the snake_case label it is stored as.
pub fn label_of<T: serde::Serialize>(value: &T) -> String {
    match serde_json::to_value(value) {
        Ok(serde_json::Value::String(s)) => s,
        _ => String::new(),
    }
}
