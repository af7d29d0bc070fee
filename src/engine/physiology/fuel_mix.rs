//! The fuel-mix model: what share of the energy comes from carbohydrate, and
//! where that carbohydrate comes from.
//!
//! ## The model
//!
//! The carbohydrate share of energy expenditure (0-1) is
//!
//! ```text
//! share = min(1, baseline(intensity, training status) x glycogen(relative muscle glycogen) x time(elapsed minutes))
//! ```
//!
//! 1. **Baseline**: a monotone curve of intensity (fraction of VO2max) for each
//!    training status, interpolated linearly through the anchor points in
//!    [`baseline_anchors`]. It describes an athlete in the ordinary fed state at
//!    the start of a session with normal muscle glycogen. The anchors are fitted
//!    to these published figures (tests in this module and in `session`):
//!    - fat supplies the larger share at about 20-25% VO2max, carbohydrate about
//!      80% near 70% and almost all energy near 100% VO2max (textbook figures,
//!      `common practice`);
//!    - after training the crossover (carbohydrate = fat) lies between about 40%
//!      and 55% VO2max: fat predominates at or below ~45%, carbohydrate at ~75%
//!      (Brooks & Mercier 1994, J Appl Physiol 76:2253);
//!    - fat oxidation in g/min peaks at about 64 +/- 4% VO2max, inside 55-72%,
//!      and is negligible above ~89% (Achten, Gleeson & Jeukendrup 2002, Med Sci
//!      Sports Exerc 34:92), at about 0.52 +/- 0.15 g/min (Achten & Jeukendrup
//!      2003). The anchors rise slowly up to ~62% and steeply above it, which puts
//!      the fat peak there.
//!    - Training shifts the curve toward fat (Brooks & Mercier 1994): the
//!      recreational curve lies above the trained one, the highly trained curve
//!      below. Romijn et al. (1993, Am J Physiol 265:E380) measured highly
//!      trained cyclists after an overnight fast, which shifts the mix further
//!      toward fat; their shares are a floor for our fed curves, not a target.
//! 2. **Glycogen term** `(clamp(relative muscle glycogen, 0.2, 1.6))^0.6`, where
//!    relative muscle glycogen is the current whole-body store over the athlete's
//!    normal store (1 = normal, above 1 after carbohydrate loading). Low glycogen
//!    shifts the mix toward fat, loaded glycogen toward carbohydrate
//!    (common practice). It is the mechanism of the drift within a session, because each
//!    step's carbohydrate use draws the store down. The exponent 0.6 and the
//!    clamp are calibration values of ours (`common practice` figures below), not
//!    published constants.
//! 3. **Time term** `1 - 0.15 x r(t)` with `r(t) = x^2 / (1 + x^2)`, `x = t / 120 min`:
//!    a slow extra shift toward fat as fat mobilisation rises during prolonged
//!    exercise. It is small in the first hour (-3% of the share at 60 min),
//!    half done at two hours (-7.5%) and levels off toward -15%. The 0.15 and
//!    120 minutes are calibration values of ours.
//!
//! Calibration targets for the drift (`common practice`):
//! at about 50% VO2max carbohydrate is slightly above fat at the start, the two
//! are about equal near one hour, and fat clearly dominates by two to three
//! hours; the same direction holds at 65%. The session tests check this with a
//! trained 70 kg athlete.
//!
//! Resulting numbers (carbohydrate share of energy, estimates):
//!
//! | % VO2max, session start, normal glycogen | 25 | 45 | 65 | 85 | 100 |
//! |---|---|---|---|---|---|
//! | recreational | 0.44 | 0.55 | 0.76 | 0.94 | 0.99 |
//! | trained | 0.38 | 0.49 | 0.66 | 0.92 | 0.99 |
//! | highly trained | 0.34 | 0.45 | 0.56 | 0.89 | 0.98 |
//!
//! Drift at 50% VO2max for a trained 70 kg athlete (VO2max 55 mL/kg/min,
//! normal stores, no carbohydrate during the session): 0.52 at the start,
//! 0.48 at 60 minutes, 0.44 at 120 and 0.41 at 180.
//!
//! Limits: intermittent play is described by the mean intensity of each
//! segment, so the extra glycogen that sprints draw is not captured and
//! glycogen use in matches is probably underestimated. Fed or fasted state and
//! carbohydrate eaten during the session are not inputs yet.
//!
//! ## Where the carbohydrate comes from
//!
//! [`blood_glucose_share_of_carbohydrate`] splits carbohydrate oxidation between
//! muscle glycogen and blood glucose (liver glycogen, gluconeogenesis). At low
//! intensity most carbohydrate is blood glucose; muscle glycogen takes over as
//! intensity rises (Romijn et al. 1993, `from memory`: anchors 90% at 20%
//! VO2max, 85% at 25%, 45% at 45%, 22% at 65%, 17% at 85%, 12% at 100%). Over a
//! long session blood glucose supplies a growing part (//! `common practice`): the muscle part moves toward blood glucose by up to 50%,
//! along the same slow curve `r(t)` with `x = t / 180 min` (10% of the way at
//! 90 minutes, 25% at three hours, 32% at four; our calibration).

use crate::engine::physiology::intensity::interpolate_points;
use crate::engine::profile::TrainingStatus;

/// Anchor points (fraction of VO2max, carbohydrate share) of the baseline curve.
pub fn baseline_anchors(status: TrainingStatus) -> &'static [(f64, f64)] {
    match status {
        TrainingStatus::Recreational => &[
            (0.10, 0.40),
            (0.20, 0.42),
            (0.25, 0.44),
            (0.55, 0.60),
            (0.65, 0.76),
            (0.75, 0.87),
            (0.85, 0.94),
            (1.00, 0.99),
            (1.20, 1.00),
        ],
        TrainingStatus::Trained => &[
            (0.10, 0.35),
            (0.20, 0.36),
            (0.25, 0.38),
            (0.62, 0.58),
            (0.70, 0.78),
            (0.80, 0.88),
            (0.90, 0.95),
            (1.00, 0.99),
            (1.20, 1.00),
        ],
        TrainingStatus::HighlyTrained => &[
            (0.10, 0.30),
            (0.20, 0.31),
            (0.25, 0.34),
            (0.65, 0.56),
            (0.72, 0.74),
            (0.80, 0.84),
            (0.90, 0.93),
            (1.00, 0.98),
            (1.20, 1.00),
        ],
    }
}

/// Exponent of the glycogen term (calibration).
pub const GLYCOGEN_EXPONENT: f64 = 0.6;
/// Clamp of relative muscle glycogen inside the glycogen term.
pub const GLYCOGEN_RELATIVE_RANGE: (f64, f64) = (0.2, 1.6);
/// Largest fractional fall of the share from the time term (calibration).
pub const TIME_TERM_MAX_FALL: f64 = 0.15;
/// Minutes at which the time term has made half its fall (calibration).
pub const TIME_TERM_MINUTES: f64 = 120.0;

/// Blood-glucose share of carbohydrate oxidation by intensity (Romijn et al.
/// 1993, `from memory`).
const BLOOD_GLUCOSE_ANCHORS: [(f64, f64); 6] = [
    (0.20, 0.90),
    (0.25, 0.85),
    (0.45, 0.45),
    (0.65, 0.22),
    (0.85, 0.17),
    (1.00, 0.12),
];
/// How far the muscle part moves toward blood glucose in a very long session.
const BLOOD_GLUCOSE_MAX_RISE: f64 = 0.5;
/// Minutes at which that shift is half done.
const BLOOD_GLUCOSE_MINUTES: f64 = 180.0;

/// Baseline carbohydrate share at the start of a session with normal glycogen.
pub fn baseline_carbohydrate_share(fraction_vo2max: f64, status: TrainingStatus) -> f64 {
    interpolate_points(baseline_anchors(status), fraction_vo2max)
}

/// Glycogen term of the model (1 at normal stores): relative muscle glycogen,
/// clamped to [`GLYCOGEN_RELATIVE_RANGE`], to the power [`GLYCOGEN_EXPONENT`].
///
/// The session model evaluates it twice per integration step, so it reads a
/// table of the exact power at every 0.001 of relative glycogen and
/// interpolates linearly between neighbours: within 1e-6 of the exact power
/// everywhere in the range (a test checks), a general `powf` costing several
/// times as much.
pub fn glycogen_term(relative_muscle_glycogen: f64) -> f64 {
    let (low, _) = GLYCOGEN_RELATIVE_RANGE;
    let table = &*GLYCOGEN_TERM_TABLE;
    let x = clamp_relative(relative_muscle_glycogen);
    // Scaled before the offset, so whole thousandths (1.0 among them) land
    // exactly on a table point.
    let t = x * GLYCOGEN_TERM_STEPS_PER_UNIT - low * GLYCOGEN_TERM_STEPS_PER_UNIT;
    let i = (t as usize).min(table.len() - 2);
    let within = t - i as f64;
    table[i] + within * (table[i + 1] - table[i])
}

/// The exact glycogen term, which [`glycogen_term`] interpolates.
pub fn glycogen_term_exact(relative_muscle_glycogen: f64) -> f64 {
    clamp_relative(relative_muscle_glycogen).powf(GLYCOGEN_EXPONENT)
}

fn clamp_relative(relative_muscle_glycogen: f64) -> f64 {
    let (low, high) = GLYCOGEN_RELATIVE_RANGE;
    relative_muscle_glycogen.clamp(low, high)
}

/// Table points per unit of relative glycogen.
const GLYCOGEN_TERM_STEPS_PER_UNIT: f64 = 1000.0;

/// The exact power at `low + k / 1000` for every `k` up to the range's top.
static GLYCOGEN_TERM_TABLE: std::sync::LazyLock<Vec<f64>> = std::sync::LazyLock::new(|| {
    let (low, high) = GLYCOGEN_RELATIVE_RANGE;
    let steps = ((high - low) * GLYCOGEN_TERM_STEPS_PER_UNIT).round() as usize;
    (0..=steps)
        .map(|k| {
            let thousandths = (low * GLYCOGEN_TERM_STEPS_PER_UNIT).round() + k as f64;
            (thousandths / GLYCOGEN_TERM_STEPS_PER_UNIT).powf(GLYCOGEN_EXPONENT)
        })
        .collect()
});

/// Time term of the model (1 at the start, falling slowly).
pub fn time_term(elapsed_minutes: f64) -> f64 {
    1.0 - TIME_TERM_MAX_FALL * slow_rise(elapsed_minutes, TIME_TERM_MINUTES)
}

/// `x^2 / (1 + x^2)` with `x = minutes / half_minutes`: 0 at the start, little
/// in the first part of the session, half at `half_minutes`, then levelling off.
fn slow_rise(minutes: f64, half_minutes: f64) -> f64 {
    let x = (minutes.max(0.0) / half_minutes).powi(2);
    x / (1.0 + x)
}

/// Carbohydrate share of energy (0-1; an estimate) at an intensity, after
/// `elapsed_minutes` of the session, with muscle glycogen at
/// `relative_muscle_glycogen` of its normal level.
pub fn carbohydrate_share(
    fraction_vo2max: f64,
    elapsed_minutes: f64,
    status: TrainingStatus,
    relative_muscle_glycogen: f64,
) -> f64 {
    carbohydrate_share_from_baseline(
        baseline_carbohydrate_share(fraction_vo2max, status),
        elapsed_minutes,
        relative_muscle_glycogen,
    )
}

/// [`carbohydrate_share`] from the baseline share already looked up (it is
/// constant through a segment), with the very same arithmetic.
pub(crate) fn carbohydrate_share_from_baseline(
    baseline: f64,
    elapsed_minutes: f64,
    relative_muscle_glycogen: f64,
) -> f64 {
    let share = baseline * glycogen_term(relative_muscle_glycogen) * time_term(elapsed_minutes);
    share.clamp(0.0, 1.0)
}

/// Share (0-1) of carbohydrate oxidation supplied by blood glucose rather than
/// muscle glycogen, at an intensity after `elapsed_minutes`.
pub fn blood_glucose_share_of_carbohydrate(fraction_vo2max: f64, elapsed_minutes: f64) -> f64 {
    blood_glucose_share_from_start(
        blood_glucose_share_at_start(fraction_vo2max),
        elapsed_minutes,
    )
}

/// The blood-glucose share at the start of a session (constant through a segment).
pub(crate) fn blood_glucose_share_at_start(fraction_vo2max: f64) -> f64 {
    interpolate_points(&BLOOD_GLUCOSE_ANCHORS, fraction_vo2max)
}

/// [`blood_glucose_share_of_carbohydrate`] from the share at the start.
pub(crate) fn blood_glucose_share_from_start(at_start: f64, elapsed_minutes: f64) -> f64 {
    let rise = BLOOD_GLUCOSE_MAX_RISE * slow_rise(elapsed_minutes, BLOOD_GLUCOSE_MINUTES);
    at_start + (1.0 - at_start) * rise
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_glycogen_term_table_is_the_exact_power_within_a_millionth() {
        // From below the clamp to above it, every 1/7919 (no table alignment).
        let mut worst: f64 = 0.0;
        let mut previous = 0.0;
        for k in 0..=15_000 {
            let relative = 0.1 + k as f64 / 7919.0;
            let (fast, exact) = (glycogen_term(relative), glycogen_term_exact(relative));
            worst = worst.max((fast - exact).abs());
            assert!(fast >= previous, "monotone at {relative}");
            previous = fast;
        }
        assert!(worst < 1e-6, "largest difference {worst:e}");
        // The model's anchors hold exactly: 1 at normal stores, the clamp ends.
        assert_eq!(glycogen_term(1.0), 1.0);
        assert_eq!(glycogen_term(0.05), 0.2_f64.powf(GLYCOGEN_EXPONENT));
        assert!((glycogen_term(3.0) - 1.6_f64.powf(GLYCOGEN_EXPONENT)).abs() < 1e-15);
    }
    use crate::engine::physiology::gas_exchange::{FAT_KCAL_PER_G, kcal_per_litre_oxygen_at_share};
    use proptest::prelude::*;

    const STATUSES: [TrainingStatus; 3] = [
        TrainingStatus::Recreational,
        TrainingStatus::Trained,
        TrainingStatus::HighlyTrained,
    ];

    fn start_share(fraction: f64, status: TrainingStatus) -> f64 {
        carbohydrate_share(fraction, 0.0, status, 1.0)
    }

    /// Fat oxidation in g/min at the start of a session, for a 70 kg athlete
    /// with VO2max 55 mL/kg/min.
    fn fat_g_per_min(fraction: f64, status: TrainingStatus) -> f64 {
        let share = start_share(fraction, status);
        let vo2_l = fraction * 55.0 * 70.0 / 1000.0;
        vo2_l * kcal_per_litre_oxygen_at_share(share) * (1.0 - share) / FAT_KCAL_PER_G
    }

    #[test]
    fn fat_is_the_larger_share_at_low_intensity() {
        // Textbook figure (common practice): at ~20-25%
        // VO2max fat supplies the larger share, about 60%.
        for status in [TrainingStatus::Recreational, TrainingStatus::Trained] {
            for fraction in [0.20, 0.25] {
                let fat = 1.0 - start_share(fraction, status);
                assert!(
                    (0.52..=0.70).contains(&fat),
                    "{status:?} at {fraction}: fat {fat}"
                );
            }
        }
        assert!(start_share(0.25, TrainingStatus::HighlyTrained) < 0.5);
    }

    #[test]
    fn carbohydrate_about_eighty_percent_near_seventy() {
        // Textbook figure (common practice): about 80% carbohydrate at ~70% VO2max,
        // for fed, moderately trained people; band 0.72-0.88.
        for status in [TrainingStatus::Recreational, TrainingStatus::Trained] {
            let share = start_share(0.70, status);
            assert!((0.72..=0.88).contains(&share), "{status:?}: {share}");
        }
    }

    #[test]
    fn almost_all_carbohydrate_near_maximum() {
        // Textbook figure (common practice): almost all energy from carbohydrate
        // near 100% VO2max; fat negligible above ~89% (Achten et al. 2002).
        for status in STATUSES {
            assert!(start_share(1.0, status) >= 0.95, "{status:?}");
            assert!(start_share(0.9, status) >= 0.90, "{status:?}");
        }
    }

    #[test]
    fn crossover_between_forty_and_fifty_five_percent_when_trained() {
        // Brooks & Mercier (1994) J Appl Physiol 76:2253: after training the
        // crossover lies at ~40-55% VO2max; fat predominates at or below ~45%,
        // carbohydrate at ~75%.
        for status in [TrainingStatus::Trained, TrainingStatus::HighlyTrained] {
            let crossover = (200..=1000)
                .map(|i| i as f64 / 1000.0)
                .find(|&fraction| start_share(fraction, status) >= 0.5)
                .unwrap();
            assert!(
                (0.40..=0.55).contains(&crossover),
                "{status:?}: {crossover}"
            );
            assert!(start_share(0.45, status) <= 0.5);
            assert!(start_share(0.75, status) > 0.5);
        }
    }

    #[test]
    fn training_shifts_the_curve_toward_fat() {
        // Brooks & Mercier (1994): training moves the crossover to higher intensity.
        for step in 2..=12 {
            let fraction = step as f64 / 10.0;
            let recreational = start_share(fraction, TrainingStatus::Recreational);
            let trained = start_share(fraction, TrainingStatus::Trained);
            let highly = start_share(fraction, TrainingStatus::HighlyTrained);
            assert!(
                recreational >= trained && trained >= highly,
                "at {fraction}"
            );
        }
    }

    #[test]
    fn fat_oxidation_peaks_inside_the_fatmax_zone() {
        // Achten, Gleeson & Jeukendrup (2002) Med Sci Sports Exerc 34:92:
        // maximal fat oxidation at 64 +/- 4% VO2max, zone 55-72% [confirmed];
        // peak 0.52 +/- 0.15 g/min (Achten & Jeukendrup 2003) [confirmed].
        for status in [TrainingStatus::Trained, TrainingStatus::HighlyTrained] {
            let (peak_fraction, peak_g) = (20..=100)
                .map(|i| i as f64 / 100.0)
                .map(|fraction| (fraction, fat_g_per_min(fraction, status)))
                .fold(
                    (0.0, 0.0),
                    |best, next| if next.1 > best.1 { next } else { best },
                );
            assert!(
                (0.55..=0.72).contains(&peak_fraction),
                "{status:?}: {peak_fraction}"
            );
            assert!(
                (0.37..=0.67).contains(&peak_g),
                "{status:?}: {peak_g} g/min"
            );
        }
    }

    #[test]
    fn fed_curves_stay_above_romijn_fasted_shares() {
        // Romijn et al. (1993) Am J Physiol 265:E380, highly trained, fasted
        // (from memory): fat about 85-90% at 25%, about 50% at 65%, 25-35% at 85%.
        // Fed athletes burn relatively more carbohydrate, so those carbohydrate
        // shares (10-15%, ~50%, 65-75%) are floors for our curve.
        let status = TrainingStatus::HighlyTrained;
        assert!(start_share(0.25, status) >= 0.10);
        assert!(start_share(0.65, status) >= 0.45);
        assert!(start_share(0.85, status) >= 0.65);
    }

    #[test]
    fn low_glycogen_shifts_toward_fat_and_loading_toward_carbohydrate() {
        // Domain.md section 3 (common practice): glycogen-depleted shifts toward
        // fat, glycogen-loaded toward carbohydrate.
        let normal = carbohydrate_share(0.6, 0.0, TrainingStatus::Trained, 1.0);
        assert!(carbohydrate_share(0.6, 0.0, TrainingStatus::Trained, 0.5) < normal);
        assert!(carbohydrate_share(0.6, 0.0, TrainingStatus::Trained, 1.4) > normal);
    }

    #[test]
    fn blood_glucose_supplies_most_carbohydrate_at_low_intensity_only() {
        // Romijn et al. (1993), from memory: at 25% VO2max carbohydrate is mostly
        // plasma glucose; at 65-85% muscle glycogen supplies most of it.
        assert!(blood_glucose_share_of_carbohydrate(0.25, 0.0) > 0.7);
        assert!(blood_glucose_share_of_carbohydrate(0.65, 0.0) < 0.4);
        assert!(blood_glucose_share_of_carbohydrate(0.85, 0.0) < 0.3);
        // Growing part over a long session (common practice).
        assert!(
            blood_glucose_share_of_carbohydrate(0.5, 240.0)
                > blood_glucose_share_of_carbohydrate(0.5, 0.0)
        );
    }

    proptest! {
        #[test]
        fn share_rises_with_intensity_at_fixed_time(
            low in 0.0f64..1.3, step in 0.0f64..0.5, minutes in 0.0f64..600.0, relative in 0.0f64..2.0,
        ) {
            for status in STATUSES {
                let lower = carbohydrate_share(low, minutes, status, relative);
                let higher = carbohydrate_share(low + step, minutes, status, relative);
                prop_assert!(higher >= lower);
            }
        }

        #[test]
        fn share_never_rises_with_time_or_glycogen_loss(
            fraction in 0.0f64..1.3, minutes in 0.0f64..600.0, later in 0.0f64..600.0,
            relative in 0.0f64..2.0, used in 0.0f64..1.0,
        ) {
            for status in STATUSES {
                let now = carbohydrate_share(fraction, minutes, status, relative);
                prop_assert!(carbohydrate_share(fraction, minutes + later, status, relative - used) <= now);
                prop_assert!((0.0..=1.0).contains(&now));
                let glucose = blood_glucose_share_of_carbohydrate(fraction, minutes);
                prop_assert!((0.0..=1.0).contains(&glucose));
            }
        }
    }
}
