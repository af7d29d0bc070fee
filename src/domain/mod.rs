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

/// Trims a one-line text field (a name, title or label) and checks its
/// length in characters. Control characters (CR, LF, NUL, BEL...) and
/// bidirectional overrides are refused: they break CSV and calendar lines and
/// can make a name display as something else.
pub fn check_text(
    issues: &mut crate::engine::Issues,
    field: &str,
    value: &str,
    min: usize,
    max: usize,
) {
    check_length(issues, field, value, min, max);
    if let Some(c) = value
        .chars()
        .find(|&c| c.is_control() || is_bidi_control(c))
    {
        issues.push(field, forbidden_character(c));
    }
}

/// Like [`check_text`] for free-text notes, which may span lines: line
/// feeds and tabs are allowed, other control characters and bidirectional
/// overrides are not.
pub fn check_note(
    issues: &mut crate::engine::Issues,
    field: &str,
    value: &str,
    min: usize,
    max: usize,
) {
    check_length(issues, field, value, min, max);
    if let Some(c) = value
        .chars()
        .find(|&c| (c.is_control() && c != '\n' && c != '\t') || is_bidi_control(c))
    {
        issues.push(field, forbidden_character(c));
    }
}

fn check_length(
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

/// Unicode's explicit bidirectional formatting characters (UAX #9): marks,
/// embeddings, overrides and isolates.
pub fn is_bidi_control(c: char) -> bool {
    matches!(c, '\u{200E}' | '\u{200F}' | '\u{061C}' | '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}')
}

fn forbidden_character(c: char) -> String {
    format!(
        "must not contain control or bidirectional formatting characters (found U+{:04X})",
        u32::from(c)
    )
}

/// The one rule for every date the API accepts, in bodies and in query
/// filters (dates of birth excepted, which have their own age rule): dates
/// far outside a planning horizon are almost always typing mistakes.
pub const DATE_MIN: chrono::NaiveDate = chrono::NaiveDate::from_ymd_opt(2000, 1, 1).unwrap();
pub const DATE_MAX: chrono::NaiveDate = chrono::NaiveDate::from_ymd_opt(2100, 12, 31).unwrap();

pub fn check_date(issues: &mut crate::engine::Issues, field: &str, date: chrono::NaiveDate) {
    if !(DATE_MIN..=DATE_MAX).contains(&date) {
        issues.push(field, "must be between 2000-01-01 and 2100-12-31");
    }
}

/// [`check_date`] for optional query filters, as one error.
pub fn check_filter_dates(
    dates: &[(&str, Option<chrono::NaiveDate>)],
) -> Result<(), crate::engine::InvalidInput> {
    let mut issues = crate::engine::Issues::default();
    for (field, date) in dates {
        if let Some(d) = date {
            check_date(&mut issues, field, *d);
        }
    }
    issues.finish()
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
