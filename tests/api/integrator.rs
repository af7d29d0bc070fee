//! Issue 11, "integrator-grade outputs": what a club's integrator or a
//! kitchen meets when it generates a client, pages lists, opens the CSV in a
//! spreadsheet, subscribes to a calendar, places plan times, caches plans
//! by version, creates tokens on the command line and sends odd input.
//! One test (or a few) per item of the issue.

use std::io::Read as _;

use reqwest::Method;
use serde_json::{Value, json};
use uuid::Uuid;

use crate::helpers::*;

/// The demo week (a Monday) and its senior team.
const MONDAY: &str = "2026-11-30";

async fn demo(app: &TestApp) -> Uuid {
    glycoweek::demo::load(&app.db, MONDAY.parse().unwrap())
        .await
        .expect("demo");
    let teams = body(app.get("/v1/teams", &app.admin).await, 200).await;
    teams["items"]
        .as_array()
        .unwrap()
        .iter()
        .find(|t| t["name"].as_str().unwrap().contains("senior"))
        .map(id_of)
        .unwrap()
}

async fn create(app: &TestApp, path: &str, body_json: Value) -> Value {
    body(app.post(path, &app.admin, &body_json).await, 201).await
}

// ------------------------------------------------------------ 1. client generation

#[tokio::test]
async fn the_time_zone_is_a_string_checked_against_iana_not_an_enum() {
    let app = spawn_app().await;
    let doc = body(
        app.req(Method::GET, "/openapi.json", None)
            .send()
            .await
            .unwrap(),
        200,
    )
    .await;
    let zone = &doc["components"]["schemas"]["TeamInput"]["properties"]["time_zone"];
    assert_eq!(zone["type"], "string");
    assert!(zone.get("enum").is_none(), "no enum of zone names: {zone}");
    assert_eq!(zone["example"], "Europe/London");
    // No enum anywhere in the document has values that clash once
    // normalised to identifiers the way client generators do.
    let mut clashes = Vec::new();
    collect_enum_clashes(&doc, &mut clashes);
    assert!(clashes.is_empty(), "{clashes:?}");
    // The service still checks the name against the zone database.
    let bad = app
        .post(
            "/v1/teams",
            &app.admin,
            &json!({"name": "Zoneless", "time_zone": "Mars/Olympus_Mons"}),
        )
        .await;
    assert_eq!(fields(&problem(bad, 422).await), vec!["time_zone"]);
    let good = app
        .post(
            "/v1/teams",
            &app.admin,
            &json!({"name": "Lisbon", "time_zone": "Europe/Lisbon"}),
        )
        .await;
    assert_eq!(good.status(), 201);
}

fn collect_enum_clashes(value: &Value, out: &mut Vec<String>) {
    match value {
        Value::Object(map) => {
            if let Some(values) = map.get("enum").and_then(Value::as_array) {
                let mut seen = std::collections::HashSet::new();
                for v in values.iter().filter_map(Value::as_str) {
                    let key: String = v
                        .chars()
                        .filter(|c| c.is_ascii_alphanumeric())
                        .collect::<String>()
                        .to_ascii_uppercase();
                    if !seen.insert(key.clone()) {
                        out.push(format!("{key} ({v})"));
                    }
                }
            }
            map.values().for_each(|v| collect_enum_clashes(v, out));
        }
        Value::Array(items) => items.iter().for_each(|v| collect_enum_clashes(v, out)),
        _ => {}
    }
}

// ------------------------------------------------------------ 2. one list shape

#[tokio::test]
async fn every_list_answers_items_and_next_cursor_and_pages_with_limit_and_cursor() {
    let app = spawn_app().await;
    let team = demo(&app).await;
    let athletes = body(
        app.get(&format!("/v1/teams/{team}/athletes?limit=200"), &app.admin)
            .await,
        200,
    )
    .await;
    let athlete = athletes["items"][0]["id"].as_str().unwrap().to_owned();
    let matches = body(
        app.get(&format!("/v1/teams/{team}/sessions?kind=match"), &app.admin)
            .await,
        200,
    )
    .await;
    let session = matches["items"][0]["id"].as_str().unwrap().to_owned();
    // Two of everything a list can hold, so that `limit=1` has a next page.
    for date in ["2026-11-20", "2026-11-25"] {
        create(
            &app,
            &format!("/v1/athletes/{athlete}/body-mass"),
            json!({"measured_on": date, "body_mass_kg": 70.0}),
        )
        .await;
        create(
            &app,
            &format!("/v1/athletes/{athlete}/sweat-tests"),
            json!({"tested_on": date, "body_mass_before_kg": 70.0, "body_mass_after_kg": 69.2, "fluid_drunk_l": 0.5, "duration_hours": 1.0}),
        )
        .await;
        create(
            &app,
            &format!("/v1/athletes/{athlete}/calendar-feeds"),
            json!({}),
        )
        .await;
    }
    for date in ["2026-12-01", "2026-12-02"] {
        let pin = app
            .put(
                &format!("/v1/athletes/{athlete}/pins/{date}"),
                &app.admin,
                &json!({"carbohydrate_g_per_kg": 6.0}),
            )
            .await;
        assert_eq!(pin.status(), 200);
    }
    let other = athletes["items"][1]["id"].as_str().unwrap();
    for a in [&athlete, other] {
        let res = app
            .put(
                &format!("/v1/sessions/{session}/participation/{a}"),
                &app.admin,
                &json!({"mode": "skipped"}),
            )
            .await;
        assert_eq!(res.status(), 200);
    }
    app.token("reader", team).await;
    let lists = [
        "/v1/teams".to_owned(),
        "/v1/tokens".to_owned(),
        "/v1/activities".to_owned(),
        format!("/v1/teams/{team}/athletes"),
        format!("/v1/teams/{team}/sessions"),
        format!("/v1/teams/{team}/audit"),
        format!("/v1/teams/{team}/changes"),
        format!("/v1/athletes/{athlete}/body-mass"),
        format!("/v1/athletes/{athlete}/pins?from=2026-11-01"),
        format!("/v1/athletes/{athlete}/sweat-tests"),
        format!("/v1/athletes/{athlete}/calendar-feeds"),
        format!("/v1/sessions/{session}/participation"),
    ];
    for list in &lists {
        let sep = if list.contains('?') { '&' } else { '?' };
        let first = body(
            app.get(&format!("{list}{sep}limit=1"), &app.admin).await,
            200,
        )
        .await;
        let keys: Vec<&String> = first
            .as_object()
            .expect("an object")
            .keys()
            .filter(|k| *k != "sources") // the citations of the page, if it has any
            .collect();
        assert_eq!(keys, ["items", "next_cursor"], "{list}");
        assert_eq!(first["items"].as_array().unwrap().len(), 1, "{list}");
        assert!(first["next_cursor"].is_string(), "{list} has a second page");
        // Following the cursor visits every item once, and the last page
        // says so with `next_cursor: null`.
        let (all, pages) = app
            .all_pages(&format!("{list}{sep}limit=1"), &app.admin)
            .await;
        assert_eq!(pages, all.len(), "{list}: one item per page");
        let whole = body(
            app.get(&format!("{list}{sep}limit=200"), &app.admin).await,
            200,
        )
        .await;
        assert_eq!(whole["items"].as_array().unwrap(), &all, "{list}");
        assert!(
            whole["next_cursor"].is_null(),
            "{list}: null on the last page"
        );
        let bad = app
            .get(&format!("{list}{sep}cursor=not-a-cursor"), &app.admin)
            .await;
        assert_eq!(fields(&problem(bad, 422).await), vec!["cursor"], "{list}");
    }
}

// ------------------------------------------------------------ 3. the kitchen's CSV

#[tokio::test]
async fn the_kitchen_csv_has_athlete_rows_only_with_json_names_and_neutralised_text() {
    let app = spawn_app().await;
    let team = app.team("Kitchen").await;
    let hostile = [
        "=HYPERLINK(\"http://x\")",
        "+41 Sam",
        "-2+3",
        "@SUM(A1)",
        "Ada \"Quote\", Jr",
    ];
    for name in hostile {
        app.athlete(team, name).await;
    }
    // One athlete trains, the others have no sessions at all.
    app.session(team, "2026-12-08").await;
    let summary = body(
        app.get(
            &format!("/v1/teams/{team}/plan/summary?from=2026-12-07"),
            &app.admin,
        )
        .await,
        200,
    )
    .await;
    let json_rows = summary["rows"].as_array().unwrap();
    let res = app
        .get(
            &format!("/v1/teams/{team}/plan/summary.csv?from=2026-12-07"),
            &app.admin,
        )
        .await;
    assert_eq!(res.status(), 200);
    let text = res.text().await.unwrap();
    let mut reader = csv::Reader::from_reader(text.as_bytes());
    let header: Vec<String> = reader
        .headers()
        .unwrap()
        .iter()
        .map(str::to_owned)
        .collect();
    let mut json_keys: Vec<String> = json_rows[0].as_object().unwrap().keys().cloned().collect();
    let mut sorted_header = header.clone();
    json_keys.sort();
    sorted_header.sort();
    assert_eq!(sorted_header, json_keys, "column names are the JSON fields");
    let records: Vec<csv::StringRecord> = reader.records().map(Result::unwrap).collect();
    assert_eq!(records.len(), 5 * 7, "athlete rows only, no totals");
    let col = |name: &str| header.iter().position(|h| h == name).unwrap();
    for record in &records {
        for cell in record.iter() {
            assert_ne!(cell, "-0", "no negative zero in {record:?}");
            assert!(
                !cell.starts_with(['=', '+', '-', '@', '\t', '\r']) || cell.parse::<f64>().is_ok(),
                "text cell {cell:?} could run as a formula"
            );
        }
        let name = &record[col("display_name")];
        assert!(
            hostile.contains(&name) || hostile.contains(&name.trim_start_matches('\'')),
            "{name}"
        );
        // Values equal the JSON's.
        let id = &record[col("athlete_id")];
        let date = &record[col("date")];
        let json_row = json_rows
            .iter()
            .find(|r| r["athlete_id"] == id && r["date"] == date)
            .unwrap();
        assert_eq!(
            record[col("carbohydrate_g")].parse::<f64>().unwrap(),
            json_row["carbohydrate_g"].as_f64().unwrap()
        );
        assert_eq!(
            record[col("lowest_session_start_glycogen")].is_empty(),
            json_row["lowest_session_start_glycogen"].is_null()
        );
    }
    assert!(
        text.contains("\"'=HYPERLINK(\"\"http://x\"\")\""),
        "quoted and prefixed"
    );
    // Squad totals are their own sheet, with the JSON summary's names.
    let totals = app
        .get(
            &format!("/v1/teams/{team}/plan/totals.csv?from=2026-12-07"),
            &app.admin,
        )
        .await
        .text()
        .await
        .unwrap();
    let mut reader = csv::Reader::from_reader(totals.as_bytes());
    let header: Vec<String> = reader
        .headers()
        .unwrap()
        .iter()
        .map(str::to_owned)
        .collect();
    let mut json_keys: Vec<String> = summary["day_totals"][0]
        .as_object()
        .unwrap()
        .keys()
        .cloned()
        .collect();
    json_keys.sort();
    let mut sorted_header = header.clone();
    sorted_header.sort();
    assert_eq!(sorted_header, json_keys);
    assert_eq!(reader.records().count(), 7);
}

// ------------------------------------------------------------ 4. calendar feeds

#[tokio::test]
async fn the_calendar_feed_uses_the_team_zone_carries_cautions_and_keeps_only_weeks_with_sessions()
{
    let app = spawn_app().await;
    let team = app.team("Calendar").await;
    let mut young = athlete_body("Young; Player, \\ Jr");
    young["date_of_birth"] = json!("2010-03-01"); // 16 in December 2026
    young["health_flags"] = json!(["diabetes"]);
    let athlete = id_of(&create(&app, &format!("/v1/teams/{team}/athletes"), young).await);
    // Sessions only in the week of 2026-12-07; the feed spans three weeks.
    let mut session = session_body("2026-12-08", "10:00");
    session["title"] = json!("Pitch; drills, 2\\3");
    session["notes"] = json!("Bring boots\nand bibs");
    create(&app, &format!("/v1/teams/{team}/sessions"), session).await;
    let feed = create(
        &app,
        &format!("/v1/athletes/{athlete}/calendar-feeds"),
        json!({}),
    )
    .await;
    let path = feed["path"].as_str().unwrap();
    let text = app
        .req(
            Method::GET,
            &format!("{path}?from=2026-11-30&to=2026-12-20"),
            None,
        )
        .send()
        .await
        .unwrap()
        .text()
        .await
        .unwrap();
    // RFC 5545 section 3.1: lines end in CRLF; no bare CR or LF anywhere.
    let bytes = text.as_bytes();
    for (i, b) in bytes.iter().enumerate() {
        if *b == b'\r' {
            assert_eq!(bytes.get(i + 1), Some(&b'\n'), "bare CR at {i}");
        }
        if *b == b'\n' {
            assert_eq!(bytes[i - 1], b'\r', "bare LF at {i}");
        }
    }
    for line in text.split("\r\n") {
        assert!(line.len() <= 75, "folded at 75 octets: {line}");
    }
    assert!(text.contains("BEGIN:VTIMEZONE\r\nTZID:Europe/London\r\n"));
    assert!(text.contains("DTSTART;TZID=Europe/London:20261208T100000"));
    assert!(
        !text.contains("DESCRIPTION:\\n"),
        "no description starts blank"
    );
    assert!(text.contains("Pitch\\; drills\\, 2\\\\3"), "title escaped");
    let calendar: icalendar::Calendar = text.parse().expect("RFC 5545 parses");
    let events: Vec<&icalendar::Event> = calendar
        .components
        .iter()
        .filter_map(|c| c.as_event())
        .collect();
    assert!(!events.is_empty());
    for event in &events {
        let start = icalendar::Component::property_value(*event, "DTSTART").unwrap();
        assert!(
            ("20261207".."20261214").contains(&&start[..8]),
            "only the week with sessions: {start}"
        );
        let unfolded = unfold(&text);
        let uid = icalendar::Component::get_uid(*event).unwrap();
        let block = unfolded
            .split("BEGIN:VEVENT")
            .find(|b| b.contains(&format!("UID:{uid}")))
            .unwrap();
        assert!(block.contains("under-18"), "under-18 caution in {block}");
        assert!(block.contains("Diabetes"), "medical caution in {block}");
    }
}

/// Undoes RFC 5545 folding.
fn unfold(text: &str) -> String {
    text.replace("\r\n ", "")
}

// ------------------------------------------------------------ 5. times a client can place

#[tokio::test]
async fn every_plan_time_carries_the_offset_of_the_team_zone() {
    let app = spawn_app().await;
    let team = app.team("Offsets").await;
    let athlete = app.athlete(team, "Offset Person").await;
    // Europe/London: GMT (+00:00) until 2027-03-28, BST (+01:00) after.
    app.session(team, "2027-03-25").await;
    app.session(team, "2027-03-30").await;
    let plan = body(
        app.get(
            &format!("/v1/athletes/{athlete}/plan?from=2027-03-24&to=2027-03-31"),
            &app.admin,
        )
        .await,
        200,
    )
    .await;
    assert_eq!(plan["time_zone"], "Europe/London");
    let mut local = Vec::new();
    let mut placed = Vec::new();
    date_times(&plan, &mut local, &mut placed);
    assert!(
        local.is_empty(),
        "times without an offset: {:?}",
        &local[..local.len().min(5)]
    );
    assert!(
        placed
            .iter()
            .any(|t| t.starts_with("2027-03-25T") && t.ends_with("+00:00"))
    );
    assert!(
        placed
            .iter()
            .any(|t| t.starts_with("2027-03-30T") && t.ends_with("+01:00"))
    );
    let occasion = &plan["plan"]["days"][1]["plan"]["eating_occasions"][0]["time"];
    assert!(occasion.as_str().unwrap().ends_with("+00:00"), "{occasion}");
    let occasion = &plan["plan"]["days"][6]["plan"]["eating_occasions"][0]["time"];
    assert!(occasion.as_str().unwrap().ends_with("+01:00"), "{occasion}");
    // The squad plan too.
    let squad = body(
        app.get(
            &format!("/v1/teams/{team}/plan?from=2027-03-24&to=2027-03-31"),
            &app.admin,
        )
        .await,
        200,
    )
    .await;
    let (mut local, mut placed) = (Vec::new(), Vec::new());
    date_times(&squad, &mut local, &mut placed);
    assert!(local.is_empty() && !placed.is_empty());
}

fn date_times(value: &Value, local: &mut Vec<String>, placed: &mut Vec<String>) {
    match value {
        Value::String(s)
            if s.len() >= 16 && s.as_bytes()[10] == b'T' && s[..4].parse::<u32>().is_ok() =>
        {
            if chrono::DateTime::parse_from_rfc3339(s).is_ok() {
                placed.push(s.clone());
            } else {
                local.push(s.clone());
            }
        }
        Value::Object(map) => map.values().for_each(|v| date_times(v, local, placed)),
        Value::Array(items) => items.iter().for_each(|v| date_times(v, local, placed)),
        _ => {}
    }
}

// ------------------------------------------------------------ 6. versions

#[tokio::test]
async fn creating_tokens_and_calendar_feeds_does_not_move_the_plan_version() {
    let app = spawn_app().await;
    let team = demo(&app).await;
    let path = format!("/v1/teams/{team}/plan/summary?from={MONDAY}");
    let first = app.get(&path, &app.admin).await;
    let etag = etag_of(&first);
    let version = body(first, 200).await["version"].as_i64().unwrap();
    let athletes = body(
        app.get(&format!("/v1/teams/{team}/athletes"), &app.admin)
            .await,
        200,
    )
    .await;
    let athlete = athletes["items"][0]["id"].as_str().unwrap();
    app.token("planner", team).await;
    create(
        &app,
        &format!("/v1/athletes/{athlete}/calendar-feeds"),
        json!({}),
    )
    .await;
    // A token made on the command line, against the same database.
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_glycoweek"))
        .args([
            "token",
            "create",
            "--role",
            "reader",
            "--team",
            &team.to_string(),
            "--database",
        ])
        .arg(&app.db_path)
        .env_remove("GLYCOWEEK_DATABASE")
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let again = app
        .req(Method::GET, &path, Some(&app.admin))
        .header("if-none-match", &etag)
        .send()
        .await
        .unwrap();
    assert_eq!(again.status(), 304, "the cached plan is still current");
    let now = body(app.get(&path, &app.admin).await, 200).await;
    assert_eq!(now["version"].as_i64().unwrap(), version);
}

#[tokio::test]
async fn plan_changes_after_moving_a_session_list_the_moved_eating_occasion_times() {
    let app = spawn_app().await;
    let team = demo(&app).await;
    let summary = body(
        app.get(
            &format!("/v1/teams/{team}/plan/summary?from={MONDAY}"),
            &app.admin,
        )
        .await,
        200,
    )
    .await;
    let version = summary["version"].as_i64().unwrap();
    let gym = body(
        app.get(
            &format!("/v1/teams/{team}/sessions?kind=strength"),
            &app.admin,
        )
        .await,
        200,
    )
    .await;
    let session = gym["items"][0]["id"].as_str().unwrap();
    let moved = app
        .patch(
            &format!("/v1/sessions/{session}"),
            &app.admin,
            &json!({"start_time": "17:30"}),
            None,
        )
        .await;
    assert_eq!(moved.status(), 200);
    let changes = body(
        app.get(
            &format!("/v1/teams/{team}/plan/changes?since_version={version}&from={MONDAY}"),
            &app.admin,
        )
        .await,
        200,
    )
    .await;
    let moved_times: Vec<&Value> = changes["days"]
        .as_array()
        .unwrap()
        .iter()
        .flat_map(|d| d["fields"].as_array().unwrap())
        .filter(|f| f["field"] == "eating_occasions")
        .collect();
    assert!(!moved_times.is_empty(), "{changes}");
    let change = moved_times[0];
    assert_ne!(change["before"], change["after"]);
    let time = change["after"][0]["time"].as_str().unwrap();
    assert!(
        time.len() == 5 && time.as_bytes()[2] == b':',
        "local HH:MM: {time}"
    );
    assert!(change["after"][0]["kind"].is_string());
}

// ------------------------------------------------------------ 7. tokens from the CLI

#[test]
fn token_create_refuses_a_database_that_does_not_exist() {
    let dir = tempfile::tempdir().unwrap();
    for args in [
        vec!["token", "create", "--role", "admin"],
        vec![
            "token",
            "create",
            "--role",
            "admin",
            "--database",
            "elsewhere.db",
        ],
        vec!["token", "list"],
    ] {
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_glycoweek"))
            .args(&args)
            .current_dir(dir.path())
            .env_remove("GLYCOWEEK_DATABASE")
            .output()
            .unwrap();
        assert!(!out.status.success(), "{args:?} must fail");
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert!(stderr.contains("no database at"), "{stderr}");
        assert!(out.stdout.is_empty(), "no token printed");
        assert_eq!(
            std::fs::read_dir(dir.path()).unwrap().count(),
            0,
            "nothing was created"
        );
    }
    // The default is the one `serve` uses.
    let help = std::process::Command::new(env!("CARGO_BIN_EXE_glycoweek"))
        .args(["token", "create", "--help"])
        .output()
        .unwrap();
    assert!(String::from_utf8_lossy(&help.stdout).contains("./glycoweek.db"));
}

// ------------------------------------------------------------ 8. strict input

#[tokio::test]
async fn ids_in_any_form_but_the_canonical_one_are_not_found_and_store_nothing() {
    let app = spawn_app().await;
    let team = app.team("Braces").await;
    let import = json!({"sessions": [session_body("2026-12-08", "10:00")]});
    for form in [
        format!("{{{team}}}"),
        format!("urn:uuid:{team}"),
        team.simple().to_string(),
    ] {
        let res = app
            .post(
                &format!("/v1/teams/{form}/sessions/import"),
                &app.admin,
                &import,
            )
            .await;
        problem(res, 404).await;
        let res = app.get(&format!("/v1/teams/{form}"), &app.admin).await;
        problem(res, 404).await;
    }
    let stored = body(
        app.get(&format!("/v1/teams/{team}/sessions"), &app.admin)
            .await,
        200,
    )
    .await;
    assert_eq!(stored["items"].as_array().unwrap().len(), 0);
    // Upper-case hex is still the canonical form (RFC 9562).
    let upper = team.hyphenated().to_string().to_uppercase();
    assert_eq!(
        app.get(&format!("/v1/teams/{upper}"), &app.admin)
            .await
            .status(),
        200
    );
}

#[tokio::test]
async fn the_audit_of_a_team_that_does_not_exist_is_not_found() {
    let app = spawn_app().await;
    let res = app
        .get(&format!("/v1/teams/{}/audit", Uuid::nil()), &app.admin)
        .await;
    problem(res, 404).await;
}

#[tokio::test]
async fn json_with_trailing_garbage_is_malformed_and_stores_nothing() {
    let app = spawn_app().await;
    for raw in [
        r#"{"name": "Trailing", "time_zone": "Europe/London"} x"#,
        r#"{"name": "Trailing", "time_zone": "Europe/London"}{}"#,
        r#"{"name": "Trailing", "time_zone": "Europe/London"}]"#,
    ] {
        let res = app
            .raw(
                Method::POST,
                "/v1/teams",
                Some(&app.admin),
                Some("application/json"),
                raw.to_owned(),
            )
            .await;
        problem(res, 400).await;
    }
    let ok = app
        .raw(
            Method::POST,
            "/v1/teams",
            Some(&app.admin),
            Some("application/json"),
            "{\"name\": \"Trailing\", \"time_zone\": \"Europe/London\"} \r\n".to_owned(),
        )
        .await;
    assert_eq!(ok.status(), 201, "trailing whitespace is fine");
}

#[tokio::test]
async fn dates_follow_one_rule_from_2000_to_2100_in_bodies_and_filters() {
    let app = spawn_app().await;
    let team = app.team("Dates").await;
    let athlete = app.athlete(team, "Date Person").await;
    for date in ["0000-01-01", "-0001-06-01", "1999-12-31"] {
        let res = app
            .post(
                &format!("/v1/athletes/{athlete}/body-mass"),
                &app.admin,
                &json!({"measured_on": date, "body_mass_kg": 61.0}),
            )
            .await;
        assert_eq!(res.status(), 422, "{date}");
    }
    for (list, param) in [
        (format!("/v1/teams/{team}/sessions"), "from"),
        (format!("/v1/teams/{team}/sessions"), "to"),
        (format!("/v1/athletes/{athlete}/body-mass"), "from"),
        (format!("/v1/athletes/{athlete}/body-mass"), "to"),
        (format!("/v1/athletes/{athlete}/pins"), "from"),
        (format!("/v1/teams/{team}/plan"), "from"),
    ] {
        for date in ["0000-01-01", "9999-12-31"] {
            let res = app.get(&format!("{list}?{param}={date}"), &app.admin).await;
            let named = fields(&problem(res, 422).await);
            assert!(
                named.contains(&param.to_owned()),
                "{list} {param}={date}: {named:?}"
            );
        }
    }
    let readings = body(
        app.get(&format!("/v1/athletes/{athlete}/body-mass"), &app.admin)
            .await,
        200,
    )
    .await;
    assert_eq!(
        readings["items"].as_array().unwrap().len(),
        1,
        "only the first reading"
    );
}

#[tokio::test]
async fn control_and_bidirectional_characters_are_refused_in_names_titles_and_labels() {
    let app = spawn_app().await;
    let team = app.team("Controls").await;
    for bad in [
        "Line\rBreak",
        "Line\nBreak",
        "Nul\0Name",
        "Bell\u{7}",
        "Evil\u{202E}txt.exe",
        "Iso\u{2066}late",
    ] {
        let res = app
            .post(
                "/v1/teams",
                &app.admin,
                &json!({"name": bad, "time_zone": "Europe/London"}),
            )
            .await;
        assert_eq!(fields(&problem(res, 422).await), vec!["name"], "{bad:?}");
        let res = app
            .post(&format!("/v1/teams/{team}/athletes"), &app.admin, &{
                let mut a = athlete_body(bad);
                a["position_group"] = json!(bad);
                a
            })
            .await;
        assert_eq!(
            fields(&problem(res, 422).await),
            vec!["display_name", "position_group"],
            "{bad:?}"
        );
        let mut session = session_body("2026-12-08", "10:00");
        session["title"] = json!(bad);
        let res = app
            .post(&format!("/v1/teams/{team}/sessions"), &app.admin, &session)
            .await;
        assert_eq!(fields(&problem(res, 422).await), vec!["title"], "{bad:?}");
        let res = app
            .post(
                "/v1/tokens",
                &app.admin,
                &json!({"label": bad, "role": "reader", "team_id": team}),
            )
            .await;
        assert_eq!(fields(&problem(res, 422).await), vec!["label"], "{bad:?}");
    }
    // Notes may span lines.
    let mut session = session_body("2026-12-08", "10:00");
    session["notes"] = json!("Warm-up first\nthen games");
    let res = app
        .post(&format!("/v1/teams/{team}/sessions"), &app.admin, &session)
        .await;
    assert_eq!(res.status(), 201);
}

#[tokio::test]
async fn a_body_over_the_limit_gets_nosniff_like_every_other_answer() {
    let app = spawn_app().await;
    let huge = "x".repeat(2 * 1024 * 1024);
    let res = app
        .raw(
            Method::POST,
            "/v1/teams",
            Some(&app.admin),
            Some("application/json"),
            huge,
        )
        .await;
    assert_eq!(res.status(), 413);
    assert_eq!(res.headers()["x-content-type-options"], "nosniff");
    assert_eq!(res.headers()["x-frame-options"], "DENY");
    problem(res, 413).await;
}

// ------------------------------------------------------------ 9. response size

#[tokio::test]
async fn a_squad_plan_cites_each_source_once_and_a_cached_read_is_served_compressed() {
    let app = spawn_app().await;
    let team = demo(&app).await;
    let path = format!("/v1/teams/{team}/plan?from={MONDAY}");
    let plain = app.get(&path, &app.admin).await;
    assert_eq!(plain.status(), 200);
    assert!(plain.headers().get("content-encoding").is_none());
    let plain = plain.bytes().await.unwrap();
    let plan: Value = serde_json::from_slice(&plain).unwrap();
    let sources = plan["sources"].as_array().expect("a sources table");
    let texts: std::collections::HashSet<&str> = sources
        .iter()
        .map(|s| s["text"].as_str().unwrap())
        .collect();
    assert_eq!(texts.len(), sources.len(), "each source once");
    for (i, s) in sources.iter().enumerate() {
        assert_eq!(s["id"], i);
    }
    let (mut cited, mut inline) = (0, 0);
    count_sources(&plan, &mut cited, &mut inline);
    assert!(cited > sources.len() * 10, "{cited} references");
    assert_eq!(inline, 0, "no citation text repeated inline");
    // Served gzip-compressed to clients that accept it, from the cache.
    for _ in 0..2 {
        let res = app
            .req(Method::GET, &path, Some(&app.admin))
            .header("accept-encoding", "gzip")
            .send()
            .await
            .unwrap();
        assert_eq!(res.status(), 200);
        assert_eq!(res.headers()["content-encoding"], "gzip");
        assert_eq!(res.headers()["vary"], "accept-encoding");
        let gz = res.bytes().await.unwrap();
        let mut out = Vec::new();
        flate2::read::GzDecoder::new(&gz[..])
            .read_to_end(&mut out)
            .unwrap();
        assert_eq!(out, plain, "the same plan");
        eprintln!("squad plan: {} bytes, {} gzip", plain.len(), gz.len());
    }
}

fn count_sources(value: &Value, cited: &mut usize, inline: &mut usize) {
    match value {
        Value::Object(map) => {
            if map.contains_key("source_id") {
                *cited += 1;
            }
            if let Some(Value::String(s)) = map.get("source")
                && s.contains(' ')
            {
                *inline += 1;
            }
            map.values().for_each(|v| count_sources(v, cited, inline));
        }
        Value::Array(items) => items.iter().for_each(|v| count_sources(v, cited, inline)),
        _ => {}
    }
}
