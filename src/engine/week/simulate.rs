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
    /// Simulates one day from `timeline` with the day's eating occasions.
    pub(super) fn simulate_day(
        &self,
        timeline: &Timeline,
        date: NaiveDate,
        occasions: &[EatingOccasion],
        today: &[usize],
        athlete: usize,
    ) -> Result<DayRun, InvalidInput> {
        let model = &self.model;
        let resolved = &self.athletes[athlete];
        let capacity = resolved.glycogen_capacity;
        let day_start = date.and_time(NaiveTime::MIN);
        let day_end = day_start + TimeDelta::days(1);
        let mut timeline = timeline.clone();
        for occasion in occasions {
            if occasion.carbohydrate_g > 0.0 {
                timeline
                    .pending_intake
                    .push((occasion.time, occasion.carbohydrate_g));
            }
        }
        timeline.pending_intake.sort_by_key(|(time, _)| *time);

        // Breakpoints: the step grid, meals, session starts and ends, and the
        // end of the early resynthesis window.
        let step = TimeDelta::seconds((model.step_minutes * 60.0) as i64);
        let early = TimeDelta::seconds((model.early_resynthesis_hours * 3600.0) as i64);
        let mut points: Vec<NaiveDateTime> = Vec::with_capacity(128);
        let mut t = day_start;
        while t < day_end {
            points.push(t);
            t += step;
        }
        points.extend(
            timeline
                .pending_intake
                .iter()
                .map(|(time, _)| *time)
                .filter(|time| *time >= day_start && *time < day_end),
        );
        for &index in today {
            let session = &self.input.sessions[index];
            points.push(session.start());
            points.push(session.end());
            points.push(session.end() + early);
        }
        if let Some(active) = timeline.active {
            points.push(active.end);
            points.push(active.end + early);
        }
        if let Some(end) = timeline.last_session_end {
            points.push(end + early);
        }
        points.retain(|time| *time >= day_start && *time < day_end);
        points.sort();
        points.dedup();
        points.push(day_end);

        let mut starts = Vec::new();
        let mut ends = Vec::new();
        let mut series = Vec::with_capacity(26);
        let mut day_flows = GlycogenFlows::default();
        let mut starting = today.iter().peekable();
        for pair in points.windows(2) {
            let (now, next) = (pair[0], pair[1]);
            // Intake reached by now enters the gut.
            let due = timeline
                .pending_intake
                .iter()
                .take_while(|(time, _)| *time <= now)
                .count();
            for (_, grams) in timeline.pending_intake.drain(..due) {
                timeline.stores.gut_g += grams;
            }
            let mut event = false;
            if let Some(active) = timeline.active
                && active.end <= now
            {
                ends.push((active.index, GlycogenLevel::of(&timeline.stores, &capacity)));
                timeline.last_session_end = Some(active.end);
                timeline.active = None;
                event = true;
            }
            while let Some(&&index) = starting.peek() {
                let session = &self.input.sessions[index];
                if session.start() > now {
                    break;
                }
                starting.next();
                let state = GlycogenState {
                    muscle_g: timeline.stores.muscle_g,
                    liver_g: timeline.stores.liver_g,
                };
                let fuel = self.simulate(athlete, index, Some(state), self.detail())?;
                let clock_hours = session.clock_minutes() / 60.0;
                starts.push((
                    index,
                    GlycogenLevel::of(&timeline.stores, &capacity),
                    fuel.clone(),
                ));
                timeline.active = Some(ActiveSession {
                    index,
                    end: session.end(),
                    draw: SessionDraw {
                        muscle_g_per_hour: fuel.muscle_glycogen_used_g / clock_hours,
                        liver_g_per_hour: fuel.blood_glucose_carbohydrate_g / clock_hours,
                        working_share: fuel.total_minutes / session.clock_minutes(),
                    },
                });
                if session.kind == SessionKind::Match {
                    let slowing =
                        model.post_match_resynthesis_slowing * (fuel.total_minutes / 90.0).min(1.0);
                    let until = session.end()
                        + TimeDelta::seconds((model.post_match_slowing_hours * 3600.0) as i64);
                    timeline.slowed_until = Some((until, slowing));
                }
                event = true;
            }
            if event || (now.minute() == 0 && now.second() == 0) {
                series.push(GlycogenPoint {
                    time: now,
                    muscle_g: round_to(timeline.stores.muscle_g, 0.1),
                    liver_g: round_to(timeline.stores.liver_g, 0.1),
                    muscle_fraction: round_to(timeline.stores.muscle_g / capacity.muscle_g, 0.001),
                });
            }
            let hours = (next - now).num_seconds() as f64 / 3600.0;
            let interval = Interval {
                hours,
                body_mass_kg: resolved.body_mass_kg,
                muscle_mass_kg: capacity.muscle_mass_kg,
                muscle_capacity_g: capacity.muscle_g,
                liver_capacity_g: capacity.liver_g,
                early_after_session: timeline.active.is_none()
                    && timeline
                        .last_session_end
                        .is_some_and(|end| now >= end && now < end + early),
                session: timeline.active.map(|active| active.draw),
                muscle_resynthesis_factor: match timeline.slowed_until {
                    Some((until, slowing)) if now < until => 1.0 - slowing,
                    _ => 1.0,
                },
            };
            let (stores, flows) = advance(model, timeline.stores, &interval);
            timeline.stores = stores;
            day_flows.add(&flows);
        }
        Ok(DayRun {
            timeline,
            starts,
            ends,
            series,
            flows: day_flows,
        })
    }
}
