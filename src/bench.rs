//! `glycoweek bench`: times the pure planning engine on synthetic squads
//! (the demo's generator, no database, no HTTP), so the figures in the
//! README can be reproduced with one command.

use std::time::Instant;

use chrono::{Days, NaiveDate};

use crate::demo;
use crate::domain::athlete::age_years;
use crate::engine::profile::AthleteProfile;
use crate::engine::week::{PlannedSession, WeekInput, plan_week};

/// Engine inputs for `athletes` players over `weeks` weeks of the demo's
/// senior week, repeated.
pub fn squad_inputs(athletes: usize, weeks: u64) -> Vec<WeekInput> {
    let monday = NaiveDate::from_ymd_opt(2027, 1, 4).expect("a Monday");
    let to = monday + Days::new(weeks * 7 - 1);
    let sessions: Vec<PlannedSession> = (0..weeks + 1)
        .flat_map(|w| demo::senior_week(monday + Days::new(w * 7)))
        .filter(|s| s.local_date <= to + Days::new(2))
        .map(|s| PlannedSession {
            prepared_segments: None,
            session_id: None,
            title: s.title,
            kind: s.kind,
            date: s.local_date,
            start_time: s.start_time,
            segments: s.segments,
            clock_minutes: None,
            key_session: s.key_session,
            train_low: s.train_low,
            carbohydrate_loading: s.carbohydrate_loading,
        })
        .collect();
    demo::synthetic_squad(athletes, monday)
        .into_iter()
        .map(|a| {
            let mass = a
                .initial_body_mass
                .as_ref()
                .map_or(75.0, |m| m.body_mass_kg);
            WeekInput {
                carry_from: None,
                athlete_id: None,
                profile: AthleteProfile {
                    team_sport_work_factor: None,
                    sex: a.sex,
                    age_years: age_years(a.date_of_birth, monday),
                    height_cm: a.height_cm,
                    body_mass_kg: mass,
                    body_fat_percent: a.body_fat_percent,
                    fat_free_mass_kg: a.fat_free_mass_kg,
                    vo2max: a.vo2max,
                    hr_max: a.hr_max,
                    hr_rest: a.hr_rest,
                    training_status: a.training_status,
                    goal: a.goal,
                    goal_rate_kg_per_week: a.goal_rate_kg_per_week,
                },
                body_mass_by_date: Vec::new(),
                from: monday,
                to,
                sessions: sessions.clone(),
                settings: Default::default(),
                pins: Vec::new(),
                health_flags: a.health_flags,
                start_glycogen: None,
                thresholds: Default::default(),
                include_session_fuel: false,
            }
        })
        .collect()
}

/// Plans every input and returns the best of `repeats` wall times, in ms.
pub fn time_squad(inputs: &[WeekInput], repeats: usize) -> f64 {
    let mut best = f64::INFINITY;
    for _ in 0..repeats.max(1) {
        let start = Instant::now();
        for input in inputs {
            let plan = plan_week(input).expect("synthetic inputs are valid");
            std::hint::black_box(plan);
        }
        best = best.min(start.elapsed().as_secs_f64() * 1000.0);
    }
    best
}

/// Runs the grid and prints a Markdown table.
pub fn run(sizes: &[usize], weeks: &[u64], repeats: usize) {
    println!("Engine time to plan a squad (single thread, best of {repeats}), ms");
    println!();
    print!("| athletes \\ weeks |");
    for w in weeks {
        print!(" {w} |");
    }
    println!();
    print!("|---|");
    for _ in weeks {
        print!("---|");
    }
    println!();
    for &n in sizes {
        print!("| {n} |");
        for &w in weeks {
            let inputs = squad_inputs(n, w);
            print!(" {:.1} |", time_squad(&inputs, repeats));
        }
        println!();
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_benchmark_inputs_are_valid_plans() {
        for weeks in [1, 2] {
            for input in squad_inputs(3, weeks) {
                let plan = plan_week(&input).expect("valid synthetic input");
                assert_eq!(plan.days.len() as u64, weeks * 7);
            }
        }
    }
}
