//! Malformed requests of every kind answer 4xx problem+json, never 5xx.

use reqwest::Method;
use serde_json::json;

use crate::helpers::*;

#[tokio::test]
async fn malformed_json_is_400_problem_json() {
    let app = spawn_app().await;
    let team = app.team("Syntax").await;
    let path = format!("/v1/teams/{team}/sessions");
    let raws = [
        "",
        "{",
        "{\"title\": }",
        "not json",
        "{\"title\": \"a\",}",
        "{\"title\": 'single'}",
        "{\"local_date\": \"2026-12-08\"",
        "\u{feff}{}",
    ];
    for raw in raws {
        let res = app
            .raw(
                Method::POST,
                &path,
                Some(&app.admin),
                Some("application/json"),
                raw,
            )
            .await;
        let p = problem(res, 400).await;
        assert_eq!(p["type"], "/problems/malformed-request", "{raw}");
    }
}

#[tokio::test]
async fn a_body_that_is_not_declared_as_json_is_415() {
    let app = spawn_app().await;
    let team = app.team("Media").await;
    let path = format!("/v1/teams/{team}/sessions");
    let valid = session_body("2026-12-08", "10:00").to_string();
    for ct in [
        Some("text/plain"),
        Some("application/x-www-form-urlencoded"),
        Some("application/xml"),
        None,
    ] {
        let res = app
            .raw(Method::POST, &path, Some(&app.admin), ct, valid.clone())
            .await;
        let p = problem(res, 415).await;
        assert_eq!(p["type"], "/problems/unsupported-media-type", "{ct:?}");
    }
    for ct in [
        "application/json; charset=utf-8",
        "application/merge-patch+json",
        "Application/JSON",
    ] {
        let res = app
            .raw(
                Method::POST,
                &path,
                Some(&app.admin),
                Some(ct),
                valid.clone(),
            )
            .await;
        assert_eq!(res.status(), 201, "{ct}");
    }
}

#[tokio::test]
async fn an_oversized_body_is_413_problem_json() {
    let app = spawn_app().await;
    let team = app.team("Big").await;
    let mut s = session_body("2026-12-08", "10:00");
    s["notes"] = json!("x".repeat(2 * 1024 * 1024));
    let res = app
        .raw(
            Method::POST,
            &format!("/v1/teams/{team}/sessions"),
            Some(&app.admin),
            Some("application/json"),
            s.to_string(),
        )
        .await;
    let p = problem(res, 413).await;
    assert_eq!(p["type"], "/problems/payload-too-large");
    let (stored, _) = app
        .all_pages(&format!("/v1/teams/{team}/sessions?limit=10"), &app.admin)
        .await;
    assert!(stored.is_empty());
}

#[tokio::test]
async fn unknown_routes_and_methods_are_problem_json() {
    let app = spawn_app().await;
    let p = problem(app.get("/v1/nowhere", &app.admin).await, 404).await;
    assert_eq!(p["type"], "/problems/not-found");
    let res = app
        .req(Method::PUT, "/v1/teams", Some(&app.admin))
        .json(&json!({}))
        .send()
        .await
        .unwrap();
    assert_eq!(
        problem(res, 405).await["type"],
        "/problems/method-not-allowed"
    );
}

#[tokio::test]
async fn responses_carry_a_request_id_and_security_headers() {
    let app = spawn_app().await;
    let res = app.get("/v1/teams", &app.admin).await;
    let h = res.headers();
    assert!(h.contains_key("x-request-id"));
    assert_eq!(h["x-content-type-options"], "nosniff");
    assert_eq!(h["x-frame-options"], "DENY");
    assert_eq!(h["cache-control"], "no-store");
    let res = app
        .req(Method::GET, "/v1/teams", None)
        .header("x-request-id", "support-42")
        .send()
        .await
        .unwrap();
    assert_eq!(res.headers()["x-request-id"], "support-42");
    assert_eq!(problem(res, 401).await["request_id"], "support-42");
}

#[tokio::test]
async fn no_malformed_request_gets_a_5xx_and_every_error_is_problem_json() {
    let app = spawn_app().await;
    let team = app.team("Fuzz").await;
    let athlete = app.athlete(team, "Fuzzed").await;
    let session = app.session(team, "2026-12-08").await;
    let admin = app.admin.as_str();
    let deep = format!("{}{}", "[".repeat(5000), "]".repeat(5000));
    let deep_object = format!("{}1{}", "{\"a\":".repeat(100), "}".repeat(100));
    let huge_number = format!("{{\"name\": \"n\", \"time_zone\": {}}}", "9".repeat(400));

    // (method, path, body); a body is sent as application/json.
    let cases: Vec<(Method, String, Option<String>)> = vec![
        (Method::GET, "/v1/teams/not-a-uuid".into(), None),
        (Method::GET, "/v1/athletes/123".into(), None),
        (Method::GET, "/v1/sessions/%00%ff".into(), None),
        (
            Method::GET,
            format!("/v1/sessions/{session}/participation/nope"),
            None,
        ),
        (Method::DELETE, "/v1/tokens/zzz".into(), None),
        (Method::GET, "/v1/teams?limit=0".into(), None),
        (Method::GET, "/v1/teams?limit=abc".into(), None),
        (Method::GET, "/v1/teams?limit=-1".into(), None),
        (
            Method::GET,
            "/v1/teams?limit=99999999999999999999".into(),
            None,
        ),
        (Method::GET, "/v1/teams?limit=201".into(), None),
        (Method::GET, "/v1/teams?cursor=garbage".into(), None),
        (Method::GET, "/v1/teams?cursor=%FF%FE".into(), None),
        (Method::GET, "/v1/teams?colour=red".into(), None),
        (
            Method::GET,
            format!("/v1/teams/{team}/sessions?from=notadate"),
            None,
        ),
        (
            Method::GET,
            format!("/v1/teams/{team}/sessions?to=2026-13-45"),
            None,
        ),
        (
            Method::GET,
            format!("/v1/teams/{team}/sessions?from=NaN"),
            None,
        ),
        (
            Method::GET,
            format!("/v1/teams/{team}/sessions?cursor=eyJhIjoxfQ"),
            None,
        ),
        (
            Method::GET,
            format!("/v1/teams/{team}/athletes?cursor=W10"),
            None,
        ),
        (
            Method::GET,
            format!("/v1/athletes/{athlete}/body-mass?from=+99999-01-01"),
            None,
        ),
        (
            Method::GET,
            format!("/v1/teams/{team}/audit?after=abc"),
            None,
        ),
        (
            Method::GET,
            format!("/v1/teams/{team}/audit?after=-9223372036854775808&limit=0"),
            None,
        ),
        (Method::POST, "/v1/teams".into(), Some(String::new())),
        (Method::POST, "/v1/teams".into(), Some("[]".into())),
        (Method::POST, "/v1/teams".into(), Some("null".into())),
        (Method::POST, "/v1/teams".into(), Some("\"team\"".into())),
        (Method::POST, "/v1/teams".into(), Some(deep.clone())),
        (Method::POST, "/v1/teams".into(), Some(huge_number)),
        (
            Method::POST,
            "/v1/teams".into(),
            Some(r#"{"name": "x", "time_zone": "UTC", "name": "y"}"#.into()),
        ),
        (
            Method::PATCH,
            format!("/v1/teams/{team}"),
            Some("[]".into()),
        ),
        (
            Method::PATCH,
            format!("/v1/teams/{team}"),
            Some(deep_object.clone()),
        ),
        (Method::PATCH, format!("/v1/teams/{team}"), Some(deep)),
        (
            Method::PATCH,
            format!("/v1/athletes/{athlete}"),
            Some(r#"{"height_cm": "NaN"}"#.into()),
        ),
        (
            Method::PATCH,
            format!("/v1/athletes/{athlete}"),
            Some(r#"{"height_cm": 1e308}"#.into()),
        ),
        (
            Method::PATCH,
            format!("/v1/athletes/{athlete}"),
            Some(r#"{"vo2max": {"method": "measured"}}"#.into()),
        ),
        (
            Method::PATCH,
            format!("/v1/athletes/{athlete}"),
            Some(format!(r#"{{"display_name": "{}"}}"#, "x".repeat(1000))),
        ),
        (
            Method::PATCH,
            format!("/v1/athletes/{athlete}"),
            Some(r#"{"health_flags": "all"}"#.into()),
        ),
        (
            Method::PATCH,
            format!("/v1/sessions/{session}"),
            Some(r#"{"segments": [{"minutes": 1e400}]}"#.into()),
        ),
        (
            Method::PATCH,
            format!("/v1/sessions/{session}"),
            Some(r#"{"segments": {"0": 1}}"#.into()),
        ),
        (
            Method::PATCH,
            format!("/v1/sessions/{session}"),
            Some(r#"{"local_date": 20261208}"#.into()),
        ),
        (
            Method::POST,
            format!("/v1/teams/{team}/sessions"),
            Some("{}".into()),
        ),
        (
            Method::POST,
            format!("/v1/teams/{team}/sessions"),
            Some(deep_object),
        ),
        (
            Method::POST,
            format!("/v1/teams/{team}/sessions/import"),
            Some(r#"{"sessions": {}}"#.into()),
        ),
        (
            Method::POST,
            format!("/v1/teams/{team}/sessions/import"),
            Some(r#"[{"sessions": []}]"#.into()),
        ),
        (
            Method::POST,
            format!("/v1/athletes/{athlete}/body-mass"),
            Some(r#"{"measured_on": "2026-11-05", "body_mass_kg": 18446744073709551616}"#.into()),
        ),
        (
            Method::POST,
            format!("/v1/athletes/{athlete}/body-mass"),
            Some(r#"{"measured_on": "+275760-09-13", "body_mass_kg": 60}"#.into()),
        ),
        (
            Method::PUT,
            format!("/v1/sessions/{session}/participation/{athlete}"),
            Some(r#"{"mode": "shortened", "minutes": "Infinity"}"#.into()),
        ),
        (
            Method::PUT,
            format!("/v1/sessions/{session}/participation/{athlete}"),
            Some(r#"{"mode": null}"#.into()),
        ),
        (
            Method::POST,
            "/v1/tokens".into(),
            Some(r#"{"label": "x", "role": ["admin"]}"#.into()),
        ),
        (
            Method::POST,
            "/v1/tokens".into(),
            Some(format!(
                r#"{{"label": "{}", "role": "admin"}}"#,
                "\\u0000".repeat(200)
            )),
        ),
        (Method::GET, "/v1/teams/%2e%2e%2f".into(), None),
    ];
    assert!(cases.len() >= 30);
    for (method, path, raw) in cases {
        let rb = app.req(method.clone(), &path, Some(admin));
        let rb = match raw {
            Some(raw) => rb.header("content-type", "application/json").body(raw),
            None => rb,
        };
        let res = rb.send().await.expect("send");
        let status = res.status().as_u16();
        assert!(
            (400..500).contains(&status),
            "{method} {path} answered {status}"
        );
        problem(res, status).await;
    }
    // Nothing the fuzz sent was stored.
    let t = glycoweek::store::teams::get(&app.db, team)
        .await
        .unwrap()
        .unwrap();
    assert_eq!((t.name.as_str(), t.version), ("Fuzz", 1));
    let a = glycoweek::store::athletes::get(&app.db, athlete)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(a.version, 1);
    let s = glycoweek::store::sessions::get(&app.db, session)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(s.version, 1);
    let teams = body(app.get("/v1/teams", admin).await, 200).await;
    assert_eq!(teams["items"].as_array().unwrap().len(), 1);
}

#[tokio::test]
async fn query_parameter_errors_name_the_parameter() {
    let app = spawn_app().await;
    let team = app.team("Params").await;
    let cases = [
        ("/v1/teams?limit=0".to_owned(), "limit"),
        ("/v1/teams?limit=abc".to_owned(), "limit"),
        ("/v1/teams?cursor=garbage".to_owned(), "cursor"),
        ("/v1/teams?colour=red".to_owned(), "colour"),
        (format!("/v1/teams/{team}/sessions?from=notadate"), "from"),
        (format!("/v1/teams/{team}/sessions?kind=party"), "kind"),
    ];
    for (path, field) in cases {
        let p = problem(app.get(&path, &app.admin).await, 422).await;
        assert_eq!(fields(&p), vec![field], "{path}");
    }
}

#[tokio::test]
async fn a_bad_uuid_in_a_path_answers_404_like_an_absent_id() {
    let app = spawn_app().await;
    for path in [
        "/v1/teams/abc",
        "/v1/athletes/1",
        "/v1/sessions/00000000-0000-0000-0000-00000000000g",
    ] {
        let p = problem(app.get(path, &app.admin).await, 404).await;
        assert_eq!(p["type"], "/problems/not-found", "{path}");
    }
}
