//! Intensity normalisation: every form a coach may give for a segment's
//! intensity becomes oxygen uptake (VO2) for one athlete.
//!
//! Guided tour:
//! - [`validate_intensity`]: protective ranges, with the JSON path of each issue.
//! - [`oxygen_uptake`]: the conversion, returning an [`OxygenUptake`] that says
//!   which method was used. VO2 is never below resting (1 MET = 3.5 mL/kg/min,
//!   Ainsworth et al. 2011).
//!
//! Methods by form:
//! - `fraction_vo2max`: fraction x the athlete's VO2max.
//! - `heart_rate`: with a resting heart rate, %HRR = %VO2 reserve (Swain &
//!   Leutholtz 1997, Med Sci Sports Exerc 29:410); without one, the Swain et al.
//!   (1994, Med Sci Sports Exerc 26:112) regression %HRmax = 0.6463 %VO2max +
//!   37.182 (`from memory`; it reproduces the paper's means), solved for %VO2max.
//! - `heart_rate_reserve`: the same %HRR = %VO2R identity.
//! - `session_rpe`: CR10 rating to %VO2 reserve through [`RPE_TO_VO2_RESERVE`],
//!   built from the ACSM intensity classes (Garber et al. 2011, Med Sci Sports
//!   Exerc 43:1334) and the CR10 verbal anchors (`from memory`). Session RPE is
//!   a whole-session rating (Foster et al. 2001), so this is a coarse estimate.
//! - `mets` and `activity`: METs x 3.5 (Compendium, Ainsworth et al. 2011).
//!   Team-sport activities are the exception: play is self-paced, each player
//!   working at a share of their own capacity, so a fitter player covers more
//!   ground rather than working "easier". Their MET value is read as a
//!   fraction of VO2max for a reference player of
//!   [`TEAM_SPORT_REFERENCE_VO2MAX`], 50 mL/kg/min, so that a competitive
//!   match (10 METs) is played at about 70% of VO2max on average, as measured
//!   in elite football (Bangsbo et al. 2006, J Sports Sci 24:665, from memory),
//!   and the part above rest is scaled by the athlete's
//!   `team_sport_work_factor` (a goalkeeper covers about half an outfield
//!   player's distance, Di Salvo et al. 2007, Int J Sports Med 28:222, from
//!   memory).
//! - `running`, `walking`, `cycling`: ACSM metabolic equations (ACSM's
//!   Guidelines for Exercise Testing and Prescription): running
//!   `0.2 S + 0.9 S G + 3.5`, walking `0.1 S + 1.8 S G + 3.5` (S in m/min, G
//!   grade fraction), leg cycling `10.8 W / kg + 7`. The equations are for
//!   level and uphill ground, so downhill grades are refused.

use crate::engine::physiology::athlete::{RESTING_VO2_ML_PER_KG_MIN, ResolvedAthlete};
use crate::engine::physiology::catalogue::{ActivityGroup, activity_by_key};
use crate::engine::profile::Intensity;
use crate::engine::{InvalidInput, Issues};

/// VO2max of the reference player behind team-sport MET values, mL/kg/min
/// (common practice reading of the Compendium for squads; see the module doc).
pub const TEAM_SPORT_REFERENCE_VO2MAX: f64 = 50.0;

/// Oxygen uptake of a segment for one athlete (an estimate).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OxygenUptake {
    pub ml_per_kg_min: f64,
    pub l_per_min: f64,
    pub fraction_vo2max: f64,
    /// The heart rate given, if the form was `heart_rate`, for plausibility checks.
    pub heart_rate_bpm: Option<f64>,
    /// Stable snake_case code of the conversion method.
    pub method: &'static str,
    pub source: &'static str,
}

/// CR10 rating to fraction of VO2 reserve (`from memory`): ACSM classes
/// (Garber et al. 2011) very light < 30%, light 30-39%, moderate 40-59%,
/// vigorous 60-89%, near-maximal >= 90% VO2R, placed on the CR10 anchors
/// 1 very weak, 2 weak, 3 moderate, 5 strong, 7 very strong, 10 extremely strong.
pub const RPE_TO_VO2_RESERVE: [(f64, f64); 11] = [
    (0.0, 0.0),
    (1.0, 0.20),
    (2.0, 0.35),
    (3.0, 0.50),
    (4.0, 0.60),
    (5.0, 0.70),
    (6.0, 0.76),
    (7.0, 0.82),
    (8.0, 0.88),
    (9.0, 0.94),
    (10.0, 1.00),
];

/// Swain et al. (1994) regression coefficients (`from memory`).
const SWAIN_SLOPE: f64 = 0.6463;
const SWAIN_INTERCEPT: f64 = 37.182;

/// %HRmax (0-100) expected at a %VO2max (0-100), Swain et al. (1994).
pub fn swain_percent_hr_max(percent_vo2max: f64) -> f64 {
    SWAIN_SLOPE * percent_vo2max + SWAIN_INTERCEPT
}

/// Speed in km/h to m/min for the ACSM equations.
fn metres_per_minute(speed_kmh: f64) -> f64 {
    speed_kmh * 1000.0 / 60.0
}

/// ACSM running equation, mL/kg/min.
pub fn acsm_running(speed_kmh: f64, grade_percent: f64) -> f64 {
    let speed = metres_per_minute(speed_kmh);
    0.2 * speed + 0.9 * speed * grade_percent / 100.0 + 3.5
}

/// ACSM walking equation, mL/kg/min.
pub fn acsm_walking(speed_kmh: f64, grade_percent: f64) -> f64 {
    let speed = metres_per_minute(speed_kmh);
    0.1 * speed + 1.8 * speed * grade_percent / 100.0 + 3.5
}

/// ACSM leg-cycling equation, mL/kg/min.
pub fn acsm_leg_cycling(watts: f64, body_mass_kg: f64) -> f64 {
    10.8 * watts / body_mass_kg + 7.0
}

/// Linear interpolation through sorted `(x, y)` points, clamped at the ends.
pub(crate) fn interpolate_points(points: &[(f64, f64)], x: f64) -> f64 {
    if x <= points[0].0 {
        return points[0].1;
    }
    for pair in points.windows(2) {
        let ((x0, y0), (x1, y1)) = (pair[0], pair[1]);
        if x <= x1 {
            return y0 + (x - x0) / (x1 - x0) * (y1 - y0);
        }
    }
    points[points.len() - 1].1
}

/// Checks one intensity; `path` is its JSON path, e.g. `segments[1].intensity`.
pub fn validate_intensity(intensity: &Intensity, path: &str, issues: &mut Issues) {
    validate_intensity_at(intensity, &|| path.to_owned(), issues);
}

/// [`validate_intensity`] with the path built only for an issue (the
/// planner validates every session it simulates).
pub(crate) fn validate_intensity_at(
    intensity: &Intensity,
    at: &dyn Fn() -> String,
    issues: &mut Issues,
) {
    match intensity {
        Intensity::FractionVo2max { fraction } => {
            issues.range_with(
                || format!("{}.fraction", at()),
                *fraction,
                0.2,
                1.2,
                "of VO2max",
            );
        }
        Intensity::HeartRate { bpm } => issues.range_with(
            || format!("{}.bpm", at()),
            *bpm,
            30.0,
            240.0,
            "beats per minute",
        ),
        Intensity::HeartRateReserve { fraction } => {
            issues.range_with(
                || format!("{}.fraction", at()),
                *fraction,
                0.0,
                1.0,
                "of heart-rate reserve",
            );
        }
        Intensity::SessionRpe { rating } => {
            issues.range_with(|| format!("{}.rating", at()), *rating, 0.0, 10.0, "(CR10)")
        }
        Intensity::Mets { mets } => {
            issues.range_with(|| format!("{}.mets", at()), *mets, 1.0, 23.0, "METs")
        }
        Intensity::Activity { activity } => {
            if activity_by_key(activity).is_none() {
                issues.push(
                    format!("{}.activity", at()),
                    format!("unknown activity `{activity}`; see GET /v1/activities"),
                );
            }
        }
        Intensity::Running {
            speed_kmh,
            grade_percent,
        } => {
            issues.range_with(
                || format!("{}.speed_kmh", at()),
                *speed_kmh,
                4.0,
                30.0,
                "km/h",
            );
            issues.range_with(
                || format!("{}.grade_percent", at()),
                *grade_percent,
                0.0,
                30.0,
                "% (level or uphill)",
            );
        }
        Intensity::Walking {
            speed_kmh,
            grade_percent,
        } => {
            issues.range_with(
                || format!("{}.speed_kmh", at()),
                *speed_kmh,
                1.0,
                10.0,
                "km/h",
            );
            issues.range_with(
                || format!("{}.grade_percent", at()),
                *grade_percent,
                0.0,
                30.0,
                "% (level or uphill)",
            );
        }
        Intensity::Cycling { watts } => {
            issues.range_with(|| format!("{}.watts", at()), *watts, 10.0, 1000.0, "W")
        }
    }
}

/// Validates and converts one intensity for an athlete. Field paths start
/// with `intensity.`.
pub fn oxygen_uptake(
    athlete: &ResolvedAthlete,
    intensity: &Intensity,
) -> Result<OxygenUptake, InvalidInput> {
    let mut issues = Issues::default();
    validate_intensity(intensity, "intensity", &mut issues);
    issues.finish()?;
    Ok(convert_validated(athlete, intensity))
}

/// Conversion for an intensity that already passed [`validate_intensity`].
pub(crate) fn convert_validated(athlete: &ResolvedAthlete, intensity: &Intensity) -> OxygenUptake {
    let vo2max = athlete.vo2max_ml_per_kg_min;
    let from_reserve =
        |fraction: f64| RESTING_VO2_ML_PER_KG_MIN + fraction * (vo2max - RESTING_VO2_ML_PER_KG_MIN);
    let mut heart_rate_bpm = None;
    let (ml_per_kg_min, method, source) = match intensity {
        Intensity::FractionVo2max { fraction } => (
            fraction * vo2max,
            "fraction_of_vo2max",
            "given fraction x VO2max",
        ),
        Intensity::HeartRate { bpm } => {
            heart_rate_bpm = Some(*bpm);
            match athlete.hr_rest_bpm {
                Some(hr_rest) => (
                    from_reserve((bpm - hr_rest) / (athlete.hr_max_bpm - hr_rest)),
                    "heart_rate_reserve_swain_leutholtz_1997",
                    "Swain & Leutholtz (1997) Med Sci Sports Exerc 29:410: %HRR = %VO2R",
                ),
                None => {
                    let percent_hr_max = 100.0 * bpm / athlete.hr_max_bpm;
                    let percent_vo2max = (percent_hr_max - SWAIN_INTERCEPT) / SWAIN_SLOPE;
                    (
                        percent_vo2max / 100.0 * vo2max,
                        "percent_hr_max_swain_1994",
                        "Swain et al. (1994) Med Sci Sports Exerc 26:112 (regression from memory)",
                    )
                }
            }
        }
        Intensity::HeartRateReserve { fraction } => (
            from_reserve(*fraction),
            "heart_rate_reserve_swain_leutholtz_1997",
            "Swain & Leutholtz (1997) Med Sci Sports Exerc 29:410: %HRR = %VO2R",
        ),
        Intensity::SessionRpe { rating } => (
            from_reserve(interpolate_points(&RPE_TO_VO2_RESERVE, *rating)),
            "session_rpe_cr10_table",
            "from memory: ACSM classes (Garber et al. 2011) on CR10 anchors",
        ),
        Intensity::Mets { mets } => (
            mets * RESTING_VO2_ML_PER_KG_MIN,
            "mets",
            "1 MET = 3.5 mL/kg/min (Ainsworth et al. 2011)",
        ),
        Intensity::Activity { activity } => {
            // Validation guarantees the key exists; 1 MET keeps this total.
            let entry = activity_by_key(activity);
            let mets = entry.map_or(1.0, |entry| entry.mets);
            if entry.is_some_and(|e| e.group == ActivityGroup::TeamSport) {
                let share = mets * RESTING_VO2_ML_PER_KG_MIN / TEAM_SPORT_REFERENCE_VO2MAX;
                let above_rest = (share * vo2max - RESTING_VO2_ML_PER_KG_MIN).max(0.0);
                (
                    RESTING_VO2_ML_PER_KG_MIN + athlete.team_sport_work_factor * above_rest,
                    "compendium_2011_team_sport_relative",
                    "Compendium of Physical Activities, Ainsworth et al. (2011), read as a share of VO2max for a 50 mL/kg/min player (common practice); position share of the work (Di Salvo et al. 2007, from memory)",
                )
            } else {
                (
                    mets * RESTING_VO2_ML_PER_KG_MIN,
                    "compendium_2011_activity",
                    "Compendium of Physical Activities, Ainsworth et al. (2011) Med Sci Sports Exerc 43:1575",
                )
            }
        }
        Intensity::Running {
            speed_kmh,
            grade_percent,
        } => (
            acsm_running(*speed_kmh, *grade_percent),
            "acsm_running",
            "ACSM's Guidelines for Exercise Testing and Prescription, running equation",
        ),
        Intensity::Walking {
            speed_kmh,
            grade_percent,
        } => (
            acsm_walking(*speed_kmh, *grade_percent),
            "acsm_walking",
            "ACSM's Guidelines for Exercise Testing and Prescription, walking equation",
        ),
        Intensity::Cycling { watts } => (
            acsm_leg_cycling(*watts, athlete.body_mass_kg),
            "acsm_leg_cycling",
            "ACSM's Guidelines for Exercise Testing and Prescription, leg cycling equation",
        ),
    };
    // Never below resting: a heart rate under the resting rate, or RPE 0, is rest.
    let ml_per_kg_min = ml_per_kg_min.max(RESTING_VO2_ML_PER_KG_MIN);
    // A group prescription (an intensity for the squad) done by a position
    // that does part of the work; stated external work (speed, power) and
    // team-sport activities (scaled above) are the athlete's own.
    let own_work = matches!(
        intensity,
        Intensity::Running { .. } | Intensity::Walking { .. } | Intensity::Cycling { .. }
    ) || matches!(intensity, Intensity::Activity { activity }
        if activity_by_key(activity).is_some_and(|e| e.group == ActivityGroup::TeamSport));
    let ml_per_kg_min = if own_work {
        ml_per_kg_min
    } else {
        RESTING_VO2_ML_PER_KG_MIN
            + athlete.prescription_work_factor * (ml_per_kg_min - RESTING_VO2_ML_PER_KG_MIN)
    };
    OxygenUptake {
        ml_per_kg_min,
        l_per_min: ml_per_kg_min * athlete.body_mass_kg / 1000.0,
        fraction_vo2max: ml_per_kg_min / vo2max,
        heart_rate_bpm,
        method,
        source,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::physiology::athlete::resolve_athlete;
    use crate::engine::physiology::athlete::tests::trained_profile;

    fn athlete() -> ResolvedAthlete {
        resolve_athlete(&trained_profile()).unwrap()
    }

    fn vo2(athlete: &ResolvedAthlete, intensity: Intensity) -> OxygenUptake {
        oxygen_uptake(athlete, &intensity).unwrap()
    }

    #[test]
    fn acsm_running_worked_example() {
        // ACSM running equation, 10 km/h level = 36.83 mL/kg/min ([confirmed]).
        assert!((acsm_running(10.0, 0.0) - 36.83).abs() < 0.005);
        // Same equation with a 5% grade: 166.67 x (0.2 + 0.9 x 0.05) + 3.5 = 44.33.
        assert!((acsm_running(10.0, 5.0) - 44.333).abs() < 0.005);
    }

    #[test]
    fn acsm_walking_and_cycling_worked_examples() {
        // ACSM walking: 5 km/h level = 83.33 x 0.1 + 3.5 = 11.83 mL/kg/min.
        assert!((acsm_walking(5.0, 0.0) - 11.833).abs() < 0.005);
        // With 10% grade: + 1.8 x 83.33 x 0.10 = 15.0 more, 26.83.
        assert!((acsm_walking(5.0, 10.0) - 26.833).abs() < 0.005);
        // ACSM leg cycling: 10.8 x 200 W / 70 kg + 7 = 37.857 mL/kg/min.
        assert!((acsm_leg_cycling(200.0, 70.0) - 37.857).abs() < 0.005);
        let cycling = vo2(&athlete(), Intensity::Cycling { watts: 200.0 });
        assert!((cycling.l_per_min - 37.857 * 0.070).abs() < 0.001);
    }

    #[test]
    fn acsm_running_agrees_with_compendium_running() {
        // Compendium 2011 running METs (Ainsworth et al. 2011, [confirmed]) and the
        // ACSM equation describe the same work: within 10% at 8.0-12.1 km/h.
        for (speed, mets) in [(8.0, 8.3), (9.7, 9.8), (10.8, 10.5), (12.1, 11.8)] {
            let acsm_mets = acsm_running(speed, 0.0) / 3.5;
            assert!(
                (acsm_mets / mets - 1.0).abs() < 0.10,
                "{speed} km/h: {acsm_mets} vs {mets}"
            );
        }
    }

    #[test]
    fn swain_1994_means_are_reproduced_within_a_band() {
        // Swain et al. (1994) Med Sci Sports Exerc 26:112: mean %HRmax 63, 76,
        // 89, 92 at 40, 60, 80, 85% VO2max [confirmed]; band +/- 1.5 points.
        for (percent_vo2max, percent_hr_max) in
            [(40.0, 63.0), (60.0, 76.0), (80.0, 89.0), (85.0, 92.0)]
        {
            assert!((swain_percent_hr_max(percent_vo2max) - percent_hr_max).abs() < 1.5);
        }
        // And the conversion from heart rate (no resting HR) lands within
        // 3 points of VO2max at those published means.
        let mut athlete = athlete();
        athlete.hr_rest_bpm = None;
        for (percent_vo2max, percent_hr_max) in
            [(40.0, 63.0), (60.0, 76.0), (80.0, 89.0), (85.0, 92.0)]
        {
            let bpm = percent_hr_max / 100.0 * athlete.hr_max_bpm;
            let uptake = vo2(&athlete, Intensity::HeartRate { bpm });
            assert!(
                (uptake.fraction_vo2max * 100.0 - percent_vo2max).abs() < 3.0,
                "{percent_vo2max}"
            );
            assert_eq!(uptake.method, "percent_hr_max_swain_1994");
        }
    }

    #[test]
    fn heart_rate_reserve_equals_vo2_reserve() {
        // Swain & Leutholtz (1997) Med Sci Sports Exerc 29:410: %HRR = %VO2R.
        let athlete = athlete(); // HRmax 195, HRrest 50, VO2max 55
        let half = vo2(&athlete, Intensity::HeartRateReserve { fraction: 0.5 });
        assert!((half.ml_per_kg_min - (3.5 + 0.5 * (55.0 - 3.5))).abs() < 1e-9);
        let by_heart_rate = vo2(
            &athlete,
            Intensity::HeartRate {
                bpm: 50.0 + 0.5 * 145.0,
            },
        );
        assert!((by_heart_rate.ml_per_kg_min - half.ml_per_kg_min).abs() < 1e-9);
        assert_eq!(by_heart_rate.heart_rate_bpm, Some(122.5));
    }

    #[test]
    fn session_rpe_falls_in_acsm_classes() {
        // ACSM classes, Garber et al. (2011) Med Sci Sports Exerc 43:1334
        // (from memory): moderate 40-59% VO2R, vigorous 60-89%, near-maximal >= 90%.
        let athlete = athlete();
        let reserve = |rating: f64| {
            let uptake = vo2(&athlete, Intensity::SessionRpe { rating });
            (uptake.ml_per_kg_min - 3.5) / (55.0 - 3.5)
        };
        assert!((0.40..0.60).contains(&reserve(3.0)));
        for rating in [5.0, 6.0, 7.0, 8.0] {
            assert!((0.60..0.90).contains(&reserve(rating)), "{rating}");
        }
        assert!(reserve(9.5) >= 0.90);
        assert!(reserve(0.0).abs() < 1e-9);
    }

    #[test]
    fn mets_and_activities_follow_the_compendium() {
        // 1 MET = 3.5 mL/kg/min; football match 10.0 METs (Ainsworth et al. 2011).
        let athlete = athlete();
        let match_play = vo2(
            &athlete,
            Intensity::Activity {
                activity: "football_match".into(),
            },
        );
        let mets = vo2(&athlete, Intensity::Mets { mets: 10.0 });
        assert!((mets.ml_per_kg_min - 35.0).abs() < 1e-9);
        // Team-sport play is self-paced: a player of the 50 mL/kg/min
        // reference works at exactly the Compendium's 10 METs (35 mL/kg/min),
        // i.e. 70% of VO2max, the mean match intensity of elite football
        // (Bangsbo et al. 2006, J Sports Sci 24:665, from memory).
        let mut reference = athlete.clone();
        reference.vo2max_ml_per_kg_min = 50.0;
        let play = |a: &ResolvedAthlete| {
            vo2(
                a,
                Intensity::Activity {
                    activity: "football_match".into(),
                },
            )
        };
        assert!((play(&reference).ml_per_kg_min - 35.0).abs() < 1e-9);
        assert!((play(&reference).fraction_vo2max - 0.70).abs() < 1e-9);
        // A fitter player covers more: same share, more oxygen.
        assert!((match_play.fraction_vo2max - 0.70).abs() < 0.01);
        assert!(match_play.ml_per_kg_min > 35.0);
        // A goalkeeper (half the outfield work above rest, Di Salvo et al.
        // 2007, from memory): 3.5 + 0.5 x 31.5 = 19.25 mL/kg/min.
        let mut keeper = reference.clone();
        keeper.team_sport_work_factor = 0.5;
        assert!((play(&keeper).ml_per_kg_min - 19.25).abs() < 1e-9);
        // A group prescription scaled for the keeper; stated running speed is not.
        keeper.prescription_work_factor = 0.5;
        let rpe = vo2(&keeper, Intensity::Mets { mets: 10.0 });
        assert!((rpe.ml_per_kg_min - 19.25).abs() < 1e-9);
        let run = vo2(
            &keeper,
            Intensity::Running {
                speed_kmh: 10.0,
                grade_percent: 0.0,
            },
        );
        assert!((run.ml_per_kg_min - 36.83).abs() < 0.01);
    }

    #[test]
    fn never_below_resting() {
        // 1 MET = 3.5 mL/kg/min is the floor (Ainsworth et al. 2011).
        let athlete = athlete();
        let below_rest = vo2(&athlete, Intensity::HeartRate { bpm: 40.0 });
        assert_eq!(below_rest.ml_per_kg_min, 3.5);
        let rpe_zero = vo2(&athlete, Intensity::SessionRpe { rating: 0.0 });
        assert_eq!(rpe_zero.ml_per_kg_min, 3.5);
    }

    #[test]
    fn invalid_intensities_name_the_field() {
        let athlete = athlete();
        let cases = [
            (
                Intensity::FractionVo2max { fraction: 65.0 },
                "intensity.fraction",
            ),
            (Intensity::HeartRate { bpm: 300.0 }, "intensity.bpm"),
            (
                Intensity::HeartRateReserve { fraction: -0.1 },
                "intensity.fraction",
            ),
            (Intensity::SessionRpe { rating: 11.0 }, "intensity.rating"),
            (Intensity::Mets { mets: 0.5 }, "intensity.mets"),
            (
                Intensity::Activity {
                    activity: "quidditch".into(),
                },
                "intensity.activity",
            ),
            (
                Intensity::Running {
                    speed_kmh: 10.0,
                    grade_percent: -5.0,
                },
                "intensity.grade_percent",
            ),
            (
                Intensity::Walking {
                    speed_kmh: f64::NAN,
                    grade_percent: 0.0,
                },
                "intensity.speed_kmh",
            ),
            (Intensity::Cycling { watts: 5000.0 }, "intensity.watts"),
        ];
        for (intensity, field) in cases {
            let error = oxygen_uptake(&athlete, &intensity).unwrap_err();
            assert_eq!(error.issues.len(), 1);
            assert_eq!(error.issues[0].field, field);
        }
    }
}
