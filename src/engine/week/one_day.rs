//! One day of the week plan: the demand forecast, the day planner's call
//! (with week field names in its errors), the simulation, and what the day
//! leaves for the next ([`DayOutcome`]).

use super::*;

impl Planner<'_> {
    /// Plans and simulates `date` from the state carried in at midnight.
    /// `today`: the day's session indices in start order.
    pub(super) fn compute_day(
        &mut self,
        date: NaiveDate,
        carried: &Timeline,
        today: &[usize],
    ) -> Result<DayOutcome, InvalidInput> {
        let input = self.input;
        let first_day = input.first_simulated_day();
        let in_span = date >= input.from;
        let athlete = self.athlete_on(date)?;
        let capacity = self.athletes[athlete].glycogen_capacity;
        let mut timeline = carried.clone();
        // A lower body mass lowers capacity; stores cannot exceed it.
        timeline.stores.muscle_g = timeline.stores.muscle_g.min(capacity.muscle_g);
        timeline.stores.liver_g = timeline.stores.liver_g.min(capacity.liver_g);
        let at_start = GlycogenLevel::of(&timeline.stores, &capacity);
        let start_assumption =
            (date == input.from).then(|| self.start_assumption(first_day, at_start));

        // 1. The day's demand: its sessions as prepared for, from normal
        //    stores (the work's demand, not the state's), the next two
        //    days the same way, and yesterday as it was simulated.
        let forecast = self.full_forecasts(date)?;
        let next_day = self.full_forecasts(date + TimeDelta::days(1))?;
        let day_after_next = self.full_forecasts(date + TimeDelta::days(2))?;
        let previous_date = date - TimeDelta::days(1);
        let yesterday = self.sessions_on(previous_date);
        let previous_day = if previous_date < first_day {
            self.full_forecasts(previous_date)?
        } else {
            yesterday
                .iter()
                .filter_map(|&index| self.simulated_work[index].clone())
                .collect()
        };
        let day_input = DayInput {
            profile: self.profile_on(date),
            date,
            sessions: forecast,
            next_day_sessions: next_day,
            day_after_next_sessions: day_after_next,
            previous_day_sessions: previous_day,
            settings: input.settings.clone(),
            glycogen_to_restore_g: (capacity.muscle_g - timeline.stores.muscle_g).max(0.0),
            pins: self.pins.get(&date).cloned().unwrap_or_default(),
            health_flags: input.health_flags.clone(),
        };

        // 2-3. Plan, then simulate the day with the plan's intake and the
        //      sessions as they are done.
        // Days before the span are planned only for their intake.
        let explain = if in_span && input.explain_days {
            Explain::Yes
        } else {
            Explain::No
        };
        let mut plan = self.plan(&day_input, explain)?;
        let run = self.simulate_day(
            &timeline,
            date,
            &plan.eating_occasions,
            today,
            athlete,
            in_span,
        )?;
        let place = |list: &[usize], index: usize| list.iter().position(|&i| i == index);
        let starts = run
            .starts
            .into_iter()
            .filter_map(|(index, level, fuel)| {
                Some((place(today, index)?, level, std::sync::Arc::new(fuel)))
            })
            .collect();
        let ends = run
            .ends
            .into_iter()
            .filter_map(|(index, level)| match place(today, index) {
                Some(k) => Some((false, k, level)),
                None => place(&yesterday, index).map(|k| (true, k, level)),
            })
            .collect();
        // Warnings about the athlete leave the shown day here, so the day's
        // plan is final and can be shared; the week lists them once.
        let mut athlete_level = Vec::new();
        if in_span {
            plan.warnings.retain(|warning| {
                let about_athlete = ATHLETE_LEVEL.contains(&warning.code);
                if about_athlete {
                    athlete_level.push(warning.clone());
                }
                !about_athlete
            });
        }
        let day = in_span.then(|| WeekDay {
            date,
            body_mass_kg: self.mass_on(date),
            glycogen_capacity: capacity,
            glycogen_at_start: at_start,
            glycogen_at_end: GlycogenLevel::of(&run.timeline.stores, &capacity),
            glycogen_flows: run.flows,
            sessions: Vec::new(),
            plan: std::sync::Arc::new(plan),
        });
        Ok(DayOutcome {
            timeline: StoredTimeline::of(&run.timeline, today),
            start_assumption,
            day,
            athlete_level,
            series: run.series,
            starts,
            ends,
        })
    }

    /// What the plan assumed at midnight before `from`.
    pub(super) fn start_assumption(
        &self,
        first_day: NaiveDate,
        level: GlycogenLevel,
    ) -> StartAssumption {
        let input = self.input;
        let (source, text) = if input.start_glycogen.is_some() {
            (
                StartSource::Given,
                "Glycogen at midnight before the first day as given by the planner (estimates)."
                    .to_string(),
            )
        } else if first_day < input.from {
            (
                StartSource::CarriedOver,
                format!(
                    "Carried over: the plan was simulated from normal stores at midnight before {first_day}, with the sessions and targets of the days before the span (estimates)."
                ),
            )
        } else {
            (
                StartSource::NormalStoresAfterRestDay,
                "Assumed: normal full muscle and liver glycogen at midnight before the first day, as after a rest day with normal eating (estimates). Give start_glycogen or carry_from to change it.".to_string(),
            )
        };
        StartAssumption {
            source,
            at: input.from.and_time(NaiveTime::MIN),
            glycogen: level,
            text,
        }
    }

    /// Calls the day planner, naming week fields in its errors.
    pub(super) fn plan(&self, day: &DayInput, explain: Explain) -> Result<DayPlan, InvalidInput> {
        plan_day_with(day, explain).map_err(|error| {
            let lists: [(&str, &[SessionWork]); 4] = [
                ("sessions", &day.sessions),
                ("next_day_sessions", &day.next_day_sessions),
                ("day_after_next_sessions", &day.day_after_next_sessions),
                ("previous_day_sessions", &day.previous_day_sessions),
            ];
            let pin_index = self.input.pins.iter().position(|p| p.date == day.date);
            remap(error, |field| {
                for (name, works) in lists {
                    let Some(rest) = field.strip_prefix(&format!("{name}[")) else {
                        continue;
                    };
                    let Some((k, tail)) = rest.split_once(']') else {
                        continue;
                    };
                    let Some(work) = k.parse::<usize>().ok().and_then(|k| works.get(k)) else {
                        continue;
                    };
                    if let Some(index) = self
                        .input
                        .sessions
                        .iter()
                        .position(|s| s.start() == work.start && s.title == work.title)
                    {
                        return format!("sessions[{index}]{tail} (computed from its segments)");
                    }
                }
                match (field.strip_prefix("pins."), pin_index) {
                    (Some(tail), Some(k)) => format!("pins[{k}].{tail}"),
                    _ => field.to_string(),
                }
            })
        })
    }
}
