//! Faults from outside the process, against the real binary
//! (`CARGO_BIN_EXE_glycoweek`) running as a child process: a crash, a
//! refused start and a rate limit are properties of the process, not of the
//! router.
//!
//! A short tour:
//! - `sigkill_during_bulk_imports_leaves_each_import_whole_or_absent`:
//!   five rounds of concurrent 200-session imports cut short by SIGKILL;
//! - the `refuses_to_start_…` tests: files that are no database, a schema
//!   from a newer build, a directory given as the database;
//! - `backup_of_a_busy_database_is_consistent_and_restores`: the
//!   `backup` subcommand while writers run, then a restore;
//! - `a_body_that_trickles_in_gets_408` and
//!   `rate_limit_answers_429_per_token`: hostile clients.
//!
//! No test sleeps to wait for readiness: each polls `/health` (or the exit
//! status) in a loop bounded by a deadline.

use std::io::{BufRead, BufReader, Read, Write};
use std::net::TcpStream;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, ExitStatus, Stdio};
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

use glycoweek::store::Db;
use reqwest::Client;
use serde_json::{Value, json};
use uuid::Uuid;

const BIN: &str = env!("CARGO_BIN_EXE_glycoweek");
/// Longest a start, a refusal or a stop may take before the test fails.
const DEADLINE: Duration = Duration::from_secs(60);

/// A `glycoweek serve` child process on a loopback port.
struct Service {
    child: Child,
    base: String,
    stderr: Arc<Mutex<String>>,
}

/// Output of a process that was expected to exit on its own.
struct Exited {
    status: ExitStatus,
    stderr: String,
}

fn free_port() -> u16 {
    // Bound and dropped at once: the port is free for the child to take.
    std::net::TcpListener::bind("127.0.0.1:0")
        .and_then(|l| l.local_addr())
        .expect("a free loopback port")
        .port()
}

/// Starts `glycoweek serve`, collecting its stderr on a thread so the pipe
/// never fills.
fn spawn_serve(
    db: &Path,
    extra: &[&str],
) -> (
    Child,
    Arc<Mutex<String>>,
    String,
    std::thread::JoinHandle<()>,
) {
    let addr = format!("127.0.0.1:{}", free_port());
    let mut command = Command::new(BIN);
    command
        .arg("serve")
        .arg("--database")
        .arg(db)
        .arg("--listen")
        .arg(&addr)
        .args(extra)
        .env("RUST_LOG", "warn")
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::piped());
    // Settings from the environment of whoever runs the tests must not leak in.
    for (name, _) in std::env::vars() {
        if name.starts_with("GLYCOWEEK_") {
            command.env_remove(name);
        }
    }
    let mut child = command.spawn().expect("spawn glycoweek");
    let pipe = child.stderr.take().expect("stderr pipe");
    let stderr = Arc::new(Mutex::new(String::new()));
    let sink = stderr.clone();
    let reader = std::thread::spawn(move || {
        for line in BufReader::new(pipe).lines().map_while(Result::ok) {
            let mut text = sink.lock().unwrap_or_else(|p| p.into_inner());
            text.push_str(&line);
            text.push('\n');
        }
    });
    (child, stderr, format!("http://{addr}"), reader)
}

fn client() -> Client {
    Client::builder()
        .timeout(Duration::from_secs(30))
        .build()
        .expect("client")
}

impl Service {
    /// Starts the service and returns once `/health` answers 200.
    async fn start(db: &Path, extra: &[&str]) -> Service {
        let probe = Client::builder()
            .timeout(Duration::from_secs(2))
            .build()
            .expect("client");
        for _attempt in 0..3 {
            let (mut child, stderr, base, _reader) = spawn_serve(db, extra);
            let deadline = Instant::now() + DEADLINE;
            loop {
                if let Some(status) = child.try_wait().expect("try_wait") {
                    let text = stderr.lock().unwrap().clone();
                    if text.contains("cannot listen") {
                        break; // another process took the port: try a new one
                    }
                    panic!("glycoweek exited ({status}) instead of serving:\n{text}");
                }
                if let Ok(res) = probe.get(format!("{base}/health")).send().await
                    && res.status() == 200
                {
                    return Service {
                        child,
                        base,
                        stderr,
                    };
                }
                if Instant::now() > deadline {
                    let _ = child.kill();
                    panic!("glycoweek did not answer /health within {DEADLINE:?}");
                }
                tokio::time::sleep(Duration::from_millis(25)).await;
            }
        }
        panic!("no free port after three attempts");
    }

    /// The administrator token printed at the first start.
    /// (Polled: the stderr thread may still be catching up with the pipe.)
    fn admin_token(&self) -> String {
        let deadline = Instant::now() + Duration::from_secs(10);
        loop {
            let text = self.stderr.lock().unwrap().clone();
            if let Some(token) = text.split_whitespace().find(|w| w.starts_with("gwk_")) {
                return token.to_owned();
            }
            assert!(Instant::now() < deadline, "no token on stderr:\n{text}");
            std::thread::sleep(Duration::from_millis(10));
        }
    }

    /// SIGKILL: the process gets no chance to finish anything.
    fn kill(&mut self) {
        self.child.kill().expect("SIGKILL");
        self.child.wait().expect("reap");
    }

    /// SIGTERM, then wait for the graceful shutdown (bounded).
    fn stop(&mut self) {
        let pid = self.child.id().to_string();
        let sent = Command::new("kill").args(["-TERM", &pid]).status();
        let deadline = Instant::now() + DEADLINE;
        if sent.is_ok_and(|s| s.success()) {
            while Instant::now() < deadline {
                if self.child.try_wait().expect("try_wait").is_some() {
                    return;
                }
                std::thread::sleep(Duration::from_millis(20));
            }
        }
        panic!("glycoweek did not stop on SIGTERM within {DEADLINE:?}");
    }

    fn url(&self, path: &str) -> String {
        format!("{}{path}", self.base)
    }

    fn address(&self) -> String {
        self.base.trim_start_matches("http://").to_owned()
    }
}

impl Drop for Service {
    fn drop(&mut self) {
        // Never leave a server behind, even when an assertion failed.
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

/// Runs `glycoweek serve` on `db` expecting it to refuse to start.
fn refused_start(db: &Path) -> Exited {
    let (mut child, stderr, _base, reader) = spawn_serve(db, &["--rate-limit-per-minute", "0"]);
    let deadline = Instant::now() + DEADLINE;
    let status = loop {
        if let Some(status) = child.try_wait().expect("try_wait") {
            break status;
        }
        if Instant::now() > deadline {
            let _ = child.kill();
            let _ = child.wait();
            panic!(
                "glycoweek kept running on {}:\n{}",
                db.display(),
                stderr.lock().unwrap()
            );
        }
        std::thread::sleep(Duration::from_millis(20));
    };
    reader.join().expect("stderr reader");
    let stderr = stderr.lock().unwrap().clone();
    Exited { status, stderr }
}

async fn create_team(client: &Client, service: &Service, token: &str, name: &str) -> Uuid {
    let res = client
        .post(service.url("/v1/teams"))
        .bearer_auth(token)
        .json(&json!({"name": name, "time_zone": "Europe/London"}))
        .send()
        .await
        .expect("send");
    assert_eq!(res.status(), 201, "create team");
    let team: Value = res.json().await.expect("json");
    team["id"].as_str().expect("id").parse().expect("uuid")
}

/// An import of `count` sessions whose titles all start with `prefix`.
fn import_body(prefix: &str, count: usize) -> Value {
    let sessions: Vec<Value> = (0..count)
        .map(|i| {
            json!({
                "local_date": format!("2027-02-{:02}", 1 + i % 28),
                "start_time": format!("{:02}:{:02}", 6 + (i / 28) % 14, (i * 5) % 60),
                "kind": "training",
                "title": format!("{prefix}{i:03}"),
                "notes": "bulk import under fault test",
                "segments": [
                    {"label": "warm-up", "minutes": 15, "intensity": {"form": "fraction_vo2max", "fraction": 0.5}},
                    {"label": "games", "minutes": 45, "intensity": {"form": "session_rpe", "rating": 6}}
                ]
            })
        })
        .collect();
    json!({ "sessions": sessions })
}

/// `PRAGMA integrity_check` of the database at `path`, which must be "ok".
async fn assert_intact(db: &Db, what: &str) {
    let rows: Vec<String> = sqlx::query_scalar("PRAGMA integrity_check")
        .fetch_all(&db.read)
        .await
        .expect("integrity_check runs");
    assert_eq!(rows, ["ok"], "integrity_check of {what}");
}

/// Sessions whose title starts with `prefix` (exact prefix, no LIKE wildcards).
async fn sessions_with_prefix(db: &Db, prefix: &str) -> i64 {
    sqlx::query_scalar("SELECT COUNT(*) FROM sessions WHERE substr(title, 1, length(?1)) = ?1")
        .bind(prefix)
        .fetch_one(&db.read)
        .await
        .expect("count")
}

/// Every session row is accounted for by the audit entry written in the
/// same transaction, and every session an import's audit entry names
/// exists: a torn transaction would break one of the two.
async fn assert_sessions_match_audit(db: &Db, what: &str) {
    let sessions: i64 = sqlx::query_scalar("SELECT COUNT(*) FROM sessions")
        .fetch_one(&db.read)
        .await
        .expect("count");
    let audited: i64 = sqlx::query_scalar(
        "SELECT
           (SELECT COALESCE(SUM(json_array_length(after_json, '$.created')), 0)
              FROM audit_log WHERE entity_type = 'session_import')
         + (SELECT COUNT(*) FROM audit_log WHERE entity_type = 'session' AND action = 'create')",
    )
    .fetch_one(&db.read)
    .await
    .expect("audit count");
    assert_eq!(sessions, audited, "sessions versus audit entries in {what}");
    let missing: i64 = sqlx::query_scalar(
        "SELECT COUNT(*) FROM audit_log AS a, json_each(a.after_json, '$.created') AS c
          WHERE a.entity_type = 'session_import'
            AND NOT EXISTS (SELECT 1 FROM sessions AS s WHERE s.id = c.value)",
    )
    .fetch_one(&db.read)
    .await
    .expect("missing count");
    assert_eq!(
        missing, 0,
        "sessions named by an import but absent in {what}"
    );
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn sigkill_during_bulk_imports_leaves_each_import_whole_or_absent() {
    const ROUNDS: usize = 5;
    const IMPORTS: usize = 6;
    const PER_IMPORT: usize = 200;
    // The imports queue for the single writer. Each round kills the process
    // right after a different number of them committed, that is while the
    // next one is inside its transaction. Watching commits (rather than
    // sleeping a fixed time) keeps this independent of the machine's speed.
    const KILL_AFTER_COMMITS: [i64; ROUNDS] = [1, 2, 3, 4, 5];

    let dir = tempfile::tempdir().expect("tempdir");
    let db_path = dir.path().join("crash.db");
    let client = client();
    let mut service = Service::start(&db_path, &["--rate-limit-per-minute", "0"]).await;
    let admin = service.admin_token();
    let team = create_team(&client, &service, &admin, "Crash trials").await;
    let (mut whole_total, mut absent_total, mut acknowledged_total) = (0, 0, 0);

    for (round, kill_after) in KILL_AFTER_COMMITS.iter().enumerate() {
        let watcher = Db::open(&db_path).await.expect("open a watcher");
        let mut in_flight = Vec::new();
        for k in 0..IMPORTS {
            let prefix = format!("crash r{round} i{k} #");
            let request = client
                .post(service.url(&format!("/v1/teams/{team}/sessions/import")))
                .bearer_auth(&admin)
                .json(&import_body(&prefix, PER_IMPORT));
            let task = tokio::spawn(async move { request.send().await.map(|r| r.status()) });
            in_flight.push((prefix, task));
        }
        let round_prefix = format!("crash r{round} ");
        let deadline = Instant::now() + DEADLINE;
        while sessions_with_prefix(&watcher, &round_prefix).await < kill_after * PER_IMPORT as i64 {
            assert!(
                Instant::now() < deadline,
                "round {round}: imports make no progress"
            );
            tokio::time::sleep(Duration::from_millis(1)).await;
        }
        service.kill();
        watcher.close().await;

        let mut acknowledged = Vec::new();
        for (prefix, task) in in_flight {
            let status = task.await.expect("task");
            acknowledged.push((prefix, status.is_ok_and(|s| s == 201)));
        }

        service = Service::start(&db_path, &["--rate-limit-per-minute", "0"]).await;
        let db = Db::open(&db_path)
            .await
            .expect("the database opens after SIGKILL");
        assert_intact(&db, &format!("round {round}")).await;
        assert_sessions_match_audit(&db, &format!("round {round}")).await;
        let (mut whole, mut absent) = (0, 0);
        for (prefix, was_acknowledged) in &acknowledged {
            let count = sessions_with_prefix(&db, prefix).await;
            assert!(
                count == 0 || count == PER_IMPORT as i64,
                "round {round}: import {prefix:?} is torn: {count} of {PER_IMPORT} sessions"
            );
            if *was_acknowledged {
                assert_eq!(
                    count, PER_IMPORT as i64,
                    "round {round}: import {prefix:?} answered 201 but was lost"
                );
                acknowledged_total += 1;
            }
            if count == 0 { absent += 1 } else { whole += 1 }
        }
        db.close().await;
        eprintln!(
            "crash round {round}: SIGKILL after {kill_after} commits seen: {whole} imports whole, {absent} absent, none torn"
        );
        whole_total += whole;
        absent_total += absent;

        // The restarted service serves the team.
        let res = client
            .get(service.url(&format!("/v1/teams/{team}/sessions?limit=1")))
            .bearer_auth(&admin)
            .send()
            .await
            .expect("send");
        assert_eq!(
            res.status(),
            200,
            "round {round}: restarted service answers"
        );
    }
    eprintln!(
        "crash trials: {ROUNDS} rounds, {} imports: {whole_total} whole ({acknowledged_total} acknowledged), {absent_total} absent, 0 torn, 0 acknowledged lost",
        ROUNDS * IMPORTS
    );
    // Otherwise no kill landed while imports were still queued or running.
    assert!(
        absent_total > 0,
        "the kills should cut imports short: {whole_total} whole, {absent_total} absent"
    );
}

#[test]
fn refuses_to_start_on_a_file_that_is_not_a_database() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("notes.db");
    std::fs::write(
        &path,
        "These are meeting notes, not a database.\n".repeat(200),
    )
    .expect("write");
    let exited = refused_start(&path);
    assert!(!exited.status.success(), "exit status {}", exited.status);
    assert!(
        exited.stderr.contains("cannot open database") && exited.stderr.contains("not a database"),
        "stderr: {}",
        exited.stderr
    );
    assert!(!exited.stderr.contains("listening"), "{}", exited.stderr);
    let after = std::fs::read_to_string(&path).expect("read");
    assert!(
        after.starts_with("These are meeting notes"),
        "the file is left as it was"
    );
}

#[tokio::test]
async fn refuses_to_start_on_a_database_from_a_newer_build() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("future.db");
    // A database this build created, then "migrated" by a later one.
    let db = Db::open(&path).await.expect("create");
    sqlx::query(
        "INSERT INTO _sqlx_migrations (version, description, success, checksum, execution_time)
         VALUES (99991231000000, 'from a later release', 1, x'00', 0)",
    )
    .execute(&db.write)
    .await
    .expect("insert a newer migration");
    db.close().await;

    let exited = refused_start(&path);
    assert!(!exited.status.success(), "exit status {}", exited.status);
    assert!(
        exited.stderr.contains("newer glycoweek")
            && exited.stderr.contains("schema version 99991231000000")
            && exited.stderr.contains("refusing to start"),
        "stderr: {}",
        exited.stderr
    );
    assert!(!exited.stderr.contains("listening"), "{}", exited.stderr);
}

#[test]
fn refuses_to_start_on_a_directory() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("a-directory.db");
    std::fs::create_dir(&path).expect("mkdir");
    let exited = refused_start(&path);
    assert!(!exited.status.success(), "exit status {}", exited.status);
    assert!(
        exited.stderr.contains("cannot open database")
            && exited.stderr.contains(&path.display().to_string()),
        "stderr: {}",
        exited.stderr
    );
    assert!(!exited.stderr.contains("listening"), "{}", exited.stderr);
}

/// Runs `glycoweek backup` and returns once it exited successfully.
async fn run_backup(db: &Path, to: &Path) {
    let output = tokio::process::Command::new(BIN)
        .arg("backup")
        .arg("--database")
        .arg(db)
        .arg("--to")
        .arg(to)
        .env_remove("GLYCOWEEK_DATABASE")
        .output();
    let output = tokio::time::timeout(DEADLINE, output)
        .await
        .expect("backup finishes in time")
        .expect("backup runs");
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(output.status.success(), "backup failed: {stderr}");
    assert!(stderr.contains("wrote a consistent copy"), "{stderr}");
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn backup_of_a_busy_database_is_consistent_and_restores() {
    const PER_IMPORT: usize = 25;
    const BACKUPS: usize = 3;
    let dir = tempfile::tempdir().expect("tempdir");
    let db_path = dir.path().join("live.db");
    let client = client();
    let mut service = Service::start(&db_path, &["--rate-limit-per-minute", "0"]).await;
    let admin = service.admin_token();
    let team = create_team(&client, &service, &admin, "Backed up while busy").await;

    // Two writers: one imports batches, one creates single sessions. They
    // count what the service acknowledged.
    let stop = Arc::new(AtomicBool::new(false));
    let acknowledged = Arc::new(AtomicUsize::new(0));
    let first_ids = Arc::new(Mutex::new(Vec::<Uuid>::new()));
    let mut writers = Vec::new();
    for writer in 0..2 {
        let (client, stop, acknowledged, first_ids) = (
            client.clone(),
            stop.clone(),
            acknowledged.clone(),
            first_ids.clone(),
        );
        let (import_url, single_url) = (
            service.url(&format!("/v1/teams/{team}/sessions/import")),
            service.url(&format!("/v1/teams/{team}/sessions")),
        );
        let admin = admin.clone();
        writers.push(tokio::spawn(async move {
            let mut n = 0;
            while !stop.load(Ordering::SeqCst) {
                let (url, body, adds) = if writer == 0 {
                    let prefix = format!("busy batch {n} #");
                    (
                        import_url.clone(),
                        import_body(&prefix, PER_IMPORT),
                        PER_IMPORT,
                    )
                } else {
                    let mut one = import_body(&format!("busy single {n} #"), 1);
                    (single_url.clone(), one["sessions"][0].take(), 1)
                };
                let res = client
                    .post(&url)
                    .bearer_auth(&admin)
                    .json(&body)
                    .send()
                    .await
                    .expect("send");
                assert_eq!(res.status(), 201, "write {n} of writer {writer}");
                if writer == 1 {
                    let made: Value = res.json().await.expect("json");
                    let id = made["id"].as_str().expect("id").parse().expect("uuid");
                    first_ids.lock().unwrap().push(id);
                }
                acknowledged.fetch_add(adds, Ordering::SeqCst);
                n += 1;
            }
        }));
    }

    let mut backups = Vec::new();
    let mut acknowledged_before = Vec::new();
    for i in 0..BACKUPS {
        // Let some writes land first (bounded wait on the writers' progress).
        let target = acknowledged.load(Ordering::SeqCst) + 3 * PER_IMPORT;
        let deadline = Instant::now() + DEADLINE;
        while acknowledged.load(Ordering::SeqCst) < target {
            assert!(Instant::now() < deadline, "writers make no progress");
            tokio::time::sleep(Duration::from_millis(10)).await;
        }
        let to = dir.path().join(format!("backup-{i}.db"));
        acknowledged_before.push(acknowledged.load(Ordering::SeqCst));
        run_backup(&db_path, &to).await;
        backups.push(to);
    }
    // Writes still land after the last backup, so the restore is visible.
    let after_last = acknowledged.load(Ordering::SeqCst) + PER_IMPORT;
    let deadline = Instant::now() + DEADLINE;
    while acknowledged.load(Ordering::SeqCst) < after_last {
        assert!(Instant::now() < deadline, "writers make no progress");
        tokio::time::sleep(Duration::from_millis(10)).await;
    }
    stop.store(true, Ordering::SeqCst);
    for writer in writers {
        writer.await.expect("writer");
    }

    let mut previous = 0;
    let mut last_count = 0;
    for (i, path) in backups.iter().enumerate() {
        let copy = Db::open(path).await.expect("the backup opens");
        assert_intact(&copy, &format!("backup {i}")).await;
        assert_sessions_match_audit(&copy, &format!("backup {i}")).await;
        let batches: Vec<String> = sqlx::query_scalar(
            "SELECT substr(title, 1, instr(title, '#')) AS prefix FROM sessions
              WHERE title LIKE 'busy batch %' GROUP BY prefix HAVING COUNT(*) <> ?",
        )
        .bind(PER_IMPORT as i64)
        .fetch_all(&copy.read)
        .await
        .expect("torn batches");
        assert!(
            batches.is_empty(),
            "backup {i} holds torn imports {batches:?}"
        );
        let count: i64 = sqlx::query_scalar("SELECT COUNT(*) FROM sessions")
            .fetch_one(&copy.read)
            .await
            .expect("count");
        let count = usize::try_from(count).expect("count");
        assert!(
            count >= acknowledged_before[i],
            "backup {i} holds {count} sessions but {} were acknowledged before it started",
            acknowledged_before[i]
        );
        assert!(count >= previous, "backups go forward");
        previous = count;
        last_count = count;
        copy.close().await;
    }
    let live_count = acknowledged.load(Ordering::SeqCst);
    assert!(
        live_count > last_count,
        "writes landed after the last backup"
    );

    // Restore: stop, put the backup in place (without the old WAL), start.
    service.stop();
    let restore_from = backups.last().expect("a backup");
    for suffix in ["-wal", "-shm"] {
        let mut side = db_path.clone().into_os_string();
        side.push(suffix);
        let _ = std::fs::remove_file(PathBuf::from(side));
    }
    std::fs::copy(restore_from, &db_path).expect("copy the backup into place");
    let service = Service::start(&db_path, &["--rate-limit-per-minute", "0"]).await;

    let mut listed = 0;
    let mut cursor: Option<String> = None;
    loop {
        let mut url = service.url(&format!("/v1/teams/{team}/sessions?limit=200"));
        if let Some(c) = &cursor {
            url.push_str(&format!("&cursor={c}"));
        }
        let res = client
            .get(url)
            .bearer_auth(&admin)
            .send()
            .await
            .expect("send");
        assert_eq!(res.status(), 200, "the restored service lists sessions");
        let page: Value = res.json().await.expect("json");
        listed += page["items"].as_array().expect("items").len();
        match page["next_cursor"].as_str() {
            Some(c) => cursor = Some(c.to_owned()),
            None => break,
        }
    }
    assert_eq!(
        listed, last_count,
        "the restored service holds the backup's sessions"
    );
    let ids = first_ids.lock().unwrap().clone();
    let (first, newest) = (ids[0], *ids.last().expect("a single session"));
    let status = |id: Uuid| {
        client
            .get(service.url(&format!("/v1/sessions/{id}")))
            .bearer_auth(&admin)
            .send()
    };
    assert_eq!(status(first).await.expect("send").status(), 200);
    assert_eq!(
        status(newest).await.expect("send").status(),
        404,
        "a session written after the last backup is gone after the restore"
    );
    let db = Db::open(&db_path).await.expect("open");
    assert_intact(&db, "the restored database").await;
    db.close().await;
    eprintln!(
        "backup while busy: {BACKUPS} backups, last holds {last_count} of {live_count} sessions; restored and served"
    );
}

#[tokio::test]
async fn a_body_that_trickles_in_gets_408() {
    let dir = tempfile::tempdir().expect("tempdir");
    let service = Service::start(
        &dir.path().join("slow.db"),
        &[
            "--request-timeout-secs",
            "1",
            "--rate-limit-per-minute",
            "0",
        ],
    )
    .await;
    let admin = service.admin_token();
    let address = service.address();
    let started = Instant::now();
    let response = tokio::task::spawn_blocking(move || {
        let mut stream = TcpStream::connect(&address).expect("connect");
        stream
            .set_read_timeout(Some(Duration::from_secs(10)))
            .expect("timeout");
        let body = r#"{"name": "Trickle", "time_zone": "Europe/London"}"#;
        let head = format!(
            "POST /v1/teams HTTP/1.1\r\nHost: {address}\r\nAuthorization: Bearer {admin}\r\n\
             Content-Type: application/json\r\nContent-Length: {}\r\n\r\n",
            body.len()
        );
        stream.write_all(head.as_bytes()).expect("write head");
        // A few bytes, then nothing: the rest never comes.
        stream.write_all(&body.as_bytes()[..5]).expect("write");
        let mut response = Vec::new();
        let mut buf = [0u8; 4096];
        loop {
            match stream.read(&mut buf) {
                Ok(0) => break,
                Ok(n) => {
                    response.extend_from_slice(&buf[..n]);
                    if complete(&response) {
                        break;
                    }
                }
                Err(e) => panic!("no answer to a stalled body: {e}"),
            }
        }
        String::from_utf8_lossy(&response).into_owned()
    })
    .await
    .expect("client thread");
    let waited = started.elapsed();

    let (head, body) = response.split_once("\r\n\r\n").expect("a response");
    assert!(head.starts_with("HTTP/1.1 408"), "{head}");
    assert!(
        head.to_ascii_lowercase()
            .contains("content-type: application/problem+json"),
        "{head}"
    );
    let problem: Value = serde_json::from_str(body).expect("problem json");
    assert_eq!(problem["status"], 408);
    assert!(problem["request_id"].is_string(), "{problem}");
    assert!(
        waited >= Duration::from_millis(900) && waited < Duration::from_secs(8),
        "answered after {waited:?} with a 1 s limit"
    );
}

/// Whether a raw HTTP/1.1 response with Content-Length has fully arrived.
fn complete(raw: &[u8]) -> bool {
    let text = String::from_utf8_lossy(raw);
    let Some((head, body)) = text.split_once("\r\n\r\n") else {
        return false;
    };
    head.lines()
        .find_map(|l| {
            let (name, value) = l.split_once(':')?;
            name.eq_ignore_ascii_case("content-length")
                .then(|| value.trim().parse::<usize>().ok())
                .flatten()
        })
        .is_some_and(|len| body.len() >= len)
}

#[tokio::test]
async fn rate_limit_answers_429_per_token() {
    let dir = tempfile::tempdir().expect("tempdir");
    // 60 a minute: a burst of ten, then one a second.
    let service = Service::start(
        &dir.path().join("limited.db"),
        &["--rate-limit-per-minute", "60"],
    )
    .await;
    let admin = service.admin_token();
    let client = client();
    let team = create_team(&client, &service, &admin, "Rate limited").await;
    let res = client
        .post(service.url("/v1/tokens"))
        .bearer_auth(&admin)
        .json(&json!({"label": "reader", "role": "reader", "team_id": team}))
        .send()
        .await
        .expect("send");
    assert_eq!(res.status(), 201);
    let reader: Value = res.json().await.expect("json");
    let reader = reader["secret"].as_str().expect("secret").to_owned();

    let url = service.url(&format!("/v1/teams/{team}"));
    let mut statuses = Vec::new();
    let mut limited = None;
    for _ in 0..20 {
        let res = client
            .get(&url)
            .bearer_auth(&reader)
            .send()
            .await
            .expect("send");
        statuses.push(res.status().as_u16());
        if res.status() == 429 {
            limited = Some(res);
            break;
        }
    }
    assert_eq!(statuses[..10], [200; 10], "the burst of ten gets through");
    let limited = limited.unwrap_or_else(|| panic!("never limited: {statuses:?}"));
    let retry_after: u64 = limited
        .headers()
        .get("retry-after")
        .and_then(|v| v.to_str().ok())
        .and_then(|v| v.parse().ok())
        .expect("Retry-After in whole seconds");
    assert!((1..=60).contains(&retry_after), "Retry-After {retry_after}");
    let problem = crate::helpers::problem(limited, 429).await;
    assert_eq!(problem["status"], 429);

    // The budget is per token: the administrator still gets through.
    let res = client
        .get(&url)
        .bearer_auth(&admin)
        .send()
        .await
        .expect("send");
    assert_eq!(res.status(), 200, "another token has its own budget");
    // Public routes are never limited.
    let res = client
        .get(service.url("/health"))
        .send()
        .await
        .expect("send");
    assert_eq!(res.status(), 200);
}
