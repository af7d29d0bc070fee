//! Data that outlives the process: restarts and backups.

use serde_json::json;

use crate::helpers::*;

#[tokio::test]
async fn data_survives_a_restart() {
    let app = spawn_app().await;
    let team = app.team("Durable").await;
    let athlete = app.athlete(team, "Kept").await;
    let session = app.session(team, "2026-12-08").await;
    let path = format!("/v1/sessions/{session}/participation/{athlete}");
    body(
        app.put(
            &path,
            &app.admin,
            &json!({"mode": "shortened", "minutes": 20}),
        )
        .await,
        200,
    )
    .await;
    let planner = app.token("planner", team).await;
    let before_session = body(
        app.get(&format!("/v1/sessions/{session}"), &app.admin)
            .await,
        200,
    )
    .await;
    let before_athlete = body(
        app.get(&format!("/v1/athletes/{athlete}"), &app.admin)
            .await,
        200,
    )
    .await;
    let audit_len = app.audit(team).await.len();

    let (dir, db_path) = app.stop().await;
    let app = spawn_on(dir, db_path).await;

    assert_eq!(
        body(
            app.get(&format!("/v1/sessions/{session}"), &app.admin)
                .await,
            200
        )
        .await,
        before_session
    );
    assert_eq!(
        body(
            app.get(&format!("/v1/athletes/{athlete}"), &app.admin)
                .await,
            200
        )
        .await,
        before_athlete
    );
    assert_eq!(
        body(app.get(&path, &app.admin).await, 200).await["minutes"],
        20.0
    );
    assert_eq!(
        app.get("/v1/teams", &planner).await.status(),
        200,
        "tokens survive too"
    );
    assert_eq!(app.audit(team).await.len(), audit_len);
    // Still writable after the restart.
    body(
        app.patch(
            &format!("/v1/sessions/{session}"),
            &planner,
            &json!({"title": "After"}),
            Some("\"v1\""),
        )
        .await,
        200,
    )
    .await;
}

#[tokio::test]
async fn a_backup_opens_and_holds_the_same_rows() {
    let app = spawn_app().await;
    let team = app.team("Backed up").await;
    let athlete = app.athlete(team, "Copied").await;
    let reading = json!({"measured_on": "2026-11-20", "body_mass_kg": 62.0});
    body(
        app.post(
            &format!("/v1/athletes/{athlete}/body-mass"),
            &app.admin,
            &reading,
        )
        .await,
        201,
    )
    .await;
    let mut sessions = Vec::new();
    for day in 7..=13 {
        sessions.push(app.session(team, &format!("2026-12-{day:02}")).await);
    }
    let path = format!("/v1/sessions/{}/participation/{athlete}", sessions[0]);
    body(
        app.put(&path, &app.admin, &json!({"mode": "skipped"}))
            .await,
        200,
    )
    .await;

    let target = app.dir.path().join("copy.db");
    app.db.backup(&target).await.expect("backup");
    let copy = glycoweek::store::Db::open(&target)
        .await
        .expect("the backup opens");
    let tables = [
        "teams",
        "sessions",
        "athletes",
        "body_mass_measurements",
        "participation",
        "api_tokens",
        "audit_log",
    ];
    for table in tables {
        let q = format!("SELECT COUNT(*) FROM {table}");
        let live: i64 = sqlx::query_scalar(sqlx::AssertSqlSafe(q.clone()))
            .fetch_one(&app.db.read)
            .await
            .unwrap();
        let copied: i64 = sqlx::query_scalar(sqlx::AssertSqlSafe(q))
            .fetch_one(&copy.read)
            .await
            .unwrap();
        assert_eq!(copied, live, "{table}");
    }

    for id in &sessions {
        let live = glycoweek::store::sessions::get(&app.db, *id)
            .await
            .unwrap()
            .unwrap();
        let copied = glycoweek::store::sessions::get(&copy, *id)
            .await
            .unwrap()
            .unwrap();
        assert_eq!(
            serde_json::to_value(&copied).unwrap(),
            serde_json::to_value(&live).unwrap()
        );
    }
    let live = glycoweek::store::athletes::get(&app.db, athlete)
        .await
        .unwrap()
        .unwrap();
    let copied = glycoweek::store::athletes::get(&copy, athlete)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(
        serde_json::to_value(&copied).unwrap(),
        serde_json::to_value(&live).unwrap()
    );
    let p = glycoweek::store::sessions::get_participation(&copy, sessions[0], athlete)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(p.version, 1);
    copy.close().await;

    // The live database moves on; the copy does not follow.
    app.session(team, "2026-12-14").await;
    let copy = glycoweek::store::Db::open(&target).await.unwrap();
    let copied_sessions: i64 = sqlx::query_scalar("SELECT COUNT(*) FROM sessions")
        .fetch_one(&copy.read)
        .await
        .unwrap();
    assert_eq!(copied_sessions, 7);
    copy.close().await;

    assert!(
        app.db.backup(&target).await.is_err(),
        "an existing file is never overwritten"
    );
}

#[tokio::test]
async fn a_read_only_database_answers_503_and_loses_nothing() {
    let app = spawn_app().await;
    let team = app.team("Read-only").await;
    // The writer pool has exactly one connection: make it refuse writes,
    // as a read-only mount or a full disk would.
    sqlx::query("PRAGMA query_only = ON")
        .execute(&app.db.write)
        .await
        .unwrap();
    let res = app
        .post(
            &format!("/v1/teams/{team}/sessions"),
            &app.admin,
            &session_body("2026-12-08", "10:00"),
        )
        .await;
    assert!(res.headers().contains_key("retry-after"));
    let p = problem(res, 503).await;
    assert_eq!(p["type"], "/problems/storage-unavailable");
    // Reads still work, and nothing half-written appeared.
    let list: serde_json::Value = app
        .get(&format!("/v1/teams/{team}/sessions"), &app.admin)
        .await
        .json()
        .await
        .unwrap();
    assert!(list["items"].as_array().unwrap().is_empty());
    sqlx::query("PRAGMA query_only = OFF")
        .execute(&app.db.write)
        .await
        .unwrap();
    let res = app
        .post(
            &format!("/v1/teams/{team}/sessions"),
            &app.admin,
            &session_body("2026-12-08", "10:00"),
        )
        .await;
    assert_eq!(res.status(), 201, "writes resume once storage is back");
}
