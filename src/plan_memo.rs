//! Memo of week plans, at two levels, both bounded by bytes:
//!
//! - **Whole plans**, per athlete, keyed by the athlete's whole engine input
//!   ([`WeekInput`]): a change to one session, pin or body-mass reading
//!   changes the input of the athletes it reaches only, so the next plan
//!   reuses the others' plans as they are. A change that reaches no
//!   athlete's input (a session's notes, say) recomputes nothing. The key is
//!   a SHA-256 digest of the whole input ([`DayKeys::input_key`], over a
//!   prefix-free binary form of it). Plans are shared (`Arc`), never copied out.
//! - **Simulated days and session forecasts** ([`DayReuse`]): an athlete
//!   whose input changed is planned with
//!   [`crate::engine::week::plan_week_reusing`], which takes each day whose
//!   inputs and carried-in glycogen state are unchanged from here, so a
//!   session moved on Thursday recomputes the days from the first one that
//!   reads it (Tuesday, whose look-ahead sees Thursday) and reuses the days
//!   before. A team session reaches every athlete, and this is what keeps
//!   its cost to the days it reaches.
//!
//! Reused results are exactly what the engine would compute (it is
//! deterministic; a randomised test of edit sequences compares them with a
//! full recompute). Each whole plan is weighed by an estimate of its
//! serialised size (everything but the days and the glycogen series
//! exactly, then sampled days and points: writing the whole plan just to
//! weigh it cost about a tenth of the service's time under edits); each day
//! by an estimate from one measured day of its plan. The least recently used
//! entries go first.

use std::collections::HashMap;
use std::hash::Hash;
use std::sync::{Arc, Mutex};

use crate::engine::day::session_work::SessionWork;
use crate::engine::glycogen::balance::GlycogenModel;
use crate::engine::week::reuse::{DayKey, DayOutcome, DayReuse};
use crate::engine::week::{DayKeys, WeekInput, WeekPlan, plan_week, plan_week_reusing};
use crate::engine::{ByteCounter, InvalidInput};

/// Entries bounded by their total weight, least recently used out first.
/// Eviction drops the oldest tenth of the budget at once, so a full store
/// does not scan its entries on every insert.
struct Lru<K, V> {
    max_bytes: usize,
    entries: HashMap<K, (V, usize, u64)>,
    bytes: usize,
    clock: u64,
    hits: u64,
    misses: u64,
}

impl<K: Hash + Eq + Clone, V: Clone> Lru<K, V> {
    fn new(max_bytes: usize) -> Self {
        Self {
            max_bytes,
            entries: HashMap::new(),
            bytes: 0,
            clock: 0,
            hits: 0,
            misses: 0,
        }
    }

    fn get(&mut self, key: &K) -> Option<V> {
        self.clock += 1;
        let now = self.clock;
        let Some((value, _, used)) = self.entries.get_mut(key) else {
            self.misses += 1;
            return None;
        };
        *used = now;
        self.hits += 1;
        Some(value.clone())
    }

    /// Inserts and evicts down to 90% of the budget. The values put out
    /// are returned, so the caller drops them (freeing whole days and plans
    /// takes a while) after it releases the lock.
    #[must_use]
    fn insert(&mut self, key: K, value: V, bytes: usize) -> Vec<V> {
        let mut out = Vec::new();
        if bytes > self.max_bytes {
            out.push(value);
            return out;
        }
        self.clock += 1;
        if let Some((old_value, old, _)) = self.entries.insert(key, (value, bytes, self.clock)) {
            self.bytes -= old;
            out.push(old_value);
        }
        self.bytes += bytes;
        if self.bytes > self.max_bytes {
            let target = self.max_bytes - self.max_bytes / 10;
            let mut by_age: Vec<(u64, K)> = self
                .entries
                .iter()
                .map(|(key, (_, _, used))| (*used, key.clone()))
                .collect();
            by_age.sort_unstable_by_key(|(used, _)| *used);
            for (_, key) in by_age {
                if self.bytes <= target {
                    break;
                }
                if let Some((value, weight, _)) = self.entries.remove(&key) {
                    self.bytes -= weight;
                    out.push(value);
                }
            }
        }
        out
    }
}

pub struct PlanMemo {
    enabled: bool,
    plans: Mutex<Lru<DayKey, Arc<WeekPlan>>>,
    days: Mutex<Lru<DayKey, Arc<DayOutcome>>>,
    forecasts: Mutex<Lru<DayKey, SessionWork>>,
    /// Serialised size of a shown day, without and with explanation texts:
    /// (days weighed, running mean of the sampled ones).
    day_weight: Mutex<[(u64, usize); 2]>,
}

/// The serialised size of a plan, estimated: the plan without its days and
/// glycogen series exactly, each day as the mean of the first and last day
/// (or `day_mean`, a mean of sampled days like these), and each series
/// point as the first.
fn estimated_json_bytes(plan: &mut WeekPlan, day_mean: Option<usize>) -> Option<usize> {
    let days = std::mem::take(&mut plan.days);
    let series = std::mem::take(&mut plan.glycogen_series);
    let mut rest = ByteCounter(0);
    let rest_ok = serde_json::to_writer(&mut rest, &*plan).is_ok();
    plan.days = days;
    plan.glycogen_series = series;
    let mut ends = ByteCounter(0);
    match day_mean {
        Some(mean) => ends.0 = 2 * mean,
        None => {
            for day in [plan.days.first(), plan.days.last()].into_iter().flatten() {
                serde_json::to_writer(&mut ends, day).ok()?;
            }
        }
    }
    let mut point = ByteCounter(1);
    if let Some(first) = plan.glycogen_series.first() {
        serde_json::to_writer(&mut point, first).ok()?;
    }
    rest_ok.then(|| rest.0 + ends.0 * plan.days.len() / 2 + point.0 * plan.glycogen_series.len())
}

fn lock<T>(mutex: &Mutex<T>) -> std::sync::MutexGuard<'_, T> {
    mutex.lock().unwrap_or_else(|p| p.into_inner())
}

impl PlanMemo {
    /// A memo of at most `max_bytes` in all (half for whole plans, half for
    /// days and forecasts); 0 keeps nothing.
    pub fn new(max_bytes: usize) -> Self {
        let half = max_bytes / 2;
        Self {
            enabled: max_bytes > 0,
            plans: Mutex::new(Lru::new(half)),
            days: Mutex::new(Lru::new(half - half / 8)),
            forecasts: Mutex::new(Lru::new(half / 8)),
            day_weight: Mutex::new([(0, 0); 2]),
        }
    }

    /// The plan of `input`: the stored one when this exact input was planned
    /// before, else computed from the days that changed (and stored).
    pub fn plan(&self, input: &WeekInput) -> Result<Arc<WeekPlan>, InvalidInput> {
        if !self.enabled {
            return plan_week(input).map(Arc::new);
        }
        let keys = DayKeys::new(input, &GlycogenModel::default());
        let key = keys.input_key(input);
        if let Some(plan) = lock(&self.plans).get(&key) {
            return Ok(plan);
        }
        let mut plan = plan_week_reusing(input, keys, self)?;
        let day_mean = {
            let weights = lock(&self.day_weight);
            let (weighed, mean) = weights[usize::from(input.explain_days)];
            (weighed >= 32).then_some(mean)
        };
        let Some(bytes) = estimated_json_bytes(&mut plan, day_mean) else {
            return Ok(Arc::new(plan));
        };
        let plan = Arc::new(plan);
        // Evicted entries are freed after the lock is released.
        let _evicted = lock(&self.plans).insert(key, plan.clone(), bytes + 64);
        Ok(plan)
    }

    /// Bytes held (plans and days), plans reused and plans computed so far.
    pub fn stats(&self) -> (usize, u64, u64) {
        let plans = lock(&self.plans);
        let bytes = plans.bytes + lock(&self.days).bytes + lock(&self.forecasts).bytes;
        (bytes, plans.hits, plans.misses)
    }

    /// Days kept, their weight, days reused and days computed so far.
    pub fn day_stats(&self) -> (usize, usize, u64, u64) {
        let days = lock(&self.days);
        (days.entries.len(), days.bytes, days.hits, days.misses)
    }
}

impl DayReuse for PlanMemo {
    fn day(&self, key: &DayKey) -> Option<Arc<DayOutcome>> {
        lock(&self.days).get(key)
    }

    fn keep_day(&self, key: DayKey, outcome: Arc<DayOutcome>) {
        // Shown days are weighed by a running mean of sampled days' JSON
        // (one in 32): writing every day just to weigh it costs as much as
        // a good part of planning it.
        let day_bytes = match outcome.shown_day() {
            None => 0,
            Some(day) => {
                let mut weights = lock(&self.day_weight);
                let weight = &mut weights[usize::from(!day.plan.explanations.is_empty())];
                if weight.0.is_multiple_of(32) {
                    let mut counter = ByteCounter(0);
                    let _ = serde_json::to_writer(&mut counter, day);
                    let n = (weight.0 / 32 + 1).min(64);
                    weight.1 = (weight.1 * (n as usize - 1) + counter.0) / n as usize;
                }
                weight.0 += 1;
                weight.1
            }
        };
        let bytes = outcome.estimated_bytes(day_bytes) + 64;
        let _evicted = lock(&self.days).insert(key, outcome, bytes);
    }

    fn forecast(&self, key: &DayKey) -> Option<SessionWork> {
        lock(&self.forecasts).get(key)
    }

    fn keep_forecast(&self, key: DayKey, work: SessionWork) {
        let bytes = 256 + work.title.len();
        let _evicted = lock(&self.forecasts).insert(key, work, bytes);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::bench::varied_inputs;
    use chrono::TimeDelta;

    /// A small deterministic generator (xorshift), so a failure replays.
    struct Dice(u64);

    impl Dice {
        fn below(&mut self, n: usize) -> usize {
            self.0 ^= self.0 << 13;
            self.0 ^= self.0 >> 7;
            self.0 ^= self.0 << 17;
            (self.0 % n as u64) as usize
        }
    }

    fn json(plan: &WeekPlan) -> String {
        serde_json::to_string(plan).expect("json")
    }

    /// One random edit of the kind a planner makes: move a session, change
    /// a segment's minutes, pin or unpin a day, record a body mass, or touch
    /// nothing the engine reads.
    fn edit(inputs: &mut [WeekInput], dice: &mut Dice) {
        let which = dice.below(inputs.len());
        let input = &mut inputs[which];
        match dice.below(5) {
            0 => {
                // Every athlete does a team session: all inputs change.
                let k = dice.below(input.sessions.len());
                let shift = [-30i64, 30, 60][dice.below(3)];
                for other in inputs.iter_mut() {
                    if let Some(s) = other.sessions.get_mut(k) {
                        s.start_time += TimeDelta::minutes(shift);
                    }
                }
                // An overlap is possible; the plan then refuses, which the
                // comparison covers too.
            }
            1 => {
                let k = dice.below(input.sessions.len());
                let segment = &mut input.sessions[k].segments[0];
                segment.minutes = (segment.minutes + [-5.0, 5.0][dice.below(2)]).max(5.0);
            }
            2 => {
                let day = input.from + TimeDelta::days(dice.below(7) as i64);
                if let Some(at) = input.pins.iter().position(|p| p.date == day) {
                    input.pins.remove(at);
                } else {
                    input.pins.push(crate::engine::week::DatedPins {
                        date: day,
                        carbohydrate_g_per_kg: Some(3.0 + dice.below(6) as f64),
                        protein_g_per_kg: None,
                        energy_kcal: None,
                    });
                }
            }
            3 => {
                let day = input.from + TimeDelta::days(1 + dice.below(6) as i64);
                input.body_mass_by_date.retain(|e| e.date != day);
                input
                    .body_mass_by_date
                    .push(crate::engine::week::BodyMassEntry {
                        date: day,
                        body_mass_kg: input.profile.body_mass_kg - 0.5,
                    });
            }
            _ => {}
        }
    }

    #[test]
    fn incremental_plans_equal_a_full_recompute_over_random_edit_sequences() {
        for seed in [1u64, 7, 2027] {
            let mut dice = Dice(seed);
            let mut inputs = varied_inputs(8, 1);
            // Small enough that entries are evicted along the way.
            let memo = PlanMemo::new(3 * 1024 * 1024);
            for _ in 0..12 {
                edit(&mut inputs, &mut dice);
                for input in &inputs {
                    let full = plan_week(input);
                    let incremental = memo.plan(input);
                    match (full, incremental) {
                        (Ok(a), Ok(b)) => assert_eq!(json(&a), json(&b)),
                        (Err(a), Err(b)) => assert_eq!(a, b),
                        (a, b) => panic!("full {:?} vs incremental {:?}", a.is_ok(), b.is_ok()),
                    }
                }
            }
            let (bytes, hits, misses) = memo.stats();
            assert!(bytes <= 3 * 1024 * 1024);
            assert!(
                hits > 0 && misses > 0,
                "both paths ran: {hits} hits, {misses} misses"
            );
            let (_, _, days_reused, days_computed) = memo.day_stats();
            assert!(
                days_reused > 0 && days_computed > 0,
                "days were reused too: {days_reused} reused, {days_computed} computed"
            );
        }
    }

    #[test]
    fn a_session_moved_on_thursday_reuses_the_days_before_tuesday() {
        // One athlete, one week and its four carry-over days: 11 simulated days.
        let mut inputs = crate::bench::squad_inputs(1, 1);
        let memo = PlanMemo::new(64 * 1024 * 1024);
        memo.plan(&inputs[0]).expect("valid");
        let (_, _, hits, misses) = memo.day_stats();
        let carry = crate::planner::CARRY_OVER_DAYS;
        assert_eq!((hits, misses), (0, 7 + carry));
        let thursday = inputs[0].from + TimeDelta::days(3);
        let k = inputs[0]
            .sessions
            .iter()
            .position(|s| s.date == thursday)
            .expect("a Thursday session");
        inputs[0].sessions[k].start_time += TimeDelta::minutes(10);
        let incremental = memo.plan(&inputs[0]).expect("valid");
        assert_eq!(
            json(&incremental),
            json(&plan_week(&inputs[0]).expect("valid"))
        );
        let (_, _, hits, misses) = memo.day_stats();
        // The carry-over days and Monday read nothing of Thursday; Tuesday
        // looks two days ahead.
        assert!(hits > carry, "{hits} days reused, {misses} computed");
    }

    #[test]
    fn the_size_estimate_is_close_to_the_serialised_size() {
        // Measured 4-9 % above the real size on these inputs.
        for input in varied_inputs(8, 2) {
            let mut plan = plan_week(&input).expect("valid");
            let real = json(&plan).len() as f64;
            let estimate = estimated_json_bytes(&mut plan, None).expect("estimate") as f64;
            assert!(
                (estimate / real - 1.0).abs() < 0.15,
                "estimate {estimate} vs {real} bytes"
            );
            assert_eq!(json(&plan).len() as f64, real, "the plan is left as it was");
        }
    }
}
