use super::*;

#[test]
fn split_tenths_adds_up_exactly() {
    let parts = split_tenths(100.0, &[1.0, 1.0, 1.0]);
    assert_eq!(parts, vec![33.4, 33.3, 33.3]);
    let parts = split_tenths(12.3, &[0.0, 0.0]);
    assert!((parts.iter().sum::<f64>() - 12.3).abs() < 1e-9);
}

#[test]
fn default_meal_times_are_in_order() {
    let mut issues = Issues::default();
    MealTimes::default().validate("settings.meal_times", &mut issues);
    assert!(issues.0.is_empty());
    let times = MealTimes {
        lunch: hm(7, 0),
        ..MealTimes::default()
    };
    let mut issues = Issues::default();
    times.validate("settings.meal_times", &mut issues);
    assert_eq!(issues.0[0].field, "settings.meal_times.lunch");
}
