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
    assert!((result.time_series[3].cumulative_carbohydrate_g - result.carbohydrate_g).abs() < 1e-9);
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
        (low.muscle_glycogen_used_g + low.blood_glucose_carbohydrate_g - low.carbohydrate_g).abs()
            < 1e-6
    );
    // Chained sessions: the end state of one is the start of the next.
    let next = simulate_session_for(&athlete, &steady(60.0, 0.6), Some(full.end_glycogen)).unwrap();
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
