//! Week plans on the demo squad: match preparation, speedy refuelling,
//! substitutes, feeds (CSV, iCalendar), ETags and "what changed".

use chrono::{Days, NaiveDate};
use reqwest::Method;
use serde_json::{Value, json};
use uuid::Uuid;

use crate::helpers::*;

/// The demo week used by these tests (a Monday).
const MONDAY: &str = "2026-11-30";

fn day(n: u64) -> String {
    (MONDAY.parse::<NaiveDate>().unwrap() + Days::new(n)).to_string()
}

/// Loads the demo club and returns the senior team's id.
async fn demo(app: &TestApp) -> Uuid {
    glycoweek::demo::load(&app.db, MONDAY.parse().unwrap())
        .await
        .expect("demo");
    let teams: Value = app.get("/v1/teams", &app.admin).await.json().await.unwrap();
    teams["items"]
        .as_array()
        .unwrap()
        .iter()
        .find(|t| t["name"].as_str().unwrap().contains("senior"))
        .map(id_of)
        .unwrap()
}

async fn summary(app: &TestApp, team: Uuid) -> Value {
    let res = app
        .get(
            &format!("/v1/teams/{team}/plan/summary?from={MONDAY}"),
            &app.admin,
        )
        .await;
    assert_eq!(res.status(), 200);
    res.json().await.unwrap()
}

fn row<'a>(summary: &'a Value, athlete: &str, date: &str) -> &'a Value {
    summary["rows"]
        .as_array()
        .unwrap()
        .iter()
        .find(|r| r["athlete_id"] == athlete && r["date"] == date)
        .unwrap_or_else(|| panic!("no row for {athlete} on {date}"))
}

/// Athletes of the match by how they take part.
async fn match_participants(app: &TestApp, team: Uuid) -> (Vec<String>, Vec<String>) {
    let sessions: Value = app
        .get(&format!("/v1/teams/{team}/sessions?kind=match"), &app.admin)
        .await
        .json()
        .await
        .unwrap();
    let session = sessions["items"][0]["id"].as_str().unwrap().to_owned();
    let fuel: Value = app
        .get(&format!("/v1/sessions/{session}/fuel"), &app.admin)
        .await
        .json()
        .await
        .unwrap();
    let by = |mode: &str| {
        fuel["athletes"]
            .as_array()
            .unwrap()
            .iter()
            .filter(|a| a["takes_part"] == mode)
            .map(|a| a["athlete_id"].as_str().unwrap().to_owned())
            .collect::<Vec<_>>()
    };
    (by("full"), by("shortened"))
}

#[tokio::test]
async fn the_demo_week_prepares_the_day_before_and_the_day_of_the_match() {
    let app = spawn_app().await;
    let team = demo(&app).await;
    let s = summary(&app, team).await;
    assert!(
        s["unplanned"].as_array().unwrap().is_empty(),
        "{}",
        s["unplanned"]
    );
    assert_eq!(s["rows"].as_array().unwrap().len(), 25 * 7);
    let (starters, _) = match_participants(&app, team).await;
    assert!(starters.len() >= 8);
    for starter in &starters {
        for date in [day(4), day(5)] {
            let r = row(&s, starter, &date);
            let g = r["carbohydrate_g_per_kg"].as_f64().unwrap();
            if r["carbohydrate_pinned"] == true {
                // The demo's player who cut carbohydrate himself: flagged.
                assert!(g < 6.0);
                let flags = r["warnings"].as_array().unwrap();
                assert!(
                    flags.iter().any(|w| w == "pin_outside_published_range"),
                    "{r}"
                );
                continue;
            }
            // Team-sport practice: 6-8 g/kg on the day before and the day of a
            // match (expert group statement on nutrition in elite football,
            // 2021, from memory), unless a pin says otherwise.
            assert!((6.0..=8.0).contains(&g), "{starter} on {date}: {g} g/kg");
        }
    }
    assert!(s["cautions"].as_array().unwrap().len() >= 2);
}

#[tokio::test]
async fn a_second_pitch_session_the_same_day_triggers_speedy_refuelling_and_a_gym_session_does_not()
{
    let app = spawn_app().await;
    let team = demo(&app).await;
    let (starters, _) = match_participants(&app, team).await;
    let path = format!("/v1/athletes/{}/plan?from={MONDAY}", starters[0]);
    // The demo Monday: a morning pitch session, then the gym: the gym does
    // not call for refilling glycogen (common practice), so a normal recovery meal.
    let plan: Value = app.get(&path, &app.admin).await.json().await.unwrap();
    let monday = &plan["plan"]["days"][0]["plan"];
    assert_eq!(
        monday["sessions"][0]["after"]["guidance"], "recovery_meal",
        "{}",
        monday["sessions"][0]
    );
    // A second pitch session three hours later: speedy refuelling.
    let res = app
        .post(
            &format!("/v1/teams/{team}/sessions"),
            &app.admin,
            &json!({
                "local_date": MONDAY, "start_time": "13:30", "kind": "training",
                "title": "Extra finishing", "segments": [
                    {"minutes": 45, "intensity": {"form": "fraction_vo2max", "fraction": 0.7}}
                ]
            }),
        )
        .await;
    assert_eq!(res.status(), 201, "{}", res.text().await.unwrap());
    let plan: Value = app.get(&path, &app.admin).await.json().await.unwrap();
    let first = &plan["plan"]["days"][0]["plan"]["sessions"][0];
    // Thomas, Erdman & Burke (2016): under 8 h between sessions, 1.0-1.2 g/kg/h
    // for the first 4 h (speedy refuelling).
    assert_eq!(first["after"]["guidance"], "speedy_refuelling", "{first}");
    let range = &first["after"]["range_g_per_kg_per_hour"];
    assert!(
        range["min"].as_f64().unwrap() >= 1.0 - 1e-9
            && range["max"].as_f64().unwrap() <= 1.2 + 1e-9
    );
}

#[tokio::test]
async fn substitutes_are_prepared_like_starters_and_the_day_after_follows_the_minutes_played() {
    let app = spawn_app().await;
    let team = demo(&app).await;
    let s = summary(&app, team).await;
    let (starters, shortened) = match_participants(&app, team).await;
    let value = |id: &str, date: &str, field: &str| row(&s, id, date)[field].as_f64().unwrap();
    let subs: Vec<String> = shortened
        .into_iter()
        .filter(|id| value(id, &day(5), "training_minutes") < 45.0)
        .collect();
    assert!(!subs.is_empty());
    // A dietitian's pin is the dietitian's decision, not the plan's: left out.
    let mean = |ids: &[String], date: &str, field: &str| {
        let unpinned: Vec<&String> = ids
            .iter()
            .filter(|a| row(&s, a, date)["carbohydrate_pinned"] != true)
            .collect();
        unpinned.iter().map(|a| value(a, date, field)).sum::<f64>() / unpinned.len() as f64
    };
    // Before the match nobody knows the minutes: the day before and match day
    // are planned alike (expert group statement on nutrition in elite
    // football, 2021, from memory: 6-8 g/kg for the squad).
    for d in [day(4), day(5)] {
        let (a, b) = (
            mean(&starters, &d, "carbohydrate_g_per_kg"),
            mean(&subs, &d, "carbohydrate_g_per_kg"),
        );
        assert!((a - b).abs() < 0.3, "{d}: starters {a} substitutes {b}");
    }
    // The day after follows the minutes recorded: starters begin it with
    // emptier working muscles than substitutes.
    assert!(
        mean(&starters, &day(6), "muscle_glycogen_start")
            < mean(&subs, &day(6), "muscle_glycogen_start")
    );
}

#[tokio::test]
async fn the_csv_parses_and_its_daily_totals_equal_the_sum_of_its_rows() {
    let app = spawn_app().await;
    let team = demo(&app).await;
    let totals_csv = app
        .get(
            &format!("/v1/teams/{team}/plan/totals.csv?from={MONDAY}"),
            &app.admin,
        )
        .await
        .text()
        .await
        .unwrap();
    let mut totals: std::collections::BTreeMap<String, [f64; 4]> = Default::default();
    let mut reader = csv::Reader::from_reader(totals_csv.as_bytes());
    let headers = reader.headers().unwrap().clone();
    for record in reader.records() {
        let record = record.unwrap();
        let get = |name: &str| &record[headers.iter().position(|h| h == name).unwrap()];
        totals.insert(
            get("date").to_owned(),
            ["carbohydrate_g", "protein_g", "fat_g", "energy_kcal"]
                .map(|c| get(c).parse().unwrap()),
        );
    }
    let res = app
        .get(
            &format!("/v1/teams/{team}/plan/summary.csv?from={MONDAY}"),
            &app.admin,
        )
        .await;
    assert_eq!(res.status(), 200);
    assert!(
        res.headers()["content-type"]
            .to_str()
            .unwrap()
            .starts_with("text/csv")
    );
    let text = res.text().await.unwrap();
    let mut reader = csv::Reader::from_reader(text.as_bytes());
    let headers = reader.headers().unwrap().clone();
    let col = |name: &str| headers.iter().position(|h| h == name).unwrap();
    let mut sums: std::collections::BTreeMap<String, [f64; 4]> = Default::default();
    let mut athlete_rows = 0;
    for record in reader.records() {
        let record = record.unwrap();
        let values = ["carbohydrate_g", "protein_g", "fat_g", "energy_kcal"]
            .map(|c| record[col(c)].parse::<f64>().unwrap());
        let date = record[col("date")].to_owned();
        athlete_rows += 1;
        let s = sums.entry(date).or_default();
        for i in 0..4 {
            s[i] += values[i];
        }
    }
    assert_eq!(athlete_rows, 25 * 7);
    assert_eq!(totals.len(), 7);
    for (date, total) in &totals {
        let sum = sums[date];
        for i in 0..4 {
            assert!(
                (total[i] - sum[i]).abs() < 0.51,
                "{date} column {i}: total {} vs rows {}",
                total[i],
                sum[i]
            );
        }
    }
}

#[tokio::test]
async fn the_plan_etag_changes_exactly_when_an_input_changes() {
    let app = spawn_app().await;
    let team = demo(&app).await;
    let path = format!("/v1/teams/{team}/plan/summary?from={MONDAY}");
    let first = app.get(&path, &app.admin).await;
    let etag = first.headers()["etag"].to_str().unwrap().to_owned();
    let again = app.get(&path, &app.admin).await;
    assert_eq!(again.headers()["etag"], etag.as_str());
    let cached = app
        .req(Method::GET, &path, Some(&app.admin))
        .header("if-none-match", &etag)
        .send()
        .await
        .unwrap();
    assert_eq!(cached.status(), 304);
    // Move a session: the next plan has a new version.
    let sessions: Value = app
        .get(
            &format!("/v1/teams/{team}/sessions?kind=strength"),
            &app.admin,
        )
        .await
        .json()
        .await
        .unwrap();
    let session = sessions["items"][0]["id"].as_str().unwrap();
    let moved = app
        .patch(
            &format!("/v1/sessions/{session}"),
            &app.admin,
            &json!({"start_time": "17:30"}),
            None,
        )
        .await;
    assert_eq!(moved.status(), 200);
    let after = app
        .req(Method::GET, &path, Some(&app.admin))
        .header("if-none-match", &etag)
        .send()
        .await
        .unwrap();
    assert_eq!(after.status(), 200);
    assert_ne!(after.headers()["etag"], etag.as_str());
}

#[tokio::test]
async fn moving_the_match_shows_what_changed_in_the_plan() {
    let app = spawn_app().await;
    let team = demo(&app).await;
    let before = summary(&app, team).await;
    let version = before["version"].as_i64().unwrap();
    let sessions: Value = app
        .get(&format!("/v1/teams/{team}/sessions?kind=match"), &app.admin)
        .await
        .json()
        .await
        .unwrap();
    let session = sessions["items"][0]["id"].as_str().unwrap();
    let moved = app
        .patch(
            &format!("/v1/sessions/{session}"),
            &app.admin,
            &json!({"local_date": day(6)}),
            None,
        )
        .await;
    assert_eq!(moved.status(), 200);
    let res = app
        .get(
            &format!("/v1/teams/{team}/plan/changes?since_version={version}&from={MONDAY}"),
            &app.admin,
        )
        .await;
    assert_eq!(res.status(), 200);
    let changes: Value = res.json().await.unwrap();
    assert_eq!(changes["input_changes"].as_array().unwrap().len(), 1);
    assert_eq!(changes["input_changes"][0]["entity_id"], session);
    let days = changes["days"].as_array().unwrap();
    assert!(days.iter().any(|d| d["date"] == day(5)), "Saturday changed");
    assert!(days.iter().any(|d| d["date"] == day(6)), "Sunday changed");
    // An unknown version is a clear error, not an empty diff.
    let bad = app
        .get(
            &format!("/v1/teams/{team}/plan/changes?since_version=999999&from={MONDAY}"),
            &app.admin,
        )
        .await;
    let p = problem(bad, 422).await;
    assert_eq!(fields(&p), vec!["since_version"]);
}

#[tokio::test]
async fn the_changes_feed_pages_with_its_cursor() {
    let app = spawn_app().await;
    let team = demo(&app).await;
    let first: Value = app
        .get(&format!("/v1/teams/{team}/changes?limit=5"), &app.admin)
        .await
        .json()
        .await
        .unwrap();
    assert_eq!(first["items"].as_array().unwrap().len(), 5);
    let last = first["items"][4]["seq"].as_i64().unwrap();
    let cursor = first["next_cursor"].as_str().unwrap();
    let second: Value = app
        .get(
            &format!("/v1/teams/{team}/changes?cursor={cursor}&limit=5"),
            &app.admin,
        )
        .await
        .json()
        .await
        .unwrap();
    assert!(second["items"][0]["seq"].as_i64().unwrap() > last);
    assert!(
        second["items"][0].get("after").is_none(),
        "the feed carries no values"
    );
    // Polling later resumes from the last seq processed.
    let later: Value = app
        .get(
            &format!("/v1/teams/{team}/changes?since={last}&limit=5"),
            &app.admin,
        )
        .await
        .json()
        .await
        .unwrap();
    assert_eq!(later["items"][0]["seq"], second["items"][0]["seq"]);
}

#[tokio::test]
async fn the_calendar_feed_parses_and_keeps_local_times_across_a_clock_change() {
    let app = spawn_app().await;
    let team = app.team("DST squad").await;
    let athlete = app.athlete(team, "Clock Change").await;
    // Europe/London moves from GMT to BST on Sunday 2027-03-28.
    for date in ["2027-03-26", "2027-03-29"] {
        let res = app
            .post(
                &format!("/v1/teams/{team}/sessions"),
                &app.admin,
                &session_body(date, "10:00"),
            )
            .await;
        assert_eq!(res.status(), 201);
    }
    let created: Value = app
        .post(
            &format!("/v1/athletes/{athlete}/calendar-feeds"),
            &app.admin,
            &json!({}),
        )
        .await
        .json()
        .await
        .unwrap();
    let path = created["path"].as_str().unwrap();
    let res = app
        .req(
            Method::GET,
            &format!("{path}?from=2027-03-25&to=2027-03-30"),
            None,
        )
        .send()
        .await
        .unwrap();
    assert_eq!(res.status(), 200);
    assert!(
        res.headers()["content-type"]
            .to_str()
            .unwrap()
            .starts_with("text/calendar")
    );
    let text = res.text().await.unwrap();
    let calendar: icalendar::Calendar = text.parse().expect("RFC 5545 parses");
    let starts: Vec<String> = calendar
        .components
        .iter()
        .filter_map(|c| c.as_event())
        .filter(|e| {
            icalendar::Component::get_summary(*e).is_some_and(|s| s.contains("Pitch session"))
        })
        .filter_map(|e| icalendar::Component::property_value(e, "DTSTART").map(str::to_owned))
        .collect();
    // Written in the team's zone: 10:00 on both sides of the change, with
    // the VTIMEZONE that says 10:00 is GMT before and BST after.
    assert!(starts.contains(&"20270326T100000".to_owned()), "{starts:?}");
    assert!(starts.contains(&"20270329T100000".to_owned()), "{starts:?}");
    assert!(text.contains("DTSTART;TZID=Europe/London:20270326T100000"));
    assert!(text.contains("BEGIN:VTIMEZONE\r\nTZID:Europe/London\r\n"));
    // UK clocks go forward at 01:00 GMT on the last Sunday of March.
    assert!(text.contains(
        "BEGIN:DAYLIGHT\r\nDTSTART:20270328T010000\r\nTZOFFSETFROM:+0000\r\nTZOFFSETTO:+0100\r\n"
    ));
    // Revoked links stop working at once.
    let feed = created["id"].as_str().unwrap();
    let revoked = app
        .delete(
            &format!("/v1/athletes/{athlete}/calendar-feeds/{feed}"),
            &app.admin,
            None,
        )
        .await;
    assert_eq!(revoked.status(), 204);
    let gone = app.req(Method::GET, path, None).send().await.unwrap();
    problem(gone, 404).await;
}

#[tokio::test]
async fn plans_of_another_team_are_not_visible() {
    let app = spawn_app().await;
    let team = demo(&app).await;
    let other = app.team("Other").await;
    let reader = app.token("reader", other).await;
    for path in [
        format!("/v1/teams/{team}/plan"),
        format!("/v1/teams/{team}/plan/summary"),
        format!("/v1/teams/{team}/plan/summary.csv"),
        format!("/v1/teams/{team}/changes"),
    ] {
        let res = app.get(&path, &reader).await;
        problem(res, 404).await;
    }
}

#[tokio::test]
async fn an_out_of_range_start_glycogen_fraction_is_refused_on_every_plan_read() {
    let app = spawn_app().await;
    let team = app.team("Range FC").await;
    let athlete = app.athlete(team, "Rhea Rundle").await;
    for path in [
        format!("/v1/teams/{team}/plan/summary?start_glycogen_fraction=1.3"),
        format!("/v1/teams/{team}/plan?start_glycogen_fraction=0.1"),
        format!("/v1/teams/{team}/plan/summary.csv?start_glycogen_fraction=1.01"),
        format!("/v1/athletes/{athlete}/plan?start_glycogen_fraction=2"),
    ] {
        let p = problem(app.get(&path, &app.admin).await, 422).await;
        assert_eq!(
            p["errors"][0]["field"], "start_glycogen_fraction",
            "{path}: {p}"
        );
    }
}

#[tokio::test]
async fn sessions_weeks_before_the_span_do_not_stop_the_plan() {
    // The store loads a window wide enough for a span starting on any
    // weekday; the engine reads only from the day before its carry-over
    // days, so older sessions must be left out, not rejected.
    let app = spawn_app().await;
    let team = app.team("History FC").await;
    let athlete = app.athlete(team, "Rowan Test").await;
    for back in [13u64, 11, 9, 6, 5, 1] {
        let date = MONDAY.parse::<NaiveDate>().unwrap() - Days::new(back);
        app.session(team, &date.to_string()).await;
    }
    app.session(team, MONDAY).await;
    for from in [day(0), day(3), day(6)] {
        let res = app
            .get(
                &format!("/v1/teams/{team}/plan/summary?from={from}&to={}", day(6)),
                &app.admin,
            )
            .await;
        let summary = body(res, 200).await;
        assert_eq!(summary["unplanned"], json!([]), "span from {from}");
        let rows = summary["rows"].as_array().unwrap();
        assert!(
            !rows.is_empty() && rows.iter().all(|r| r["athlete_id"] == athlete.to_string()),
            "span from {from}: {rows:?}"
        );
    }
}
