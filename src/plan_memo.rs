//! Per-athlete memo of week plans, keyed by the athlete's whole engine input
//! ([`WeekInput`]): a change to one session, pin or body-mass reading
//! changes the input of the athletes it reaches only, so the next plan
//! recomputes those athletes and reuses the others' plans. A change that
//! reaches no athlete's input (a session's notes, say) recomputes nothing.
//!
//! The key is the input's JSON; an entry is used only when the stored JSON
//! equals the new one byte for byte, so a reused plan is exactly what the
//! engine would compute (the engine is deterministic). Plans are shared
//! (`Arc`), never copied out. The memo is bounded by bytes: each entry
//! counts its input's JSON and an estimate of its plan's serialised size
//! (everything but the days and the glycogen series exactly, then sampled
//! days and points: writing the whole plan just to weigh it cost about a
//! tenth of the service's time under edits). The least recently used
//! entries go first.

use std::collections::HashMap;
use std::hash::{Hash, Hasher};
use std::sync::{Arc, Mutex};

use crate::engine::InvalidInput;
use crate::engine::week::{WeekInput, WeekPlan, plan_week};

pub struct PlanMemo {
    max_bytes: usize,
    inner: Mutex<Inner>,
}

#[derive(Default)]
struct Inner {
    entries: HashMap<u64, Entry>,
    bytes: usize,
    clock: u64,
    hits: u64,
    misses: u64,
}

struct Entry {
    input: Vec<u8>,
    plan: Arc<WeekPlan>,
    bytes: usize,
    used: u64,
}

/// Counts bytes without storing them.
struct Counter(usize);

impl std::io::Write for Counter {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        self.0 += buf.len();
        Ok(buf.len())
    }
    fn flush(&mut self) -> std::io::Result<()> {
        Ok(())
    }
}

/// The serialised size of a plan, estimated: the plan without its days and
/// glycogen series exactly, each day as the mean of the first and last day,
/// and each series point as the first.
fn estimated_json_bytes(plan: &mut WeekPlan) -> Option<usize> {
    let days = std::mem::take(&mut plan.days);
    let series = std::mem::take(&mut plan.glycogen_series);
    let mut rest = Counter(0);
    let rest_ok = serde_json::to_writer(&mut rest, &*plan).is_ok();
    plan.days = days;
    plan.glycogen_series = series;
    let mut ends = Counter(0);
    for day in [plan.days.first(), plan.days.last()].into_iter().flatten() {
        serde_json::to_writer(&mut ends, day).ok()?;
    }
    let mut point = Counter(1);
    if let Some(first) = plan.glycogen_series.first() {
        serde_json::to_writer(&mut point, first).ok()?;
    }
    rest_ok.then(|| rest.0 + ends.0 * plan.days.len() / 2 + point.0 * plan.glycogen_series.len())
}

impl PlanMemo {
    /// A memo of at most `max_bytes`; 0 keeps nothing.
    pub fn new(max_bytes: usize) -> Self {
        Self {
            max_bytes,
            inner: Mutex::default(),
        }
    }

    /// The plan of `input`: the stored one when this exact input was planned
    /// before, else computed (and stored).
    pub fn plan(&self, input: &WeekInput) -> Result<Arc<WeekPlan>, InvalidInput> {
        if self.max_bytes == 0 {
            return plan_week(input).map(Arc::new);
        }
        let Ok(key_bytes) = serde_json::to_vec(input) else {
            return plan_week(input).map(Arc::new);
        };
        let mut hasher = std::collections::hash_map::DefaultHasher::new();
        key_bytes.hash(&mut hasher);
        let key = hasher.finish();
        {
            let mut inner = self.inner.lock().unwrap_or_else(|p| p.into_inner());
            inner.clock += 1;
            let now = inner.clock;
            if let Some(entry) = inner.entries.get_mut(&key)
                && entry.input == key_bytes
            {
                entry.used = now;
                let plan = entry.plan.clone();
                inner.hits += 1;
                return Ok(plan);
            }
            inner.misses += 1;
        }
        let mut plan = plan_week(input)?;
        let Some(plan_bytes) = estimated_json_bytes(&mut plan) else {
            return Ok(Arc::new(plan));
        };
        let bytes = key_bytes.len() + plan_bytes;
        if bytes > self.max_bytes {
            return Ok(Arc::new(plan));
        }
        let plan = Arc::new(plan);
        let stored = plan.clone();
        let mut inner = self.inner.lock().unwrap_or_else(|p| p.into_inner());
        inner.clock += 1;
        let used = inner.clock;
        if let Some(old) = inner.entries.insert(
            key,
            Entry {
                input: key_bytes,
                plan: stored,
                bytes,
                used,
            },
        ) {
            inner.bytes -= old.bytes;
        }
        inner.bytes += bytes;
        while inner.bytes > self.max_bytes {
            let Some(oldest) = inner
                .entries
                .iter()
                .min_by_key(|(_, e)| e.used)
                .map(|(k, _)| *k)
            else {
                break;
            };
            if let Some(evicted) = inner.entries.remove(&oldest) {
                inner.bytes -= evicted.bytes;
            }
        }
        Ok(plan)
    }

    /// Bytes held, plans reused and plans computed so far.
    pub fn stats(&self) -> (usize, u64, u64) {
        let inner = self.inner.lock().unwrap_or_else(|p| p.into_inner());
        (inner.bytes, inner.hits, inner.misses)
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
        }
    }

    #[test]
    fn the_size_estimate_is_close_to_the_serialised_size() {
        // Measured 4-9 % above the real size on these inputs.
        for input in varied_inputs(8, 2) {
            let mut plan = plan_week(&input).expect("valid");
            let real = json(&plan).len() as f64;
            let estimate = estimated_json_bytes(&mut plan).expect("estimate") as f64;
            assert!(
                (estimate / real - 1.0).abs() < 0.15,
                "estimate {estimate} vs {real} bytes"
            );
            assert_eq!(json(&plan).len() as f64, real, "the plan is left as it was");
        }
    }
}
