//! The last step before a JSON body leaves the service, independent of the
//! engine's types (so it keeps working whatever fields they gain or lose):
//!
//! - **Sources once per response.** Every citation (`"source": "<text>"`,
//!   the published source or `common practice` / `from memory` label) is
//!   replaced by `"source_id": n`, and the distinct texts are listed once in
//!   a top-level `"sources": [{"id": n, "text": ...}]`. A 25-athlete week
//!   repeats about 20 citations thousands of times. A `source` that is one of
//!   the document's enum labels (e.g. a fat-free mass `source: "measured"`)
//!   is a value, not a citation, and stays as it is.
//! - **Local times a client can place.** In a team's plan, every local
//!   date-time (`2026-12-07T10:00:00`) gets the RFC 3339 offset of the team's
//!   zone on that date (`2026-12-07T10:00:00+00:00`); the wall-clock part is
//!   unchanged, so the time the athlete sees stays what was planned.
//!
//! `http/openapi.rs` describes both in the document with the same rules.
//! Responses are written by [`super::wire`], which applies these rules in
//! one streaming pass; [`shape`] builds the same document as a value tree
//! and is the reference a test compares the streaming pass with.

use std::collections::{HashMap, HashSet};
use std::sync::OnceLock;

use chrono::{NaiveDateTime, TimeZone};
use serde::Serialize;
use serde_json::{Map, Value};

/// Renames and table of the sources rule.
pub const SOURCE_FIELD: &str = "source";
pub const SOURCE_ID_FIELD: &str = "source_id";
pub const SOURCES_FIELD: &str = "sources";

/// Serialises `body` for the wire: sources de-duplicated and, when `zone`
/// is given, local date-times with their offset in that zone.
pub fn shape<T: Serialize>(
    body: &T,
    zone: Option<&chrono_tz::Tz>,
) -> Result<Value, serde_json::Error> {
    let mut value = serde_json::to_value(body)?;
    let mut sources = Sources::default();
    walk(&mut value, &mut sources, zone, enum_labels());
    if let Value::Object(root) = &mut value
        && !sources.texts.is_empty()
    {
        let table = sources
            .texts
            .into_iter()
            .enumerate()
            .map(|(id, text)| serde_json::json!({"id": id, "text": text}))
            .collect();
        root.insert(SOURCES_FIELD.into(), Value::Array(table));
    }
    Ok(value)
}

#[derive(Default)]
pub(super) struct Sources {
    ids: HashMap<String, usize>,
    pub(super) texts: Vec<String>,
}

impl Sources {
    pub(super) fn id(&mut self, text: String) -> usize {
        if let Some(&id) = self.ids.get(&text) {
            return id;
        }
        let id = self.texts.len();
        self.texts.push(text.clone());
        self.ids.insert(text, id);
        id
    }
}

fn walk(
    value: &mut Value,
    sources: &mut Sources,
    zone: Option<&chrono_tz::Tz>,
    labels: &HashSet<String>,
) {
    match value {
        Value::Object(map) => {
            cite(map, sources, labels);
            for v in map.values_mut() {
                walk(v, sources, zone, labels);
            }
        }
        Value::Array(items) => items
            .iter_mut()
            .for_each(|v| walk(v, sources, zone, labels)),
        Value::String(s) => {
            if let Some(zone) = zone
                && let Some(placed) = with_offset(s, zone)
            {
                *s = placed;
            }
        }
        _ => {}
    }
}

fn cite(map: &mut Map<String, Value>, sources: &mut Sources, labels: &HashSet<String>) {
    let is_citation =
        matches!(map.get(SOURCE_FIELD), Some(Value::String(s)) if !labels.contains(s));
    if is_citation
        && !map.contains_key(SOURCE_ID_FIELD)
        && let Some(Value::String(text)) = map.remove(SOURCE_FIELD)
    {
        map.insert(SOURCE_ID_FIELD.into(), Value::from(sources.id(text)));
    }
}

/// `YYYY-MM-DDTHH:MM[:SS[.f]]` with nothing after it.
pub fn is_local_date_time(s: &str) -> bool {
    let b = s.as_bytes();
    b.len() >= 16
        && b[4] == b'-'
        && b[7] == b'-'
        && b[10] == b'T'
        && b[13] == b':'
        && [0, 1, 2, 3, 5, 6, 8, 9, 11, 12, 14, 15]
            .iter()
            .all(|&i| b[i].is_ascii_digit())
        && (b.len() == 16
            || (b[16] == b':' && b[17..].iter().all(|c| c.is_ascii_digit() || *c == b'.')))
}

/// The local date-time with the zone's offset on that date. A time in a
/// spring-forward gap (which clocks never show) is moved on by the gap, as
/// calendars do; an ambiguous one (autumn) takes the earlier instant.
pub fn with_offset(s: &str, zone: &chrono_tz::Tz) -> Option<String> {
    if !is_local_date_time(s) {
        return None;
    }
    let local = NaiveDateTime::parse_from_str(s, "%Y-%m-%dT%H:%M:%S%.f")
        .or_else(|_| NaiveDateTime::parse_from_str(s, "%Y-%m-%dT%H:%M"))
        .ok()?;
    let placed = zone.from_local_datetime(&local).earliest().or_else(|| {
        zone.from_local_datetime(&(local + chrono::TimeDelta::hours(1)))
            .earliest()
    })?;
    Some(placed.format("%Y-%m-%dT%H:%M:%S%:z").to_string())
}

/// Every enum value that a `source` property of the document can take:
/// those are values, not citations.
pub(super) fn enum_labels() -> &'static HashSet<String> {
    static LABELS: OnceLock<HashSet<String>> = OnceLock::new();
    LABELS.get_or_init(|| {
        let (_, doc) = super::api_router().split_for_parts();
        let doc = serde_json::to_value(&doc).unwrap_or_default();
        let schemas = &doc["components"]["schemas"];
        let mut labels = HashSet::new();
        if let Some(all) = schemas.as_object() {
            for schema in all.values() {
                let prop = &schema["properties"][SOURCE_FIELD];
                let target = match prop["$ref"].as_str() {
                    Some(r) => &schemas[r.rsplit('/').next().unwrap_or("")],
                    None => prop,
                };
                collect_enum(target, &mut labels);
            }
        }
        labels
    })
}

fn collect_enum(schema: &Value, out: &mut HashSet<String>) {
    if let Some(values) = schema["enum"].as_array() {
        out.extend(values.iter().filter_map(|v| v.as_str().map(str::to_owned)));
    }
    for key in ["oneOf", "anyOf"] {
        if let Some(alts) = schema[key].as_array() {
            alts.iter().for_each(|a| collect_enum(a, out));
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn citations_are_listed_once_and_enum_sources_stay_values() {
        let body = serde_json::json!({
            "days": [
                {"explanations": [{"text": "a", "source": "Thomas et al. 2016"}, {"text": "b", "source": "common practice"}]},
                {"explanations": [{"text": "c", "source": "Thomas et al. 2016"}]},
                {"fat_free_mass": {"source": "measured"}}
            ]
        });
        let shaped = shape(&body, None).unwrap();
        assert_eq!(shaped["days"][0]["explanations"][0]["source_id"], 0);
        assert_eq!(shaped["days"][0]["explanations"][1]["source_id"], 1);
        assert_eq!(shaped["days"][1]["explanations"][0]["source_id"], 0);
        assert_eq!(shaped["days"][2]["fat_free_mass"]["source"], "measured");
        assert_eq!(
            shaped["sources"],
            serde_json::json!([{"id": 0, "text": "Thomas et al. 2016"}, {"id": 1, "text": "common practice"}])
        );
    }

    #[test]
    fn local_times_get_the_offset_of_their_date() {
        let london: chrono_tz::Tz = "Europe/London".parse().unwrap();
        // UK summer time (BST, +01:00) ends on the last Sunday of October.
        assert_eq!(
            with_offset("2026-10-24T10:00:00", &london).unwrap(),
            "2026-10-24T10:00:00+01:00"
        );
        assert_eq!(
            with_offset("2026-12-07T18:30:00", &london).unwrap(),
            "2026-12-07T18:30:00+00:00"
        );
        assert!(with_offset("2026-12-07", &london).is_none());
        assert!(with_offset("Pre-session snack at 2026-12-07T10:00:00", &london).is_none());
    }
}
