//! Data protection: export everything stored about an athlete; erasure.

use serde_json::{Value, json};

use crate::helpers::*;

#[tokio::test]
async fn an_athlete_export_holds_every_record_and_erasure_removes_them() {
    let app = spawn_app().await;
    let team = app.team("Privacy").await;
    let athlete = app.athlete(team, "Export Me").await;
    let reading = app
        .post(
            &format!("/v1/athletes/{athlete}/body-mass"),
            &app.admin,
            &json!({"measured_on": "2026-11-20", "body_mass_kg": 61.0}),
        )
        .await;
    assert_eq!(reading.status(), 201);
    let pin = app
        .put(
            &format!("/v1/athletes/{athlete}/pins/2026-12-08"),
            &app.admin,
            &json!({"carbohydrate_g_per_kg": 6.5}),
        )
        .await;
    assert_eq!(pin.status(), 200);
    let reader = app.token("reader", team).await;
    problem(
        app.get(&format!("/v1/athletes/{athlete}/export"), &reader)
            .await,
        403,
    )
    .await;

    let res = app
        .get(&format!("/v1/athletes/{athlete}/export"), &app.admin)
        .await;
    assert_eq!(res.status(), 200);
    let export: Value = res.json().await.unwrap();
    assert_eq!(export["athlete"]["display_name"], "Export Me");
    assert_eq!(export["body_mass"].as_array().unwrap().len(), 2);
    assert_eq!(export["pins"].as_array().unwrap().len(), 1);
    assert!(
        export["audit"].as_array().unwrap().len() >= 3,
        "create, reading, pin"
    );

    assert_eq!(
        app.delete(&format!("/v1/athletes/{athlete}"), &app.admin, None)
            .await
            .status(),
        204
    );
    problem(
        app.get(&format!("/v1/athletes/{athlete}/export"), &app.admin)
            .await,
        404,
    )
    .await;
    let trail: Value = app
        .get(&format!("/v1/teams/{team}/audit"), &app.admin)
        .await
        .json()
        .await
        .unwrap();
    let text = trail.to_string();
    assert!(
        !text.contains("Export Me"),
        "the erased athlete's name is gone from the trail"
    );
    assert!(
        !text.contains("61.0") && !text.contains("6.5"),
        "so are the values"
    );
}
