//! Planned sessions: the happy paths, list filters and pages, the rules on
//! segments and dates, and the all-or-nothing week import.

use serde_json::{Value, json};
use uuid::Uuid;

use crate::helpers::*;

async fn rejected(app: &TestApp, team: Uuid, session: &Value) -> Value {
    let res = app
        .post(&format!("/v1/teams/{team}/sessions"), &app.admin, session)
        .await;
    problem(res, 422).await
}

async fn stored_sessions(app: &TestApp, team: Uuid) -> Vec<Value> {
    app.all_pages(&format!("/v1/teams/{team}/sessions?limit=200"), &app.admin)
        .await
        .0
}

fn titled(date: &str, start: &str, title: &str) -> Value {
    let mut s = session_body(date, start);
    s["title"] = json!(title);
    s
}

#[tokio::test]
async fn a_planner_plans_reads_moves_and_deletes_a_session() {
    let app = spawn_app().await;
    let team = app.team("Sessions").await;
    let planner = app.token("planner", team).await;
    let input = json!({
        "local_date": "2026-12-08", "start_time": "10:30", "kind": "training",
        "title": "Pitch: possession", "key_session": true, "notes": "bring bibs",
        "segments": [
            {"label": "warm-up", "minutes": 15, "intensity": {"form": "fraction_vo2max", "fraction": 0.5}},
            {"minutes": 40, "intensity": {"form": "heart_rate", "bpm": 168}},
            {"minutes": 10, "intensity": {"form": "heart_rate_reserve", "fraction": 0.6}},
            {"minutes": 20, "intensity": {"form": "session_rpe", "rating": 5}},
            {"minutes": 10, "intensity": {"form": "mets", "mets": 3.0}},
            {"minutes": 12, "intensity": {"form": "activity", "activity": "football_training"}},
            {"minutes": 8, "intensity": {"form": "running", "speed_kmh": 12, "grade_percent": 1}},
            {"minutes": 6, "intensity": {"form": "walking", "speed_kmh": 5}},
            {"minutes": 9.5, "intensity": {"form": "cycling", "watts": 180}}
        ]
    });
    let res = app
        .post(&format!("/v1/teams/{team}/sessions"), &planner, &input)
        .await;
    assert_eq!(etag_of(&res), "\"v1\"");
    let location = res.headers()["location"].to_str().unwrap().to_owned();
    let created = body(res, 201).await;
    let id = id_of(&created);
    assert_eq!(location, format!("/v1/sessions/{id}"));
    assert_eq!(created["total_minutes"], 130.5);
    assert_eq!(created["start_time"], "10:30");
    assert_eq!(created["key_session"], true);
    // Stored exactly as given: every intensity form keeps its own numbers.
    assert_eq!(
        created["segments"][1]["intensity"],
        json!({"form": "heart_rate", "bpm": 168.0})
    );
    assert_eq!(
        created["segments"][6]["intensity"],
        json!({"form": "running", "speed_kmh": 12.0, "grade_percent": 1.0})
    );
    let stored = glycoweek::store::sessions::get(&app.db, id)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(stored.segments.len(), 9);
    assert_eq!(stored.notes.as_deref(), Some("bring bibs"));

    assert_eq!(body(app.get(&location, &planner).await, 200).await, created);

    let res = app
        .patch(
            &location,
            &planner,
            &json!({"local_date": "2026-12-09", "start_time": "16:00"}),
            Some("\"v1\""),
        )
        .await;
    assert_eq!(etag_of(&res), "\"v2\"");
    let moved = body(res, 200).await;
    assert_eq!(moved["local_date"], "2026-12-09");
    assert_eq!(moved["start_time"], "16:00");
    assert_eq!(moved["segments"], created["segments"]);
    let stored = glycoweek::store::sessions::get(&app.db, id)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(stored.local_date.to_string(), "2026-12-09");

    assert_eq!(
        app.delete(&location, &planner, Some("\"v2\""))
            .await
            .status(),
        204
    );
    assert!(
        glycoweek::store::sessions::get(&app.db, id)
            .await
            .unwrap()
            .is_none()
    );
    problem(app.get(&location, &planner).await, 404).await;
}

#[tokio::test]
async fn the_session_list_filters_by_dates_and_kind_and_pages_in_calendar_order() {
    let app = spawn_app().await;
    let team = app.team("Calendar").await;
    let other = app.team("Other calendar").await;
    app.session(other, "2026-12-08").await;
    let plan = [
        ("2026-12-09", "15:00", "training", "Wed PM"),
        ("2026-12-07", "09:30", "training", "Mon AM"),
        ("2026-12-07", "15:00", "strength", "Mon gym"),
        ("2026-12-08", "10:00", "recovery", "Tue pool"),
        ("2026-12-12", "15:00", "match", "Sat match"),
        ("2026-12-13", "10:00", "recovery", "Sun recovery"),
    ];
    for (date, start, kind, title) in plan {
        let mut s = titled(date, start, title);
        s["kind"] = json!(kind);
        body(
            app.post(&format!("/v1/teams/{team}/sessions"), &app.admin, &s)
                .await,
            201,
        )
        .await;
    }
    let titles = |items: &[Value]| -> Vec<String> {
        items
            .iter()
            .map(|s| s["title"].as_str().unwrap().to_owned())
            .collect()
    };
    let base = format!("/v1/teams/{team}/sessions");
    let (all, pages) = app.all_pages(&format!("{base}?limit=4"), &app.admin).await;
    assert_eq!(pages, 2);
    assert_eq!(
        titles(&all),
        [
            "Mon AM",
            "Mon gym",
            "Tue pool",
            "Wed PM",
            "Sat match",
            "Sun recovery"
        ]
    );

    let (span, pages) = app
        .all_pages(
            &format!("{base}?from=2026-12-07&to=2026-12-09&limit=1"),
            &app.admin,
        )
        .await;
    assert_eq!(pages, 4);
    assert_eq!(titles(&span), ["Mon AM", "Mon gym", "Tue pool", "Wed PM"]);

    let (recovery, _) = app
        .all_pages(&format!("{base}?kind=recovery"), &app.admin)
        .await;
    assert_eq!(titles(&recovery), ["Tue pool", "Sun recovery"]);
    let (late_recovery, _) = app
        .all_pages(&format!("{base}?kind=recovery&from=2026-12-10"), &app.admin)
        .await;
    assert_eq!(titles(&late_recovery), ["Sun recovery"]);
    let (until, _) = app
        .all_pages(&format!("{base}?to=2026-12-07"), &app.admin)
        .await;
    assert_eq!(titles(&until), ["Mon AM", "Mon gym"]);

    let p = problem(
        app.get(&format!("{base}?from=2026-12-09&to=2026-12-08"), &app.admin)
            .await,
        422,
    )
    .await;
    assert_eq!(fields(&p), vec!["to"]);
    let p = problem(
        app.get(&format!("{base}?kind=party"), &app.admin).await,
        422,
    )
    .await;
    assert_eq!(fields(&p), vec!["kind"]);
}

#[tokio::test]
async fn segment_minutes_out_of_range_are_rejected_naming_the_segment() {
    let app = spawn_app().await;
    let team = app.team("Minutes").await;
    for minutes in [0.0, 0.4, -10.0, 601.0] {
        let s = session_with_segments(
            "2026-12-08",
            json!([
                {"minutes": 30, "intensity": {"form": "mets", "mets": 5}},
                {"minutes": minutes, "intensity": {"form": "mets", "mets": 5}}
            ]),
        );
        assert_eq!(
            fields(&rejected(&app, team, &s).await),
            vec!["segments[1].minutes"],
            "{minutes} min"
        );
    }
    let long = json!({"minutes": 400, "intensity": {"form": "mets", "mets": 2}});
    let s = session_with_segments("2026-12-08", json!([long, long]));
    assert_eq!(
        fields(&rejected(&app, team, &s).await),
        vec!["segments"],
        "over 720 minutes in total"
    );
    assert!(stored_sessions(&app, team).await.is_empty());
}

#[tokio::test]
async fn a_session_without_segments_is_rejected() {
    let app = spawn_app().await;
    let team = app.team("Empty").await;
    let s = session_with_segments("2026-12-08", json!([]));
    let p = rejected(&app, team, &s).await;
    assert_eq!(fields(&p), vec!["segments"]);
    let seg = json!({"minutes": 1, "intensity": {"form": "mets", "mets": 2}});
    let s = session_with_segments("2026-12-08", Value::Array(vec![seg; 41]));
    assert_eq!(
        fields(&rejected(&app, team, &s).await),
        vec!["segments"],
        "more than 40 segments"
    );
}

#[tokio::test]
async fn an_unknown_activity_key_is_rejected() {
    let app = spawn_app().await;
    let team = app.team("Activities").await;
    let s = session_with_segments(
        "2026-12-08",
        json!([{"minutes": 30, "intensity": {"form": "activity", "activity": "underwater_chess"}}]),
    );
    assert_eq!(
        fields(&rejected(&app, team, &s).await),
        vec!["segments[0].intensity.activity"]
    );
}

#[tokio::test]
async fn intensities_out_of_range_or_of_an_unknown_form_are_rejected() {
    let app = spawn_app().await;
    let team = app.team("Intensities").await;
    let cases = [
        (
            json!({"form": "fraction_vo2max", "fraction": 1.5}),
            "segments[0].intensity.fraction",
        ),
        (
            json!({"form": "heart_rate", "bpm": 250}),
            "segments[0].intensity.bpm",
        ),
        (
            json!({"form": "heart_rate_reserve", "fraction": 1.1}),
            "segments[0].intensity.fraction",
        ),
        (
            json!({"form": "session_rpe", "rating": 11}),
            "segments[0].intensity.rating",
        ),
        (
            json!({"form": "mets", "mets": 0.5}),
            "segments[0].intensity.mets",
        ),
        (
            json!({"form": "running", "speed_kmh": 40}),
            "segments[0].intensity.speed_kmh",
        ),
        (
            json!({"form": "walking", "speed_kmh": 5, "grade_percent": 60}),
            "segments[0].intensity.grade_percent",
        ),
        (
            json!({"form": "cycling", "watts": 5000}),
            "segments[0].intensity.watts",
        ),
    ];
    for (intensity, field) in cases {
        let s = session_with_segments(
            "2026-12-08",
            json!([{"minutes": 30, "intensity": intensity}]),
        );
        assert_eq!(
            fields(&rejected(&app, team, &s).await),
            vec![field],
            "{intensity}"
        );
    }
    let s = session_with_segments(
        "2026-12-08",
        json!([{"minutes": 30, "intensity": {"form": "vibes"}}]),
    );
    let p = rejected(&app, team, &s).await;
    assert!(fields(&p)[0].starts_with("segments[0].intensity"), "{p}");
    let s = session_with_segments(
        "2026-12-08",
        json!([{"minutes": 30, "intensity": {"form": "mets", "mets": 3, "colour": "red"}}]),
    );
    let p = rejected(&app, team, &s).await;
    assert!(fields(&p)[0].starts_with("segments[0].intensity"), "{p}");
}

#[tokio::test]
async fn dates_times_and_session_flags_are_checked() {
    let app = spawn_app().await;
    let team = app.team("Dates").await;
    let s = session_body("1999-12-31", "10:00");
    assert_eq!(fields(&rejected(&app, team, &s).await), vec!["local_date"]);
    let s = session_body("2101-01-01", "10:00");
    assert_eq!(fields(&rejected(&app, team, &s).await), vec!["local_date"]);
    let s = session_body("2026-02-30", "10:00");
    assert_eq!(fields(&rejected(&app, team, &s).await), vec!["local_date"]);
    let s = session_body("2026-12-08", "25:00");
    assert_eq!(fields(&rejected(&app, team, &s).await), vec!["start_time"]);
    let s = session_body("2026-12-08", "10am");
    assert_eq!(fields(&rejected(&app, team, &s).await), vec!["start_time"]);
    let mut s = session_body("2026-12-08", "10:00");
    s["carbohydrate_loading"] = json!(true);
    assert_eq!(
        fields(&rejected(&app, team, &s).await),
        vec!["carbohydrate_loading"]
    );
    let mut s = session_body("2026-12-08", "10:00");
    s["kind"] = json!("match");
    s["train_low"] = json!(true);
    assert_eq!(fields(&rejected(&app, team, &s).await), vec!["train_low"]);
    let s = titled("2026-12-08", "10:00", "   ");
    assert_eq!(fields(&rejected(&app, team, &s).await), vec!["title"]);
    let mut s = session_body("2026-12-08", "10:00");
    s["kind"] = json!("picnic");
    assert_eq!(fields(&rejected(&app, team, &s).await), vec!["kind"]);
    let mut s = session_body("2026-12-08", "10:00");
    s["venue"] = json!("home");
    assert!(
        rejected(&app, team, &s).await["errors"][0]["reason"]
            .as_str()
            .unwrap()
            .contains("venue")
    );
    assert!(stored_sessions(&app, team).await.is_empty());
}

#[tokio::test]
async fn a_session_patch_that_nulls_its_segments_or_breaks_a_rule_is_rejected() {
    let app = spawn_app().await;
    let team = app.team("Patch session").await;
    let id = app.session(team, "2026-12-08").await;
    let path = format!("/v1/sessions/{id}");
    let p = problem(
        app.patch(&path, &app.admin, &json!({"segments": null}), None)
            .await,
        422,
    )
    .await;
    assert!(
        p["errors"][0]["reason"]
            .as_str()
            .unwrap()
            .contains("segments"),
        "{p}"
    );
    let p = problem(
        app.patch(&path, &app.admin, &json!({"segments": []}), None)
            .await,
        422,
    )
    .await;
    assert_eq!(fields(&p), vec!["segments"]);
    let p = problem(
        app.patch(&path, &app.admin, &json!({"start_time": "7"}), None)
            .await,
        422,
    )
    .await;
    assert_eq!(fields(&p), vec!["start_time"]);
    // A null for a member the session does not have would remove nothing, but
    // a name the schema does not know is still an unknown field (RFC 7396 keeps
    // the document's own schema; ours has no additional properties).
    for (patch, field) in [
        (json!({"": null}), ""),
        (json!({"shoe_size": null}), "shoe_size"),
        (json!({"start_time": "18:00", "colour": null}), "colour"),
    ] {
        let p = problem(app.patch(&path, &app.admin, &patch, None).await, 422).await;
        assert_eq!(fields(&p), vec![field], "{patch}: {p}");
        assert!(
            p["errors"][0]["reason"]
                .as_str()
                .unwrap()
                .contains("unknown field"),
            "{p}"
        );
    }
    let stored = glycoweek::store::sessions::get(&app.db, id)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(stored.version, 1);
    assert_eq!(stored.segments.len(), 2);
    // A null for a known optional member the session lacks is a removal of
    // nothing: accepted, and the session is written unchanged apart from it.
    let ok = app
        .patch(&path, &app.admin, &json!({"notes": null}), None)
        .await;
    assert_eq!(ok.status(), 200);
}

#[tokio::test]
async fn an_import_replaces_a_week_in_one_request_and_is_audited() {
    let app = spawn_app().await;
    let team = app.team("Import").await;
    let planner = app.token("planner", team).await;
    let old_in_week = app.session(team, "2026-12-08").await;
    let old_outside = app.session(team, "2026-12-14").await;
    let import = json!({
        "replace": {"from": "2026-12-07", "to": "2026-12-13"},
        "sessions": [
            {"local_date": "2026-12-07", "start_time": "09:30", "kind": "training", "title": "Pitch AM",
             "segments": [{"minutes": 75, "intensity": {"form": "activity", "activity": "football_training"}}]},
            {"local_date": "2026-12-07", "start_time": "15:00", "kind": "strength", "title": "Gym",
             "segments": [{"minutes": 50, "intensity": {"form": "mets", "mets": 5.0}}]},
            {"local_date": "2026-12-12", "start_time": "15:00", "kind": "match", "title": "League match",
             "key_session": true, "carbohydrate_loading": true,
             "segments": [{"minutes": 90, "intensity": {"form": "activity", "activity": "football_match"}}]}
        ]
    });
    let res = app
        .post(
            &format!("/v1/teams/{team}/sessions/import"),
            &planner,
            &import,
        )
        .await;
    let result = body(res, 201).await;
    assert_eq!(result["deleted"], 1);
    let created = ids(result["created"].as_array().unwrap());
    assert_eq!(created.len(), 3);

    assert!(
        glycoweek::store::sessions::get(&app.db, old_in_week)
            .await
            .unwrap()
            .is_none()
    );
    assert!(
        glycoweek::store::sessions::get(&app.db, old_outside)
            .await
            .unwrap()
            .is_some()
    );
    let stored = stored_sessions(&app, team).await;
    let titles: Vec<&str> = stored
        .iter()
        .map(|s| s["title"].as_str().unwrap())
        .collect();
    assert_eq!(titles, ["Pitch AM", "Gym", "League match", "Pitch session"]);

    let trail = app.audit(team).await;
    let entry = trail
        .iter()
        .find(|e| e["action"] == "import")
        .expect("import audited");
    assert_eq!(entry["before"]["deleted"], 1);
    assert_eq!(entry["after"]["created"].as_array().unwrap().len(), 3);
}

#[tokio::test]
async fn an_import_with_one_invalid_session_leaves_nothing_behind() {
    let app = spawn_app().await;
    let team = app.team("Bad import").await;
    let existing = app.session(team, "2026-12-08").await;
    let mut bad = session_body("2026-12-09", "10:00");
    bad["segments"][1]["minutes"] = json!(0);
    let import = json!({
        "replace": {"from": "2026-12-07", "to": "2026-12-13"},
        "sessions": [session_body("2026-12-07", "09:00"), bad, session_body("2026-12-10", "09:00")]
    });
    let res = app
        .post(
            &format!("/v1/teams/{team}/sessions/import"),
            &app.admin,
            &import,
        )
        .await;
    let p = problem(res, 422).await;
    assert_eq!(fields(&p), vec!["sessions[1].segments[1].minutes"]);
    assert_eq!(
        ids(&stored_sessions(&app, team).await),
        vec![existing],
        "old week untouched, nothing added"
    );
    assert!(
        app.audit(team)
            .await
            .iter()
            .all(|e| e["action"] != "import")
    );
}

#[tokio::test]
async fn an_import_reports_every_invalid_session_and_checks_its_span_and_size() {
    let app = spawn_app().await;
    let team = app.team("Import rules").await;
    let path = format!("/v1/teams/{team}/sessions/import");
    let import = json!({
        "replace": {"from": "2026-12-13", "to": "2026-12-07"},
        "sessions": [session_body("1990-01-01", "09:00"), titled("2026-12-08", "09:00", "")]
    });
    let p = problem(app.post(&path, &app.admin, &import).await, 422).await;
    assert_eq!(
        fields(&p),
        vec!["sessions[0].local_date", "sessions[1].title", "replace.to"]
    );
    let p = problem(
        app.post(&path, &app.admin, &json!({"sessions": []})).await,
        422,
    )
    .await;
    assert_eq!(fields(&p), vec!["sessions"]);
    let wide = json!({"replace": {"from": "2026-01-01", "to": "2027-06-01"}, "sessions": [session_body("2026-12-08", "09:00")]});
    let p = problem(app.post(&path, &app.admin, &wide).await, 422).await;
    assert_eq!(fields(&p), vec!["replace.to"]);
    let p = problem(app.post(&path, &app.admin, &json!({"week": []})).await, 422).await;
    assert!(
        p["errors"][0]["reason"].as_str().unwrap().contains("week"),
        "{p}"
    );
    assert!(stored_sessions(&app, team).await.is_empty());
}

#[tokio::test]
async fn an_import_that_fails_in_the_database_half_way_leaves_the_old_week_in_place() {
    let app = spawn_app().await;
    let team = app.team("Half way").await;
    let old_a = app.session(team, "2026-12-07").await;
    let old_b = app.session(team, "2026-12-09").await;
    // A fault injected into this test's own database: the third insert of
    // the import fails after the span was deleted and two rows went in.
    sqlx::query(
        "CREATE TRIGGER fail_on_poison BEFORE INSERT ON sessions WHEN NEW.title = 'poison'
         BEGIN SELECT RAISE(ABORT, 'injected failure'); END",
    )
    .execute(&app.db.write)
    .await
    .unwrap();
    let audit_before = app.audit(team).await.len();
    let import = json!({
        "replace": {"from": "2026-12-07", "to": "2026-12-13"},
        "sessions": [
            titled("2026-12-07", "09:00", "new one"),
            titled("2026-12-08", "09:00", "new two"),
            titled("2026-12-09", "09:00", "poison"),
            titled("2026-12-10", "09:00", "new four")
        ]
    });
    let res = app
        .post(
            &format!("/v1/teams/{team}/sessions/import"),
            &app.admin,
            &import,
        )
        .await;
    let status = res.status().as_u16();
    assert!(status >= 400, "the import must fail, got {status}");
    let p = problem(res, status).await;
    let text = p.to_string();
    assert!(
        !text.contains("injected") && !text.contains("INSERT"),
        "no SQL leaks: {p}"
    );

    let stored = stored_sessions(&app, team).await;
    assert_eq!(
        ids(&stored),
        vec![old_a, old_b],
        "the replaced week is still there"
    );
    assert!(stored.iter().all(|s| s["title"] == "Pitch session"));
    assert_eq!(
        app.audit(team).await.len(),
        audit_before,
        "no audit entry for a rolled-back import"
    );

    // The writer is healthy afterwards: the next import goes through.
    let ok = json!({"sessions": [titled("2026-12-11", "09:00", "after")]});
    body(
        app.post(
            &format!("/v1/teams/{team}/sessions/import"),
            &app.admin,
            &ok,
        )
        .await,
        201,
    )
    .await;
}
