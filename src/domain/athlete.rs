use chrono::{DateTime, Datelike, NaiveDate, Utc};
use serde::{Deserialize, Serialize};
use utoipa::ToSchema;
use uuid::Uuid;

use super::check_text;
pub use crate::engine::day::settings::HealthFlag;
use crate::engine::profile::{GoalDirection, Sex, TrainingStatus, Vo2maxSource};
use crate::engine::{InvalidInput, Issues};

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema, Default)]
#[serde(rename_all = "snake_case")]
pub enum AthleteStatus {
    #[default]
    Active,
    /// Kept with its history, but left out of plans and default lists.
    Archived,
}

/// The first body-mass reading, given when an athlete is created.
#[derive(Debug, Clone, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct InitialBodyMass {
    #[schema(example = 74.5)]
    #[schema(minimum = 25.0, maximum = 250.0)]
    pub body_mass_kg: f64,
    /// Defaults to today in the team's time zone.
    #[serde(default)]
    pub measured_on: Option<NaiveDate>,
}

/// An athlete as a client sends it (create, and the base for merge-patch).
#[derive(Debug, Clone, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct AthleteInput {
    #[schema(example = "Oren Oakhurst")]
    #[schema(min_length = 1, max_length = 100)]
    pub display_name: String,
    pub sex: Sex,
    #[schema(example = "2001-04-17")]
    pub date_of_birth: NaiveDate,
    #[schema(example = 178.0)]
    #[schema(minimum = 120.0, maximum = 230.0)]
    pub height_cm: f64,
    #[serde(default)]
    #[schema(minimum = 3.0, maximum = 60.0)]
    pub body_fat_percent: Option<f64>,
    #[serde(default)]
    #[schema(minimum = 20.0, maximum = 150.0)]
    pub fat_free_mass_kg: Option<f64>,
    /// How VO2max is known: a laboratory value or a field test.
    #[serde(default)]
    pub vo2max: Option<Vo2maxSource>,
    #[serde(default)]
    #[schema(minimum = 100.0, maximum = 230.0)]
    pub hr_max: Option<f64>,
    #[serde(default)]
    #[schema(minimum = 30.0, maximum = 120.0)]
    pub hr_rest: Option<f64>,
    pub training_status: TrainingStatus,
    /// Position or event group, e.g. "midfield".
    #[serde(default)]
    #[schema(max_length = 60)]
    pub position_group: Option<String>,
    #[serde(default = "maintain")]
    pub goal: GoalDirection,
    /// Planned body-mass change in kg per week (0 to 2), for reduce or gain.
    #[serde(default)]
    #[schema(minimum = 0.0, maximum = 2.0)]
    pub goal_rate_kg_per_week: Option<f64>,
    #[serde(default)]
    #[schema(max_length = 2000)]
    pub dietary_notes: Option<String>,
    /// Conditions the adult-athlete targets do not cover; each adds a
    /// caution deferring to a registered dietitian or physician.
    #[serde(default)]
    pub health_flags: Vec<HealthFlag>,
    #[serde(default)]
    pub status: AthleteStatus,
    /// Required when creating; body mass is then kept as dated readings
    /// under `/v1/athletes/{athlete_id}/body-mass`.
    #[serde(default, skip_serializing)]
    pub initial_body_mass: Option<InitialBodyMass>,
}

fn maintain() -> GoalDirection {
    GoalDirection::Maintain
}

pub const BODY_MASS_RANGE_KG: (f64, f64) = (25.0, 250.0);

impl AthleteInput {
    /// Validates the ranges that protect users. `today` is the team's local date.
    pub fn validate(&self, today: NaiveDate, creating: bool) -> Result<(), InvalidInput> {
        let mut issues = Issues::default();
        check_text(&mut issues, "display_name", &self.display_name, 1, 100);
        let age = age_years(self.date_of_birth, today);
        if self.date_of_birth > today || !(8.0..=90.0).contains(&age) {
            issues.push(
                "date_of_birth",
                "must give an age between 8 and 90 years today",
            );
        }
        issues.range("height_cm", self.height_cm, 120.0, 230.0, "cm");
        if let Some(v) = self.body_fat_percent {
            issues.range("body_fat_percent", v, 3.0, 60.0, "%");
        }
        if let Some(v) = self.fat_free_mass_kg {
            issues.range("fat_free_mass_kg", v, 20.0, 150.0, "kg");
        }
        if let Some(v) = self.hr_max {
            issues.range("hr_max", v, 100.0, 230.0, "beats/min");
        }
        if let Some(v) = self.hr_rest {
            issues.range("hr_rest", v, 30.0, 120.0, "beats/min");
        }
        if let (Some(max), Some(rest)) = (self.hr_max, self.hr_rest)
            && rest >= max
        {
            issues.push("hr_rest", "must be lower than hr_max");
        }
        if let Some(source) = &self.vo2max {
            validate_vo2max(&mut issues, source, self.hr_max, self.hr_rest);
        }
        if let Some(p) = &self.position_group {
            check_text(&mut issues, "position_group", p, 1, 60);
        }
        if let Some(n) = &self.dietary_notes {
            super::check_note(&mut issues, "dietary_notes", n, 0, 2000);
        }
        match (self.goal, self.goal_rate_kg_per_week) {
            (GoalDirection::Maintain, Some(r)) if r != 0.0 => issues.push(
                "goal_rate_kg_per_week",
                "must be absent or 0 when the goal is maintain",
            ),
            (GoalDirection::Reduce | GoalDirection::Gain, None) => issues.push(
                "goal_rate_kg_per_week",
                "is required when the goal is reduce or gain",
            ),
            (_, Some(r)) => issues.range("goal_rate_kg_per_week", r, 0.0, 2.0, "kg/week"),
            _ => {}
        }
        match (&self.initial_body_mass, creating) {
            (None, true) => issues.push(
                "initial_body_mass",
                "is required: the plan needs a body mass",
            ),
            (Some(_), false) => issues.push(
                "initial_body_mass",
                "can only be given on create; add readings under /body-mass",
            ),
            (Some(m), true) => {
                issues.range(
                    "initial_body_mass.body_mass_kg",
                    m.body_mass_kg,
                    BODY_MASS_RANGE_KG.0,
                    BODY_MASS_RANGE_KG.1,
                    "kg",
                );
                if let Some(fat_free) = self.fat_free_mass_kg
                    && fat_free >= m.body_mass_kg
                {
                    issues.push("fat_free_mass_kg", "must be lower than the body mass");
                }
                if let Some(d) = m.measured_on {
                    super::check_date(&mut issues, "initial_body_mass.measured_on", d);
                    if d > today {
                        issues.push("initial_body_mass.measured_on", "must not be in the future");
                    }
                }
            }
            (None, false) => {}
        }
        issues.finish()
    }

    pub fn normalised(mut self) -> Self {
        self.display_name = self.display_name.trim().to_owned();
        self.position_group = self
            .position_group
            .map(|p| p.trim().to_owned())
            .filter(|p| !p.is_empty());
        self.health_flags.sort_by_key(|f| *f as u8);
        self.health_flags.dedup();
        self
    }
}

fn validate_vo2max(
    issues: &mut Issues,
    source: &Vo2maxSource,
    hr_max: Option<f64>,
    hr_rest: Option<f64>,
) {
    match source {
        Vo2maxSource::Measured { ml_per_kg_min } => issues.range(
            "vo2max.ml_per_kg_min",
            *ml_per_kg_min,
            15.0,
            95.0,
            "mL/kg/min",
        ),
        Vo2maxSource::Cooper12Minute { distance_m } => {
            issues.range("vo2max.distance_m", *distance_m, 1000.0, 5500.0, "m")
        }
        Vo2maxSource::YoYoIr1 { distance_m } => {
            issues.range("vo2max.distance_m", *distance_m, 40.0, 5000.0, "m")
        }
        Vo2maxSource::Shuttle20m { final_speed_kmh } => issues.range(
            "vo2max.final_speed_kmh",
            *final_speed_kmh,
            8.0,
            20.0,
            "km/h",
        ),
        Vo2maxSource::HeartRateRatio => {
            if hr_max.is_none() || hr_rest.is_none() {
                issues.push(
                    "vo2max.method",
                    "heart_rate_ratio needs both hr_max and hr_rest",
                );
            }
        }
    }
}

/// Age in fractional years on a date.
pub fn age_years(date_of_birth: NaiveDate, on: NaiveDate) -> f64 {
    let mut years = on.year() - date_of_birth.year();
    if (on.month(), on.day()) < (date_of_birth.month(), date_of_birth.day()) {
        years -= 1;
    }
    let last_birthday = date_of_birth
        .with_year(date_of_birth.year() + years)
        .unwrap_or(date_of_birth);
    let days_since = (on - last_birthday).num_days() as f64;
    years as f64 + (days_since / 365.25).clamp(0.0, 0.999)
}

/// The latest body-mass reading of an athlete.
#[derive(Debug, Clone, Serialize, ToSchema)]
pub struct LatestBodyMass {
    pub body_mass_kg: f64,
    pub measured_on: NaiveDate,
}

#[derive(Debug, Clone, Serialize, ToSchema)]
pub struct Athlete {
    pub id: Uuid,
    pub team_id: Uuid,
    pub display_name: String,
    pub sex: Sex,
    pub date_of_birth: NaiveDate,
    pub height_cm: f64,
    pub body_fat_percent: Option<f64>,
    pub fat_free_mass_kg: Option<f64>,
    pub vo2max: Option<Vo2maxSource>,
    pub hr_max: Option<f64>,
    pub hr_rest: Option<f64>,
    pub training_status: TrainingStatus,
    pub position_group: Option<String>,
    pub goal: GoalDirection,
    pub goal_rate_kg_per_week: Option<f64>,
    pub dietary_notes: Option<String>,
    pub health_flags: Vec<HealthFlag>,
    pub status: AthleteStatus,
    pub latest_body_mass: Option<LatestBodyMass>,
    pub version: i64,
    pub created_at: DateTime<Utc>,
    pub updated_at: DateTime<Utc>,
}

impl Athlete {
    pub fn input(&self) -> AthleteInput {
        AthleteInput {
            display_name: self.display_name.clone(),
            sex: self.sex,
            date_of_birth: self.date_of_birth,
            height_cm: self.height_cm,
            body_fat_percent: self.body_fat_percent,
            fat_free_mass_kg: self.fat_free_mass_kg,
            vo2max: self.vo2max.clone(),
            hr_max: self.hr_max,
            hr_rest: self.hr_rest,
            training_status: self.training_status,
            position_group: self.position_group.clone(),
            goal: self.goal,
            goal_rate_kg_per_week: self.goal_rate_kg_per_week,
            dietary_notes: self.dietary_notes.clone(),
            health_flags: self.health_flags.clone(),
            status: self.status,
            initial_body_mass: None,
        }
    }
}

/// A dated body-mass reading.
#[derive(Debug, Clone, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct BodyMassInput {
    #[schema(example = "2026-11-30")]
    pub measured_on: NaiveDate,
    #[schema(example = 74.2)]
    #[schema(minimum = 25.0, maximum = 250.0)]
    pub body_mass_kg: f64,
    #[serde(default)]
    #[schema(max_length = 500)]
    pub note: Option<String>,
}

impl BodyMassInput {
    pub fn validate(&self, today: NaiveDate) -> Result<(), InvalidInput> {
        let mut issues = Issues::default();
        issues.range(
            "body_mass_kg",
            self.body_mass_kg,
            BODY_MASS_RANGE_KG.0,
            BODY_MASS_RANGE_KG.1,
            "kg",
        );
        super::check_date(&mut issues, "measured_on", self.measured_on);
        if self.measured_on > today {
            issues.push("measured_on", "must not be in the future");
        }
        if let Some(n) = &self.note {
            super::check_note(&mut issues, "note", n, 0, 500);
        }
        issues.finish()
    }
}

#[derive(Debug, Clone, Serialize, ToSchema)]
pub struct BodyMass {
    pub id: Uuid,
    pub athlete_id: Uuid,
    pub measured_on: NaiveDate,
    pub body_mass_kg: f64,
    pub note: Option<String>,
    pub created_at: DateTime<Utc>,
}
