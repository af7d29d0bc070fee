//! The step loop against a fine reference.
//!
//! The session model is a small system of equations in time: the carbohydrate
//! share depends on the muscle glycogen left, which each minute's carbohydrate
//! draws down. [`run`] integrates it in steps of up to
//! [`STEP_MINUTES`] with the midpoint rule. Here the same equations are
//! integrated with plain Euler steps of 1/100 minute (the reference), and
//! every total the planner reads must agree within 0.2%, or 0.1 g where a
//! total is tiny.
//!
//! Why 0.2% is enough: indirect calorimetry itself, the method behind every
//! published fuel-use figure the model is calibrated to, carries errors of a
//! few percent (about 2-3% for energy expenditure on a well-kept metabolic
//! cart, `from memory`), and the model's own calibration values are coarser
//! still (`common practice`). A step error ten times smaller than the
//! measurement error cannot change a plan; it only changes the last digit.

use super::*;
use crate::engine::physiology::athlete::tests::trained_profile;
use crate::engine::physiology::fuel_mix::carbohydrate_share_from_baseline;
use crate::engine::profile::{Intensity, TrainingStatus};

/// Totals of the session model integrated with Euler steps of `step` minutes.
fn reference(
    athlete: &ResolvedAthlete,
    segments: &[Segment],
    start: GlycogenState,
    step: f64,
) -> [f64; 7] {
    let capacity = athlete.glycogen_capacity;
    let (mut muscle_g, mut liver_g) = (start.muscle_g, start.liver_g);
    let mut totals = [0.0; 5];
    let mut elapsed = 0.0_f64;
    for segment in segments {
        let uptake = convert_validated(athlete, &segment.intensity);
        let baseline = baseline_carbohydrate_share(uptake.fraction_vo2max, athlete.training_status);
        let blood_at_start = blood_glucose_share_at_start(uptake.fraction_vo2max);
        let end = elapsed + segment.minutes;
        while elapsed < end - 1e-9 {
            let h = step.min(end - elapsed);
            let share =
                carbohydrate_share_from_baseline(baseline, elapsed, muscle_g / capacity.muscle_g);
            let energy = uptake.l_per_min * h * kcal_per_litre_oxygen_at_share(share);
            let carbohydrate = energy * share / CARBOHYDRATE_KCAL_PER_G;
            let blood = blood_glucose_share_from_start(blood_at_start, elapsed);
            let from_muscle = (carbohydrate * (1.0 - blood)).min(muscle_g);
            muscle_g -= from_muscle;
            liver_g = (liver_g - (carbohydrate - from_muscle)).max(0.0);
            totals[0] += energy;
            totals[1] += carbohydrate;
            totals[2] += energy * (1.0 - share) / FAT_KCAL_PER_G;
            totals[3] += from_muscle;
            totals[4] += carbohydrate - from_muscle;
            elapsed += h;
        }
    }
    [
        totals[0], totals[1], totals[2], totals[3], totals[4], muscle_g, liver_g,
    ]
}

fn ours(fuel: &SessionFuel) -> [f64; 7] {
    [
        fuel.gross_energy_kcal,
        fuel.carbohydrate_g,
        fuel.fat_g,
        fuel.muscle_glycogen_used_g,
        fuel.blood_glucose_carbohydrate_g,
        fuel.end_glycogen.muscle_g,
        fuel.end_glycogen.liver_g,
    ]
}

const NAMES: [&str; 7] = [
    "energy kcal",
    "carbohydrate g",
    "fat g",
    "muscle glycogen used g",
    "blood glucose g",
    "muscle glycogen at end g",
    "liver glycogen at end g",
];

fn sessions() -> Vec<Vec<Segment>> {
    let steady = |minutes: f64, fraction: f64| Segment {
        label: None,
        minutes,
        intensity: Intensity::FractionVo2max { fraction },
    };
    let mut all = Vec::new();
    for minutes in [3.5, 12.0, 37.0, 61.0, 90.0, 150.0, 240.0, 420.0] {
        for fraction in [0.25, 0.45, 0.6, 0.72, 0.85, 1.0] {
            all.push(vec![steady(minutes, fraction)]);
        }
    }
    // Intermittent sessions with odd segment lengths: a pitch session, a
    // match with a half-time break, intervals.
    all.push(vec![
        steady(12.5, 0.45),
        steady(22.25, 0.72),
        steady(7.0, 0.9),
        steady(18.0, 0.6),
        steady(9.75, 0.35),
    ]);
    all.push(vec![
        steady(47.0, 0.7),
        steady(15.0, 0.2),
        steady(48.5, 0.72),
    ]);
    all.push(
        (0..24)
            .map(|k| {
                steady(
                    if k % 2 == 0 { 2.0 } else { 1.5 },
                    if k % 2 == 0 { 0.95 } else { 0.4 },
                )
            })
            .collect(),
    );
    all
}

#[test]
fn midpoint_steps_agree_with_a_fine_euler_reference() {
    let mut worst = (0.0_f64, String::new());
    let mut failures = Vec::new();
    for status in [
        TrainingStatus::Recreational,
        TrainingStatus::Trained,
        TrainingStatus::HighlyTrained,
    ] {
        let mut profile = trained_profile();
        profile.training_status = status;
        let athlete = resolve_athlete(&profile).unwrap();
        let capacity = athlete.glycogen_capacity;
        // Normal, low (clamped glycogen term, muscle running out) and loaded
        // stores; an almost empty liver.
        let starts = [
            capacity.full(),
            GlycogenState {
                muscle_g: 0.22 * capacity.muscle_g,
                liver_g: 0.3 * capacity.liver_g,
            },
            GlycogenState {
                muscle_g: 0.02 * capacity.muscle_g,
                liver_g: 5.0,
            },
            GlycogenState {
                muscle_g: 1.5 * capacity.muscle_g,
                liver_g: capacity.liver_g,
            },
        ];
        for segments in sessions() {
            for start in starts {
                let fuel = run(&athlete, &segments, Some(start), Detail::Totals);
                let fine = reference(&athlete, &segments, start, 0.01);
                for (k, (a, b)) in ours(&fuel).iter().zip(fine).enumerate() {
                    let error = (a - b).abs();
                    let allowed = (0.002 * b.abs()).max(0.1);
                    let minutes: f64 = segments.iter().map(|s| s.minutes).sum();
                    let what = format!(
                        "{} for {status:?}, {minutes} min, start {start:?}: {a} vs {b}",
                        NAMES[k]
                    );
                    if error > allowed {
                        failures.push(what.clone());
                    }
                    if error / allowed > worst.0 {
                        worst = (error / allowed, what);
                    }
                }
            }
        }
    }
    println!(
        "largest error, as a share of the allowance: {:.2} ({})",
        worst.0, worst.1
    );
    assert!(
        failures.is_empty(),
        "{} outside the allowance:\n{}",
        failures.len(),
        failures.join("\n")
    );
}

#[test]
fn midpoint_steps_are_closer_to_the_reference_than_one_minute_euler_steps() {
    // The coarser step is not a loss of accuracy: on a 90-minute session at
    // 70% VO2max it is nearer the fine reference than whole-minute Euler steps.
    let athlete = resolve_athlete(&trained_profile()).unwrap();
    let segments = [Segment {
        label: None,
        minutes: 90.0,
        intensity: Intensity::FractionVo2max { fraction: 0.7 },
    }];
    let start = athlete.glycogen_capacity.full();
    let fine = reference(&athlete, &segments, start, 0.01);
    let minute = reference(&athlete, &segments, start, 1.0);
    let fuel = ours(&run(&athlete, &segments, Some(start), Detail::Totals));
    for k in 0..5 {
        assert!(
            (fuel[k] - fine[k]).abs() <= (minute[k] - fine[k]).abs(),
            "{}: ours {} minute-steps {} fine {}",
            NAMES[k],
            fuel[k],
            minute[k],
            fine[k]
        );
    }
}
