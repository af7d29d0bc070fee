//! The glycogen balance's integration step against a fine reference: the
//! benchmark squad's two-week plans (the demo's player generator and senior
//! week, carry-over days included) at the default step and at one-minute
//! steps. The bounds are what a dietitian could never see: a hundredth-scale
//! change in g/kg (targets are prescribed to 0.1 g/kg at best), about 2 g
//! of some 400-600 g of muscle glycogen, under 1 g of liver glycogen, and no
//! load band moved (`common practice`; whole-body glycogen estimates carry
//! errors of several percent, so these are far inside them).

use super::*;

fn plans(step_minutes: f64) -> Vec<WeekPlan> {
    crate::bench::squad_inputs(12, 2)
        .iter()
        .map(|input| {
            let model = GlycogenModel {
                step_minutes,
                ..GlycogenModel::default()
            };
            plan_week_with_model(input, model).expect("valid synthetic input")
        })
        .collect()
}

#[test]
fn the_default_step_stays_within_what_a_dietitian_could_see() {
    let (default, fine) = (plans(GlycogenModel::default().step_minutes), plans(1.0));
    let mut worst = [0.0_f64; 4];
    for (a, b) in default.iter().zip(&fine) {
        for (x, y) in a.days.iter().zip(&b.days) {
            let diffs = [
                (x.plan.carbohydrate.g_per_kg - y.plan.carbohydrate.g_per_kg).abs(),
                (x.plan.energy.kcal - y.plan.energy.kcal).abs(),
                (x.glycogen_at_end.muscle_g - y.glycogen_at_end.muscle_g).abs(),
                (x.glycogen_at_end.liver_g - y.glycogen_at_end.liver_g).abs(),
            ];
            for (w, d) in worst.iter_mut().zip(diffs) {
                *w = w.max(d);
            }
            assert_eq!(x.plan.load.band, y.plan.load.band, "{}", x.date);
        }
    }
    let [carbohydrate, kcal, muscle, liver] = worst;
    assert!(
        carbohydrate <= 0.03,
        "carbohydrate moved {carbohydrate} g/kg"
    );
    assert!(kcal <= 1.0, "energy moved {kcal} kcal");
    assert!(muscle <= 2.5, "muscle glycogen moved {muscle} g");
    assert!(liver <= 1.0, "liver glycogen moved {liver} g");
}
