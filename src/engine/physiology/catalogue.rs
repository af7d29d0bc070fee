//! The activity catalogue: the sports and sessions a club trains, each with
//! its code and MET value from the Compendium of Physical Activities
//! (Ainsworth et al. 2011, Med Sci Sports Exerc 43:1575).
//!
//! Guided tour:
//! - [`ACTIVITIES`]: the static, read-only list served by `GET /v1/activities`.
//! - [`activity_by_key`]: look-up used when a segment's intensity names an activity.
//!
//! Keys are our own and stable (`football_match`); names are plain words.
//! Values marked [`ValueStatus::Confirmed`] were checked against the 2011
//! Compendium; [`ValueStatus::FromMemory`] values were recalled and are not
//! yet verified. METs are for a standard adult (1 MET = 3.5 mL O2/kg/min);
//! the engine turns them into a fraction of each athlete's own VO2max.

use serde::Serialize;
use utoipa::ToSchema;

/// How far a catalogue value has been checked against its source.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum ValueStatus {
    /// Checked against the 2011 Compendium.
    Confirmed,
    /// Recalled, not yet verified against the source.
    FromMemory,
}

/// Broad family of an activity, so a front end can group the list.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum ActivityGroup {
    TeamSport,
    Running,
    Cycling,
    Swimming,
    Strength,
    Mobility,
    Walking,
    Rest,
}

/// One catalogue entry.
#[derive(Debug, Clone, PartialEq, Serialize, ToSchema)]
pub struct Activity {
    /// Stable key used in segment intensities, e.g. `football_match`.
    pub key: &'static str,
    /// Plain name.
    pub name: &'static str,
    pub group: ActivityGroup,
    /// Compendium of Physical Activities code (2011 edition).
    pub compendium_code: &'static str,
    /// Metabolic equivalents (1 MET = 3.5 mL O2/kg/min), 2011 value.
    pub mets: f64,
    pub value_status: ValueStatus,
}

const fn entry(
    key: &'static str,
    name: &'static str,
    group: ActivityGroup,
    compendium_code: &'static str,
    mets: f64,
    value_status: ValueStatus,
) -> Activity {
    Activity {
        key,
        name,
        group,
        compendium_code,
        mets,
        value_status,
    }
}

use ActivityGroup::*;
use ValueStatus::*;

/// The catalogue, in display order.
pub static ACTIVITIES: &[Activity] = &[
    entry(
        "football_match",
        "Football (soccer), competitive match",
        TeamSport,
        "15605",
        10.0,
        Confirmed,
    ),
    entry(
        "football_training",
        "Football (soccer), general training play",
        TeamSport,
        "15610",
        7.0,
        Confirmed,
    ),
    entry(
        "rugby_union_match",
        "Rugby union, competitive match",
        TeamSport,
        "15560",
        8.3,
        Confirmed,
    ),
    entry(
        "rugby_touch",
        "Rugby, touch, non-competitive",
        TeamSport,
        "15562",
        6.3,
        FromMemory,
    ),
    entry(
        "basketball_game",
        "Basketball, game",
        TeamSport,
        "15040",
        8.0,
        Confirmed,
    ),
    entry(
        "basketball_general",
        "Basketball, general play",
        TeamSport,
        "15055",
        6.5,
        FromMemory,
    ),
    entry(
        "field_hockey",
        "Field hockey",
        TeamSport,
        "15350",
        7.8,
        FromMemory,
    ),
    entry(
        "running_8_0_kmh",
        "Running, 8.0 km/h",
        Running,
        "12030",
        8.3,
        Confirmed,
    ),
    entry(
        "running_9_7_kmh",
        "Running, 9.7 km/h",
        Running,
        "12050",
        9.8,
        Confirmed,
    ),
    entry(
        "running_10_8_kmh",
        "Running, 10.8 km/h",
        Running,
        "12060",
        10.5,
        Confirmed,
    ),
    entry(
        "running_12_1_kmh",
        "Running, 12.1 km/h",
        Running,
        "12080",
        11.8,
        Confirmed,
    ),
    entry(
        "running_14_5_kmh",
        "Running, 14.5 km/h",
        Running,
        "12110",
        12.8,
        FromMemory,
    ),
    entry(
        "running_16_1_kmh",
        "Running, 16.1 km/h",
        Running,
        "12120",
        14.5,
        FromMemory,
    ),
    entry(
        "cycling_19_22_kmh",
        "Cycling, 19-22 km/h, moderate effort",
        Cycling,
        "01030",
        8.0,
        Confirmed,
    ),
    entry(
        "cycling_22_26_kmh",
        "Cycling, 22-26 km/h, vigorous effort",
        Cycling,
        "01040",
        10.0,
        FromMemory,
    ),
    entry(
        "swimming_freestyle_moderate",
        "Swimming, front crawl, light or moderate effort",
        Swimming,
        "18240",
        5.8,
        Confirmed,
    ),
    entry(
        "swimming_freestyle_vigorous",
        "Swimming, front crawl, fast, vigorous effort",
        Swimming,
        "18230",
        9.8,
        FromMemory,
    ),
    entry(
        "resistance_vigorous",
        "Resistance training, vigorous effort",
        Strength,
        "02050",
        6.0,
        Confirmed,
    ),
    entry(
        "resistance_moderate",
        "Resistance training, multiple exercises, 8-15 repetitions",
        Strength,
        "02054",
        3.5,
        Confirmed,
    ),
    entry(
        "mobility_stretching",
        "Mobility and stretching, mild",
        Mobility,
        "02101",
        2.3,
        FromMemory,
    ),
    entry(
        "walking_moderate",
        "Walking, about 5 km/h, level",
        Walking,
        "17190",
        3.5,
        FromMemory,
    ),
    entry(
        "walking_brisk",
        "Walking, about 5.6 km/h, level, brisk",
        Walking,
        "17200",
        4.3,
        FromMemory,
    ),
    entry(
        "travel_seated",
        "Travel, seated in a bus or train",
        Rest,
        "16016",
        1.3,
        FromMemory,
    ),
    entry(
        "rest_seated",
        "Sitting quietly (breaks, half-time)",
        Rest,
        "07021",
        1.3,
        FromMemory,
    ),
];

/// Finds a catalogue entry by its key.
pub fn activity_by_key(key: &str) -> Option<&'static Activity> {
    ACTIVITIES.iter().find(|activity| activity.key == key)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn compendium_values_for_confirmed_entries() {
        // Compendium of Physical Activities, Ainsworth et al. (2011) Med Sci
        // Sports Exerc 43:1575; code and MET values [confirmed].
        let expected = [
            ("football_match", "15605", 10.0),
            ("football_training", "15610", 7.0),
            ("running_8_0_kmh", "12030", 8.3),
            ("running_9_7_kmh", "12050", 9.8),
            ("running_10_8_kmh", "12060", 10.5),
            ("running_12_1_kmh", "12080", 11.8),
            ("cycling_19_22_kmh", "01030", 8.0),
            ("rugby_union_match", "15560", 8.3),
            ("basketball_game", "15040", 8.0),
            ("resistance_vigorous", "02050", 6.0),
            ("resistance_moderate", "02054", 3.5),
            ("swimming_freestyle_moderate", "18240", 5.8),
        ];
        for (key, code, mets) in expected {
            let activity = activity_by_key(key).unwrap_or_else(|| panic!("{key} missing"));
            assert_eq!(activity.compendium_code, code, "{key}");
            assert_eq!(activity.mets, mets, "{key}");
            assert_eq!(activity.value_status, ValueStatus::Confirmed, "{key}");
        }
        // Every other entry must say it is recalled, not verified.
        let confirmed = ACTIVITIES
            .iter()
            .filter(|a| a.value_status == ValueStatus::Confirmed)
            .count();
        assert_eq!(confirmed, expected.len());
    }

    #[test]
    fn keys_and_codes_are_unique_and_values_sane() {
        for (index, activity) in ACTIVITIES.iter().enumerate() {
            assert!(
                ACTIVITIES[index + 1..]
                    .iter()
                    .all(|other| other.key != activity.key),
                "{}",
                activity.key
            );
            assert!(
                ACTIVITIES[index + 1..]
                    .iter()
                    .all(|other| other.compendium_code != activity.compendium_code)
            );
            assert!(
                activity
                    .key
                    .chars()
                    .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || c == '_')
            );
            assert_eq!(activity.compendium_code.len(), 5);
            // Compendium values span 1.0 (lying quietly) to about 23 METs.
            assert!((1.0..=23.0).contains(&activity.mets));
        }
    }

    #[test]
    fn running_entries_rise_with_speed() {
        // Compendium running METs increase with speed (Ainsworth et al. 2011).
        let running: Vec<f64> = ACTIVITIES
            .iter()
            .filter(|a| a.group == ActivityGroup::Running)
            .map(|a| a.mets)
            .collect();
        assert!(running.windows(2).all(|pair| pair[1] > pair[0]));
    }

    #[test]
    fn unknown_key_is_not_found() {
        assert!(activity_by_key("quidditch").is_none());
    }

    #[test]
    fn catalogue_serialises() {
        let json = serde_json::to_value(ACTIVITIES).unwrap();
        assert_eq!(json[0]["key"], "football_match");
        assert_eq!(json[0]["value_status"], "confirmed");
        assert_eq!(json[0]["group"], "team_sport");
    }
}
