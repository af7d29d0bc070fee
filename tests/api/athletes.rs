//! Athletes and their body-mass readings: the happy paths, pages and
//! filters, archiving, erasure, and every validation rule that protects users.

use serde_json::{Value, json};
use uuid::Uuid;

use crate::helpers::*;

fn full_athlete() -> Value {
    json!({
        "display_name": "Oren Oakhurst",
        "sex": "male",
        "date_of_birth": "2001-04-17",
        "height_cm": 178,
        "training_status": "highly_trained",
        "position_group": "midfield",
        "vo2max": {"method": "yo_yo_ir1", "distance_m": 2280},
        "hr_max": 196,
        "hr_rest": 48,
        "body_fat_percent": 10.5,
        "goal": "reduce",
        "goal_rate_kg_per_week": 0.4,
        "dietary_notes": "no nuts",
        "health_flags": ["diabetes"],
        "initial_body_mass": {"body_mass_kg": 74.5, "measured_on": "2026-11-30"}
    })
}

/// POSTs an athlete body and returns the 422 problem.
async fn rejected(app: &TestApp, team: Uuid, athlete: &Value) -> Value {
    let res = app
        .post(&format!("/v1/teams/{team}/athletes"), &app.admin, athlete)
        .await;
    problem(res, 422).await
}

fn with(mut base: Value, key: &str, value: Value) -> Value {
    base[key] = value;
    base
}

#[tokio::test]
async fn a_planner_creates_reads_changes_and_erases_an_athlete() {
    let app = spawn_app().await;
    let team = app.team("Seniors").await;
    let planner = app.token("planner", team).await;
    let res = app
        .post(
            &format!("/v1/teams/{team}/athletes"),
            &planner,
            &full_athlete(),
        )
        .await;
    assert_eq!(etag_of(&res), "\"v1\"");
    let location = res.headers()["location"].to_str().unwrap().to_owned();
    let created = body(res, 201).await;
    let id = id_of(&created);
    assert_eq!(location, format!("/v1/athletes/{id}"));
    assert_eq!(created["team_id"], team.to_string());
    assert_eq!(
        created["vo2max"],
        json!({"method": "yo_yo_ir1", "distance_m": 2280.0})
    );
    assert_eq!(
        created["latest_body_mass"],
        json!({"body_mass_kg": 74.5, "measured_on": "2026-11-30"})
    );
    assert!(created.get("initial_body_mass").is_none());

    let stored = glycoweek::store::athletes::get(&app.db, id)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(stored.display_name, "Oren Oakhurst");
    assert_eq!(stored.hr_max, Some(196.0));
    assert_eq!(stored.goal_rate_kg_per_week, Some(0.4));

    let read = body(app.get(&location, &planner).await, 200).await;
    assert_eq!(read, created);

    let res = app
        .patch(
            &location,
            &planner,
            &json!({"position_group": "defence", "hr_rest": null}),
            Some("\"v1\""),
        )
        .await;
    assert_eq!(etag_of(&res), "\"v2\"");
    let changed = body(res, 200).await;
    assert_eq!(changed["position_group"], "defence");
    assert!(
        changed["hr_rest"].is_null(),
        "null in a merge patch clears an optional field"
    );
    assert_eq!(changed["hr_max"], 196.0);
    let stored = glycoweek::store::athletes::get(&app.db, id)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(stored.hr_rest, None);
    assert_eq!(stored.position_group.as_deref(), Some("defence"));

    assert_eq!(
        app.delete(&location, &planner, Some("\"v2\""))
            .await
            .status(),
        204
    );
    assert!(
        glycoweek::store::athletes::get(&app.db, id)
            .await
            .unwrap()
            .is_none()
    );
    problem(app.get(&location, &planner).await, 404).await;
}

#[tokio::test]
async fn the_first_body_mass_reading_defaults_to_today_in_the_team_time_zone() {
    let app = spawn_app().await;
    let team = app.team("Today").await;
    let mut a = athlete_body("Dated");
    a["initial_body_mass"] = json!({"body_mass_kg": 60.0});
    let created = body(
        app.post(&format!("/v1/teams/{team}/athletes"), &app.admin, &a)
            .await,
        201,
    )
    .await;
    let today = chrono::Utc::now()
        .with_timezone(&chrono_tz::Europe::London)
        .date_naive();
    assert_eq!(
        created["latest_body_mass"]["measured_on"],
        today.to_string()
    );
}

#[tokio::test]
async fn the_athlete_list_pages_by_name_with_a_cursor() {
    let app = spawn_app().await;
    let team = app.team("Paged").await;
    for name in ["Erin", "Bea", "Dana", "Ann", "Cleo"] {
        app.athlete(team, name).await;
    }
    let other = app.team("Elsewhere").await;
    app.athlete(other, "Zoe").await;
    let (items, pages) = app
        .all_pages(&format!("/v1/teams/{team}/athletes?limit=2"), &app.admin)
        .await;
    assert_eq!(pages, 3);
    let names: Vec<&str> = items
        .iter()
        .map(|a| a["display_name"].as_str().unwrap())
        .collect();
    assert_eq!(names, ["Ann", "Bea", "Cleo", "Dana", "Erin"]);
}

#[tokio::test]
async fn archived_athletes_are_hidden_by_default_and_shown_with_status_archived() {
    let app = spawn_app().await;
    let team = app.team("Archive").await;
    let active = app.athlete(team, "Active One").await;
    let archived = app.athlete(team, "Archived One").await;
    let res = app
        .patch(
            &format!("/v1/athletes/{archived}"),
            &app.admin,
            &json!({"status": "archived"}),
            None,
        )
        .await;
    assert_eq!(body(res, 200).await["status"], "archived");

    let list = |q: &'static str| {
        let app = &app;
        async move {
            let page = body(
                app.get(&format!("/v1/teams/{team}/athletes{q}"), &app.admin)
                    .await,
                200,
            )
            .await;
            ids(page["items"].as_array().unwrap())
        }
    };
    assert_eq!(list("").await, vec![active]);
    assert_eq!(list("?status=active").await, vec![active]);
    assert_eq!(list("?status=archived").await, vec![archived]);
    assert_eq!(list("?status=all").await, vec![active, archived]);
    let p = problem(
        app.get(
            &format!("/v1/teams/{team}/athletes?status=gone"),
            &app.admin,
        )
        .await,
        422,
    )
    .await;
    assert_eq!(fields(&p), vec!["status"]);

    // Archiving keeps history: the athlete and the readings are still there.
    let read = body(
        app.get(&format!("/v1/athletes/{archived}"), &app.admin)
            .await,
        200,
    )
    .await;
    assert_eq!(read["latest_body_mass"]["body_mass_kg"], 61.5);
}

#[tokio::test]
async fn body_mass_readings_are_added_listed_newest_first_read_and_deleted() {
    let app = spawn_app().await;
    let team = app.team("Mass").await;
    let athlete = app.athlete(team, "Weighed").await;
    let path = format!("/v1/athletes/{athlete}/body-mass");
    let res = app
        .post(
            &path,
            &app.admin,
            &json!({"measured_on": "2026-11-20", "body_mass_kg": 62.3, "note": "morning"}),
        )
        .await;
    let location = res.headers()["location"].to_str().unwrap().to_owned();
    let reading = body(res, 201).await;
    let reading_id = id_of(&reading);
    assert_eq!(location, format!("{path}/{reading_id}"));
    assert_eq!(reading["body_mass_kg"], 62.3);
    assert_eq!(reading["athlete_id"], athlete.to_string());

    let read = body(app.get(&location, &app.admin).await, 200).await;
    assert_eq!(read["note"], "morning");

    let newer = json!({"measured_on": "2026-11-25", "body_mass_kg": 62.0});
    body(app.post(&path, &app.admin, &newer).await, 201).await;
    let list = body(app.get(&path, &app.admin).await, 200).await;
    let dates: Vec<&str> = list["items"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| m["measured_on"].as_str().unwrap())
        .collect();
    assert_eq!(dates, ["2026-11-25", "2026-11-20", "2026-11-01"]);
    // The athlete's latest reading is the newest by date, not by insertion.
    let a = body(
        app.get(&format!("/v1/athletes/{athlete}"), &app.admin)
            .await,
        200,
    )
    .await;
    assert_eq!(
        a["latest_body_mass"],
        json!({"body_mass_kg": 62.0, "measured_on": "2026-11-25"})
    );

    assert_eq!(app.delete(&location, &app.admin, None).await.status(), 204);
    assert!(
        glycoweek::store::athletes::get_body_mass(&app.db, reading_id)
            .await
            .unwrap()
            .is_none()
    );
    problem(app.get(&location, &app.admin).await, 404).await;
}

#[tokio::test]
async fn body_mass_readings_filter_by_date_and_page_with_a_cursor() {
    let app = spawn_app().await;
    let team = app.team("Mass pages").await;
    let athlete = app.athlete(team, "Many").await;
    let path = format!("/v1/athletes/{athlete}/body-mass");
    for day in 2..=9 {
        let reading = json!({"measured_on": format!("2026-11-0{day}"), "body_mass_kg": 60.0 + f64::from(day) / 10.0});
        body(app.post(&path, &app.admin, &reading).await, 201).await;
    }
    let (items, pages) = app
        .all_pages(
            &format!("{path}?from=2026-11-03&to=2026-11-07&limit=2"),
            &app.admin,
        )
        .await;
    assert_eq!(pages, 3);
    let dates: Vec<&str> = items
        .iter()
        .map(|m| m["measured_on"].as_str().unwrap())
        .collect();
    assert_eq!(
        dates,
        [
            "2026-11-07",
            "2026-11-06",
            "2026-11-05",
            "2026-11-04",
            "2026-11-03"
        ]
    );

    let only_from = body(
        app.get(&format!("{path}?from=2026-11-08"), &app.admin)
            .await,
        200,
    )
    .await;
    assert_eq!(only_from["items"].as_array().unwrap().len(), 2);
    let only_to = body(
        app.get(&format!("{path}?to=2026-11-02"), &app.admin).await,
        200,
    )
    .await;
    assert_eq!(
        only_to["items"].as_array().unwrap().len(),
        2,
        "the initial reading and 2 November"
    );

    let p = problem(
        app.get(&format!("{path}?from=2026-11-08&to=2026-11-01"), &app.admin)
            .await,
        422,
    )
    .await;
    assert_eq!(fields(&p), vec!["to"]);
}

#[tokio::test]
async fn a_second_body_mass_reading_on_the_same_date_is_a_conflict() {
    let app = spawn_app().await;
    let team = app.team("Twice").await;
    let athlete = app.athlete(team, "Twice").await;
    let path = format!("/v1/athletes/{athlete}/body-mass");
    let res = app
        .post(
            &path,
            &app.admin,
            &json!({"measured_on": "2026-11-01", "body_mass_kg": 61.0}),
        )
        .await;
    let p = problem(res, 409).await;
    assert_eq!(p["type"], "/problems/conflict");
    let list = body(app.get(&path, &app.admin).await, 200).await;
    assert_eq!(list["items"].as_array().unwrap().len(), 1);
    assert_eq!(
        list["items"][0]["body_mass_kg"], 61.5,
        "the first reading is kept"
    );
}

#[tokio::test]
async fn body_mass_out_of_range_or_in_the_future_is_rejected_not_clamped() {
    let app = spawn_app().await;
    let team = app.team("Range").await;
    let athlete = app.athlete(team, "Ranged").await;
    let path = format!("/v1/athletes/{athlete}/body-mass");
    for kg in [24.9, 250.1, 0.0, -70.0] {
        let res = app
            .post(
                &path,
                &app.admin,
                &json!({"measured_on": "2026-11-10", "body_mass_kg": kg}),
            )
            .await;
        assert_eq!(
            fields(&problem(res, 422).await),
            vec!["body_mass_kg"],
            "{kg} kg"
        );
    }
    for kg in [25.0, 250.0] {
        let date = if kg < 100.0 {
            "2026-11-11"
        } else {
            "2026-11-12"
        };
        let res = app
            .post(
                &path,
                &app.admin,
                &json!({"measured_on": date, "body_mass_kg": kg}),
            )
            .await;
        body(res, 201).await;
    }
    let res = app
        .post(
            &path,
            &app.admin,
            &json!({"measured_on": "2099-01-01", "body_mass_kg": 60}),
        )
        .await;
    assert_eq!(fields(&problem(res, 422).await), vec!["measured_on"]);
    let res = app
        .post(
            &path,
            &app.admin,
            &json!({"measured_on": "2026-11-13", "body_mass_kg": 60, "note": "x".repeat(501)}),
        )
        .await;
    assert_eq!(fields(&problem(res, 422).await), vec!["note"]);
    let list = body(app.get(&path, &app.admin).await, 200).await;
    assert_eq!(list["items"].as_array().unwrap().len(), 3);
}

#[tokio::test]
async fn an_initial_body_mass_out_of_range_names_the_nested_field() {
    let app = spawn_app().await;
    let team = app.team("Initial").await;
    let a = with(
        athlete_body("Light"),
        "initial_body_mass",
        json!({"body_mass_kg": 20}),
    );
    assert_eq!(
        fields(&rejected(&app, team, &a).await),
        vec!["initial_body_mass.body_mass_kg"]
    );
    let a = with(
        athlete_body("Future"),
        "initial_body_mass",
        json!({"body_mass_kg": 60, "measured_on": "2030-01-01"}),
    );
    assert_eq!(
        fields(&rejected(&app, team, &a).await),
        vec!["initial_body_mass.measured_on"]
    );
}

#[tokio::test]
async fn height_out_of_range_is_rejected() {
    let app = spawn_app().await;
    let team = app.team("Height").await;
    for cm in [119.9, 230.5, -1.0] {
        let a = with(athlete_body("Tall"), "height_cm", json!(cm));
        assert_eq!(
            fields(&rejected(&app, team, &a).await),
            vec!["height_cm"],
            "{cm} cm"
        );
    }
}

#[tokio::test]
async fn heart_rates_out_of_range_or_rest_not_below_max_are_rejected() {
    let app = spawn_app().await;
    let team = app.team("Hearts").await;
    let a = with(athlete_body("Max"), "hr_max", json!(240));
    assert_eq!(fields(&rejected(&app, team, &a).await), vec!["hr_max"]);
    let a = with(athlete_body("Max"), "hr_max", json!(99));
    assert_eq!(fields(&rejected(&app, team, &a).await), vec!["hr_max"]);
    let a = with(athlete_body("Rest"), "hr_rest", json!(20));
    assert_eq!(fields(&rejected(&app, team, &a).await), vec!["hr_rest"]);
    let a = with(
        with(athlete_body("Both"), "hr_max", json!(110)),
        "hr_rest",
        json!(110),
    );
    let p = rejected(&app, team, &a).await;
    assert_eq!(fields(&p), vec!["hr_rest"]);
    assert!(
        p["errors"][0]["reason"]
            .as_str()
            .unwrap()
            .contains("hr_max")
    );
    let a = with(
        athlete_body("Ratio"),
        "vo2max",
        json!({"method": "heart_rate_ratio"}),
    );
    assert_eq!(
        fields(&rejected(&app, team, &a).await),
        vec!["vo2max.method"]
    );
}

#[tokio::test]
async fn dates_of_birth_in_the_future_or_out_of_the_age_range_are_rejected() {
    let app = spawn_app().await;
    let team = app.team("Ages").await;
    for dob in ["2030-01-01", "2020-01-01", "1930-01-01"] {
        let a = with(athlete_body("Age"), "date_of_birth", json!(dob));
        assert_eq!(
            fields(&rejected(&app, team, &a).await),
            vec!["date_of_birth"],
            "{dob}"
        );
    }
    let a = with(
        athlete_body("Bad date"),
        "date_of_birth",
        json!("1998-02-30"),
    );
    assert_eq!(
        fields(&rejected(&app, team, &a).await),
        vec!["date_of_birth"]
    );
}

#[tokio::test]
async fn goal_and_rate_must_agree() {
    let app = spawn_app().await;
    let team = app.team("Goals").await;
    let goal = |g: &str, rate: Value| {
        let mut a = athlete_body("Goal");
        a["goal"] = json!(g);
        if !rate.is_null() {
            a["goal_rate_kg_per_week"] = rate;
        }
        a
    };
    for bad in [
        goal("maintain", json!(0.5)),
        goal("reduce", Value::Null),
        goal("gain", Value::Null),
    ] {
        assert_eq!(
            fields(&rejected(&app, team, &bad).await),
            vec!["goal_rate_kg_per_week"],
            "{bad}"
        );
    }
    for bad in [goal("reduce", json!(2.5)), goal("gain", json!(-0.1))] {
        assert_eq!(
            fields(&rejected(&app, team, &bad).await),
            vec!["goal_rate_kg_per_week"],
            "{bad}"
        );
    }
    let a = goal("maintain", json!(0));
    body(
        app.post(&format!("/v1/teams/{team}/athletes"), &app.admin, &a)
            .await,
        201,
    )
    .await;
    let a = goal("gain", json!(0.25));
    body(
        app.post(&format!("/v1/teams/{team}/athletes"), &app.admin, &a)
            .await,
        201,
    )
    .await;
}

#[tokio::test]
async fn fat_free_mass_must_be_below_body_mass() {
    let app = spawn_app().await;
    let team = app.team("Lean").await;
    let a = with(athlete_body("Lean"), "fat_free_mass_kg", json!(62));
    assert_eq!(
        fields(&rejected(&app, team, &a).await),
        vec!["fat_free_mass_kg"]
    );
    let a = with(athlete_body("Fat"), "body_fat_percent", json!(70));
    assert_eq!(
        fields(&rejected(&app, team, &a).await),
        vec!["body_fat_percent"]
    );
}

#[tokio::test]
async fn every_offending_field_is_listed_at_once() {
    let app = spawn_app().await;
    let team = app.team("All at once").await;
    let mut a = athlete_body("");
    a["height_cm"] = json!(300);
    a["hr_max"] = json!(300);
    a["date_of_birth"] = json!("2031-01-01");
    let p = rejected(&app, team, &a).await;
    let mut f = fields(&p);
    f.sort();
    assert_eq!(f, ["date_of_birth", "display_name", "height_cm", "hr_max"]);
    assert_eq!(p["detail"], "4 field(s) are invalid; see `errors`");
    for e in p["errors"].as_array().unwrap() {
        assert!(!e["reason"].as_str().unwrap().is_empty());
    }
    let list = body(
        app.get(&format!("/v1/teams/{team}/athletes?status=all"), &app.admin)
            .await,
        200,
    )
    .await;
    assert!(list["items"].as_array().unwrap().is_empty());
}

#[tokio::test]
async fn unknown_fields_and_wrong_types_are_422_naming_the_field() {
    let app = spawn_app().await;
    let team = app.team("Types").await;
    let a = with(athlete_body("Unknown"), "shoe_size", json!(44));
    let p = rejected(&app, team, &a).await;
    assert_eq!(fields(&p), vec!["shoe_size"]);
    assert!(
        p["errors"][0]["reason"]
            .as_str()
            .unwrap()
            .contains("unknown field"),
        "{p}"
    );

    let a = with(athlete_body("Typed"), "height_cm", json!("tall"));
    assert_eq!(fields(&rejected(&app, team, &a).await), vec!["height_cm"]);
    let a = with(athlete_body("Typed"), "sex", json!("other"));
    assert_eq!(fields(&rejected(&app, team, &a).await), vec!["sex"]);
    let a = with(
        athlete_body("Typed"),
        "initial_body_mass",
        json!({"body_mass_kg": "heavy"}),
    );
    assert_eq!(
        fields(&rejected(&app, team, &a).await),
        vec!["initial_body_mass.body_mass_kg"]
    );
    let a = with(
        athlete_body("Typed"),
        "vo2max",
        json!({"method": "measured", "ml_per_kg_min": 120}),
    );
    assert_eq!(
        fields(&rejected(&app, team, &a).await),
        vec!["vo2max.ml_per_kg_min"]
    );
}

#[tokio::test]
async fn a_missing_required_field_is_a_422_that_mentions_it() {
    let app = spawn_app().await;
    let team = app.team("Missing").await;
    let mut a = athlete_body("No height");
    a.as_object_mut().unwrap().remove("height_cm");
    let p = rejected(&app, team, &a).await;
    assert!(
        p["errors"][0]["reason"]
            .as_str()
            .unwrap()
            .contains("height_cm"),
        "{p}"
    );
}

#[tokio::test]
async fn a_merge_patch_that_sets_a_required_field_to_null_is_a_422() {
    let app = spawn_app().await;
    let team = app.team("Null").await;
    let athlete = app.athlete(team, "Nulled").await;
    let path = format!("/v1/athletes/{athlete}");
    let res = app
        .patch(&path, &app.admin, &json!({"height_cm": null}), None)
        .await;
    let p = problem(res, 422).await;
    assert!(
        p["errors"][0]["reason"]
            .as_str()
            .unwrap()
            .contains("height_cm"),
        "{p}"
    );
    let stored = glycoweek::store::athletes::get(&app.db, athlete)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(stored.height_cm, 168.0);
    assert_eq!(stored.version, 1);
}

#[tokio::test]
async fn a_merge_patch_null_for_an_unknown_member_is_a_422_at_any_depth() {
    let app = spawn_app().await;
    let team = app.team("Unknown nulls").await;
    let athlete = app.athlete(team, "Nulls").await;
    let path = format!("/v1/athletes/{athlete}");
    for (patch, field) in [
        (json!({"shoe_size": null}), "shoe_size"),
        (
            json!({"vo2max": {"method": "measured", "ml_per_kg_min": 55.0, "colour": null}}),
            // The tagged VO2max source is read as a whole, so the member at
            // fault is `vo2max` and the reason names `colour` (as without null).
            "vo2max",
        ),
    ] {
        let p = problem(app.patch(&path, &app.admin, &patch, None).await, 422).await;
        assert_eq!(fields(&p), vec![field], "{patch}: {p}");
        let reason = p["errors"][0]["reason"].as_str().unwrap();
        assert!(reason.contains("unknown field"), "{p}");
        assert!(
            reason.contains("`colour`") || reason.contains("`shoe_size`"),
            "{p}"
        );
    }
    let stored = glycoweek::store::athletes::get(&app.db, athlete)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(stored.version, 1);
    // Nulls for known optional members the athlete lacks remove nothing.
    let res = app
        .patch(
            &path,
            &app.admin,
            &json!({"hr_rest": null, "vo2max": null}),
            None,
        )
        .await;
    assert_eq!(res.status(), 200);
}

#[tokio::test]
async fn a_patch_is_validated_like_a_create() {
    let app = spawn_app().await;
    let team = app.team("Patch rules").await;
    let athlete = app.athlete(team, "Patched").await;
    let path = format!("/v1/athletes/{athlete}");
    let cases = [
        (json!({"height_cm": 500}), "height_cm"),
        (json!({"goal": "reduce"}), "goal_rate_kg_per_week"),
        (
            json!({"initial_body_mass": {"body_mass_kg": 60}}),
            "initial_body_mass",
        ),
        (json!({"fat_free_mass_kg": 70}), "fat_free_mass_kg"),
        (json!({"status": "retired"}), "status"),
    ];
    for (patch, field) in cases {
        let p = problem(app.patch(&path, &app.admin, &patch, None).await, 422).await;
        assert_eq!(fields(&p), vec![field], "{patch}");
    }
    let p = problem(
        app.patch(&path, &app.admin, &json!([1, 2]), None).await,
        422,
    )
    .await;
    assert!(p["errors"].is_array());
    let stored = glycoweek::store::athletes::get(&app.db, athlete)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(stored.version, 1, "no rejected patch was stored");
}

#[tokio::test]
async fn erasing_an_athlete_leaves_an_audit_entry_without_body_values() {
    let app = spawn_app().await;
    let team = app.team("Erase").await;
    let res = app
        .post(
            &format!("/v1/teams/{team}/athletes"),
            &app.admin,
            &full_athlete(),
        )
        .await;
    let athlete = id_of(&body(res, 201).await);
    assert_eq!(
        app.delete(&format!("/v1/athletes/{athlete}"), &app.admin, None)
            .await
            .status(),
        204
    );
    let trail = app.audit(team).await;
    let erased = trail
        .iter()
        .find(|e| e["entity_id"] == athlete.to_string() && e["action"] == "delete")
        .expect("an audit entry for the erasure");
    assert_eq!(erased["entity_type"], "athlete");
    assert!(
        erased["before"].is_null() && erased["after"].is_null(),
        "{erased}"
    );
    assert!(erased["token_id"].is_string());
}

#[tokio::test]

async fn erasing_an_athlete_leaves_none_of_their_values_anywhere_in_the_audit_trail() {
    let app = spawn_app().await;
    let team = app.team("Erase all").await;
    let res = app
        .post(
            &format!("/v1/teams/{team}/athletes"),
            &app.admin,
            &full_athlete(),
        )
        .await;
    let athlete = id_of(&body(res, 201).await);
    let path = format!("/v1/athletes/{athlete}");
    let reading = json!({"measured_on": "2026-12-01", "body_mass_kg": 73.9});
    body(
        app.post(&format!("{path}/body-mass"), &app.admin, &reading)
            .await,
        201,
    )
    .await;
    body(
        app.patch(&path, &app.admin, &json!({"hr_max": 195}), None)
            .await,
        200,
    )
    .await;
    assert_eq!(app.delete(&path, &app.admin, None).await.status(), 204);
    let trail = serde_json::to_string(&app.audit(team).await).unwrap();
    for value in [
        "Oren Oakhurst",
        "2001-04-17",
        "74.5",
        "73.9",
        "no nuts",
        "diabetes",
    ] {
        assert!(
            !trail.contains(value),
            "the audit trail still holds {value}"
        );
    }
}

#[tokio::test]

async fn missing_required_fields_are_named_in_the_field_of_the_problem() {
    let app = spawn_app().await;
    let team = app.team("Named").await;
    let mut a = athlete_body("No height");
    a.as_object_mut().unwrap().remove("height_cm");
    assert_eq!(fields(&rejected(&app, team, &a).await), vec!["height_cm"]);
    let a = with(
        athlete_body("Nested"),
        "initial_body_mass",
        json!({"measured_on": "2026-11-01"}),
    );
    assert_eq!(
        fields(&rejected(&app, team, &a).await),
        vec!["initial_body_mass.body_mass_kg"]
    );

    let athlete = app.athlete(team, "Nulled").await;
    let res = app
        .patch(
            &format!("/v1/athletes/{athlete}"),
            &app.admin,
            &json!({"height_cm": null}),
            None,
        )
        .await;
    assert_eq!(fields(&problem(res, 422).await), vec!["height_cm"]);
    let res = app
        .patch(
            &format!("/v1/teams/{team}"),
            &app.admin,
            &json!({"name": null}),
            None,
        )
        .await;
    assert_eq!(fields(&problem(res, 422).await), vec!["name"]);
    let session = app.session(team, "2026-12-08").await;
    let res = app
        .patch(
            &format!("/v1/sessions/{session}"),
            &app.admin,
            &json!({"segments": null}),
            None,
        )
        .await;
    assert_eq!(fields(&problem(res, 422).await), vec!["segments"]);
}
