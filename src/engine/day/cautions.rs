//! Warnings and cautions about the day that are not about one number:
//! train-low placement, carbohydrate loading asked for a short event, and the
//! safety notes (under 18, body-mass loss, declared health conditions).

use crate::engine::decimal::Dec;
use chrono::TimeDelta;

use crate::engine::day::energy::GoalAdjustment;
use crate::engine::day::input::DayInput;
use crate::engine::day::notes::{Severity, Warning, WarningCode};
use crate::engine::day::session_work::EventPreparation;
use crate::engine::day::settings::HealthFlag;
use crate::engine::day::targets::{DayLoad, LoadBand};
use crate::engine::profile::GoalDirection;

pub(crate) fn train_low_warnings(input: &DayInput, load: &DayLoad, warnings: &mut Vec<Warning>) {
    for session in input.sessions.iter().filter(|s| s.train_low) {
        let end = session.end();
        let key_soon = input
            .sessions
            .iter()
            .chain(&input.next_day_sessions)
            .find(|k| k.is_key() && k.start >= end && k.start < end + TimeDelta::hours(24));
        if let Some(key) = key_soon {
            warnings.push(
                Warning::new(
                    WarningCode::TrainLowBeforeKeySession,
                    Severity::Warning,
                    format!(
                        "Train-low session '{}' comes less than 24 h before the key session '{}': glycogen may not be restored in time.",
                        session.title, key.title
                    ),
                )
                .for_session(session.session_id),
            );
        }
        if load.band >= LoadBand::High {
            warnings.push(
                Warning::new(
                    WarningCode::TrainLowOnHighLoadDay,
                    Severity::Warning,
                    format!(
                        "Train-low session '{}' is on a {} load day: quality of the other work may suffer.",
                        session.title,
                        load.band.name()
                    ),
                )
                .for_session(session.session_id),
            );
        }
    }
}

pub(crate) fn loading_warnings(input: &DayInput, warnings: &mut Vec<Warning>) {
    let all = input
        .sessions
        .iter()
        .chain(&input.next_day_sessions)
        .chain(&input.day_after_next_sessions);
    for session in all {
        if session.event_preparation == EventPreparation::CarbohydrateLoading
            && session.minutes <= 90.0
        {
            warnings.push(
                Warning::new(
                    WarningCode::CarbohydrateLoadingNotIndicated,
                    Severity::Warning,
                    format!(
                        "Carbohydrate loading was asked for '{}' ({:.0} min) but it is for events over 90 min; general fuelling up is used instead.",
                        session.title, Dec(session.minutes)
                    ),
                )
                .for_session(session.session_id),
            );
        }
    }
}

pub(crate) fn safety_notes(
    input: &DayInput,
    goal: &GoalAdjustment,
    warnings: &mut Vec<Warning>,
    cautions: &mut Vec<String>,
) {
    if input.profile.age_years < 18.0 {
        warnings.push(Warning::new(
            WarningCode::UnderEighteen,
            Severity::Safety,
            format!(
                "The athlete is {:.0}: these adult targets are not validated for under-18s.",
                Dec(input.profile.age_years.floor())
            ),
        ));
        cautions.push("The athlete is under 18: adult targets do not simply apply and growth needs energy. Plan with a registered dietitian and a physician, involve parents or guardians as local rules require, and do not plan body-mass loss without them.".into());
    }
    if input.profile.goal == GoalDirection::Reduce && !goal.withheld_under_18 {
        cautions.push(format!(
            "Planned body-mass loss of {:.2} kg/week: keep it at or under about 0.5-1% of body mass per week (common practice), under a registered dietitian's supervision, and watch for signs of low energy availability.",
            Dec(goal.applied_kg_per_week)
        ));
    }
    let mut flags = input.health_flags.clone();
    flags.sort_by_key(|f| *f as u8);
    flags.dedup();
    for flag in flags {
        let text = match flag {
            HealthFlag::Pregnancy => {
                "Pregnancy: these athlete targets do not apply; energy and nutrient needs must be set by a physician and a registered dietitian."
            }
            HealthFlag::Diabetes => {
                "Diabetes: carbohydrate targets and timing interact with medication and blood glucose; plan them with the athlete's physician and diabetes team."
            }
            HealthFlag::OtherMedicalCondition => {
                "A medical condition was declared: check these targets with the athlete's physician before use."
            }
            HealthFlag::DisorderedEatingHistory => {
                "History of disordered eating: gram targets and body-mass goals can do harm; use them only under a registered dietitian and the clinical team, and consider not sharing numbers with the athlete."
            }
        };
        warnings.push(Warning::new(
            WarningCode::HealthCondition,
            Severity::Safety,
            text,
        ));
        cautions.push(text.to_string());
    }
}
