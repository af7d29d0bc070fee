//! Glycogen between sessions: how eaten carbohydrate refills muscle and liver
//! glycogen, and how the liver runs down at rest. Every figure is an estimate.
//!
//! The week planner ([`crate::engine::week`]) walks one athlete's days in short
//! intervals (at most [`GlycogenModel::step_minutes`], split at every meal and
//! session boundary) and calls [`advance`] for each. Sessions themselves are
//! simulated by [`crate::engine::physiology::session`]; their muscle and liver use is passed in
//! here as a constant draw spread over the session's clock time.
//!
//! ## The model, per interval
//!
//! 1. **Absorption.** Each eating occasion's carbohydrate enters a gut pool
//!    at the occasion's time. The pool empties first-order with a half-time of
//!    2 h, never faster than 90 g/h. The half-time is a calibration of ours
//!    (a large mixed meal takes several hours to empty from the stomach and be
//!    absorbed; `from memory`); 90 g/h is
//!    the top intake rate of the position stand for long sessions with multiple
//!    transportable carbohydrates (Thomas, Erdman & Burke
//!    2016), used as the ceiling of intestinal absorption. Grams of
//!    dietary carbohydrate count as grams of glycogen (starch and glycogen share
//!    the glucosyl unit).
//! 2. **Session draw.** During a session's clock time the muscle loses the
//!    session's `muscle_glycogen_used_g` and the liver its
//!    `blood_glucose_carbohydrate_g`, evenly per minute (the session model
//!    already charges blood glucose to the liver, so we do the same).
//!    Carbohydrate absorbed during the session first replaces that blood
//!    glucose, sparing the liver (exogenous glucose lowers hepatic glucose
//!    output during exercise, `from memory`).
//! 3. **Resting glucose use.** The brain and other tissues use glucose at
//!    about 2 mg per kg body mass per minute at rest (post-absorptive glucose
//!    production of about 10-12 umol/kg/min in healthy adults, `from memory`).
//!    Absorbed carbohydrate covers it first. Whatever is left uncovered comes
//!    40% from liver glycogen and 60% from gluconeogenesis: net hepatic
//!    glycogenolysis of about 4.3 umol/kg/min in the first hours of a fast
//!    (Rothman et al. 1991, Science 254:573, `from memory`). That is about
//!    3.4 g/h for 70 kg, some 40 g over a 12-hour night: an overnight fast
//!    draws the liver down substantially (`common
//!    practice`). Within a session the session's own use replaces the resting
//!    use for the athlete's minutes of work.
//! 4. **Resynthesis.** What is absorbed beyond that refills muscle and liver,
//!    each up to a ceiling, shared in proportion to the two ceilings:
//!    - muscle: 8 mmol glucosyl units per kg wet muscle per hour in the first
//!      2 h after a session, 5 later (the low end of the confirmed range). The range 5-10 mmol/kg/h with about
//!      1.0-1.2 g carbohydrate per kg per hour early after exercise is
//!      confirmed (Ivy 2004; Alghannam et al. 2018, Nutrients 10:253); that delaying intake by 2 h roughly halves the rate is
//!      Ivy et al. (1988, J Appl Physiol 64:1480), `from memory`. The ceiling
//!      applies to the whole-body muscle mass of [`crate::engine::glycogen::stores`] and is off
//!      while a session runs.
//!    - liver: 0.1 g per kg body mass per hour (7 g/h for 70 kg), a
//!      calibration of ours: the liver refills within several hours of
//!      carbohydrate meals (`common practice`).
//!    - both ceilings fall linearly to zero from 70% to 100% of normal stores
//!      (synthesis slows as stores fill; the knee is our calibration), so
//!      stores never exceed the normal capacity. Supercompensation by
//!      carbohydrate loading is not modelled.
//!    - anything absorbed beyond both ceilings is oxidised (at rest,
//!      carbohydrate oxidation follows carbohydrate intake; net conversion to fat
//!      is small, `from memory`).
//!
//!    - after a match the muscle ceiling is lower for 48 h, by half after a
//!      full 90 minutes and in proportion to fewer minutes played: the
//!      eccentric work of a match damages muscle and slows glycogen
//!      resynthesis, and thigh glycogen is still below normal 48 h after a
//!      match despite high carbohydrate intake (Krustrup et al. 2011,
//!      Gunnarsson et al. 2013, Med Sci Sports Exerc 45:1942; `from memory`;
//!      the size of the slowing is our calibration).
//!
//! With these numbers stores return to about 90% or more of normal within
//! 24 h of a depleting session on 8-10 g/kg/day and not on 3 g/kg/day, as in
//! Costill et al. (1981, Am J Clin Nutr 34:1831, `from memory`: about 525-650 g
//! carbohydrate a day restored muscle glycogen within 24 h after strenuous
//! running, about 190 g did not) and the position stand's "about 24 h with
//! adequate intake" (`common practice`). The tests in
//! [`crate::engine::week`] check both.
//!
//! Limits: whole-body stores only (the working muscles empty faster than the
//! whole-body figure suggests); no fed/fasted effect on the session's fuel
//! mix beyond the glycogen level; no loading above normal stores; individual
//! absorption and tolerance vary widely.

use serde::Serialize;
use utoipa::ToSchema;

use crate::engine::glycogen::stores::GRAMS_PER_MMOL_GLUCOSYL;

/// Parameters of the glycogen balance, with the values the planner uses.
/// Echoed in every week plan so a reader sees what the numbers rest on.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, ToSchema)]
pub struct GlycogenModel {
    /// Longest integration interval, minutes (30: against one-minute steps
    /// it moves daily carbohydrate by hundredths of a g/kg, see
    /// `week::step_tolerance_tests`).
    pub step_minutes: f64,
    /// Half-time of the gut pool, hours (our calibration).
    pub absorption_half_time_hours: f64,
    /// Fastest absorption, g/h (Thomas et al. 2016 top intake rate).
    pub max_absorption_g_per_hour: f64,
    /// Resting glucose use, mg per kg body mass per minute (from memory).
    pub resting_glucose_use_mg_per_kg_min: f64,
    /// Share of uncovered resting glucose use taken from liver glycogen
    /// (Rothman et al. 1991, from memory).
    pub liver_share_of_resting_glucose: f64,
    /// Muscle resynthesis ceiling early after a session, mmol/kg wet muscle/h.
    pub muscle_resynthesis_early_mmol_per_kg_hour: f64,
    /// Hours after a session's end during which the early ceiling applies.
    pub early_resynthesis_hours: f64,
    /// Muscle resynthesis ceiling at other times, mmol/kg wet muscle/h.
    pub muscle_resynthesis_later_mmol_per_kg_hour: f64,
    /// Liver resynthesis ceiling, g per kg body mass per hour (our calibration).
    pub liver_resynthesis_g_per_kg_hour: f64,
    /// Fraction of normal stores above which the ceilings fall linearly to
    /// zero at full stores (our calibration).
    pub saturation_knee_fraction: f64,
    /// Share by which a full match slows muscle resynthesis (scaled by the
    /// minutes played over 90), and for how long after it, hours.
    pub post_match_resynthesis_slowing: f64,
    pub post_match_slowing_hours: f64,
}

impl Default for GlycogenModel {
    fn default() -> Self {
        Self {
            step_minutes: 30.0,
            absorption_half_time_hours: 2.0,
            max_absorption_g_per_hour: 90.0,
            resting_glucose_use_mg_per_kg_min: 2.0,
            liver_share_of_resting_glucose: 0.4,
            muscle_resynthesis_early_mmol_per_kg_hour: 8.0,
            early_resynthesis_hours: 2.0,
            muscle_resynthesis_later_mmol_per_kg_hour: 5.0,
            liver_resynthesis_g_per_kg_hour: 0.1,
            saturation_knee_fraction: 0.7,
            post_match_resynthesis_slowing: 0.5,
            post_match_slowing_hours: 48.0,
        }
    }
}

/// Carbohydrate in the body that the balance tracks, grams (estimates).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CarbohydrateStores {
    pub muscle_g: f64,
    pub liver_g: f64,
    /// Eaten and not yet absorbed.
    pub gut_g: f64,
}

/// A session running during the interval, as a constant draw.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SessionDraw {
    /// Muscle glycogen used per hour of clock time, g/h.
    pub muscle_g_per_hour: f64,
    /// Blood glucose (charged to the liver) per hour of clock time, g/h.
    pub liver_g_per_hour: f64,
    /// The athlete's minutes of work over the session's clock minutes (0-1):
    /// the share of the interval whose resting glucose use is already in the
    /// session's numbers.
    pub working_share: f64,
}

/// What is true over one interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Interval {
    pub hours: f64,
    pub body_mass_kg: f64,
    pub muscle_mass_kg: f64,
    pub muscle_capacity_g: f64,
    pub liver_capacity_g: f64,
    /// True within the early window after a session's end.
    pub early_after_session: bool,
    /// The session running, if any.
    pub session: Option<SessionDraw>,
    /// Multiplier of the muscle resynthesis ceiling, 0-1: below 1 in the
    /// days after a match (muscle damage slows refilling).
    pub muscle_resynthesis_factor: f64,
}

/// Where the carbohydrate went during an interval or a day, grams.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, ToSchema)]
pub struct GlycogenFlows {
    /// Carbohydrate absorbed from the gut, g.
    pub absorbed_g: f64,
    /// Muscle glycogen refilled, g.
    pub muscle_refilled_g: f64,
    /// Liver glycogen refilled, g.
    pub liver_refilled_g: f64,
    /// Muscle glycogen used in sessions, g.
    pub muscle_used_in_sessions_g: f64,
    /// Liver glycogen used in sessions (blood glucose not covered by intake), g.
    pub liver_used_in_sessions_g: f64,
    /// Liver glycogen used at rest (resting glucose use not covered by intake), g.
    pub liver_used_at_rest_g: f64,
    /// Absorbed carbohydrate beyond both resynthesis ceilings, oxidised, g.
    pub oxidised_beyond_storage_g: f64,
}

impl GlycogenFlows {
    pub fn add(&mut self, other: &GlycogenFlows) {
        self.absorbed_g += other.absorbed_g;
        self.muscle_refilled_g += other.muscle_refilled_g;
        self.liver_refilled_g += other.liver_refilled_g;
        self.muscle_used_in_sessions_g += other.muscle_used_in_sessions_g;
        self.liver_used_in_sessions_g += other.liver_used_in_sessions_g;
        self.liver_used_at_rest_g += other.liver_used_at_rest_g;
        self.oxidised_beyond_storage_g += other.oxidised_beyond_storage_g;
    }
}

impl GlycogenModel {
    /// Resting glucose use, g per hour, for a body mass.
    pub fn resting_glucose_g_per_hour(&self, body_mass_kg: f64) -> f64 {
        self.resting_glucose_use_mg_per_kg_min * body_mass_kg * 60.0 / 1000.0
    }

    /// Muscle resynthesis ceiling with empty-enough stores, g/h.
    pub fn muscle_ceiling_g_per_hour(&self, muscle_mass_kg: f64, early: bool) -> f64 {
        let rate = if early {
            self.muscle_resynthesis_early_mmol_per_kg_hour
        } else {
            self.muscle_resynthesis_later_mmol_per_kg_hour
        };
        rate * muscle_mass_kg * GRAMS_PER_MMOL_GLUCOSYL
    }

    /// 1 below the knee, falling linearly to 0 at full stores.
    pub fn saturation(&self, fraction_of_capacity: f64) -> f64 {
        ((1.0 - fraction_of_capacity) / (1.0 - self.saturation_knee_fraction)).clamp(0.0, 1.0)
    }
}

/// Moves the stores forward by one interval. Stores stay within zero and
/// their capacity; the flows say where the carbohydrate went.
pub fn advance(
    model: &GlycogenModel,
    stores: CarbohydrateStores,
    interval: &Interval,
) -> (CarbohydrateStores, GlycogenFlows) {
    let hours = interval.hours.max(0.0);
    let mut flows = GlycogenFlows::default();
    let CarbohydrateStores {
        mut muscle_g,
        mut liver_g,
        mut gut_g,
    } = stores;

    // 1. Absorption.
    let first_order =
        gut_g * (1.0 - (-std::f64::consts::LN_2 * hours / model.absorption_half_time_hours).exp());
    let mut available = first_order
        .min(model.max_absorption_g_per_hour * hours)
        .max(0.0);
    gut_g -= available;
    flows.absorbed_g = available;

    // 2. Session draw; intake spares the liver first.
    let mut resting_share = 1.0;
    if let Some(draw) = interval.session {
        let muscle_use = (draw.muscle_g_per_hour * hours).min(muscle_g);
        muscle_g -= muscle_use;
        flows.muscle_used_in_sessions_g = muscle_use;
        let liver_need = draw.liver_g_per_hour * hours;
        let from_intake = available.min(liver_need);
        available -= from_intake;
        let liver_use = (liver_need - from_intake).min(liver_g);
        liver_g -= liver_use;
        flows.liver_used_in_sessions_g = liver_use;
        resting_share = 1.0 - draw.working_share.clamp(0.0, 1.0);
    }

    // 3. Resting glucose use.
    let resting = model.resting_glucose_g_per_hour(interval.body_mass_kg) * hours * resting_share;
    let covered = available.min(resting);
    available -= covered;
    let from_liver = ((resting - covered) * model.liver_share_of_resting_glucose).min(liver_g);
    liver_g -= from_liver;
    flows.liver_used_at_rest_g = from_liver;

    // 4. Resynthesis up to the ceilings; the rest is oxidised.
    let muscle_room = (interval.muscle_capacity_g - muscle_g).max(0.0);
    let liver_room = (interval.liver_capacity_g - liver_g).max(0.0);
    let muscle_ceiling = if interval.session.is_some() {
        0.0
    } else {
        (model.muscle_ceiling_g_per_hour(interval.muscle_mass_kg, interval.early_after_session)
            * interval.muscle_resynthesis_factor.clamp(0.0, 1.0)
            * model.saturation(muscle_g / interval.muscle_capacity_g)
            * hours)
            .min(muscle_room)
    };
    let liver_ceiling = (model.liver_resynthesis_g_per_kg_hour
        * interval.body_mass_kg
        * model.saturation(liver_g / interval.liver_capacity_g)
        * hours)
        .min(liver_room);
    let ceilings = muscle_ceiling + liver_ceiling;
    if ceilings > 0.0 {
        let stored = available.min(ceilings);
        let to_muscle = stored * muscle_ceiling / ceilings;
        let to_liver = stored - to_muscle;
        muscle_g = (muscle_g + to_muscle).min(interval.muscle_capacity_g);
        liver_g = (liver_g + to_liver).min(interval.liver_capacity_g);
        flows.muscle_refilled_g = to_muscle;
        flows.liver_refilled_g = to_liver;
        available -= stored;
    }
    flows.oxidised_beyond_storage_g = available;

    (
        CarbohydrateStores {
            muscle_g: muscle_g.max(0.0),
            liver_g: liver_g.max(0.0),
            gut_g: gut_g.max(0.0),
        },
        flows,
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rest(hours: f64, early: bool) -> Interval {
        Interval {
            muscle_resynthesis_factor: 1.0,
            hours,
            body_mass_kg: 70.0,
            muscle_mass_kg: 26.6,
            muscle_capacity_g: 517.1,
            liver_capacity_g: 110.0,
            early_after_session: early,
            session: None,
        }
    }

    fn run(stores: CarbohydrateStores, interval: Interval, steps: usize) -> CarbohydrateStores {
        let model = GlycogenModel::default();
        (0..steps).fold(stores, |s, _| advance(&model, s, &interval).0)
    }

    #[test]
    fn overnight_fast_draws_the_liver_down_at_the_published_rate() {
        // Rothman et al. (1991) Science 254:573 (from memory): net hepatic
        // glycogenolysis about 4.3 umol glucose/kg/min early in a fast, i.e.
        // 4.3 x 70 x 60 x 0.180 mg = 3.25 g/h for 70 kg, about 39 g in 12 h.
        // Ours: 40% of 2 mg/kg/min = 3.36 g/h. Band: 30-50 g over 12 h.
        let start = CarbohydrateStores {
            muscle_g: 517.1,
            liver_g: 110.0,
            gut_g: 0.0,
        };
        let end = run(start, rest(0.25, false), 48);
        let drop = start.liver_g - end.liver_g;
        assert!((30.0..=50.0).contains(&drop), "{drop}");
        // Muscle glycogen is not used at rest.
        assert_eq!(end.muscle_g, start.muscle_g);
    }

    #[test]
    fn early_ceiling_sits_in_the_published_range() {
        // Domain.md section 4 [confirmed range]: 5-10 mmol/kg wet muscle/h
        // early after exercise; later about half (Ivy et al. 1988, from memory).
        let model = GlycogenModel::default();
        assert!((5.0..=10.0).contains(&model.muscle_resynthesis_early_mmol_per_kg_hour));
        let ratio = model.muscle_resynthesis_later_mmol_per_kg_hour
            / model.muscle_resynthesis_early_mmol_per_kg_hour;
        assert!((0.4..=0.7).contains(&ratio));
        // 8 mmol/kg/h x 26.6 kg x 0.162 g/mmol = 34.5 g/h.
        assert!((model.muscle_ceiling_g_per_hour(26.6, true) - 34.47).abs() < 0.01);
        // With ample carbohydrate in the gut, the first two hours refill at the
        // early ceiling (stores below the knee).
        let start = CarbohydrateStores {
            muscle_g: 200.0,
            liver_g: 110.0,
            gut_g: 300.0,
        };
        let end = run(start, rest(0.25, true), 8);
        assert!(
            (end.muscle_g - 200.0 - 2.0 * 34.47).abs() < 0.5,
            "{}",
            end.muscle_g
        );
    }

    #[test]
    fn stores_stay_within_capacity_and_mass_is_conserved() {
        let model = GlycogenModel::default();
        let start = CarbohydrateStores {
            muscle_g: 300.0,
            liver_g: 60.0,
            gut_g: 800.0,
        };
        let mut stores = start;
        let mut total = GlycogenFlows::default();
        for step in 0..200 {
            let (next, flows) = advance(&model, stores, &rest(0.25, step < 8));
            stores = next;
            assert!(stores.muscle_g <= 517.1 + 1e-9 && stores.liver_g <= 110.0 + 1e-9);
            assert!(stores.muscle_g >= 0.0 && stores.liver_g >= 0.0 && stores.gut_g >= 0.0);
            if step < 32 {
                // First 8 h: absorption covers resting use, so every gram eaten
                // is absorbed, stored or oxidised (resting use or beyond storage).
                total.add(&flows);
            }
        }
        assert_eq!(total.liver_used_at_rest_g, 0.0);
        let resting = model.resting_glucose_g_per_hour(70.0) * 8.0;
        let stored = total.muscle_refilled_g + total.liver_refilled_g;
        assert!(
            (total.absorbed_g - stored - total.oxidised_beyond_storage_g - resting).abs() < 1e-6
        );
        // 200 steps later everything is absorbed and the liver has run down at rest.
        assert!(stores.gut_g < 1e-3 && stores.liver_g < 110.0);
    }

    #[test]
    fn a_session_draw_empties_no_store_below_zero_and_intake_spares_the_liver() {
        let model = GlycogenModel::default();
        let mut interval = rest(0.25, false);
        interval.session = Some(SessionDraw {
            muscle_g_per_hour: 400.0,
            liver_g_per_hour: 200.0,
            working_share: 1.0,
        });
        let empty = CarbohydrateStores {
            muscle_g: 20.0,
            liver_g: 10.0,
            gut_g: 0.0,
        };
        let (after, _) = advance(&model, empty, &interval);
        assert_eq!((after.muscle_g, after.liver_g), (0.0, 0.0));
        let fed = CarbohydrateStores {
            muscle_g: 300.0,
            liver_g: 80.0,
            gut_g: 0.0,
        };
        let (fasted, _) = advance(&model, fed, &interval);
        let (with_food, flows) =
            advance(&model, CarbohydrateStores { gut_g: 60.0, ..fed }, &interval);
        assert!(with_food.liver_g > fasted.liver_g);
        assert_eq!(flows.muscle_refilled_g, 0.0);
    }
}
