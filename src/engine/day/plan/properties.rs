//! Property tests of the day planner (more work never lowers the work's
//! carbohydrate, pins come back as pinned, totals add up) and the shape of
//! its input: every offending field named, defaults, unknown fields refused.

use proptest::prelude::*;

use super::tests::*;
use super::*;
use crate::engine::day::session_work::{EventPreparation, SessionWork};
use crate::engine::day::settings::{DayPins, PlanSettings};
use crate::engine::profile::{GoalDirection, SessionKind};

fn session_strategy() -> impl Strategy<Value = (f64, f64)> {
    (10.0f64..240.0, 0.2f64..0.95)
}

proptest! {
    // "Fuel for the work required" (Thomas et al. 2016): more work never lowers the day's carbohydrate.
    #[test]
    fn more_work_never_lowers_carbohydrate(
        mass in 50.0f64..100.0,
        sessions in prop::collection::vec(session_strategy(), 0..3),
        grow in 0usize..3,
        extra_minutes in 0.0f64..120.0,
        extra_fraction in 0.0f64..0.3,
        add_session in any::<bool>(),
        tomorrow in 0u8..4,
    ) {
        let starts = [6, 11, 16];
        let build = |list: &[(f64, f64)]| {
            let mut input = day(mass, list.iter().enumerate()
                .map(|(i, &(min, f))| training(starts[i], min, f, mass)).collect());
            let mut next = work("tomorrow", SessionKind::Training, at(1, 15, 0), 95.0, 0.72, mass);
            match tomorrow {
                0 => {}
                1 => { next.kind = SessionKind::Match; }
                2 => { next.key_session = true; }
                _ => { next.event_preparation = EventPreparation::CarbohydrateLoading; next.minutes = 150.0; }
            }
            if tomorrow > 0 { input.next_day_sessions = vec![next]; }
            input
        };
        let work = |input: &DayInput| plan_day(input).unwrap().carbohydrate.from_work_g_per_kg;
        let before = work(&build(&sessions));
        // The planned value holds the work's carbohydrate at least (session
        // fuelling may add to it: hourly feeds between close sessions).
        prop_assert!(carbohydrate(&build(&sessions)) >= before - 1e-9);
        let mut more = sessions.clone();
        if let Some(s) = more.get_mut(grow) {
            s.0 = (s.0 + extra_minutes).min(240.0);
            s.1 = (s.1 + extra_fraction).min(0.95);
        }
        if add_session && more.len() < 3 {
            more.push((60.0, 0.6));
        }
        let after = work(&build(&more));
        prop_assert!(after >= before - 1e-9, "before {before}, after {after}");
    }

    // Dietitian pins are always returned exactly as pinned.
    #[test]
    fn pins_are_returned_as_pinned(
        mass in 45.0f64..120.0,
        carbohydrate_pin in 0.0f64..20.0,
        protein_pin in 0.5f64..4.0,
        energy_pin in 500.0f64..10_000.0,
        minutes in 20.0f64..240.0,
    ) {
        let mut input = day(mass, vec![training(10, minutes, 0.65, mass)]);
        input.pins = DayPins {
            carbohydrate_g_per_kg: Some(carbohydrate_pin),
            protein_g_per_kg: Some(protein_pin),
            energy_kcal: Some(energy_pin),
        };
        let plan = plan_day(&input).unwrap();
        prop_assert_eq!(plan.carbohydrate.g_per_kg, carbohydrate_pin);
        prop_assert_eq!(plan.protein.g_per_kg, protein_pin);
        prop_assert_eq!(plan.energy.kcal, energy_pin);
        prop_assert!(plan.carbohydrate.computed_g_per_kg.is_finite());
        assert_plan_consistent(&plan);
    }

    // Occasions add up to the day's targets and nothing is NaN, for any valid day.
    #[test]
    fn occasions_sum_to_targets_and_no_nan(
        mass in 40.0f64..100.0,
        sessions in prop::collection::vec((session_strategy(), any::<bool>(), any::<bool>()), 0..3),
        starts in prop::collection::vec(5u32..20, 3),
        goal in 0u8..3,
        fat_known in any::<bool>(),
        wake in 5u32..8,
    ) {
        let mut list: Vec<SessionWork> = Vec::new();
        let mut hours: Vec<u32> = starts.clone();
        hours.sort_unstable();
        for (i, ((minutes, fraction), train_low, key)) in sessions.iter().enumerate() {
            let mut s = training(hours[i], *minutes, *fraction, mass);
            s.train_low = *train_low;
            s.key_session = *key;
            list.push(s);
        }
        // Drop sessions that overlap the previous one (invalid input by design).
        let mut kept: Vec<SessionWork> = Vec::new();
        for s in list {
            if kept.last().is_none_or(|p: &SessionWork| s.start >= p.end()) {
                kept.push(s);
            }
        }
        let mut input = day(mass, kept);
        input.profile.goal = [GoalDirection::Maintain, GoalDirection::Reduce, GoalDirection::Gain][goal as usize];
        if !fat_known { input.profile.body_fat_percent = None; }
        input.settings.meal_times.wake = chrono::NaiveTime::from_hms_opt(wake, 0, 0).unwrap();
        let plan = plan_day(&input).unwrap();
        assert_plan_consistent(&plan);
        prop_assert!((1.2..=2.0).contains(&plan.protein.g_per_kg));
        prop_assert!(plan.fat.percent_of_energy >= 20.0 - 0.1);
    }
}

#[test]
fn schemas_build_for_the_api() {
    use utoipa::OpenApi;
    #[derive(OpenApi)]
    #[openapi(components(schemas(
        DayInput,
        DayPlan,
        crate::engine::hydration::SweatRateInput,
        crate::engine::hydration::SweatRate
    )))]
    struct Doc;
    let json = serde_json::to_value(Doc::openapi()).unwrap();
    let schemas = &json["components"]["schemas"];
    for name in ["DayInput", "DayPlan", "SweatRateInput", "SweatRate"] {
        assert!(schemas[name].is_object(), "{name} missing");
    }
    // Field doc comments reach the document.
    assert!(
        schemas["DayPlan"]["properties"]["cautions"]["description"]
            .as_str()
            .is_some_and(|d| d.contains("always present"))
    );
}

#[test]
pub(super) fn invalid_input_names_every_offending_field() {
    let m = 70.0;
    let mut input = day(
        m,
        vec![training(10, 90.0, 0.6, m), training(11, 30.0, 0.6, m)],
    );
    input.profile.body_mass_kg = f64::NAN;
    input.sessions[0].carbohydrate_g = -5.0;
    input.next_day_sessions = vec![training(10, 60.0, 0.6, m)]; // wrong date
    input.pins.carbohydrate_g_per_kg = Some(25.0);
    input.settings.resting_metabolic_rate = RestingMetabolicRateChoice::Cunningham;
    input.profile.body_fat_percent = None;
    let error = plan_day(&input).unwrap_err();
    let fields: Vec<&str> = error.issues.iter().map(|i| i.field.as_str()).collect();
    for expected in [
        "profile.body_mass_kg",
        "sessions[0].carbohydrate_g",
        "sessions[1].start",
        "next_day_sessions[0].start",
        "pins.carbohydrate_g_per_kg",
        "settings.resting_metabolic_rate",
    ] {
        assert!(
            fields.contains(&expected),
            "{expected} missing from {fields:?}"
        );
    }
}

#[test]
pub(super) fn input_deserialises_with_defaults_and_rejects_unknown_fields() {
    let json = serde_json::json!({
        "profile": {
            "sex": "female", "age_years": 23, "height_cm": 168, "body_mass_kg": 61,
            "training_status": "trained"
        },
        "date": "2026-03-14",
        "sessions": [{
            "title": "Saturday match", "kind": "match", "start": "2026-03-14T15:00:00",
            "minutes": 90, "mean_fraction_vo2max": 0.7, "gross_kcal": 900,
            "net_kcal": 810, "carbohydrate_g": 190
        }]
    });
    let input: DayInput = serde_json::from_value(json.clone()).unwrap();
    assert_eq!(input.settings, PlanSettings::default());
    let plan = plan_day(&input).unwrap();
    assert_eq!(plan.carbohydrate.rule, CarbohydrateRule::TeamSportMatchDay);
    serde_json::to_string(&plan).unwrap();
    let mut bad = json;
    bad["settings"] = serde_json::json!({ "activity": 1.5 });
    assert!(serde_json::from_value::<DayInput>(bad).is_err());
}
