//! One day of the glycogen simulation: intake absorbed, sessions drawn,
//! the liver at rest, in short intervals split at every meal and session
//! boundary ([`crate::engine::glycogen::balance`]).

use super::*;

/// The part of the simulation that moves from one day to the next.
#[derive(Debug, Clone)]
pub(super) struct Timeline {
    pub(super) stores: CarbohydrateStores,
    pub(super) last_session_end: Option<NaiveDateTime>,
    pub(super) active: Option<ActiveSession>,
    /// Eaten at a time not yet reached (a late feed after midnight).
    pub(super) pending_intake: Vec<(NaiveDateTime, f64)>,
    /// Muscle resynthesis slowed after a match: until when, and by how much.
    pub(super) slowed_until: Option<(NaiveDateTime, f64)>,
}

#[derive(Debug, Clone, Copy)]
pub(super) struct ActiveSession {
    pub(super) index: usize,
    pub(super) end: NaiveDateTime,
    pub(super) draw: SessionDraw,
}

/// One simulated day, before it is kept.
pub(super) struct DayRun {
    pub(super) timeline: Timeline,
    pub(super) starts: Vec<(usize, GlycogenLevel, SessionFuel)>,
    pub(super) ends: Vec<(usize, GlycogenLevel)>,
    pub(super) series: Vec<GlycogenPoint>,
    pub(super) flows: GlycogenFlows,
}

impl Planner<'_> {
    /// Simulates one day from `timeline` with the day's eating occasions;
    /// the hourly glycogen series only for a day that is shown (`keep_series`).
    pub(super) fn simulate_day(
        &self,
        timeline: &Timeline,
        date: NaiveDate,
        occasions: &[EatingOccasion],
        today: &[usize],
        athlete: usize,
        keep_series: bool,
    ) -> Result<DayRun, InvalidInput> {
        let model = &self.model;
        let resolved = &self.athletes[athlete];
        let capacity = resolved.glycogen_capacity;
        let day_start = date.and_time(NaiveTime::MIN);
        let mut timeline = timeline.clone();
        for occasion in occasions {
            if occasion.carbohydrate_g > 0.0 {
                timeline
                    .pending_intake
                    .push((occasion.time, occasion.carbohydrate_g));
            }
        }
        timeline.pending_intake.sort_by_key(|(time, _)| *time);

        // Breakpoints, in seconds from midnight: the step grid, meals,
        // session starts and ends, and the end of the early resynthesis
        // window. Integer seconds keep the loop free of calendar arithmetic.
        let secs = |time: NaiveDateTime| (time - day_start).num_seconds();
        let step = (model.step_minutes * 60.0) as i64;
        let early = (model.early_resynthesis_hours * 3600.0) as i64;
        const DAY: i64 = 86_400;
        let intake_at: Vec<i64> = timeline
            .pending_intake
            .iter()
            .map(|(time, _)| secs(*time))
            .collect();
        let starts_at: Vec<(i64, i64)> = today
            .iter()
            .map(|&index| {
                let session = &self.input.sessions[index];
                (secs(session.start()), secs(session.end()))
            })
            .collect();
        // The grid is sorted already: only the few event times are sorted,
        // then merged into it.
        let mut events: Vec<i64> = Vec::with_capacity(intake_at.len() + 3 * starts_at.len() + 3);
        events.extend(intake_at.iter().copied());
        for &(start, end) in &starts_at {
            events.extend([start, end, end + early]);
        }
        let mut active_end = timeline.active.map(|active| secs(active.end));
        if let Some(end) = active_end {
            events.extend([end, end + early]);
        }
        let mut last_end = timeline.last_session_end.map(secs);
        if let Some(end) = last_end {
            events.push(end + early);
        }
        events.retain(|time| (0..DAY).contains(time));
        events.sort_unstable();
        let points = merge_with_grid(step.max(1), DAY, &events);
        let mut slowed_until = timeline
            .slowed_until
            .map(|(until, slowing)| (secs(until), slowing));

        let mut starts = Vec::new();
        let mut ends = Vec::new();
        let mut series = Vec::with_capacity(if keep_series { 30 } else { 0 });
        let mut day_flows = GlycogenFlows::default();
        let mut starting = today.iter().zip(&starts_at).peekable();
        let mut eaten = 0;
        for pair in points.windows(2) {
            let (now, next) = (pair[0], pair[1]);
            // Intake reached by now enters the gut.
            while eaten < intake_at.len() && intake_at[eaten] <= now {
                timeline.stores.gut_g += timeline.pending_intake[eaten].1;
                eaten += 1;
            }
            let mut event = false;
            if let (Some(active), Some(end)) = (timeline.active, active_end)
                && end <= now
            {
                ends.push((active.index, GlycogenLevel::of(&timeline.stores, &capacity)));
                timeline.last_session_end = Some(active.end);
                last_end = Some(end);
                timeline.active = None;
                active_end = None;
                event = true;
            }
            while let Some(&(&index, &(start, end))) = starting.peek() {
                if start > now {
                    break;
                }
                starting.next();
                let session = &self.input.sessions[index];
                let state = GlycogenState {
                    muscle_g: timeline.stores.muscle_g,
                    liver_g: timeline.stores.liver_g,
                };
                let fuel = self.simulate(athlete, index, Some(state), self.detail())?;
                let clock_hours = session.clock_minutes() / 60.0;
                let draw = SessionDraw {
                    muscle_g_per_hour: fuel.muscle_glycogen_used_g / clock_hours,
                    liver_g_per_hour: fuel.blood_glucose_carbohydrate_g / clock_hours,
                    working_share: fuel.total_minutes / session.clock_minutes(),
                };
                if session.kind == SessionKind::Match {
                    let slowing =
                        model.post_match_resynthesis_slowing * (fuel.total_minutes / 90.0).min(1.0);
                    let hours = (model.post_match_slowing_hours * 3600.0) as i64;
                    timeline.slowed_until =
                        Some((session.end() + TimeDelta::seconds(hours), slowing));
                    slowed_until = Some((end + hours, slowing));
                }
                starts.push((index, GlycogenLevel::of(&timeline.stores, &capacity), fuel));
                timeline.active = Some(ActiveSession {
                    index,
                    end: session.end(),
                    draw,
                });
                active_end = Some(end);
                event = true;
            }
            if keep_series && (event || now % 3600 == 0) {
                series.push(GlycogenPoint {
                    time: day_start + TimeDelta::seconds(now),
                    muscle_g: round_to(timeline.stores.muscle_g, 0.1),
                    liver_g: round_to(timeline.stores.liver_g, 0.1),
                    muscle_fraction: round_to(timeline.stores.muscle_g / capacity.muscle_g, 0.001),
                });
            }
            let interval = Interval {
                hours: (next - now) as f64 / 3600.0,
                body_mass_kg: resolved.body_mass_kg,
                muscle_mass_kg: capacity.muscle_mass_kg,
                muscle_capacity_g: capacity.muscle_g,
                liver_capacity_g: capacity.liver_g,
                early_after_session: timeline.active.is_none()
                    && last_end.is_some_and(|end| now >= end && now < end + early),
                session: timeline.active.map(|active| active.draw),
                muscle_resynthesis_factor: match slowed_until {
                    Some((until, slowing)) if now < until => 1.0 - slowing,
                    _ => 1.0,
                },
            };
            let (stores, flows) = advance(model, timeline.stores, &interval);
            timeline.stores = stores;
            day_flows.add(&flows);
        }
        timeline.pending_intake.drain(..eaten);
        Ok(DayRun {
            timeline,
            starts,
            ends,
            series,
            flows: day_flows,
        })
    }
}

/// The times `0, step, 2 step, ... < end` merged with the sorted `events`
/// (each inside `0..end`), without repeats, then `end`.
fn merge_with_grid(step: i64, end: i64, events: &[i64]) -> Vec<i64> {
    let mut points = Vec::with_capacity((end / step) as usize + events.len() + 1);
    let mut grid = 0;
    let mut events = events.iter().copied().peekable();
    loop {
        let next = match events.peek() {
            Some(&event) if event <= grid || grid >= end => {
                events.next();
                event
            }
            _ if grid < end => {
                grid += step;
                grid - step
            }
            _ => break,
        };
        if points.last() != Some(&next) {
            points.push(next);
        }
    }
    points.push(end);
    points
}

#[cfg(test)]
mod tests {
    use super::merge_with_grid;

    #[test]
    fn the_merged_grid_equals_sorting_everything() {
        let cases: [&[i64]; 5] = [
            &[],
            &[0],
            &[899, 900, 900, 901],
            &[5, 5, 86_399],
            &[1_800, 25_200, 27_000, 27_000, 34_200, 41_400, 63_000],
        ];
        for events in cases {
            let mut expected: Vec<i64> = (0..86_400)
                .step_by(900)
                .chain(events.iter().copied())
                .collect();
            expected.sort_unstable();
            expected.dedup();
            expected.push(86_400);
            assert_eq!(merge_with_grid(900, 86_400, events), expected, "{events:?}");
        }
    }
}
