//! Participation exceptions: skipped, shortened and replaced, with their rules.

use serde_json::{Value, json};
use uuid::Uuid;

use crate::helpers::*;

struct Setup {
    app: TestApp,
    team: Uuid,
    session: Uuid,
    athlete: Uuid,
}

async fn setup() -> Setup {
    let app = spawn_app().await;
    let team = app.team("Squad").await;
    let session = app.session(team, "2026-12-08").await;
    let athlete = app.athlete(team, "Sub").await;
    Setup {
        app,
        team,
        session,
        athlete,
    }
}

impl Setup {
    fn path(&self) -> String {
        format!(
            "/v1/sessions/{}/participation/{}",
            self.session, self.athlete
        )
    }

    async fn rejected(&self, input: Value) -> Vec<String> {
        let res = self.app.put(&self.path(), &self.app.admin, &input).await;
        fields(&problem(res, 422).await)
    }
}

#[tokio::test]
async fn a_planner_sets_reads_lists_changes_and_removes_an_exception() {
    let s = setup().await;
    let app = &s.app;
    let planner = app.token("planner", s.team).await;
    let input = json!({"mode": "shortened", "minutes": 25, "portion": "until_end", "note": "second-half sub"});
    let res = app.put(&s.path(), &planner, &input).await;
    assert_eq!(etag_of(&res), "\"v1\"");
    let stored = body(res, 200).await;
    assert_eq!(stored["mode"], "shortened");
    assert_eq!(stored["minutes"], 25.0);
    assert_eq!(stored["portion"], "until_end");
    let in_db = glycoweek::store::sessions::get_participation(&app.db, s.session, s.athlete)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(in_db.minutes, Some(25.0));
    assert_eq!(in_db.note.as_deref(), Some("second-half sub"));

    let res = app.get(&s.path(), &planner).await;
    assert_eq!(etag_of(&res), "\"v1\"");
    assert_eq!(body(res, 200).await, stored);
    let list = body(
        app.get(
            &format!("/v1/sessions/{}/participation", s.session),
            &planner,
        )
        .await,
        200,
    )
    .await;
    assert_eq!(list, json!({"items": [stored], "next_cursor": null}));

    let rehab = json!({"mode": "replaced", "segments": [{"label": "bike", "minutes": 30, "intensity": {"form": "cycling", "watts": 150}}]});
    let res = app.put_if(&s.path(), &planner, &rehab, "\"v1\"").await;
    assert_eq!(etag_of(&res), "\"v2\"");
    let replaced = body(res, 200).await;
    assert_eq!(replaced["mode"], "replaced");
    assert!(replaced["minutes"].is_null());
    assert_eq!(replaced["segments"][0]["intensity"]["watts"], 150.0);

    let skip = json!({"mode": "skipped", "note": "rested"});
    assert_eq!(
        body(app.put(&s.path(), &planner, &skip).await, 200).await["version"],
        3
    );

    assert_eq!(
        app.delete(&s.path(), &planner, Some("\"v3\""))
            .await
            .status(),
        204
    );
    assert!(
        glycoweek::store::sessions::get_participation(&app.db, s.session, s.athlete)
            .await
            .unwrap()
            .is_none()
    );
    problem(app.get(&s.path(), &planner).await, 404).await;
    problem(app.delete(&s.path(), &planner, None).await, 404).await;
    let list = body(
        app.get(
            &format!("/v1/sessions/{}/participation", s.session),
            &planner,
        )
        .await,
        200,
    )
    .await;
    assert_eq!(list, json!({"items": [], "next_cursor": null}));

    let trail = app.audit(s.team).await;
    let actions: Vec<&str> = trail
        .iter()
        .filter(|e| e["entity_type"] == "participation")
        .map(|e| e["action"].as_str().unwrap())
        .collect();
    assert_eq!(actions, ["create", "update", "update", "delete"]);
}

#[tokio::test]
async fn shortened_needs_minutes_below_the_session_length() {
    let s = setup().await;
    // The helper session lasts 60 minutes.
    assert_eq!(
        s.rejected(json!({"mode": "shortened"})).await,
        vec!["minutes"]
    );
    for minutes in [0.0, -5.0, 60.0, 75.0] {
        assert_eq!(
            s.rejected(json!({"mode": "shortened", "minutes": minutes}))
                .await,
            vec!["minutes"],
            "{minutes}"
        );
    }
    let seg = json!([{"minutes": 10, "intensity": {"form": "mets", "mets": 3}}]);
    assert_eq!(
        s.rejected(json!({"mode": "shortened", "minutes": 20, "segments": seg}))
            .await,
        vec!["segments"]
    );
    assert_eq!(
        s.rejected(json!({"mode": "shortened", "minutes": 20, "portion": "middle"}))
            .await,
        vec!["portion"]
    );
    let ok = s
        .app
        .put(
            &s.path(),
            &s.app.admin,
            &json!({"mode": "shortened", "minutes": 59.5}),
        )
        .await;
    body(ok, 200).await;
}

#[tokio::test]
async fn skipped_and_replaced_refuse_the_fields_of_other_modes() {
    let s = setup().await;
    let seg = json!([{"minutes": 10, "intensity": {"form": "mets", "mets": 3}}]);
    assert_eq!(
        s.rejected(json!({"mode": "skipped", "minutes": 10})).await,
        vec!["minutes"]
    );
    assert_eq!(
        s.rejected(json!({"mode": "skipped", "segments": seg}))
            .await,
        vec!["segments"]
    );
    assert_eq!(
        s.rejected(json!({"mode": "skipped", "portion": "from_start"}))
            .await,
        vec!["portion"]
    );
    assert_eq!(
        s.rejected(json!({"mode": "replaced"})).await,
        vec!["segments"]
    );
    assert_eq!(
        s.rejected(json!({"mode": "replaced", "segments": []}))
            .await,
        vec!["segments"]
    );
    assert_eq!(
        s.rejected(json!({"mode": "replaced", "segments": [{"minutes": 700, "intensity": {"form": "mets", "mets": 3}}]}))
            .await,
        vec!["segments[0].minutes"]
    );
    assert_eq!(
        s.rejected(json!({"mode": "replaced", "segments": seg, "minutes": 5}))
            .await,
        vec!["minutes"]
    );
    assert_eq!(s.rejected(json!({"mode": "absent"})).await, vec!["mode"]);
    assert_eq!(
        s.rejected(json!({"mode": "skipped", "note": "n".repeat(501)}))
            .await,
        vec!["note"]
    );
    assert!(
        s.app
            .put(
                &s.path(),
                &s.app.admin,
                &json!({"mode": "skipped", "reason": "x"})
            )
            .await
            .status()
            == 422
    );
    assert!(
        glycoweek::store::sessions::list_participation(&s.app.db, s.session)
            .await
            .unwrap()
            .is_empty(),
        "nothing stored"
    );
}

#[tokio::test]
async fn an_athlete_of_another_team_cannot_be_given_an_exception() {
    let s = setup().await;
    let other = s.app.team("Other").await;
    let stranger = s.app.athlete(other, "Stranger").await;
    let path = format!("/v1/sessions/{}/participation/{stranger}", s.session);
    problem(
        s.app
            .put(&path, &s.app.admin, &json!({"mode": "skipped"}))
            .await,
        404,
    )
    .await;
    problem(s.app.get(&path, &s.app.admin).await, 404).await;
    let unknown = format!(
        "/v1/sessions/{}/participation/{}",
        s.session,
        Uuid::now_v7()
    );
    problem(
        s.app
            .put(&unknown, &s.app.admin, &json!({"mode": "skipped"}))
            .await,
        404,
    )
    .await;
}

#[tokio::test]
async fn a_stale_if_match_on_participation_is_412_and_the_current_one_succeeds() {
    let s = setup().await;
    let app = &s.app;
    body(
        app.put(&s.path(), &app.admin, &json!({"mode": "skipped"}))
            .await,
        200,
    )
    .await;
    body(
        app.put(
            &s.path(),
            &app.admin,
            &json!({"mode": "shortened", "minutes": 30}),
        )
        .await,
        200,
    )
    .await;

    let stale = app
        .put_if(&s.path(), &app.admin, &json!({"mode": "skipped"}), "\"v1\"")
        .await;
    assert_eq!(problem(stale, 412).await["type"], "/problems/stale-version");
    problem(app.delete(&s.path(), &app.admin, Some("\"v1\"")).await, 412).await;
    let kept = glycoweek::store::sessions::get_participation(&app.db, s.session, s.athlete)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(kept.minutes, Some(30.0));

    let res = app
        .put_if(&s.path(), &app.admin, &json!({"mode": "skipped"}), "\"v2\"")
        .await;
    assert_eq!(body(res, 200).await["version"], 3);
    assert_eq!(
        app.delete(&s.path(), &app.admin, Some("\"v3\""))
            .await
            .status(),
        204
    );

    // With If-Match, an exception that does not exist has no version to match.
    let res = app
        .put_if(&s.path(), &app.admin, &json!({"mode": "skipped"}), "\"v1\"")
        .await;
    problem(res, 412).await;
}
