//! Inputs shared by every part of the engine: who the athlete is and what a
//! planned session holds. The store keeps these shapes exactly as given (the
//! segment intensity is stored as JSON), and the engine converts them.

use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum Sex {
    Female,
    Male,
}

/// How trained the athlete is; shifts the fuel mix and glycogen capacity.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum TrainingStatus {
    Recreational,
    Trained,
    HighlyTrained,
}

/// How the athlete's VO2max was obtained. Field tests are converted with
/// published equations by the engine; `measured` is a laboratory value.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(tag = "method", rename_all = "snake_case", deny_unknown_fields)]
pub enum Vo2maxSource {
    /// Laboratory gas-exchange test, mL O2 per kg per minute.
    Measured { ml_per_kg_min: f64 },
    /// Cooper 12-minute run: distance covered in metres.
    Cooper12Minute { distance_m: f64 },
    /// Yo-Yo intermittent recovery test level 1: total distance in metres.
    YoYoIr1 { distance_m: f64 },
    /// Uth et al. (2004) ratio of HRmax to resting heart rate (uses the
    /// athlete's stored HRmax and resting HR).
    HeartRateRatio,
    /// 20-m shuttle run: speed of the last completed stage in km/h.
    Shuttle20m { final_speed_kmh: f64 },
}

/// What a coach planned for a session.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum SessionKind {
    Training,
    Match,
    Strength,
    Recovery,
    Travel,
    Other,
}

/// The intensity of a segment, in whichever form the coach gave it.
/// Stored exactly as given; the engine converts it to oxygen uptake.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(tag = "form", rename_all = "snake_case", deny_unknown_fields)]
pub enum Intensity {
    /// Fraction of the athlete's VO2max, 0.2 to 1.2 (e.g. 0.65).
    FractionVo2max {
        #[schema(minimum = 0.2, maximum = 1.2)]
        fraction: f64,
    },
    /// Average heart rate over the segment, beats per minute.
    HeartRate {
        #[schema(minimum = 30.0, maximum = 240.0)]
        bpm: f64,
    },
    /// Fraction of heart-rate reserve, 0 to 1.
    HeartRateReserve {
        #[schema(minimum = 0.0, maximum = 1.0)]
        fraction: f64,
    },
    /// Session RPE on the CR10 scale (0 to 10).
    SessionRpe {
        #[schema(minimum = 0.0, maximum = 10.0)]
        rating: f64,
    },
    /// Metabolic equivalents (1 MET = 3.5 mL O2/kg/min).
    Mets {
        #[schema(minimum = 1.0, maximum = 23.0)]
        mets: f64,
    },
    /// An activity from the catalogue (`GET /v1/activities`), by its key.
    Activity { activity: String },
    /// Running at a speed in km/h on a grade in percent.
    Running {
        #[schema(minimum = 4.0, maximum = 30.0)]
        speed_kmh: f64,
        #[serde(default)]
        #[schema(minimum = 0.0, maximum = 30.0)]
        grade_percent: f64,
    },
    /// Walking at a speed in km/h on a grade in percent.
    Walking {
        #[schema(minimum = 1.0, maximum = 10.0)]
        speed_kmh: f64,
        #[serde(default)]
        #[schema(minimum = 0.0, maximum = 30.0)]
        grade_percent: f64,
    },
    /// Leg cycling at an average power in watts.
    Cycling {
        #[schema(minimum = 10.0, maximum = 1000.0)]
        watts: f64,
    },
}

/// One block of a session: minutes at an intensity.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct Segment {
    /// Optional label such as "warm-up" or "small-sided games".
    #[serde(default)]
    #[schema(max_length = 80)]
    pub label: Option<String>,
    /// Duration of the block in minutes (over 0, at most 600).
    #[schema(minimum = 0.5, maximum = 600.0)]
    pub minutes: f64,
    pub intensity: Intensity,
}

/// Body-composition goal, with a planned rate of change.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum GoalDirection {
    Maintain,
    Reduce,
    Gain,
}

/// Everything the engine needs to know about one athlete on one date.
/// Values that are `None` are estimated by the engine, which says so.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct AthleteProfile {
    pub sex: Sex,
    /// Age in whole or fractional years on the planned date.
    #[schema(minimum = 10.0, maximum = 100.0)]
    pub age_years: f64,
    #[schema(minimum = 120.0, maximum = 230.0)]
    pub height_cm: f64,
    /// Latest body mass on or before the planned date, kg.
    #[schema(minimum = 25.0, maximum = 250.0)]
    pub body_mass_kg: f64,
    /// Body fat as a percentage of body mass, if measured.
    #[serde(default)]
    #[schema(minimum = 3.0, maximum = 60.0)]
    pub body_fat_percent: Option<f64>,
    /// Fat-free mass in kg, if measured (wins over body fat %).
    #[serde(default)]
    #[schema(minimum = 20.0, maximum = 150.0)]
    pub fat_free_mass_kg: Option<f64>,
    #[serde(default)]
    pub vo2max: Option<Vo2maxSource>,
    /// Maximal heart rate, beats per minute, if measured.
    #[serde(default)]
    #[schema(minimum = 100.0, maximum = 240.0)]
    pub hr_max: Option<f64>,
    /// Resting heart rate, beats per minute.
    #[serde(default)]
    #[schema(minimum = 30.0, maximum = 120.0)]
    pub hr_rest: Option<f64>,
    pub training_status: TrainingStatus,
    #[serde(default = "default_goal")]
    pub goal: GoalDirection,
    /// Planned rate of body-mass change, kg per week (positive number).
    #[serde(default)]
    #[schema(minimum = 0.0, maximum = 2.0)]
    pub goal_rate_kg_per_week: Option<f64>,
    /// Share of team-sport play this athlete's position covers, 0.2 to 1.5
    /// (default 1.0; a goalkeeper about 0.5). The service fills it from the
    /// position group and the team's plan settings.
    #[serde(default)]
    #[schema(minimum = 0.2, maximum = 1.5)]
    pub team_sport_work_factor: Option<f64>,
}

fn default_goal() -> GoalDirection {
    GoalDirection::Maintain
}
