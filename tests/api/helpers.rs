//! `spawn_app()`: a running service on its own temporary database.

use std::path::PathBuf;

use glycoweek::AppState;
use glycoweek::config::Config;
use glycoweek::domain::token::{Role, TokenInput};
use glycoweek::store::{Db, audit::Actor, tokens};
use reqwest::{Client, Method, RequestBuilder, Response};
use serde_json::{Value, json};
use tokio::net::TcpListener;
use uuid::Uuid;

pub struct TestApp {
    pub base: String,
    pub client: Client,
    pub admin: String,
    pub db: Db,
    pub db_path: PathBuf,
    pub shutdown: Option<tokio::sync::oneshot::Sender<()>>,
    pub server: Option<tokio::task::JoinHandle<()>>,
    // Dropped last: removes the database files.
    pub dir: tempfile::TempDir,
}

pub async fn spawn_app() -> TestApp {
    let dir = tempfile::tempdir().expect("tempdir");
    let db_path = dir.path().join("test.db");
    spawn_on(dir, db_path).await
}

/// Starts the service on an existing database directory (restart tests).
pub async fn spawn_on(dir: tempfile::TempDir, db_path: PathBuf) -> TestApp {
    let db = Db::open(&db_path).await.expect("open db");
    let admin = tokens::create(
        &db,
        Actor { token_id: None },
        &TokenInput {
            label: "test admin".into(),
            role: Role::Admin,
            team_id: None,
        },
    )
    .await
    .expect("admin token")
    .secret;
    // Bind first, then spawn: the port is ready before any request is sent.
    let listener = TcpListener::bind("127.0.0.1:0").await.expect("bind");
    let addr = listener.local_addr().expect("addr");
    let state = AppState::new(db.clone(), Config::for_database(db_path.clone()));
    let (tx, rx) = tokio::sync::oneshot::channel::<()>();
    let server = tokio::spawn(async move {
        glycoweek::serve(listener, state, async {
            let _ = rx.await;
        })
        .await
        .expect("serve");
    });
    TestApp {
        base: format!("http://{addr}"),
        client: Client::new(),
        admin,
        db,
        db_path,
        shutdown: Some(tx),
        server: Some(server),
        dir,
    }
}

impl TestApp {
    pub fn req(&self, method: Method, path: &str, token: Option<&str>) -> RequestBuilder {
        let rb = self
            .client
            .request(method, format!("{}{}", self.base, path));
        match token {
            Some(t) => rb.bearer_auth(t),
            None => rb,
        }
    }

    pub async fn get(&self, path: &str, token: &str) -> Response {
        self.req(Method::GET, path, Some(token))
            .send()
            .await
            .expect("send")
    }

    pub async fn post(&self, path: &str, token: &str, body: &Value) -> Response {
        self.req(Method::POST, path, Some(token))
            .json(body)
            .send()
            .await
            .expect("send")
    }

    pub async fn patch(
        &self,
        path: &str,
        token: &str,
        body: &Value,
        if_match: Option<&str>,
    ) -> Response {
        let mut rb = self.req(Method::PATCH, path, Some(token)).json(body);
        if let Some(tag) = if_match {
            rb = rb.header("if-match", tag);
        }
        rb.send().await.expect("send")
    }

    pub async fn put(&self, path: &str, token: &str, body: &Value) -> Response {
        self.req(Method::PUT, path, Some(token))
            .json(body)
            .send()
            .await
            .expect("send")
    }

    pub async fn delete(&self, path: &str, token: &str, if_match: Option<&str>) -> Response {
        let mut rb = self.req(Method::DELETE, path, Some(token));
        if let Some(tag) = if_match {
            rb = rb.header("if-match", tag);
        }
        rb.send().await.expect("send")
    }

    /// Creates a team and returns its id.
    pub async fn team(&self, name: &str) -> Uuid {
        let res = self
            .post(
                "/v1/teams",
                &self.admin,
                &json!({"name": name, "time_zone": "Europe/London"}),
            )
            .await;
        assert_eq!(res.status(), 201, "create team");
        id_of(&res.json::<Value>().await.expect("json"))
    }

    /// Creates a token for a team and returns its secret.
    pub async fn token(&self, role: &str, team: Uuid) -> String {
        let res = self
            .post(
                "/v1/tokens",
                &self.admin,
                &json!({"label": "test", "role": role, "team_id": team}),
            )
            .await;
        assert_eq!(res.status(), 201, "create token");
        res.json::<Value>().await.expect("json")["secret"]
            .as_str()
            .expect("secret")
            .to_owned()
    }

    pub async fn athlete(&self, team: Uuid, name: &str) -> Uuid {
        let res = self
            .post(
                &format!("/v1/teams/{team}/athletes"),
                &self.admin,
                &athlete_body(name),
            )
            .await;
        assert_eq!(res.status(), 201, "create athlete");
        id_of(&res.json::<Value>().await.expect("json"))
    }

    pub async fn session(&self, team: Uuid, date: &str) -> Uuid {
        let res = self
            .post(
                &format!("/v1/teams/{team}/sessions"),
                &self.admin,
                &session_body(date, "10:00"),
            )
            .await;
        assert_eq!(res.status(), 201, "create session");
        id_of(&res.json::<Value>().await.expect("json"))
    }

    /// Stops the server and closes the database (for restart tests).
    pub async fn stop(mut self) -> (tempfile::TempDir, PathBuf) {
        if let Some(tx) = self.shutdown.take() {
            let _ = tx.send(());
        }
        if let Some(server) = self.server.take() {
            let _ = server.await;
        }
        self.db.close().await;
        (self.dir, self.db_path)
    }
}

pub fn id_of(v: &Value) -> Uuid {
    v["id"].as_str().expect("id").parse().expect("uuid")
}

pub fn athlete_body(name: &str) -> Value {
    json!({
        "display_name": name,
        "sex": "female",
        "date_of_birth": "1998-06-01",
        "height_cm": 168.0,
        "training_status": "trained",
        "initial_body_mass": {"body_mass_kg": 61.5, "measured_on": "2026-11-01"}
    })
}

pub fn session_body(date: &str, start: &str) -> Value {
    json!({
        "local_date": date,
        "start_time": start,
        "kind": "training",
        "title": "Pitch session",
        "segments": [
            {"label": "warm-up", "minutes": 15, "intensity": {"form": "fraction_vo2max", "fraction": 0.5}},
            {"label": "games", "minutes": 45, "intensity": {"form": "heart_rate", "bpm": 165}}
        ]
    })
}

/// Asserts a problem+json body and returns it.
pub async fn problem(res: Response, status: u16) -> Value {
    assert_eq!(res.status().as_u16(), status, "status");
    let ct = res
        .headers()
        .get("content-type")
        .and_then(|v| v.to_str().ok())
        .unwrap_or("")
        .to_owned();
    assert!(
        ct.starts_with("application/problem+json"),
        "content type {ct}"
    );
    let body: Value = res.json().await.expect("problem json");
    assert_eq!(body["status"], status);
    assert!(body["request_id"].is_string(), "request id in {body}");
    body
}

/// The fields named by a validation problem.
pub fn fields(problem: &Value) -> Vec<String> {
    problem["errors"]
        .as_array()
        .map(|a| {
            a.iter()
                .map(|e| e["field"].as_str().unwrap_or("").to_owned())
                .collect()
        })
        .unwrap_or_default()
}

/// Asserts the status and a JSON body, and returns the body.
pub async fn body(res: Response, status: u16) -> Value {
    let got = res.status().as_u16();
    let text = res.text().await.expect("body");
    assert_eq!(got, status, "status; body was {text}");
    serde_json::from_str(&text).unwrap_or(Value::Null)
}

/// The ETag header of a response.
pub fn etag_of(res: &Response) -> String {
    res.headers()
        .get("etag")
        .and_then(|v| v.to_str().ok())
        .expect("etag header")
        .to_owned()
}

impl TestApp {
    /// A request with a raw body and an explicit content type (or none).
    pub async fn raw(
        &self,
        method: Method,
        path: &str,
        token: Option<&str>,
        content_type: Option<&str>,
        raw_body: impl Into<reqwest::Body>,
    ) -> Response {
        let mut rb = self.req(method, path, token).body(raw_body);
        if let Some(ct) = content_type {
            rb = rb.header("content-type", ct);
        }
        rb.send().await.expect("send")
    }

    /// A PUT with an `If-Match` header.
    pub async fn put_if(&self, path: &str, token: &str, body: &Value, if_match: &str) -> Response {
        self.req(Method::PUT, path, Some(token))
            .header("if-match", if_match)
            .json(body)
            .send()
            .await
            .expect("send")
    }

    /// The team's audit trail, oldest first.
    pub async fn audit(&self, team: Uuid) -> Vec<Value> {
        let res = self
            .get(&format!("/v1/teams/{team}/audit?limit=200"), &self.admin)
            .await;
        match body(res, 200).await["items"].take() {
            Value::Array(entries) => entries,
            other => panic!("audit is not a list: {other}"),
        }
    }

    /// Every item of a list endpoint, following `next_cursor` page by page.
    /// `path` already holds its query (with `?`).
    pub async fn all_pages(&self, path: &str, token: &str) -> (Vec<Value>, usize) {
        let mut items = Vec::new();
        let mut pages = 0;
        let mut cursor: Option<String> = None;
        loop {
            let url = match &cursor {
                Some(c) => format!("{path}&cursor={c}"),
                None => path.to_owned(),
            };
            let page = body(self.get(&url, token).await, 200).await;
            pages += 1;
            items.extend(page["items"].as_array().expect("items").iter().cloned());
            match page["next_cursor"].as_str() {
                Some(c) => cursor = Some(c.to_owned()),
                None => return (items, pages),
            }
            assert!(pages < 100, "pagination does not end");
        }
    }
}

/// The ids of a list of resources.
pub fn ids(items: &[Value]) -> Vec<Uuid> {
    items.iter().map(id_of).collect()
}

/// A session body with the given segments.
pub fn session_with_segments(date: &str, segments: Value) -> Value {
    let mut s = session_body(date, "10:00");
    s["segments"] = segments;
    s
}
