//! One athlete's session, simulated through time: energy, carbohydrate and
//! fat, and the glycogen it draws.
//!
//! Guided tour:
//! - [`simulate_session`]: the entry point from a profile; [`simulate_session_for`]
//!   reuses an athlete resolved once (e.g. for a whole week).
//! - The step loop, in steps of at most five minutes on the 5-minute grid of
//!   session time (midpoint rule; `step_accuracy` tests it against a fine
//!   reference): VO2 of the segment ([`crate::engine::physiology::intensity`]) -> carbohydrate
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
    baseline_carbohydrate_share, blood_glucose_share_at_start, blood_glucose_share_from_start,
    carbohydrate_share, carbohydrate_share_from_baseline,
};
use crate::engine::physiology::gas_exchange::{
    CARBOHYDRATE_KCAL_PER_G, FAT_KCAL_PER_G, kcal_per_litre_oxygen_at_share,
};
use crate::engine::physiology::intensity::{
    OxygenUptake, convert_validated, validate_intensity_at,
};
use crate::engine::profile::{AthleteProfile, Segment};
use crate::engine::{InvalidInput, Issues};

/// Longest session the engine accepts, minutes.
pub const MAX_SESSION_MINUTES: f64 = 600.0;
/// Most segments in one session.
pub const MAX_SEGMENTS: usize = 200;
/// Time-series spacing, minutes.
pub const SERIES_INTERVAL_MINUTES: f64 = 5.0;
/// Longest integration step, minutes: steps end on this grid of session
/// time (the series points) and at segment ends.
pub const STEP_MINUTES: f64 = 5.0;
/// Below this relative muscle glycogen the steps are one minute long.
pub const FINE_STEP_BELOW_RELATIVE_GLYCOGEN: f64 = 0.3;
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
            Ok(run(&athlete, segments, start_glycogen, Detail::Full))
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
    Ok(run(athlete, segments, start_glycogen, Detail::Full))
}

/// What a simulation records besides its totals.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Detail {
    /// Everything in [`SessionFuel`].
    Full,
    /// The totals and glycogen only: `time_series`, `segments`, `estimates`
    /// and `warnings` stay empty. Every number is computed exactly as in
    /// `Full`; the week planner uses it where it reads only the totals.
    Totals,
}

/// [`simulate_session_for`] recording only what `detail` asks for.
pub(crate) fn simulate_session_detail(
    athlete: &ResolvedAthlete,
    segments: &[Segment],
    start_glycogen: Option<GlycogenState>,
    detail: Detail,
) -> Result<SessionFuel, InvalidInput> {
    let mut issues = Issues::default();
    validate_segments(segments, &mut issues);
    if let Some(state) = &start_glycogen {
        validate_start_glycogen(athlete, state, &mut issues);
    }
    issues.finish()?;
    Ok(run(athlete, segments, start_glycogen, detail))
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
        validate_intensity_at(
            &segment.intensity,
            &|| format!("segments[{index}].intensity"),
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
    detail: Detail,
) -> SessionFuel {
    let full = detail == Detail::Full;
    let capacity = athlete.glycogen_capacity;
    let start = start_glycogen.unwrap_or_else(|| capacity.full());
    let total_minutes: f64 = segments.iter().map(|segment| segment.minutes).sum();

    let mut estimates = if full {
        athlete.estimates.clone()
    } else {
        Vec::new()
    };
    let mut warnings = Vec::new();
    let mut uptakes: Vec<OxygenUptake> = Vec::with_capacity(segments.len());
    for (index, segment) in segments.iter().enumerate() {
        let uptake = convert_validated(athlete, &segment.intensity);
        if !full {
            uptakes.push(uptake);
            continue;
        }
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
    if full {
        intensity_warnings(athlete, segments, &uptakes, &mut warnings);
    }

    let mut time_series = Vec::with_capacity(if full {
        (total_minutes / SERIES_INTERVAL_MINUTES) as usize + 2
    } else {
        0
    });
    let mut segment_results = Vec::with_capacity(if full { segments.len() } else { 0 });
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
        // Constant through the segment: looked up once.
        let baseline = baseline_carbohydrate_share(fraction, athlete.training_status);
        let blood_at_start = blood_glucose_share_at_start(fraction);
        weighted_fraction += fraction * segment.minutes;
        while elapsed < segment_end - EPSILON {
            // Steps end on the 5-minute grid of session time (where the
            // series points are) or at the segment's end.
            // Close to empty, where the glycogen term stops falling and the
            // muscle can run out, the grid is whole minutes.
            let relative = muscle_g / capacity.muscle_g;
            let grid = if relative < FINE_STEP_BELOW_RELATIVE_GLYCOGEN {
                1.0
            } else {
                STEP_MINUTES
            };
            let grid_end = ((elapsed + EPSILON) / grid).floor() * grid + grid;
            let step = grid_end.min(segment_end) - elapsed;
            let share_at_start = carbohydrate_share_from_baseline(baseline, elapsed, relative);
            if elapsed + EPSILON >= next_point {
                if full {
                    time_series.push(FuelPoint {
                        minute: next_point,
                        fraction_vo2max: fraction,
                        carbohydrate_share: share_at_start,
                        cumulative_carbohydrate_g: totals.carbohydrate_g,
                    });
                }
                next_point += SERIES_INTERVAL_MINUTES;
            }

            // Midpoint rule: the first half of the step at the starting
            // share gives the glycogen at mid-step, where the step's share
            // and blood-glucose split are evaluated.
            let half = step / 2.0;
            let mid_minute = elapsed + half;
            let first_half = draw(
                uptake.l_per_min * half,
                share_at_start,
                blood_glucose_share_from_start(blood_at_start, elapsed),
                muscle_g,
            );
            let share = carbohydrate_share_from_baseline(
                baseline,
                mid_minute,
                (muscle_g - first_half.from_muscle) / capacity.muscle_g,
            );
            let whole = draw(
                uptake.l_per_min * step,
                share,
                blood_glucose_share_from_start(blood_at_start, mid_minute),
                muscle_g,
            );
            let (muscle_before, liver_before) = (muscle_g, liver_g);
            muscle_g -= whole.from_muscle;
            liver_g = (liver_g - whole.from_blood).max(0.0);

            totals.energy_kcal += whole.energy;
            totals.carbohydrate_g += whole.carbohydrate;
            totals.fat_g += whole.fat;
            totals.muscle_g += whole.from_muscle;
            totals.blood_glucose_g += whole.from_blood;
            let step_start = elapsed;
            elapsed += step;

            let muscle_low = LOW_MUSCLE_GLYCOGEN_FRACTION * capacity.muscle_g;
            if full && !muscle_low_warned && muscle_g < muscle_low {
                muscle_low_warned = true;
                let minute = crossing_minute(step_start, step, muscle_before, muscle_g, muscle_low);
                warnings.push(SessionWarning {
                    code: WarningCode::MuscleGlycogenLow,
                    message: format!(
                        "estimated muscle glycogen falls below {:.0}% of normal stores at minute {minute:.0}; \
                         performance is likely to suffer: plan carbohydrate before and during the session",
                        LOW_MUSCLE_GLYCOGEN_FRACTION * 100.0
                    ),
                    segment: Some(index),
                });
            }
            let liver_low = LOW_LIVER_GLYCOGEN_FRACTION * capacity.liver_g;
            if full && !liver_low_warned && liver_g < liver_low {
                liver_low_warned = true;
                let minute = crossing_minute(step_start, step, liver_before, liver_g, liver_low);
                warnings.push(SessionWarning {
                    code: WarningCode::LiverGlycogenLow,
                    message: format!(
                        "estimated liver glycogen falls below {:.0}% of fed stores at minute {minute:.0}; \
                         blood glucose may fall without carbohydrate during the session",
                        LOW_LIVER_GLYCOGEN_FRACTION * 100.0
                    ),
                    segment: Some(index),
                });
            }
        }
        if !full {
            continue;
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
    if full
        && time_series
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

/// Energy and carbohydrate of `litres_oxygen` at a carbohydrate `share`,
/// with `blood_share` of the carbohydrate from blood glucose.
struct Draw {
    energy: f64,
    carbohydrate: f64,
    fat: f64,
    from_muscle: f64,
    from_blood: f64,
}

fn draw(litres_oxygen: f64, share: f64, blood_share: f64, muscle_g: f64) -> Draw {
    let energy = litres_oxygen * kcal_per_litre_oxygen_at_share(share);
    let carbohydrate = energy * share / CARBOHYDRATE_KCAL_PER_G;
    // Muscle cannot give what it no longer holds; blood glucose covers the rest.
    let from_muscle = (carbohydrate * (1.0 - blood_share)).min(muscle_g);
    Draw {
        energy,
        carbohydrate,
        fat: energy * (1.0 - share) / FAT_KCAL_PER_G,
        from_muscle,
        from_blood: carbohydrate - from_muscle,
    }
}

/// Minute of session time at which a store falling from `before` to `after`
/// over a step crosses `level` (linear within the step).
fn crossing_minute(step_start: f64, step: f64, before: f64, after: f64, level: f64) -> f64 {
    if before <= level || before <= after {
        return step_start;
    }
    step_start + step * ((before - level) / (before - after)).clamp(0.0, 1.0)
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
mod step_accuracy;
#[cfg(test)]
mod tests;
