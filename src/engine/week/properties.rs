//! Property tests of the week planner: any valid week plans without panics,
//! with stores inside their capacity and totals that add up.

use proptest::prelude::*;

use super::tests::*;
use super::*;
use crate::engine::profile::{Sex, TrainingStatus};

// ---------------------------------------------------------------- properties

fn any_session(date_offset: i64) -> impl Strategy<Value = PlannedSession> {
    (
        6u32..=20,
        prop::collection::vec((5.0f64..=120.0, 0.3f64..=1.0), 1..4),
        any::<bool>(),
        prop::option::of(0.0f64..=60.0),
        any::<bool>(),
    )
        .prop_map(move |(hour, segments, key, extra_clock, train_low)| {
            let segments: Vec<Segment> = segments
                .into_iter()
                .map(|(minutes, fraction)| steady(minutes, fraction))
                .collect();
            let work: f64 = segments.iter().map(|s| s.minutes).sum();
            let mut planned = session("Generated", day(date_offset), hour, segments);
            planned.key_session = key;
            planned.train_low = train_low;
            planned.clock_minutes = extra_clock.map(|extra| work + extra);
            planned
        })
}

/// A random week: at most one session a day, or two well apart.
fn any_week() -> impl Strategy<Value = WeekInput> {
    (
        prop::collection::vec(prop::option::of(any_session(0)), 7),
        prop::collection::vec(prop::option::of(0.0f64..=12.0), 7),
        prop::option::of((0.0f64..=1.0, 0.0f64..=1.0)),
        45.0f64..=110.0,
        prop_oneof![
            Just(TrainingStatus::Recreational),
            Just(TrainingStatus::Trained),
            Just(TrainingStatus::HighlyTrained)
        ],
        prop_oneof![Just(Sex::Female), Just(Sex::Male)],
    )
        .prop_map(|(sessions, pins, start, mass, status, sex)| {
            let mut week = input(6, Vec::new());
            week.profile.body_mass_kg = mass;
            week.profile.training_status = status;
            week.profile.sex = sex;
            week.sessions = sessions
                .into_iter()
                .enumerate()
                .filter_map(|(k, s)| {
                    s.map(|mut s| {
                        s.date = day(k as i64);
                        s
                    })
                })
                .collect();
            week.pins = pins
                .into_iter()
                .enumerate()
                .filter_map(|(k, pin)| {
                    pin.map(|value| DatedPins {
                        date: day(k as i64),
                        carbohydrate_g_per_kg: Some(value),
                        protein_g_per_kg: None,
                        energy_kcal: None,
                    })
                })
                .collect();
            if let Some((muscle, liver)) = start {
                let capacity =
                    crate::engine::glycogen::stores::glycogen_capacity(sex, mass, status);
                week.start_glycogen = Some(GlycogenState {
                    muscle_g: muscle * capacity.muscle_g,
                    liver_g: liver * capacity.liver_g,
                });
            }
            week
        })
}

fn all_numbers_finite(value: &serde_json::Value) -> bool {
    match value {
        serde_json::Value::Number(number) => number.as_f64().is_some_and(f64::is_finite),
        serde_json::Value::Array(items) => items.iter().all(all_numbers_finite),
        serde_json::Value::Object(map) => map.values().all(all_numbers_finite),
        _ => true,
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]

    #[test]
    fn stores_stay_between_zero_and_capacity_with_no_nan(week in any_week()) {
        let plan = plan_week(&week).unwrap();
        let capacity = plan.days[0].glycogen_capacity;
        let inside = |muscle: f64, liver: f64| {
            muscle.is_finite() && liver.is_finite()
                && (0.0..=capacity.muscle_g + 1e-6).contains(&muscle)
                && (0.0..=capacity.liver_g + 1e-6).contains(&liver)
        };
        for day in &plan.days {
            prop_assert!(inside(day.glycogen_at_start.muscle_g, day.glycogen_at_start.liver_g));
            prop_assert!(inside(day.glycogen_at_end.muscle_g, day.glycogen_at_end.liver_g));
            for session in &day.sessions {
                prop_assert!(inside(session.glycogen_at_start.muscle_g, session.glycogen_at_start.liver_g));
                prop_assert!(inside(session.glycogen_at_end.muscle_g, session.glycogen_at_end.liver_g));
            }
        }
        for point in &plan.glycogen_series {
            // Rounded to 0.1 g.
            prop_assert!(
                inside((point.muscle_g - 0.05).max(0.0), (point.liver_g - 0.05).max(0.0)),
                "{point:?}"
            );
        }
        let json = serde_json::to_value(&plan).unwrap();
        prop_assert!(all_numbers_finite(&json));
    }

    #[test]
    fn more_carbohydrate_pinned_never_lowers_glycogen_at_the_end(
        week in any_week(), low in 2.0f64..=8.0, extra in 0.5f64..=4.0,
    ) {
        let mut lower = week.clone();
        pin_carbohydrate(&mut lower, low);
        let mut higher = week;
        pin_carbohydrate(&mut higher, low + extra);
        let lower = plan_week(&lower).unwrap();
        let higher = plan_week(&higher).unwrap();
        let (a, b) = (lower.days[6].glycogen_at_end, higher.days[6].glycogen_at_end);
        prop_assert!(b.muscle_g >= a.muscle_g - 1e-6, "{a:?} {b:?}");
        prop_assert!(b.muscle_g + b.liver_g >= a.muscle_g + a.liver_g - 1e-6, "{a:?} {b:?}");
    }
}
