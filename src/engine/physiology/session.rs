//! One athlete's session, simulated minute by minute: energy, carbohydrate and
//! fat, and the glycogen it draws.
//!
//! Guided tour:
//! - [`simulate_session`]: the entry point from a profile; [`simulate_session_for`]
//!   reuses an athlete resolved once (e.g. for a whole week).
//! - The step loop, in steps of at most one minute aligned to whole minutes of
//!   session time: VO2 of the segment ([`crate::engine::physiology::intensity`]) -> carbohydrate
//!   share ([`crate::engine::physiology::fuel_mix`], with the muscle glycogen left so far) -> NPRQ
//!   -> kcal per litre of O2 (Zuntz/Lusk, [`crate::engine::physiology::gas_exchange`]) -> energy,
//!   carbohydrate grams (4.18 kcal/g) and fat grams (9.46 kcal/g).
//!   Carbohydrate is split between muscle glycogen and blood glucose by
//!   intensity and time; blood glucose is charged to liver glycogen (ignoring
//!   gluconeogenesis, so the liver figure errs on the low side) until the liver
//!   estimate reaches zero.
//! - [`SessionFuel`]: the result, every number an estimate.
//! - Plausibility warnings (stable `code`s in [`WarningCode`]).
//!
//! Net energy is gross energy minus resting expenditure at 1 kcal/kg/h
//! (Ainsworth et al. 2011), never below zero.

use serde::Serialize;
use utoipa::ToSchema;

use crate::engine::glycogen::stores::{GlycogenCapacity, GlycogenState};
use crate::engine::physiology::athlete::{Estimate, ResolvedAthlete, resolve_athlete};
use crate::engine::physiology::fuel_mix::{
    blood_glucose_share_of_carbohydrate, carbohydrate_share,
};
use crate::engine::physiology::gas_exchange::{
    CARBOHYDRATE_KCAL_PER_G, FAT_KCAL_PER_G, kcal_per_litre_oxygen_at_share,
};
use crate::engine::physiology::intensity::{OxygenUptake, convert_validated, validate_intensity};
use crate::engine::profile::{AthleteProfile, Segment};
use crate::engine::{InvalidInput, Issues};

/// Longest session the engine accepts, minutes.
pub const MAX_SESSION_MINUTES: f64 = 600.0;
/// Most segments in one session.
pub const MAX_SEGMENTS: usize = 200;
/// Time-series spacing, minutes.
pub const SERIES_INTERVAL_MINUTES: f64 = 5.0;
/// Sustained-intensity check (`common practice`): around
/// 80% VO2max and above is beyond the lactate threshold for most athletes.
pub const SUSTAINED_FRACTION_VO2MAX: f64 = 0.80;
/// Continuous minutes at or above [`SUSTAINED_FRACTION_VO2MAX`] that trigger a warning.
pub const SUSTAINED_MINUTES: f64 = 40.0;
/// Alert level of ours (not a published cut-off): whole-body muscle glycogen
/// below this fraction of normal means the working muscles are close to empty.
pub const LOW_MUSCLE_GLYCOGEN_FRACTION: f64 = 0.25;
/// Alert level of ours for the liver, as a fraction of fed stores.
pub const LOW_LIVER_GLYCOGEN_FRACTION: f64 = 0.2;
/// Resting expenditure for net energy, kcal per kg per hour (1 MET).
pub const RESTING_KCAL_PER_KG_HOUR: f64 = 1.0;

/// Stable codes of plausibility warnings.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, ToSchema)]
#[serde(rename_all = "snake_case")]
#[schema(as = SessionWarningCode)]
pub enum WarningCode {
    /// A continuous block at or above 80% VO2max for 40 minutes or more.
    SustainedHighIntensity,
    /// A segment's heart rate is above the athlete's HRmax.
    HeartRateAboveMax,
    /// A segment asks for more than 100% of VO2max.
    IntensityAboveMax,
    /// Muscle glycogen falls below 25% of normal during the session.
    MuscleGlycogenLow,
    /// Liver glycogen falls below 20% of fed stores during the session.
    LiverGlycogenLow,
    /// The athlete is under 18: the equations were derived in adults.
    AthleteUnder18,
}

/// A plausibility warning or caution about a session result.
#[derive(Debug, Clone, PartialEq, Serialize, ToSchema)]
pub struct SessionWarning {
    pub code: WarningCode,
    pub message: String,
    /// Index of the segment concerned, if any.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub segment: Option<usize>,
}

/// One point of the fuel-mix time series (estimates).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, ToSchema)]
pub struct FuelPoint {
    /// Minutes since the start of the session.
    pub minute: f64,
    pub fraction_vo2max: f64,
    /// Carbohydrate share of energy at this minute, 0-1.
    pub carbohydrate_share: f64,
    /// Carbohydrate oxidised from the start up to this minute, g.
    pub cumulative_carbohydrate_g: f64,
}

/// Result for one segment (estimates).
#[derive(Debug, Clone, PartialEq, Serialize, ToSchema)]
pub struct SegmentFuel {
    pub index: usize,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub label: Option<String>,
    pub minutes: f64,
    pub vo2_ml_per_kg_min: f64,
    pub vo2_l_per_min: f64,
    pub fraction_vo2max: f64,
    pub energy_kcal: f64,
    pub carbohydrate_g: f64,
    pub fat_g: f64,
}

/// Energy and fuel use of one athlete's session. Every number is an estimate
/// from published equations and a calibrated model, not a measurement.
#[derive(Debug, Clone, PartialEq, Serialize, ToSchema)]
pub struct SessionFuel {
    pub total_minutes: f64,
    /// Gross energy expenditure, kcal (estimate).
    pub gross_energy_kcal: f64,
    /// Gross minus resting expenditure at 1 kcal/kg/h, kcal (estimate).
    pub net_energy_kcal: f64,
    /// Carbohydrate oxidised, g (estimate).
    pub carbohydrate_g: f64,
    /// Fat oxidised, g (estimate).
    pub fat_g: f64,
    /// Carbohydrate share of the session's energy, 0-1 (estimate).
    pub mean_carbohydrate_share: f64,
    /// Time-weighted mean intensity, fraction of VO2max (estimate).
    pub mean_fraction_vo2max: f64,
    /// Carbohydrate taken from muscle glycogen, g (estimate).
    pub muscle_glycogen_used_g: f64,
    /// Carbohydrate taken from blood glucose (liver glycogen and
    /// gluconeogenesis), g (estimate).
    pub blood_glucose_carbohydrate_g: f64,
    /// Muscle glycogen used as a fraction of the athlete's normal store.
    pub muscle_glycogen_used_fraction: f64,
    pub start_glycogen: GlycogenState,
    pub end_glycogen: GlycogenState,
    /// The athlete's normal (full) stores the relative glycogen level refers to.
    pub glycogen_capacity: GlycogenCapacity,
    /// VO2max used, mL/kg/min (measured or estimated; see `estimates`).
    pub vo2max_ml_per_kg_min: f64,
    /// HRmax used, beats per minute (measured or estimated; see `estimates`).
    pub hr_max_bpm: f64,
    /// Fuel mix every 5 minutes and at the end.
    pub time_series: Vec<FuelPoint>,
    pub segments: Vec<SegmentFuel>,
    /// What was estimated rather than measured, and how.
    pub estimates: Vec<Estimate>,
    pub warnings: Vec<SessionWarning>,
}

/// Simulates one session for an athlete profile. `start_glycogen` of `None`
/// means normal full stores for this athlete. Field paths in errors start with
/// `profile.`, `segments[i].` or `start_glycogen.`.
pub fn simulate_session(
    profile: &AthleteProfile,
    segments: &[Segment],
    start_glycogen: Option<GlycogenState>,
) -> Result<SessionFuel, InvalidInput> {
    let mut issues = Issues::default();
    validate_segments(segments, &mut issues);
    match resolve_athlete(profile) {
        Ok(athlete) => {
            if let Some(state) = &start_glycogen {
                validate_start_glycogen(&athlete, state, &mut issues);
            }
            issues.finish()?;
            Ok(run(&athlete, segments, start_glycogen))
        }
        Err(profile_issues) => {
            let mut all = profile_issues.issues;
            all.extend(issues.0);
            Err(InvalidInput { issues: all })
        }
    }
}

/// Simulates one session for an athlete resolved with
/// [`resolve_athlete`], so a week of sessions resolves the athlete once.
pub fn simulate_session_for(
    athlete: &ResolvedAthlete,
    segments: &[Segment],
    start_glycogen: Option<GlycogenState>,
) -> Result<SessionFuel, InvalidInput> {
    let mut issues = Issues::default();
    validate_segments(segments, &mut issues);
    if let Some(state) = &start_glycogen {
        validate_start_glycogen(athlete, state, &mut issues);
    }
    issues.finish()?;
    Ok(run(athlete, segments, start_glycogen))
}

/// Checks a session's segments; field paths start with `segments`.
pub(crate) fn validate_segments(segments: &[Segment], issues: &mut Issues) {
    if segments.is_empty() {
        issues.push("segments", "at least one segment is required");
    }
    if segments.len() > MAX_SEGMENTS {
        issues.push("segments", format!("at most {MAX_SEGMENTS} segments"));
    }
    let mut total = 0.0;
    for (index, segment) in segments.iter().enumerate() {
        let minutes = segment.minutes;
        if !minutes.is_finite() || minutes <= 0.0 || minutes > MAX_SESSION_MINUTES {
            issues.push(
                format!("segments[{index}].minutes"),
                format!("must be over 0 and at most {MAX_SESSION_MINUTES} minutes"),
            );
        } else {
            total += minutes;
        }
        validate_intensity(
            &segment.intensity,
            &format!("segments[{index}].intensity"),
            issues,
        );
    }
    if total > MAX_SESSION_MINUTES {
        issues.push(
            "segments",
            format!("total duration must be at most {MAX_SESSION_MINUTES} minutes"),
        );
    }
}

fn validate_start_glycogen(athlete: &ResolvedAthlete, state: &GlycogenState, issues: &mut Issues) {
    // Up to twice normal muscle stores covers carbohydrate loading (about
    // 180-200+ vs 120-150 mmol/kg trained).
    let muscle_max = (2.0 * athlete.glycogen_capacity.muscle_g).round();
    issues.range(
        "start_glycogen.muscle_g",
        state.muscle_g,
        0.0,
        muscle_max,
        "g for this athlete",
    );
    issues.range("start_glycogen.liver_g", state.liver_g, 0.0, 200.0, "g");
}

/// Running totals of the step loop.
#[derive(Default)]
struct Totals {
    energy_kcal: f64,
    carbohydrate_g: f64,
    fat_g: f64,
    muscle_g: f64,
    blood_glucose_g: f64,
}

fn run(
    athlete: &ResolvedAthlete,
    segments: &[Segment],
    start_glycogen: Option<GlycogenState>,
) -> SessionFuel {
    let capacity = athlete.glycogen_capacity;
    let start = start_glycogen.unwrap_or_else(|| capacity.full());
    let total_minutes: f64 = segments.iter().map(|segment| segment.minutes).sum();

    let mut estimates = athlete.estimates.clone();
    let mut warnings = Vec::new();
    let mut uptakes: Vec<OxygenUptake> = Vec::with_capacity(segments.len());
    for (index, segment) in segments.iter().enumerate() {
        let uptake = convert_validated(athlete, &segment.intensity);
        estimates.push(Estimate {
            quantity: "segment_vo2_ml_per_kg_min",
            segment: Some(index),
            value: uptake.ml_per_kg_min,
            unit: "mL/kg/min",
            method: uptake.method,
            source: uptake.source,
        });
        uptakes.push(uptake);
    }
    intensity_warnings(athlete, segments, &uptakes, &mut warnings);

    let mut time_series =
        Vec::with_capacity((total_minutes / SERIES_INTERVAL_MINUTES) as usize + 2);
    let mut segment_results = Vec::with_capacity(segments.len());
    let mut totals = Totals::default();
    let mut muscle_g = start.muscle_g;
    let mut liver_g = start.liver_g;
    let mut elapsed = 0.0_f64;
    let mut next_point = 0.0_f64;
    let mut weighted_fraction = 0.0;
    let mut muscle_low_warned = false;
    let mut liver_low_warned = false;
    // Tolerance for floating-point step boundaries, minutes.
    const EPSILON: f64 = 1e-9;

    for (index, (segment, uptake)) in segments.iter().zip(&uptakes).enumerate() {
        let before = (totals.energy_kcal, totals.carbohydrate_g, totals.fat_g);
        let segment_end = elapsed + segment.minutes;
        let fraction = uptake.fraction_vo2max;
        weighted_fraction += fraction * segment.minutes;
        while elapsed < segment_end - EPSILON {
            // Steps end at whole minutes of session time, so the 5-minute
            // series points fall on step boundaries.
            let next_minute = (elapsed + EPSILON).floor() + 1.0;
            let step = next_minute.min(segment_end) - elapsed;
            let relative_glycogen = muscle_g / capacity.muscle_g;
            let share = carbohydrate_share(
                fraction,
                elapsed,
                athlete.training_status,
                relative_glycogen,
            );
            if elapsed + EPSILON >= next_point {
                time_series.push(FuelPoint {
                    minute: next_point,
                    fraction_vo2max: fraction,
                    carbohydrate_share: share,
                    cumulative_carbohydrate_g: totals.carbohydrate_g,
                });
                next_point += SERIES_INTERVAL_MINUTES;
            }

            let energy = uptake.l_per_min * step * kcal_per_litre_oxygen_at_share(share);
            let carbohydrate = energy * share / CARBOHYDRATE_KCAL_PER_G;
            let fat = energy * (1.0 - share) / FAT_KCAL_PER_G;
            let from_blood = carbohydrate * blood_glucose_share_of_carbohydrate(fraction, elapsed);
            // Muscle cannot give what it no longer holds; blood glucose covers the rest.
            let from_muscle = (carbohydrate - from_blood).min(muscle_g);
            let from_blood = carbohydrate - from_muscle;
            muscle_g -= from_muscle;
            liver_g = (liver_g - from_blood).max(0.0);

            totals.energy_kcal += energy;
            totals.carbohydrate_g += carbohydrate;
            totals.fat_g += fat;
            totals.muscle_g += from_muscle;
            totals.blood_glucose_g += from_blood;
            elapsed += step;

            if !muscle_low_warned && muscle_g < LOW_MUSCLE_GLYCOGEN_FRACTION * capacity.muscle_g {
                muscle_low_warned = true;
                warnings.push(SessionWarning {
                    code: WarningCode::MuscleGlycogenLow,
                    message: format!(
                        "estimated muscle glycogen falls below {:.0}% of normal stores at minute {elapsed:.0}; \
                         performance is likely to suffer: plan carbohydrate before and during the session",
                        LOW_MUSCLE_GLYCOGEN_FRACTION * 100.0
                    ),
                    segment: Some(index),
                });
            }
            if !liver_low_warned && liver_g < LOW_LIVER_GLYCOGEN_FRACTION * capacity.liver_g {
                liver_low_warned = true;
                warnings.push(SessionWarning {
                    code: WarningCode::LiverGlycogenLow,
                    message: format!(
                        "estimated liver glycogen falls below {:.0}% of fed stores at minute {elapsed:.0}; \
                         blood glucose may fall without carbohydrate during the session",
                        LOW_LIVER_GLYCOGEN_FRACTION * 100.0
                    ),
                    segment: Some(index),
                });
            }
        }
        segment_results.push(SegmentFuel {
            index,
            label: segment.label.clone(),
            minutes: segment.minutes,
            vo2_ml_per_kg_min: uptake.ml_per_kg_min,
            vo2_l_per_min: uptake.l_per_min,
            fraction_vo2max: fraction,
            energy_kcal: totals.energy_kcal - before.0,
            carbohydrate_g: totals.carbohydrate_g - before.1,
            fat_g: totals.fat_g - before.2,
        });
    }

    // Final point at the end of the session, unless a 5-minute point is there.
    if time_series
        .last()
        .is_none_or(|point| point.minute < total_minutes - EPSILON)
    {
        let fraction = uptakes.last().map_or(0.0, |uptake| uptake.fraction_vo2max);
        time_series.push(FuelPoint {
            minute: total_minutes,
            fraction_vo2max: fraction,
            carbohydrate_share: carbohydrate_share(
                fraction,
                total_minutes,
                athlete.training_status,
                muscle_g / capacity.muscle_g,
            ),
            cumulative_carbohydrate_g: totals.carbohydrate_g,
        });
    }

    let resting_kcal = RESTING_KCAL_PER_KG_HOUR * athlete.body_mass_kg * total_minutes / 60.0;
    SessionFuel {
        total_minutes,
        gross_energy_kcal: totals.energy_kcal,
        net_energy_kcal: (totals.energy_kcal - resting_kcal).max(0.0),
        carbohydrate_g: totals.carbohydrate_g,
        fat_g: totals.fat_g,
        // Clamped: rounding can put an all-carbohydrate session a hair above 1.
        mean_carbohydrate_share: if totals.energy_kcal > 0.0 {
            (totals.carbohydrate_g * CARBOHYDRATE_KCAL_PER_G / totals.energy_kcal).min(1.0)
        } else {
            0.0
        },
        mean_fraction_vo2max: weighted_fraction / total_minutes,
        muscle_glycogen_used_g: totals.muscle_g,
        blood_glucose_carbohydrate_g: totals.blood_glucose_g,
        muscle_glycogen_used_fraction: totals.muscle_g / capacity.muscle_g,
        start_glycogen: start,
        end_glycogen: GlycogenState { muscle_g, liver_g },
        glycogen_capacity: capacity,
        vo2max_ml_per_kg_min: athlete.vo2max_ml_per_kg_min,
        hr_max_bpm: athlete.hr_max_bpm,
        time_series,
        segments: segment_results,
        estimates,
        warnings,
    }
}

/// Warnings that follow from the inputs alone, before the simulation.
fn intensity_warnings(
    athlete: &ResolvedAthlete,
    segments: &[Segment],
    uptakes: &[OxygenUptake],
    warnings: &mut Vec<SessionWarning>,
) {
    if athlete.age_years < 18.0 {
        warnings.push(SessionWarning {
            code: WarningCode::AthleteUnder18,
            message: "athlete under 18: these equations were derived in adults; treat the numbers as rough \
                      estimates and plan with a registered dietitian and a physician"
                .to_owned(),
            segment: None,
        });
    }
    let mut block_start = 0;
    let mut block_minutes = 0.0;
    let mut block_warned = false;
    for (index, (segment, uptake)) in segments.iter().zip(uptakes).enumerate() {
        if let Some(bpm) = uptake.heart_rate_bpm
            && bpm > athlete.hr_max_bpm
        {
            let basis = if athlete.hr_max_measured {
                "measured HRmax"
            } else {
                "HRmax estimated by Tanaka (2001)"
            };
            warnings.push(SessionWarning {
                    code: WarningCode::HeartRateAboveMax,
                    message: format!(
                        "average heart rate {bpm:.0} bpm is above the athlete's {basis} of {:.0} bpm; check the \
                         heart rate or update HRmax",
                        athlete.hr_max_bpm
                    ),
                    segment: Some(index),
                });
        }
        if uptake.fraction_vo2max > 1.0 {
            warnings.push(SessionWarning {
                code: WarningCode::IntensityAboveMax,
                message: format!(
                    "the segment asks for {:.0}% of the athlete's VO2max; an average above 100% cannot be \
                     sustained aerobically, so energy and fuel are uncertain",
                    uptake.fraction_vo2max * 100.0
                ),
                segment: Some(index),
            });
        }
        if uptake.fraction_vo2max >= SUSTAINED_FRACTION_VO2MAX {
            if block_minutes == 0.0 {
                block_start = index;
            }
            block_minutes += segment.minutes;
            if !block_warned && block_minutes >= SUSTAINED_MINUTES {
                block_warned = true;
                warnings.push(SessionWarning {
                    code: WarningCode::SustainedHighIntensity,
                    message: format!(
                        "a continuous block of at least {SUSTAINED_MINUTES:.0} minutes at or above {:.0}% VO2max \
                         starts here; most athletes cannot sustain that (above the lactate threshold)",
                        SUSTAINED_FRACTION_VO2MAX * 100.0
                    ),
                    segment: Some(block_start),
                });
            }
        } else {
            block_minutes = 0.0;
            block_warned = false;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::physiology::athlete::tests::trained_profile;
    use crate::engine::profile::{Intensity, Sex, TrainingStatus, Vo2maxSource};
    use proptest::prelude::*;

    fn segment(minutes: f64, intensity: Intensity) -> Segment {
        Segment {
            label: None,
            minutes,
            intensity,
        }
    }

    fn steady(minutes: f64, fraction: f64) -> Vec<Segment> {
        vec![segment(minutes, Intensity::FractionVo2max { fraction })]
    }

    fn share_at(result: &SessionFuel, minute: f64) -> f64 {
        result
            .time_series
            .iter()
            .find(|point| (point.minute - minute).abs() < 1e-9)
            .unwrap_or_else(|| panic!("no point at {minute}"))
            .carbohydrate_share
    }

    #[test]
    fn ten_mets_for_ninety_minutes_is_about_1050_kcal() {
        // Compendium (Ainsworth et al. 2011): 1 MET ~ 1 kcal/kg/h, so 70 kg x
        // 1.5 h x 10 METs = 1050 kcal gross ([confirmed]). The Zuntz/Lusk
        // energy per litre O2 (4.69-5.05 kcal) makes 1 MET 0.98-1.06 kcal/kg/h,
        // so allow 5%.
        let segments = [segment(90.0, Intensity::Mets { mets: 10.0 })];
        let result = simulate_session(&trained_profile(), &segments, None).unwrap();
        assert!(
            (result.gross_energy_kcal - 1050.0).abs() < 0.05 * 1050.0,
            "{}",
            result.gross_energy_kcal
        );
        // Net removes 1 kcal/kg/h: 70 x 1.5 = 105 kcal.
        assert!((result.gross_energy_kcal - result.net_energy_kcal - 105.0).abs() < 1e-6);
    }

    #[test]
    fn drift_at_fifty_percent() {
        // Common practice : at ~50% VO2max carbohydrate is
        // slightly above fat at the start, about equal near one hour, and fat
        // clearly dominates by two to three hours.
        let result = simulate_session(&trained_profile(), &steady(180.0, 0.5), None).unwrap();
        let start = share_at(&result, 0.0);
        assert!((0.50..=0.60).contains(&start), "start {start}");
        let one_hour = share_at(&result, 60.0);
        assert!((0.45..=0.52).contains(&one_hour), "60 min {one_hour}");
        assert!(
            share_at(&result, 120.0) <= 0.46,
            "120 min {}",
            share_at(&result, 120.0)
        );
        assert!(
            share_at(&result, 180.0) <= 0.43,
            "180 min {}",
            share_at(&result, 180.0)
        );
    }

    #[test]
    fn drift_at_sixty_five_percent_goes_the_same_way() {
        // Common practice : the same trend at any sustainable
        // intensity.
        let result = simulate_session(&trained_profile(), &steady(120.0, 0.65), None).unwrap();
        let shares: Vec<f64> = result
            .time_series
            .iter()
            .map(|point| point.carbohydrate_share)
            .collect();
        assert!(shares.windows(2).all(|pair| pair[1] <= pair[0]));
        assert!(shares[shares.len() - 1] < shares[0] - 0.05);
    }

    #[test]
    fn midfielder_match_is_plausible() {
        // A 75 kg trained midfielder (fictional), 90-minute match with
        // warm-up and half-time. Plausibility bands (common practice): about
        // 1000-1500 kcal, mostly carbohydrate, tens of percent of whole-body muscle
        // glycogen used; average intensity near 70% VO2max in match play
        // (Bangsbo, Mohr & Krustrup 2006, J Sports Sci 24:665, from memory).
        let mut profile = trained_profile();
        profile.body_mass_kg = 75.0;
        profile.vo2max = Some(Vo2maxSource::YoYoIr1 { distance_m: 2200.0 });
        profile.hr_max = None;
        let segments = vec![
            segment(20.0, Intensity::FractionVo2max { fraction: 0.5 }),
            segment(45.0, Intensity::FractionVo2max { fraction: 0.72 }),
            segment(
                15.0,
                Intensity::Activity {
                    activity: "rest_seated".into(),
                },
            ),
            segment(45.0, Intensity::FractionVo2max { fraction: 0.68 }),
        ];
        let result = simulate_session(&profile, &segments, None).unwrap();
        let match_only = simulate_session(
            &profile,
            &segments[1..2]
                .iter()
                .chain(&segments[3..])
                .cloned()
                .collect::<Vec<_>>(),
            None,
        )
        .unwrap();
        assert!(
            (1000.0..=1500.0).contains(&match_only.gross_energy_kcal),
            "{}",
            match_only.gross_energy_kcal
        );
        // Mostly carbohydrate (common practice): over half of the energy.
        assert!(
            (0.55..=0.85).contains(&match_only.mean_carbohydrate_share),
            "{}",
            match_only.mean_carbohydrate_share
        );
        assert!(
            (0.15..=0.60).contains(&result.muscle_glycogen_used_fraction),
            "{}",
            result.muscle_glycogen_used_fraction
        );
        assert!(result.end_glycogen.muscle_g < result.start_glycogen.muscle_g);
        assert!(result.warnings.is_empty(), "{:?}", result.warnings);
        assert_eq!(result.total_minutes, 125.0);
        assert_eq!(result.segments.len(), 4);
        let segment_energy: f64 = result.segments.iter().map(|s| s.energy_kcal).sum();
        assert!((segment_energy - result.gross_energy_kcal).abs() < 1e-6);
        // Estimated: HRmax (Tanaka), VO2max (Yo-Yo IR1), glycogen, every segment VO2.
        assert!(
            result
                .estimates
                .iter()
                .any(|e| e.method == "yo_yo_ir1_bangsbo_2008")
        );
        assert!(result.estimates.iter().any(|e| e.method == "tanaka_2001"));
    }

    #[test]
    fn match_activity_gives_the_compendium_energy() {
        // Football match 10.0 METs (Compendium 15605, Ainsworth et al. 2011):
        // 75 kg x 1.5 h x 10 = 1125 kcal, within 5% (kcal per L O2 varies),
        // for a player of the 50 mL/kg/min team-sport reference.
        let mut profile = trained_profile();
        profile.body_mass_kg = 75.0;
        profile.vo2max = Some(crate::engine::profile::Vo2maxSource::Measured {
            ml_per_kg_min: 50.0,
        });
        let segments = vec![segment(
            90.0,
            Intensity::Activity {
                activity: "football_match".into(),
            },
        )];
        let result = simulate_session(&profile, &segments, None).unwrap();
        assert!((result.gross_energy_kcal / 1125.0 - 1.0).abs() < 0.05);
    }

    #[test]
    fn time_series_every_five_minutes_and_at_the_end() {
        let segments = vec![
            segment(2.5, Intensity::FractionVo2max { fraction: 0.4 }),
            segment(10.25, Intensity::FractionVo2max { fraction: 0.7 }),
        ];
        let result = simulate_session(&trained_profile(), &segments, None).unwrap();
        let minutes: Vec<f64> = result
            .time_series
            .iter()
            .map(|point| point.minute)
            .collect();
        assert_eq!(minutes, [0.0, 5.0, 10.0, 12.75]);
        assert_eq!(result.time_series[0].fraction_vo2max, 0.4);
        assert_eq!(result.time_series[1].fraction_vo2max, 0.7);
        assert!(
            (result.time_series[3].cumulative_carbohydrate_g - result.carbohydrate_g).abs() < 1e-9
        );
        assert!((result.mean_fraction_vo2max - (2.5 * 0.4 + 10.25 * 0.7) / 12.75).abs() < 1e-9);
    }

    #[test]
    fn start_state_is_used_and_low_stores_burn_more_fat() {
        // Domain.md section 3: a session started with low stores burns relatively
        // more fat from its first minute.
        let athlete = resolve_athlete(&trained_profile()).unwrap();
        let full = simulate_session_for(&athlete, &steady(60.0, 0.6), None).unwrap();
        let low_start = GlycogenState {
            muscle_g: athlete.glycogen_capacity.muscle_g * 0.4,
            liver_g: 40.0,
        };
        let low = simulate_session_for(&athlete, &steady(60.0, 0.6), Some(low_start)).unwrap();
        assert_eq!(low.start_glycogen, low_start);
        assert!(low.time_series[0].carbohydrate_share < full.time_series[0].carbohydrate_share);
        assert!(low.carbohydrate_g < full.carbohydrate_g);
        // Mass balance: what left the stores is what was oxidised.
        let muscle_drop = low.start_glycogen.muscle_g - low.end_glycogen.muscle_g;
        assert!((muscle_drop - low.muscle_glycogen_used_g).abs() < 1e-6);
        assert!(
            (low.muscle_glycogen_used_g + low.blood_glucose_carbohydrate_g - low.carbohydrate_g)
                .abs()
                < 1e-6
        );
        // Chained sessions: the end state of one is the start of the next.
        let next =
            simulate_session_for(&athlete, &steady(60.0, 0.6), Some(full.end_glycogen)).unwrap();
        assert!(next.time_series[0].carbohydrate_share < full.time_series[0].carbohydrate_share);
    }

    #[test]
    fn warnings_for_implausible_plans() {
        let mut profile = trained_profile(); // HRmax 195 measured
        profile.age_years = 16.0;
        let segments = vec![
            segment(10.0, Intensity::FractionVo2max { fraction: 0.5 }),
            segment(25.0, Intensity::FractionVo2max { fraction: 0.85 }),
            segment(20.0, Intensity::HeartRate { bpm: 200.0 }),
            segment(5.0, Intensity::FractionVo2max { fraction: 1.1 }),
        ];
        let result = simulate_session(&profile, &segments, None).unwrap();
        let codes: Vec<(WarningCode, Option<usize>)> = result
            .warnings
            .iter()
            .map(|w| (w.code, w.segment))
            .collect();
        assert!(codes.contains(&(WarningCode::AthleteUnder18, None)));
        assert!(codes.contains(&(WarningCode::HeartRateAboveMax, Some(2))));
        assert!(codes.contains(&(WarningCode::IntensityAboveMax, Some(2))));
        assert!(codes.contains(&(WarningCode::IntensityAboveMax, Some(3))));
        assert!(codes.contains(&(WarningCode::SustainedHighIntensity, Some(1))));
        let json = serde_json::to_value(&result.warnings).unwrap();
        assert!(
            json.as_array()
                .unwrap()
                .iter()
                .any(|w| w["code"] == "sustained_high_intensity")
        );

        // 30 minutes at 85% is not flagged (below the 40-minute threshold).
        let short = simulate_session(&trained_profile(), &steady(30.0, 0.85), None).unwrap();
        assert!(short.warnings.is_empty());
    }

    #[test]
    fn long_hard_session_runs_glycogen_low() {
        let mut profile = trained_profile();
        profile.sex = Sex::Female;
        profile.training_status = TrainingStatus::Recreational;
        let start = GlycogenState {
            muscle_g: 150.0,
            liver_g: 60.0,
        };
        let result = simulate_session(&profile, &steady(240.0, 0.7), Some(start)).unwrap();
        let codes: Vec<WarningCode> = result.warnings.iter().map(|w| w.code).collect();
        assert!(codes.contains(&WarningCode::MuscleGlycogenLow));
        assert!(codes.contains(&WarningCode::LiverGlycogenLow));
        assert!(result.end_glycogen.muscle_g >= 0.0 && result.end_glycogen.liver_g >= 0.0);
    }

    #[test]
    fn invalid_sessions_name_every_field() {
        let mut profile = trained_profile();
        profile.body_mass_kg = 0.0;
        let segments = vec![
            segment(30.0, Intensity::FractionVo2max { fraction: 0.6 }),
            segment(-5.0, Intensity::HeartRate { bpm: 500.0 }),
        ];
        let error = simulate_session(&profile, &segments, None).unwrap_err();
        let fields: Vec<&str> = error.issues.iter().map(|i| i.field.as_str()).collect();
        assert_eq!(
            fields,
            [
                "profile.body_mass_kg",
                "segments[1].minutes",
                "segments[1].intensity.bpm"
            ]
        );

        let error = simulate_session(&trained_profile(), &[], None).unwrap_err();
        assert_eq!(error.issues[0].field, "segments");
        let error = simulate_session(
            &trained_profile(),
            &[steady(400.0, 0.5), steady(400.0, 0.5)].concat(),
            None,
        )
        .unwrap_err();
        assert_eq!(error.issues[0].field, "segments");
        let bad_start = GlycogenState {
            muscle_g: -1.0,
            liver_g: 1000.0,
        };
        let error =
            simulate_session(&trained_profile(), &steady(30.0, 0.5), Some(bad_start)).unwrap_err();
        let fields: Vec<&str> = error.issues.iter().map(|i| i.field.as_str()).collect();
        assert_eq!(
            fields,
            ["start_glycogen.muscle_g", "start_glycogen.liver_g"]
        );
    }

    #[test]
    fn result_serialises_with_snake_case_fields() {
        let result = simulate_session(&trained_profile(), &steady(20.0, 0.6), None).unwrap();
        let json = serde_json::to_value(&result).unwrap();
        for key in [
            "gross_energy_kcal",
            "net_energy_kcal",
            "carbohydrate_g",
            "fat_g",
            "time_series",
            "estimates",
            "warnings",
            "end_glycogen",
        ] {
            assert!(json.get(key).is_some(), "{key}");
        }
        assert_eq!(json["time_series"].as_array().unwrap().len(), 5);
    }

    fn any_intensity() -> impl Strategy<Value = Intensity> {
        prop_oneof![
            (0.2f64..=1.2).prop_map(|fraction| Intensity::FractionVo2max { fraction }),
            (30.0f64..=240.0).prop_map(|bpm| Intensity::HeartRate { bpm }),
            (0.0f64..=1.0).prop_map(|fraction| Intensity::HeartRateReserve { fraction }),
            (0.0f64..=10.0).prop_map(|rating| Intensity::SessionRpe { rating }),
            (1.0f64..=23.0).prop_map(|mets| Intensity::Mets { mets }),
            (0..crate::engine::physiology::catalogue::ACTIVITIES.len()).prop_map(|i| {
                Intensity::Activity {
                    activity: crate::engine::physiology::catalogue::ACTIVITIES[i]
                        .key
                        .to_owned(),
                }
            }),
            (4.0f64..=30.0, 0.0f64..=30.0).prop_map(|(speed_kmh, grade_percent)| {
                Intensity::Running {
                    speed_kmh,
                    grade_percent,
                }
            }),
            (1.0f64..=10.0, 0.0f64..=30.0).prop_map(|(speed_kmh, grade_percent)| {
                Intensity::Walking {
                    speed_kmh,
                    grade_percent,
                }
            }),
            (10.0f64..=1000.0).prop_map(|watts| Intensity::Cycling { watts }),
        ]
    }

    fn any_profile() -> impl Strategy<Value = AthleteProfile> {
        (
            prop_oneof![Just(Sex::Female), Just(Sex::Male)],
            10.0f64..=100.0,
            25.0f64..=250.0,
            prop_oneof![
                Just(TrainingStatus::Recreational),
                Just(TrainingStatus::Trained),
                Just(TrainingStatus::HighlyTrained)
            ],
            prop::option::of(15.0f64..=95.0),
            prop::option::of(100.0f64..=240.0),
            prop::option::of(30.0f64..=99.0),
        )
            .prop_map(
                |(sex, age_years, body_mass_kg, training_status, vo2max, hr_max, hr_rest)| {
                    let mut profile = trained_profile();
                    profile.sex = sex;
                    profile.age_years = age_years;
                    profile.body_mass_kg = body_mass_kg;
                    profile.training_status = training_status;
                    profile.vo2max =
                        vo2max.map(|ml_per_kg_min| Vo2maxSource::Measured { ml_per_kg_min });
                    profile.hr_max = hr_max;
                    profile.hr_rest = hr_rest;
                    profile
                },
            )
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(128))]

        #[test]
        fn no_nan_or_negative_output_for_valid_input(
            profile in any_profile(),
            segments in prop::collection::vec((0.1f64..=120.0, any_intensity()), 1..6),
            start_fraction in prop::option::of((0.0f64..=2.0, 0.0f64..=200.0)),
        ) {
            let segments: Vec<Segment> = segments.into_iter().map(|(minutes, intensity)| segment(minutes, intensity)).collect();
            let athlete = resolve_athlete(&profile).unwrap();
            let start = start_fraction.map(|(muscle, liver_g)| GlycogenState { muscle_g: muscle * athlete.glycogen_capacity.muscle_g * 0.999, liver_g });
            let result = simulate_session(&profile, &segments, start).unwrap();
            let json = serde_json::to_value(&result).unwrap();
            fn check(value: &serde_json::Value) -> bool {
                match value {
                    serde_json::Value::Number(number) => number.as_f64().is_some_and(|x| x.is_finite() && x >= 0.0),
                    serde_json::Value::Array(items) => items.iter().all(check),
                    serde_json::Value::Object(map) => map.values().all(check),
                    _ => true,
                }
            }
            // serde_json writes NaN and infinity as null, so also look for nulls.
            prop_assert!(check(&json), "{json}");
            prop_assert!(!json.to_string().contains("null"));
            prop_assert!((0.0..=1.0).contains(&result.mean_carbohydrate_share));
            prop_assert!(result.gross_energy_kcal > 0.0);
        }

        #[test]
        fn energy_rises_with_minutes(
            profile in any_profile(), intensity in any_intensity(), minutes in 1.0f64..300.0, extra in 0.5f64..300.0,
        ) {
            let shorter = simulate_session(&profile, &[segment(minutes, intensity.clone())], None).unwrap();
            let longer = simulate_session(&profile, &[segment(minutes + extra, intensity)], None).unwrap();
            prop_assert!(longer.gross_energy_kcal > shorter.gross_energy_kcal);
            prop_assert!(longer.net_energy_kcal >= shorter.net_energy_kcal);
        }

        #[test]
        fn energy_rises_with_intensity(
            profile in any_profile(), low in 0.2f64..1.15, step in 0.01f64..0.5, minutes in 1.0f64..300.0,
        ) {
            let high = (low + step).min(1.2);
            let easy = simulate_session(&profile, &steady(minutes, low), None).unwrap();
            let hard = simulate_session(&profile, &steady(minutes, high), None).unwrap();
            prop_assert!(hard.gross_energy_kcal >= easy.gross_energy_kcal);
        }

        #[test]
        fn share_never_rises_during_a_steady_session(
            profile in any_profile(), fraction in 0.2f64..=1.2, minutes in 1.0f64..600.0,
        ) {
            let result = simulate_session(&profile, &steady(minutes, fraction), None).unwrap();
            for pair in result.time_series.windows(2) {
                prop_assert!(pair[1].carbohydrate_share <= pair[0].carbohydrate_share + 1e-12);
            }
        }

        #[test]
        fn out_of_range_minutes_are_rejected_by_field(
            index in 0usize..4, minutes in prop_oneof![-1000.0f64..=0.0, 600.001f64..1e6],
        ) {
            let mut segments = [steady(10.0, 0.5), steady(10.0, 0.5), steady(10.0, 0.5), steady(10.0, 0.5)].concat();
            segments[index].minutes = minutes;
            let error = simulate_session(&trained_profile(), &segments, None).unwrap_err();
            let expected = format!("segments[{index}].minutes");
            prop_assert!(error.issues.iter().any(|issue| issue.field == expected));
        }

        #[test]
        fn out_of_range_body_mass_is_rejected_by_field(mass in prop_oneof![-100.0f64..25.0, 250.001f64..1e4]) {
            let mut profile = trained_profile();
            profile.body_mass_kg = mass;
            let error = simulate_session(&profile, &steady(10.0, 0.5), None).unwrap_err();
            prop_assert_eq!(error.issues[0].field.as_str(), "profile.body_mass_kg");
        }
    }
}
