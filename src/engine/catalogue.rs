//! TEMPORARY placeholder replaced by the real catalogue when the engine lands.
pub struct Entry { pub key: &'static str }
const KEYS: [&str; 6] = ["football_match", "football_training", "resistance_training_vigorous", "resistance_training_moderate", "swimming_freestyle_moderate", "running"];
pub fn find(key: &str) -> Option<Entry> { KEYS.iter().find(|k| **k == key).map(|k| Entry { key: k }) }
