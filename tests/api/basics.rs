use serde_json::{Value, json};

use crate::helpers::*;

#[tokio::test]
async fn health_answers_without_a_token() {
    let app = spawn_app().await;
    let res = app
        .req(reqwest::Method::GET, "/health", None)
        .send()
        .await
        .unwrap();
    assert_eq!(res.status(), 200);
    let body: Value = res.json().await.unwrap();
    assert_eq!(body["status"], "ok");
}

#[tokio::test]
async fn creating_a_team_returns_it_with_an_etag_and_stores_it() {
    let app = spawn_app().await;
    let res = app
        .post(
            "/v1/teams",
            &app.admin,
            &json!({"name": "Test squad", "time_zone": "Europe/Paris"}),
        )
        .await;
    assert_eq!(res.status(), 201);
    assert_eq!(res.headers()["etag"], "\"v1\"");
    let team: Value = res.json().await.unwrap();
    assert_eq!(team["name"], "Test squad");
    let id = id_of(&team);
    let stored = glycoweek::store::teams::get(&app.db, id)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(stored.time_zone, "Europe/Paris");
}

#[tokio::test]
async fn creating_an_athlete_without_body_mass_is_rejected() {
    let app = spawn_app().await;
    let team = app.team("A").await;
    let mut body = athlete_body("No Mass");
    body.as_object_mut().unwrap().remove("initial_body_mass");
    let res = app
        .post(&format!("/v1/teams/{team}/athletes"), &app.admin, &body)
        .await;
    let p = problem(res, 422).await;
    assert_eq!(fields(&p), vec!["initial_body_mass"]);
}
