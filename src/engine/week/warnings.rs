//! The week's warnings, each with a cause and a fix: key sessions on low
//! stores, near-empty muscles or liver, sessions too close, runs of low
//! energy availability, body-mass change faster than the safe rate.

use super::*;
use crate::engine::decimal::Dec;

impl Planner<'_> {
    // ------------------------------------------------------------ warnings

    pub(super) fn warnings(&self, days: &[WeekDay]) -> Vec<WeekWarning> {
        let input = self.input;
        let thresholds = &input.thresholds;
        let mut warnings = Vec::new();
        let new = |code, severity, date: NaiveDate, value: f64, threshold: f64| WeekWarning {
            code,
            severity,
            athlete_id: input.athlete_id,
            date,
            until: None,
            time: None,
            session: None,
            other_session: None,
            value,
            threshold,
            cause: String::new(),
            fix: String::new(),
        };

        for day in days {
            for session in &day.sessions {
                let planned = input
                    .sessions
                    .iter()
                    .find(|s| s.start() == session.start && s.title == session.title);
                let reference = planned.map(PlannedSession::reference);
                let start = session.glycogen_at_start;
                if session.key && start.muscle_fraction < thresholds.key_session_min_muscle_fraction
                {
                    let target_g =
                        thresholds.key_session_min_muscle_fraction * day.glycogen_capacity.muscle_g;
                    let before = self.previous_session(session.start);
                    let mut warning = new(
                        WeekWarningCode::KeySessionLowGlycogen,
                        Severity::Warning,
                        day.date,
                        start.muscle_fraction,
                        thresholds.key_session_min_muscle_fraction,
                    );
                    warning.time = Some(session.start);
                    warning.session = reference.clone();
                    warning.cause = format!(
                        "'{}' ({}) starts with estimated muscle glycogen at {:.0}% of normal stores ({:.0} g), under the {:.0}% alert level{}.",
                        session.title,
                        if session.kind == SessionKind::Match {
                            "match"
                        } else {
                            "key session"
                        },
                        Dec(start.muscle_fraction * 100.0),
                        Dec(start.muscle_g),
                        Dec(thresholds.key_session_min_muscle_fraction * 100.0),
                        before.map_or(String::new(), |s| format!(
                            " after '{}' on {}",
                            s.title,
                            s.start().format("%a %d %b %H:%M")
                        )),
                    );
                    warning.fix = format!(
                        "About {:.0} g more muscle glycogen is needed. Raise carbohydrate in the 24-36 h before (for example pin {} at 8-10 g/kg, inside the high-load range of Thomas, Erdman & Burke 2016){}; or move '{}' later or lighten the work before it.",
                        Dec(target_g - start.muscle_g),
                        (session.start.date() - TimeDelta::days(1)).format("%a %d %b"),
                        before.map_or(String::new(), |s| format!(
                            ", and plan speedy refuelling (1.0-1.2 g/kg/h for the first 4 h) after '{}'",
                            s.title
                        )),
                        session.title
                    );
                    warnings.push(warning);
                }
                let end = session.glycogen_at_end;
                if end.muscle_fraction < thresholds.near_empty_muscle_fraction {
                    let mut warning = new(
                        WeekWarningCode::MuscleGlycogenNearEmpty,
                        Severity::Warning,
                        day.date,
                        end.muscle_fraction,
                        thresholds.near_empty_muscle_fraction,
                    );
                    warning.time = Some(session.end);
                    warning.session = reference.clone();
                    warning.cause = format!(
                        "'{}' ends with estimated muscle glycogen at {:.0}% of normal stores ({:.0} g used, {:.0}% at the start): the working muscles are likely close to empty and performance late in the session suffers.",
                        session.title,
                        Dec(end.muscle_fraction * 100.0),
                        Dec(session.fuel_summary.muscle_glycogen_used_g),
                        Dec(start.muscle_fraction * 100.0)
                    );
                    warning.fix = format!(
                        "Start '{}' with fuller stores (more carbohydrate in the 24 h before), take carbohydrate during it (30-60 g/h over 75 min, up to 90 g/h over 2.5 h), or shorten its hard part; refuel with 1.0-1.2 g/kg/h for the first 4 h after.",
                        session.title
                    );
                    warnings.push(warning);
                }
                if end.liver_fraction < thresholds.near_empty_liver_fraction {
                    let mut warning = new(
                        WeekWarningCode::LiverGlycogenNearEmpty,
                        Severity::Warning,
                        day.date,
                        end.liver_fraction,
                        thresholds.near_empty_liver_fraction,
                    );
                    warning.time = Some(session.end);
                    warning.session = reference.clone();
                    warning.cause = format!(
                        "'{}' ends with estimated liver glycogen at {:.0}% of fed stores ({:.0} g): blood glucose may fall toward the end.",
                        session.title,
                        Dec(end.liver_fraction * 100.0),
                        Dec(end.liver_g)
                    );
                    warning.fix = format!(
                        "Plan 1-4 g/kg carbohydrate 1-4 h before '{}' (not after an overnight fast) and 30-60 g/h during it.",
                        session.title
                    );
                    warnings.push(warning);
                }
            }
        }

        self.gap_warnings(days, &new, &mut warnings);
        self.energy_availability_warnings(days, &new, &mut warnings);
        self.body_mass_warnings(&new, &mut warnings);
        warnings.sort_by_key(|w| (w.date, w.time, w.code as u8));
        warnings
    }

    pub(super) fn previous_session(&self, before: NaiveDateTime) -> Option<&PlannedSession> {
        self.input
            .sessions
            .iter()
            .filter(|s| s.start() < before && before - s.start() < TimeDelta::hours(36))
            .max_by_key(|s| s.start())
    }

    pub(super) fn gap_warnings(
        &self,
        days: &[WeekDay],
        new: &dyn Fn(WeekWarningCode, Severity, NaiveDate, f64, f64) -> WeekWarning,
        warnings: &mut Vec<WeekWarning>,
    ) {
        let input = self.input;
        let ordered: Vec<&PlannedSession> = self
            .by_date
            .values()
            .flatten()
            .map(|&i| &input.sessions[i])
            .collect();
        let in_span = |date: NaiveDate| date >= input.from && date <= input.to;
        let demanding = |s: &PlannedSession| {
            matches!(
                s.kind,
                SessionKind::Training | SessionKind::Match | SessionKind::Other
            )
        };
        for (k, &first) in ordered.iter().enumerate() {
            if !demanding(first) {
                continue;
            }
            // The next session that needs glycogen (the day planner's rule).
            let Some(&second) = ordered[k + 1..].iter().find(|s| demanding(s)) else {
                continue;
            };
            if !in_span(first.date) && !in_span(second.date) {
                continue;
            }
            let gap = (second.start() - first.end()).num_seconds() as f64 / 3600.0;
            // The day planner's two rules: under 4 h the refuelling and the
            // next pre-session meal collide; across midnight under 8 h the
            // refuelling runs into the night.
            let overnight = first.date != second.date;
            let limit = if overnight {
                SPEEDY_REFUELLING_GAP_HOURS
            } else {
                SPEEDY_REFUELLING_MAX_HOURS
            };
            if gap >= limit {
                continue;
            }
            let second_level = days
                .iter()
                .flat_map(|d| &d.sessions)
                .find(|s| s.start == second.start() && s.title == second.title)
                .map(|s| s.glycogen_at_start);
            let mut warning = new(
                WeekWarningCode::SessionsTooClose,
                Severity::Warning,
                second.date,
                gap,
                limit,
            );
            warning.time = Some(second.start());
            warning.session = Some(second.reference());
            warning.other_session = Some(first.reference());
            warning.cause = format!(
                "Only {gap:.1} h between the end of '{}' and the start of '{}'{}{}.",
                first.title,
                second.title,
                if overnight {
                    ": the refuelling after the first runs into the night and there is little time to eat before the second"
                } else {
                    ": the 4 h of speedy refuelling and the pre-session meal (1-4 h before) cannot both fit"
                },
                second_level.map_or(String::new(), |level| format!(
                    "; estimated muscle glycogen at the start of the second is {:.0}% of normal stores",
                    level.muscle_fraction * 100.0
                )), gap = Dec(gap),
            );
            let later = first.end() + TimeDelta::hours(limit as i64);
            warning.fix = format!(
                "Move '{}' to {} or later, or, if the times are fixed, start 1.0-1.2 g/kg/h of carbohydrate right after '{}' (small, familiar, easily digested feeds) and keep '{}' light.",
                second.title,
                later.format("%a %d %b %H:%M"),
                first.title,
                second.title
            );
            warnings.push(warning);
        }
    }

    pub(super) fn energy_availability_warnings(
        &self,
        days: &[WeekDay],
        new: &dyn Fn(WeekWarningCode, Severity, NaiveDate, f64, f64) -> WeekWarning,
        warnings: &mut Vec<WeekWarning>,
    ) {
        let needed = self.input.thresholds.low_energy_availability_days_in_a_row as usize;
        let mut run: Vec<&WeekDay> = Vec::new();
        let mut flush = |run: &mut Vec<&WeekDay>| {
            if run.len() >= needed.max(1) {
                let first = run[0];
                let last = run[run.len() - 1];
                let ea = &first.plan.energy_availability;
                let lowest = run
                    .iter()
                    .map(|d| d.plan.energy_availability.kcal_per_kg_fat_free_mass)
                    .fold(f64::INFINITY, f64::min);
                let raise_kcal = run
                    .iter()
                    .map(|d| {
                        let ea = &d.plan.energy_availability;
                        (ea.thresholds.low_below - ea.kcal_per_kg_fat_free_mass)
                            * ea.fat_free_mass.kg
                    })
                    .fold(0.0, f64::max);
                let mut warning = new(
                    WeekWarningCode::LowEnergyAvailabilityDaysInARow,
                    Severity::Safety,
                    first.date,
                    lowest,
                    ea.thresholds.low_below,
                );
                warning.until = Some(last.date);
                warning.cause = format!(
                    "Planned energy availability is under {:.0} kcal/kg FFM/day (low) on {} days in a row, {} to {} (lowest {lowest:.1}): repeated low energy availability harms health and performance (relative energy deficiency in sport, IOC consensus).",
                    Dec(ea.thresholds.low_below),
                    run.len(),
                    first.date,
                    last.date,
                    lowest = Dec(lowest)
                );
                warning.fix = format!(
                    "Raise planned energy intake on these days by up to {:.0} kcal/day (to reach {:.0} kcal/kg FFM/day), reduce the planned body-mass deficit or lighten the training; review with a registered dietitian or a physician.",
                    Dec(raise_kcal.ceil()),
                    Dec(ea.thresholds.low_below)
                );
                warnings.push(warning);
            }
            run.clear();
        };
        for day in days {
            if day.plan.energy_availability.band == EnergyAvailabilityBand::Low {
                run.push(day);
            } else {
                flush(&mut run);
            }
        }
        flush(&mut run);
    }

    pub(super) fn body_mass_warnings(
        &self,
        new: &dyn Fn(WeekWarningCode, Severity, NaiveDate, f64, f64) -> WeekWarning,
        warnings: &mut Vec<WeekWarning>,
    ) {
        let input = self.input;
        let max_percent = input.settings.max_body_mass_change_percent_per_week;
        let profile = &input.profile;
        if let (GoalDirection::Reduce | GoalDirection::Gain, Some(rate)) =
            (profile.goal, profile.goal_rate_kg_per_week)
        {
            let percent = rate / profile.body_mass_kg * 100.0;
            if percent > max_percent {
                let safe = profile.body_mass_kg * max_percent / 100.0;
                let mut warning = new(
                    WeekWarningCode::BodyMassChangeAboveSafeRate,
                    if profile.goal == GoalDirection::Reduce {
                        Severity::Safety
                    } else {
                        Severity::Warning
                    },
                    input.from,
                    percent,
                    max_percent,
                );
                warning.cause = format!(
                    "The profile asks to {} {rate:.2} kg/week ({percent:.1}% of body mass), faster than {max_percent:.1}% per week (common practice: about 0.5-1%); each day's plan uses {safe:.2} kg/week instead.",
                    if profile.goal == GoalDirection::Reduce {
                        "lose"
                    } else {
                        "gain"
                    },
                    rate = Dec(rate),
                    percent = Dec(percent),
                    max_percent = Dec(max_percent),
                    safe = Dec(safe)
                );
                warning.fix = format!(
                    "Set the goal rate to {safe:.2} kg/week or less and plan the change over more weeks, supervised by a registered dietitian.",
                    safe = Dec(safe)
                );
                warnings.push(warning);
            }
        }
        // Planned masses: each step from the previous point, over at least a week
        // (day-to-day differences are mostly water).
        let mut previous = (input.from, profile.body_mass_kg);
        for entry in self.masses.iter().filter(|e| e.date > input.from) {
            let days = (entry.date - previous.0).num_days().max(7) as f64;
            let percent = (entry.body_mass_kg - previous.1).abs() / previous.1 * 100.0 * 7.0 / days;
            if percent > max_percent {
                let losing = entry.body_mass_kg < previous.1;
                let weeks = ((entry.body_mass_kg - previous.1).abs() / previous.1 * 100.0
                    / max_percent)
                    .ceil();
                let mut warning = new(
                    WeekWarningCode::BodyMassChangeAboveSafeRate,
                    if losing {
                        Severity::Safety
                    } else {
                        Severity::Warning
                    },
                    entry.date,
                    percent,
                    max_percent,
                );
                warning.cause = format!(
                    "Planned body mass goes from {:.1} kg on {} to {:.1} kg on {}: {percent:.1}% of body mass per week, faster than {max_percent:.1}% (common practice: about 0.5-1%).",
                    Dec(previous.1),
                    previous.0,
                    Dec(entry.body_mass_kg),
                    entry.date,
                    percent = Dec(percent),
                    max_percent = Dec(max_percent)
                );
                warning.fix = format!(
                    "Spread the change over at least {weeks:.0} weeks (no more than {max_percent:.1}% per week), supervised by a registered dietitian.",
                    weeks = Dec(weeks),
                    max_percent = Dec(max_percent)
                );
                warnings.push(warning);
            }
            previous = (entry.date, entry.body_mass_kg);
        }
    }
}
