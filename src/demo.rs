//! The demo scenario: an invented club, "Kestrel Vale FC", with a senior
//! men's squad and an under-21 women's squad, and one realistic match week
//! each. Every name and number here is fictional and exists only to show the
//! service working; none describes a real person or club.

use chrono::{Datelike, Days, NaiveDate, NaiveTime, Utc};
use uuid::Uuid;

use crate::domain::athlete::{AthleteInput, AthleteStatus, HealthFlag, InitialBodyMass};
use crate::domain::session::{ParticipationInput, ParticipationMode, Portion, SessionInput};
use crate::domain::team::TeamInput;
use crate::engine::profile::{
    GoalDirection, Intensity, Segment, SessionKind, Sex, TrainingStatus, Vo2maxSource,
};
use crate::store::audit::Actor;
use crate::store::{Db, Precondition, athletes, sessions, teams};

const DEMO: Actor = Actor { token_id: None };

pub const CLUB: &str = "Kestrel Vale FC";
pub const TIME_ZONE: &str = "Europe/London";

/// Small deterministic generator so the demo is the same on every machine.
struct Dice(u64);

impl Dice {
    fn next(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((self.0 >> 11) as f64) / ((1u64 << 53) as f64)
    }
    fn between(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.next()
    }
    fn round1(&mut self, lo: f64, hi: f64) -> f64 {
        (self.between(lo, hi) * 10.0).round() / 10.0
    }
}

const SENIOR_FIRST: [&str; 25] = [
    "Aldo", "Bram", "Caius", "Dario", "Emrys", "Fenn", "Gael", "Hollis", "Idris", "Joss", "Kit",
    "Lorne", "Mato", "Niall", "Oren", "Piet", "Quill", "Rafe", "Soren", "Tavi", "Ulric", "Vance",
    "Wystan", "Yorick", "Zeno",
];
const SENIOR_LAST: [&str; 25] = [
    "Ashdown",
    "Brackley",
    "Corran",
    "Dunmore",
    "Elsworth",
    "Farrant",
    "Glenholm",
    "Harrow",
    "Ivesby",
    "Jarrow",
    "Kettlewell",
    "Lindqvale",
    "Marchetti",
    "Norcott",
    "Oakhurst",
    "Pellow",
    "Quarrie",
    "Rensby",
    "Stellan",
    "Thistlewood",
    "Underhay",
    "Varrick",
    "Whitmoor",
    "Yelland",
    "Zamorin",
];
const U21_FIRST: [&str; 20] = [
    "Ada", "Bryony", "Cass", "Delphine", "Elin", "Fia", "Greer", "Hana", "Isla", "Juno", "Kea",
    "Liv", "Maren", "Nell", "Odile", "Petra", "Rhian", "Saffi", "Tamsin", "Wren",
];
const U21_LAST: [&str; 20] = [
    "Arkwell",
    "Bellamore",
    "Caskey",
    "Drummond",
    "Eastleigh",
    "Fairbrook",
    "Gorran",
    "Hesketh",
    "Ingleby",
    "Jessop",
    "Kilbride",
    "Loxley",
    "Merrow",
    "Nantes",
    "Ockley",
    "Pendry",
    "Redvers",
    "Sallow",
    "Trevane",
    "Westcombe",
];

fn seg(label: &str, minutes: f64, intensity: Intensity) -> Segment {
    Segment {
        label: Some(label.into()),
        minutes,
        intensity,
    }
}

fn fraction(f: f64) -> Intensity {
    Intensity::FractionVo2max { fraction: f }
}

fn activity(key: &str) -> Intensity {
    Intensity::Activity {
        activity: key.into(),
    }
}

fn session(
    date: NaiveDate,
    hhmm: &str,
    kind: SessionKind,
    title: &str,
    key: bool,
    segments: Vec<Segment>,
) -> SessionInput {
    SessionInput {
        local_date: date,
        start_time: NaiveTime::parse_from_str(hhmm, "%H:%M").expect("demo time"),
        kind,
        title: title.into(),
        key_session: key,
        train_low: false,
        carbohydrate_loading: false,
        notes: None,
        segments,
    }
}

/// The senior week: a double-session day, gym, recovery, travel and a
/// 15:00 Saturday match.
pub fn senior_week(monday: NaiveDate) -> Vec<SessionInput> {
    let day = |n: u64| monday.checked_add_days(Days::new(n)).expect("date");
    // A deliberately low-carbohydrate aerobic ride on the light day, well
    // away from the key sessions (the plan warns when it is not).
    let mut train_low_ride = session(
        day(2),
        "07:30",
        SessionKind::Training,
        "Early aerobic ride (train low)",
        false,
        vec![seg(
            "steady ride",
            50.0,
            Intensity::Cycling { watts: 170.0 },
        )],
    );
    train_low_ride.train_low = true;
    vec![
        session(
            day(0),
            "09:30",
            SessionKind::Training,
            "Pitch: possession and pressing",
            false,
            vec![
                seg("warm-up", 15.0, fraction(0.5)),
                seg("rondos", 20.0, Intensity::HeartRate { bpm: 150.0 }),
                seg(
                    "small-sided games",
                    30.0,
                    Intensity::HeartRate { bpm: 170.0 },
                ),
                seg("cool-down", 10.0, Intensity::Mets { mets: 3.0 }),
            ],
        ),
        session(
            day(0),
            "15:30",
            SessionKind::Strength,
            "Gym: lower-body strength",
            false,
            vec![seg(
                "strength circuit",
                55.0,
                activity("resistance_vigorous"),
            )],
        ),
        train_low_ride,
        session(
            day(1),
            "11:00",
            SessionKind::Training,
            "Pitch: high-intensity running and finishing",
            true,
            vec![
                seg("warm-up", 15.0, fraction(0.55)),
                seg("repeated sprints with recoveries", 20.0, fraction(0.72)),
                seg("finishing", 25.0, Intensity::SessionRpe { rating: 6.0 }),
                seg(
                    "extensive runs",
                    20.0,
                    Intensity::Running {
                        speed_kmh: 12.0,
                        grade_percent: 0.0,
                    },
                ),
                seg("cool-down", 10.0, fraction(0.4)),
            ],
        ),
        session(
            day(2),
            "16:00",
            SessionKind::Recovery,
            "Pool and mobility",
            false,
            vec![
                seg("pool", 25.0, activity("swimming_freestyle_moderate")),
                seg("mobility", 20.0, Intensity::Mets { mets: 2.5 }),
            ],
        ),
        session(
            day(3),
            "10:30",
            SessionKind::Training,
            "Pitch: tactical eleven v eleven",
            true,
            vec![
                seg("warm-up", 15.0, fraction(0.5)),
                seg("eleven v eleven", 50.0, activity("football_training")),
                seg("set pieces", 20.0, Intensity::SessionRpe { rating: 3.0 }),
            ],
        ),
        session(
            day(4),
            "10:30",
            SessionKind::Training,
            "Pre-match activation",
            false,
            vec![
                seg("activation", 35.0, Intensity::SessionRpe { rating: 3.0 }),
                seg("short sprints", 10.0, fraction(0.8)),
            ],
        ),
        session(
            day(4),
            "14:30",
            SessionKind::Travel,
            "Coach travel to the away ground",
            false,
            vec![seg("coach", 180.0, Intensity::Mets { mets: 1.3 })],
        ),
        session(
            day(5),
            "15:00",
            SessionKind::Match,
            "League match (away)",
            true,
            vec![
                seg("first half", 47.0, activity("football_match")),
                seg("second half", 48.0, activity("football_match")),
            ],
        ),
        session(
            day(6),
            "11:00",
            SessionKind::Recovery,
            "Recovery: pool and stretch",
            false,
            vec![
                seg("pool", 20.0, activity("swimming_freestyle_moderate")),
                seg("stretch", 20.0, Intensity::Mets { mets: 2.3 }),
            ],
        ),
        session(
            day(6),
            "16:30",
            SessionKind::Training,
            "Top-up conditioning (non-starters)",
            false,
            vec![
                seg("warm-up", 10.0, fraction(0.55)),
                seg(
                    "interval runs",
                    20.0,
                    Intensity::Running {
                        speed_kmh: 14.0,
                        grade_percent: 0.0,
                    },
                ),
                seg("small-sided games", 15.0, activity("football_training")),
            ],
        ),
    ]
}

/// The under-21 week: evening sessions after school and work, a Sunday match.
fn u21_week(monday: NaiveDate) -> Vec<SessionInput> {
    let day = |n: u64| monday.checked_add_days(Days::new(n)).expect("date");
    vec![
        session(
            day(0),
            "18:30",
            SessionKind::Training,
            "Pitch: technical circuit",
            false,
            vec![
                seg("warm-up", 15.0, fraction(0.5)),
                seg(
                    "technical circuit",
                    45.0,
                    Intensity::SessionRpe { rating: 5.0 },
                ),
                seg("cool-down", 10.0, fraction(0.4)),
            ],
        ),
        session(
            day(1),
            "18:30",
            SessionKind::Strength,
            "Gym: movement and strength",
            false,
            vec![seg("strength", 50.0, activity("resistance_moderate"))],
        ),
        session(
            day(2),
            "18:30",
            SessionKind::Training,
            "Pitch: small-sided games",
            true,
            vec![
                seg("warm-up", 15.0, fraction(0.55)),
                seg(
                    "small-sided games",
                    40.0,
                    Intensity::HeartRate { bpm: 172.0 },
                ),
                seg("cool-down", 10.0, fraction(0.4)),
            ],
        ),
        session(
            day(4),
            "18:00",
            SessionKind::Training,
            "Pre-match shape",
            false,
            vec![seg(
                "team shape",
                50.0,
                Intensity::SessionRpe { rating: 3.0 },
            )],
        ),
        session(
            day(6),
            "13:00",
            SessionKind::Match,
            "Under-21 league match",
            true,
            vec![
                seg("first half", 46.0, activity("football_match")),
                seg("second half", 47.0, activity("football_match")),
            ],
        ),
    ]
}

struct Squad {
    team: &'static str,
    sex: Sex,
    first: &'static [&'static str],
    last: &'static [&'static str],
    birth_years: (i32, i32),
}

fn positions(i: usize) -> &'static str {
    match i % 25 {
        0..=2 => "goalkeeper",
        3..=10 => "defence",
        11..=18 => "midfield",
        _ => "attack",
    }
}

fn athlete_input(squad: &Squad, i: usize, dice: &mut Dice, week_start: NaiveDate) -> AthleteInput {
    let male = squad.sex == Sex::Male;
    let position = positions(i);
    let goalkeeper = position == "goalkeeper";
    let (mass_lo, mass_hi, h_lo, h_hi) = if male {
        if goalkeeper {
            (82.0, 92.0, 186.0, 196.0)
        } else {
            (66.0, 86.0, 172.0, 190.0)
        }
    } else if goalkeeper {
        (64.0, 74.0, 172.0, 182.0)
    } else {
        (54.0, 68.0, 158.0, 176.0)
    };
    let year = squad.birth_years.0
        + (dice.next() * f64::from(squad.birth_years.1 - squad.birth_years.0)).round() as i32;
    let month = 1 + (dice.next() * 11.0) as u32;
    let day = 1 + (dice.next() * 27.0) as u32;
    let yoyo = if goalkeeper {
        dice.between(1200.0, 1700.0)
    } else {
        dice.between(1800.0, 2800.0)
    };
    let yoyo = (yoyo / 40.0).round() * 40.0;
    let fat = if male {
        dice.round1(8.0, 13.5)
    } else {
        dice.round1(15.0, 22.0)
    };
    let measured_hr = dice.next() < 0.7;
    let mut input = AthleteInput {
        display_name: format!("{} {}", squad.first[i], squad.last[i]),
        sex: squad.sex,
        date_of_birth: NaiveDate::from_ymd_opt(year, month, day).expect("date"),
        height_cm: dice.round1(h_lo, h_hi),
        body_fat_percent: Some(fat),
        fat_free_mass_kg: None,
        vo2max: Some(Vo2maxSource::YoYoIr1 { distance_m: yoyo }),
        hr_max: measured_hr.then(|| dice.between(186.0, 203.0).round()),
        hr_rest: measured_hr.then(|| dice.between(44.0, 58.0).round()),
        training_status: if i % 7 == 6 {
            TrainingStatus::Trained
        } else {
            TrainingStatus::HighlyTrained
        },
        position_group: Some(position.into()),
        goal: GoalDirection::Maintain,
        goal_rate_kg_per_week: None,
        dietary_notes: None,
        health_flags: Vec::new(),
        status: AthleteStatus::Active,
        initial_body_mass: Some(InitialBodyMass {
            body_mass_kg: dice.round1(mass_lo, mass_hi),
            measured_on: week_start.checked_sub_days(Days::new(1)),
        }),
    };
    if i == 13 {
        input.goal = GoalDirection::Reduce;
        input.goal_rate_kg_per_week = Some(0.4);
        input.dietary_notes =
            Some("Planned body-mass reduction agreed with the club dietitian.".into());
    }
    if i == 20 {
        input.dietary_notes = Some("Vegetarian.".into());
    }
    input
}

/// Loads the demo when the database holds no team yet. Returns a summary.
pub async fn load_if_empty(db: &Db) -> Result<Option<String>, sqlx::Error> {
    if !teams::list(db, None, None, 1).await?.is_empty() {
        return Ok(None);
    }
    let tz: chrono_tz::Tz = TIME_ZONE.parse().expect("valid zone");
    let today = Utc::now().with_timezone(&tz).date_naive();
    let monday = today
        .checked_sub_days(Days::new(u64::from(today.weekday().num_days_from_monday())))
        .expect("date");
    load(db, monday).await.map(Some)
}

/// Loads both squads with the week starting on `monday`.
pub async fn load(db: &Db, monday: NaiveDate) -> Result<String, sqlx::Error> {
    let mut dice = Dice(0x006b_6573_7472_656c);
    let squads = [
        (
            Squad {
                team: "Kestrel Vale FC senior squad",
                sex: Sex::Male,
                first: &SENIOR_FIRST,
                last: &SENIOR_LAST,
                birth_years: (1993, 2005),
            },
            25usize,
            senior_week(monday),
        ),
        (
            Squad {
                team: "Kestrel Vale FC under-21 women",
                sex: Sex::Female,
                first: &U21_FIRST,
                last: &U21_LAST,
                birth_years: (2006, 2010),
            },
            20usize,
            u21_week(monday),
        ),
    ];
    let mut summary = format!("Demo loaded: {CLUB} (fictional), week of {monday}.\n");
    for (squad, size, week) in squads {
        let team = teams::create(
            db,
            DEMO,
            &TeamInput {
                name: squad.team.into(),
                time_zone: TIME_ZONE.into(),
            },
        )
        .await?;
        let mut ids: Vec<Uuid> = Vec::with_capacity(size);
        for i in 0..size {
            let mut input = athlete_input(&squad, i, &mut dice, monday);
            if squad.sex == Sex::Female && i == 8 {
                input.health_flags = vec![HealthFlag::Diabetes];
                input.dietary_notes =
                    Some("Type 1 diabetes: plan reviewed with her physician.".into());
            }
            ids.push(
                athletes::create(db, DEMO, team.id, &input, monday)
                    .await?
                    .id,
            );
        }
        let created = sessions::import(db, DEMO, team.id, None, &week)
            .await?
            .created;
        // The player on a body-mass reduction goal has pinned a low
        // carbohydrate day before the match himself: the plan should flag it.
        if squad.sex == Sex::Male {
            let friday = monday + Days::new(4);
            let pins = crate::engine::day::settings::DayPins {
                carbohydrate_g_per_kg: Some(4.0),
                protein_g_per_kg: None,
                energy_kcal: None,
            };
            crate::store::planning::put_pin(
                db,
                DEMO,
                team.id,
                ids[13],
                friday,
                &Precondition::None,
                &pins,
                Some("Asked to cut carbohydrate the day before the match to make weight: review with him."),
            )
            .await?;
        }
        // Match day (recorded after the match): eleven start (the first
        // goalkeeper and players 3-12); two go off at 70 minutes; five
        // substitutes come on; the others are not in the matchday squad; one
        // injured player does rehab on the bike instead. Before the minutes
        // were recorded every selected player was prepared alike.
        if let Some(matchday) = created.iter().find(|s| s.kind == SessionKind::Match) {
            let set = |mode, minutes, portion, segments, note: &str| ParticipationInput {
                mode,
                minutes,
                portion,
                segments,
                note: Some(note.into()),
            };
            let mut exceptions: Vec<(usize, ParticipationInput)> = vec![
                (
                    3,
                    set(
                        ParticipationMode::Shortened,
                        Some(70.0),
                        Some(Portion::FromStart),
                        None,
                        "substituted at 70'",
                    ),
                ),
                (
                    12,
                    set(
                        ParticipationMode::Shortened,
                        Some(70.0),
                        Some(Portion::FromStart),
                        None,
                        "substituted at 70'",
                    ),
                ),
            ];
            let substitutes: Vec<usize> = [13usize, 16, 17, 18, 19]
                .into_iter()
                .filter(|&i| i < size - 1)
                .collect();
            for (n, &i) in substitutes.iter().enumerate() {
                let minutes = [25.0, 25.0, 15.0, 10.0, 5.0][n];
                exceptions.push((
                    i,
                    set(
                        ParticipationMode::Shortened,
                        Some(minutes),
                        Some(Portion::UntilEnd),
                        None,
                        "substitute",
                    ),
                ));
            }
            let selected = |i: usize| i == 0 || (3..=12).contains(&i) || substitutes.contains(&i);
            for i in (0..size - 1).filter(|&i| !selected(i)) {
                exceptions.push((
                    i,
                    set(
                        ParticipationMode::Skipped,
                        None,
                        None,
                        None,
                        "not in the matchday squad",
                    ),
                ));
            }
            exceptions.push((
                size - 1,
                set(
                    ParticipationMode::Replaced,
                    None,
                    None,
                    Some(vec![seg(
                        "rehab bike",
                        40.0,
                        Intensity::Cycling { watts: 140.0 },
                    )]),
                    "hamstring rehab",
                ),
            ));
            exceptions.sort_by_key(|(i, _)| *i);
            exceptions.dedup_by_key(|(i, _)| *i);
            for (i, input) in exceptions {
                sessions::put_participation(
                    db,
                    DEMO,
                    team.id,
                    matchday.id,
                    ids[i],
                    &Precondition::None,
                    &input,
                )
                .await?;
            }
        }
        // The day after the match: a top-up session for the players who did
        // not start; the starters and the injured player skip it.
        if let Some(top_up) = created.iter().find(|s| s.title.starts_with("Top-up")) {
            for i in (0..size).filter(|&i| i == 0 || (3..=12).contains(&i) || i == size - 1) {
                sessions::put_participation(
                    db,
                    DEMO,
                    team.id,
                    top_up.id,
                    ids[i],
                    &Precondition::None,
                    &ParticipationInput {
                        mode: ParticipationMode::Skipped,
                        minutes: None,
                        portion: None,
                        segments: None,
                        note: Some("started the match: recovery instead".into()),
                    },
                )
                .await?;
            }
        }
        summary.push_str(&format!(
            "  {} ({} athletes, {} sessions): team id {}\n",
            squad.team,
            size,
            created.len(),
            team.id
        ));
    }
    Ok(summary)
}

/// A synthetic squad of `size` senior players (names repeat past 25), for
/// benchmarks: the same generator as the demo, without a database.
pub fn synthetic_squad(size: usize, monday: NaiveDate) -> Vec<AthleteInput> {
    let mut dice = Dice(0x0062_656e_6368);
    let squad = Squad {
        team: "benchmark",
        sex: Sex::Male,
        first: &SENIOR_FIRST,
        last: &SENIOR_LAST,
        birth_years: (1993, 2005),
    };
    (0..size)
        .map(|i| athlete_input(&squad, i % 25, &mut dice, monday))
        .collect()
}
