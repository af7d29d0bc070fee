//! `spawn_app()`: a running service on its own temporary database.

use std::path::PathBuf;
use std::sync::Arc;

use glycoweek::config::Config;
use glycoweek::domain::token::{Role, TokenInput};
use glycoweek::store::{Db, audit::Actor, tokens};
use glycoweek::AppState;
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
    let state = AppState {
        db: db.clone(),
        config: Arc::new(Config::for_database(db_path.clone())),
    };
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
        let rb = self.client.request(method, format!("{}{}", self.base, path));
        match token {
            Some(t) => rb.bearer_auth(t),
            None => rb,
        }
    }

    pub async fn get(&self, path: &str, token: &str) -> Response {
        self.req(Method::GET, path, Some(token)).send().await.expect("send")
    }

    pub async fn post(&self, path: &str, token: &str, body: &Value) -> Response {
        self.req(Method::POST, path, Some(token)).json(body).send().await.expect("send")
    }

    pub async fn patch(&self, path: &str, token: &str, body: &Value, if_match: Option<&str>) -> Response {
        let mut rb = self.req(Method::PATCH, path, Some(token)).json(body);
        if let Some(tag) = if_match {
            rb = rb.header("if-match", tag);
        }
        rb.send().await.expect("send")
    }

    pub async fn put(&self, path: &str, token: &str, body: &Value) -> Response {
        self.req(Method::PUT, path, Some(token)).json(body).send().await.expect("send")
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
            .post("/v1/teams", &self.admin, &json!({"name": name, "time_zone": "Europe/London"}))
            .await;
        assert_eq!(res.status(), 201, "create team");
        id_of(&res.json::<Value>().await.expect("json"))
    }

    /// Creates a token for a team and returns its secret.
    pub async fn token(&self, role: &str, team: Uuid) -> String {
        let res = self
            .post("/v1/tokens", &self.admin, &json!({"label": "test", "role": role, "team_id": team}))
            .await;
        assert_eq!(res.status(), 201, "create token");
        res.json::<Value>().await.expect("json")["secret"]
            .as_str()
            .expect("secret")
            .to_owned()
    }

    pub async fn athlete(&self, team: Uuid, name: &str) -> Uuid {
        let res = self.post(&format!("/v1/teams/{team}/athletes"), &self.admin, &athlete_body(name)).await;
        assert_eq!(res.status(), 201, "create athlete");
        id_of(&res.json::<Value>().await.expect("json"))
    }

    pub async fn session(&self, team: Uuid, date: &str) -> Uuid {
        let res = self.post(&format!("/v1/teams/{team}/sessions"), &self.admin, &session_body(date, "10:00")).await;
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
    assert!(ct.starts_with("application/problem+json"), "content type {ct}");
    let body: Value = res.json().await.expect("problem json");
    assert_eq!(body["status"], status);
    assert!(body["request_id"].is_string(), "request id in {body}");
    body
}

/// The fields named by a validation problem.
pub fn fields(problem: &Value) -> Vec<String> {
    problem["errors"]
        .as_array()
        .map(|a| a.iter().map(|e| e["field"].as_str().unwrap_or("").to_owned()).collect())
        .unwrap_or_default()
}
