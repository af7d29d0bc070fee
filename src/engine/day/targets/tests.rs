use super::*;
use crate::engine::profile::SessionKind;
use chrono::NaiveDate;

fn session(minutes: f64, fraction: f64, carbohydrate_g: f64) -> SessionWork {
    SessionWork {
        session_id: None,
        title: "pitch session".into(),
        kind: SessionKind::Training,
        start: NaiveDate::from_ymd_opt(2026, 3, 10)
            .unwrap()
            .and_hms_opt(10, 0, 0)
            .unwrap(),
        minutes,
        clock_minutes: None,
        mean_fraction_vo2max: fraction,
        gross_kcal: 10.0 * minutes,
        net_kcal: 9.0 * minutes,
        carbohydrate_g,
        key_session: false,
        train_low: false,
        event_preparation: Default::default(),
    }
}

fn upcoming<'a>(next: &'a [SessionWork], after: &'a [SessionWork]) -> Upcoming<'a> {
    Upcoming {
        next_day: next,
        day_after_next: after,
        loading_hours: 36.0,
        today_noon: NaiveDate::from_ymd_opt(2026, 3, 10)
            .unwrap()
            .and_hms_opt(12, 0, 0)
            .unwrap(),
        body_mass_kg: 70.0,
    }
}

fn target(today: &[SessionWork], next: &[SessionWork]) -> f64 {
    let load = classify_day(today, next, 70.0, 0.46, 0.0);
    daily_carbohydrate(today, &load, &upcoming(next, &[])).g_per_kg
}

#[test]
fn load_bands_match_the_position_statement() {
    // Thomas, Erdman & Burke (2016): light 3-5, moderate 5-7, high 6-10, very high 8-12 g/kg/d.
    assert_eq!(LoadBand::Light.range(), GramsPerKgRange::new(3.0, 5.0));
    assert_eq!(LoadBand::Moderate.range(), GramsPerKgRange::new(5.0, 7.0));
    assert_eq!(LoadBand::High.range(), GramsPerKgRange::new(6.0, 10.0));
    assert_eq!(LoadBand::VeryHigh.range(), GramsPerKgRange::new(8.0, 12.0));
    assert_eq!(LoadBand::of(3.4), LoadBand::Light);
    assert_eq!(LoadBand::of(5.6), LoadBand::Moderate);
    assert_eq!(LoadBand::of(7.5), LoadBand::High);
    assert_eq!(LoadBand::of(10.5), LoadBand::VeryHigh);
}

#[test]
fn the_work_curve_puts_canonical_days_in_their_bands() {
    // Thomas, Erdman & Burke (2016) bands; the work per day is a typical
    // 70 kg athlete's carbohydrate oxidation (about 1.5-2.5 g/min at
    // 60-75% VO2max: Romijn et al. 1993, from memory).
    let g =
        |minutes: f64, g_per_min: f64| target(&[session(minutes, 0.65, minutes * g_per_min)], &[]);
    // Rest day: the light band's low end.
    assert!((target(&[], &[]) - 3.0).abs() < 1e-9);
    // A low-intensity skill session: light.
    assert!(LoadBand::Light.range().contains(g(60.0, 0.6)));
    // About 1 h of moderate work: moderate, 5-7.
    assert!(
        LoadBand::Moderate.range().contains(g(60.0, 1.8)),
        "{}",
        g(60.0, 1.8)
    );
    // 1-3 h moderate to high: high, 6-10.
    for minutes in [90.0, 120.0, 180.0] {
        assert!(
            LoadBand::High.range().contains(g(minutes, 2.2)),
            "{minutes}: {}",
            g(minutes, 2.2)
        );
    }
    // Over 4-5 h: very high, 8-12.
    assert!(
        LoadBand::VeryHigh.range().contains(g(300.0, 2.2)),
        "{}",
        g(300.0, 2.2)
    );
}

#[test]
fn the_target_is_continuous_and_never_falls_with_more_work() {
    // Plausibility (common practice): no jump over 0.3 g/kg for 10% more
    // work anywhere from rest to 12 g/kg of demand, and never downwards.
    let mut demand = 0.05;
    while demand < 12.0 {
        let a = work_curve(demand);
        let b = work_curve(demand * 1.1);
        assert!(b >= a, "{demand}");
        assert!(b - a <= 0.3, "{demand}: {a} -> {b}");
        demand *= 1.05;
    }
    // One more minute of a 75-minute session moves the target by little.
    let at = |minutes: f64| target(&[session(minutes, 0.65, minutes * 2.0)], &[]);
    assert!(
        (at(76.0) - at(75.0)).abs() < 0.05,
        "{} {}",
        at(75.0),
        at(76.0)
    );
    // A slightly different intensity (a fitness-test difference) too.
    let a = target(&[session(75.0, 0.45, 110.0)], &[]);
    let b = target(&[session(75.0, 0.47, 118.0)], &[]);
    assert!((b - a).abs() < 0.2, "{a} {b}");
}

#[test]
fn match_day_and_the_day_before_stay_in_six_to_eight() {
    // 6-8 g/kg on match day and the day before (expert group statement on
    // nutrition in elite football, 2021, from memory).
    let mut matchday = session(95.0, 0.7, 210.0);
    matchday.kind = SessionKind::Match;
    let eve = target(
        &[session(45.0, 0.45, 30.0)],
        std::slice::from_ref(&matchday),
    );
    let day = target(std::slice::from_ref(&matchday), &[]);
    for value in [eve, day] {
        assert!(TEAM_SPORT_MATCH_RANGE.contains(value), "{value}");
    }
    // A 90-minute training day with the same work as the match is not above it.
    let training = target(&[session(90.0, 0.7, 200.0)], &[]);
    assert!(training <= day + 1e-9, "{training} vs {day}");
}

#[test]
fn glycogen_to_restore_raises_the_target_smoothly() {
    // Common practice: refill after a depleting day; the restore term is
    // continuous in the missing glycogen.
    let today = [session(40.0, 0.4, 20.0)];
    let at = |restore_g: f64| {
        let load = classify_day(&today, &[], 70.0, 0.46, restore_g);
        daily_carbohydrate(&today, &load, &upcoming(&[], &[])).g_per_kg
    };
    // 150 g for 70 kg is 2.1 g/kg of demand: about +2 g/kg of target.
    assert!(at(150.0) > at(0.0) + 1.0, "{} {}", at(0.0), at(150.0));
    // 10% more glycogen to restore: well under 0.3 g/kg more (common practice plausibility).
    assert!(at(110.0) - at(100.0) < 0.3);
}

#[test]
fn fat_stays_inside_twenty_to_thirty_five_percent() {
    // Thomas et al. (2016): fat 20-35% of energy (from memory).
    let base = MacroRequest {
        energy_kcal: 3100.0,
        carbohydrate_g: 240.0,
        carbohydrate_min_g: 210.0,
        carbohydrate_max_g: 400.0,
        protein_g: 128.0,
        protein_max_g: 160.0,
        carbohydrate_pinned: false,
        protein_pinned: false,
        energy_pinned: false,
        hold_energy: false,
    };
    // A light day: protein then carbohydrate fill energy, fat at 35%.
    let fit = fit_fat(&base);
    let share = fit.fat_g * 9.0 / fit.energy_kcal;
    assert!((share - 0.35).abs() < 1e-9, "{share}");
    assert!((fit.protein_g - 160.0).abs() < 1e-9);
    assert!(fit.carbohydrate_g > 240.0 && fit.carbohydrate_g <= 400.0);
    assert!((fit.energy_kcal - 3100.0).abs() < 1e-9);
    // A high day: energy rises to keep fat at 20% when it is not held.
    let high = MacroRequest {
        energy_kcal: 3500.0,
        carbohydrate_g: 700.0,
        carbohydrate_min_g: 600.0,
        carbohydrate_max_g: 800.0,
        protein_g: 120.0,
        ..base
    };
    let fit = fit_fat(&high);
    assert!((fit.fat_g * 9.0 / fit.energy_kcal - 0.20).abs() < 1e-9);
    assert!((fit.energy_kcal - 4100.0).abs() < 1e-6);
    // Held energy (a body-mass loss deficit): carbohydrate is trimmed first.
    let held = fit_fat(&MacroRequest {
        hold_energy: true,
        ..high
    });
    assert!((held.carbohydrate_g - 600.0).abs() < 1e-9);
    assert!(held.energy_kcal < 4100.0);
}
