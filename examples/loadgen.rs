//! A small load generator for glycoweek, loopback only by intent.
//!
//! ```sh
//! cargo run --release --example loadgen -- --base http://127.0.0.1:8080 \
//!     --token gwk_... --team <TEAM_ID> --requests 4000 --concurrency 8 --duration-secs 20
//! ```
//!
//! It measures, against one team:
//!
//! 1. **summary vs bare**: `GET …/plan/summary` (cached: no write runs) and
//!    a bare axum 0.8 server serving the very same bytes (`--bare`, started
//!    with `loadgen bare FILE`), in interleaved rounds of `--round-secs`
//!    each; it reports the medians of the rounds' throughputs and their ratio;
//! 2. **mix**: `--mix-concurrency` connections (default 32), 80 % summary
//!    reads and 20 % session writes (`PATCH /v1/sessions/{id}` moving the
//!    start time or changing the notes of a few sessions it created first in
//!    the planned week), bounded by `--requests` and `--duration-secs`.
//!
//! It prints the issue-13 rows and a table of every phase (throughput,
//! p50/p90/p99 latency, errors and 5xx) as Markdown on stdout. The exit
//! status is 1 when any request failed, so scripts can gate on it.
//!
//! `loadgen bare FILE` serves FILE's bytes as `application/json` at every
//! path of 127.0.0.1 on a free port (printed as `listening on http://…`):
//! the ceiling of a plain axum server on this machine.

use std::sync::Arc;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::{Duration, Instant};

use clap::Parser;
use reqwest::{Client, Method};
use serde_json::{Value, json};

#[derive(Parser, Debug)]
#[command(about = "Drive a glycoweek service with plan reads and session writes")]
struct Args {
    /// Base URL of the service, e.g. http://127.0.0.1:8080.
    #[arg(long)]
    base: String,
    /// A planner or admin token of the team.
    #[arg(long)]
    token: String,
    /// Team whose plan is read and whose sessions are written.
    #[arg(long)]
    team: String,
    /// Most requests per phase.
    #[arg(long, default_value_t = 2000)]
    requests: usize,
    /// Requests in flight at once.
    #[arg(long, default_value_t = 8)]
    concurrency: usize,
    /// Longest a phase may run, in seconds.
    #[arg(long, default_value_t = 20)]
    duration_secs: u64,
    /// Sessions created for the writes to change.
    #[arg(long, default_value_t = 4)]
    write_sessions: usize,
    /// Base URL of the bare axum server (`loadgen bare FILE`).
    #[arg(long)]
    bare: String,
    /// Interleaved rounds of summary and bare reads.
    #[arg(long, default_value_t = 5)]
    rounds: usize,
    /// Seconds of each round.
    #[arg(long, default_value_t = 3)]
    round_secs: u64,
    /// Connections of the mixed load.
    #[arg(long, default_value_t = 32)]
    mix_concurrency: usize,
}

/// What one request does.
#[derive(Clone, Copy, PartialEq, Eq, Debug)]
enum Kind {
    Summary,
    Write,
    Bare,
}

/// The outcome of one request.
struct Sample {
    kind: Kind,
    latency: Duration,
    status: Option<u16>,
}

/// Figures of a set of samples over a wall-clock span.
struct Figures {
    name: String,
    requests: usize,
    throughput: f64,
    p50_ms: f64,
    p90_ms: f64,
    p99_ms: f64,
    errors: usize,
    server_errors: usize,
}

impl Figures {
    fn of(name: &str, samples: &[&Sample], wall: Duration, expected: u16) -> Figures {
        let mut micros: Vec<u128> = samples.iter().map(|s| s.latency.as_micros()).collect();
        micros.sort_unstable();
        // Nearest-rank percentile.
        let pct = |p: f64| -> f64 {
            if micros.is_empty() {
                return f64::NAN;
            }
            let rank = ((p / 100.0) * micros.len() as f64).ceil() as usize;
            micros[rank.clamp(1, micros.len()) - 1] as f64 / 1000.0
        };
        Figures {
            name: name.to_owned(),
            requests: samples.len(),
            throughput: samples.len() as f64 / wall.as_secs_f64(),
            p50_ms: pct(50.0),
            p90_ms: pct(90.0),
            p99_ms: pct(99.0),
            errors: samples
                .iter()
                .filter(|s| s.status != Some(expected))
                .count(),
            server_errors: samples
                .iter()
                .filter(|s| s.status.is_some_and(|c| c >= 500))
                .count(),
        }
    }

    fn row(&self) -> String {
        format!(
            "| {} | {} | {:.0} | {:.1} | {:.1} | {:.1} | {} | {} |",
            self.name,
            self.requests,
            self.throughput,
            self.p50_ms,
            self.p90_ms,
            self.p99_ms,
            self.errors,
            self.server_errors
        )
    }
}

struct Target {
    client: Client,
    base: String,
    token: String,
    team: String,
    /// Sessions the writes change, each with the range of start times
    /// (minutes after midnight) it may move within without overlapping
    /// another session of its day.
    sessions: Vec<(String, u32, u32)>,
    bare: String,
}

impl Target {
    /// Sends one request of `kind` (the `n`th of its phase) and reads the
    /// whole body, so the latency covers the full response.
    async fn send(&self, kind: Kind, n: usize) -> Sample {
        let (method, url, body) = match kind {
            Kind::Summary => (
                Method::GET,
                format!("{}/v1/teams/{}/plan/summary", self.base, self.team),
                None,
            ),

            Kind::Write => {
                let (id, earliest, latest) = &self.sessions[(n / 5) % self.sessions.len()];
                // Alternately move the session inside its free slot and
                // rewrite its notes.
                let patch = if (n / 5).is_multiple_of(2) {
                    let start = earliest + (n as u32 * 5) % (latest - earliest + 1);
                    json!({"start_time": format!("{:02}:{:02}", start / 60, start % 60)})
                } else {
                    json!({"notes": format!("load test note {n}")})
                };
                (
                    Method::PATCH,
                    format!("{}/v1/sessions/{id}", self.base),
                    Some(patch),
                )
            }
            Kind::Bare => (Method::GET, format!("{}/plan/summary", self.bare), None),
        };
        let mut request = self.client.request(method, url).bearer_auth(&self.token);
        if let Some(patch) = body {
            request = request
                .header("content-type", "application/merge-patch+json")
                .body(patch.to_string());
        }
        let started = Instant::now();
        let status = match request.send().await {
            Ok(res) => {
                let code = res.status().as_u16();
                res.bytes().await.ok().map(|_| code)
            }
            Err(_) => None,
        };
        Sample {
            kind,
            latency: started.elapsed(),
            status,
        }
    }
}

/// Runs `requests` requests (or until `limit` passes) with `concurrency`
/// in flight; `pick` chooses the kind of the `n`th request.
async fn phase(
    target: &Arc<Target>,
    requests: usize,
    concurrency: usize,
    limit: Duration,
    pick: fn(usize) -> Kind,
) -> (Vec<Sample>, Duration) {
    let next = Arc::new(AtomicUsize::new(0));
    let started = Instant::now();
    let deadline = started + limit;
    let mut workers = Vec::new();
    for _ in 0..concurrency {
        let (target, next) = (target.clone(), next.clone());
        workers.push(tokio::spawn(async move {
            let mut samples = Vec::new();
            loop {
                let n = next.fetch_add(1, Ordering::Relaxed);
                if n >= requests || Instant::now() >= deadline {
                    return samples;
                }
                samples.push(target.send(pick(n), n).await);
            }
        }));
    }
    let mut samples = Vec::with_capacity(requests.min(1 << 16));
    for worker in workers {
        samples.extend(worker.await.expect("worker"));
    }
    (samples, started.elapsed())
}

/// The samples of the given kinds.
fn of<'a>(samples: &'a [Sample], kinds: &[Kind]) -> Vec<&'a Sample> {
    samples.iter().filter(|s| kinds.contains(&s.kind)).collect()
}

/// 80 % reads, 20 % writes.
fn mix(n: usize) -> Kind {
    if n % 5 == 4 {
        Kind::Write
    } else {
        Kind::Summary
    }
}

/// Minutes of a write session; it moves by up to an hour inside its slot.
const WRITE_MINUTES: u32 = 30;
const SLOT_MINUTES: u32 = WRITE_MINUTES + 60;
/// Slots are looked for between 06:00 and 22:00, with 15 minutes' margin.
const DAY_OPENS: u32 = 6 * 60;
const DAY_CLOSES: u32 = 22 * 60;
const MARGIN: u32 = 15;

fn minutes_of(hh_mm: &str) -> Option<u32> {
    let (h, m) = hh_mm.split_once(':')?;
    Some(h.parse::<u32>().ok()? * 60 + m.parse::<u32>().ok()?)
}

/// Free slots of the planned week: (date, earliest start, latest start) in
/// which a write session can move without overlapping another session (an
/// overlap would make the plan refuse every athlete and shrink the
/// response, which would flatter the figures).
async fn free_slots(
    args: &Args,
    client: &Client,
    from: &str,
    to: &str,
) -> Result<Vec<(String, u32, u32)>, String> {
    let url = format!(
        "{}/v1/teams/{}/sessions?from={from}&to={to}&limit=200",
        args.base, args.team
    );
    let res = client
        .get(url)
        .bearer_auth(&args.token)
        .send()
        .await
        .map_err(|e| format!("GET sessions: {e}"))?;
    let page: Value = res.json().await.map_err(|e| e.to_string())?;
    let mut busy: std::collections::BTreeMap<String, Vec<(u32, u32)>> = Default::default();
    let mut day = chrono::NaiveDate::parse_from_str(from, "%Y-%m-%d").map_err(|e| e.to_string())?;
    let last = chrono::NaiveDate::parse_from_str(to, "%Y-%m-%d").map_err(|e| e.to_string())?;
    while day <= last {
        busy.insert(day.to_string(), Vec::new());
        day += chrono::Duration::days(1);
    }
    for session in page["items"].as_array().into_iter().flatten() {
        let (Some(date), Some(start)) = (
            session["local_date"].as_str(),
            session["start_time"].as_str().and_then(minutes_of),
        ) else {
            continue;
        };
        let minutes: u32 = session["segments"]
            .as_array()
            .into_iter()
            .flatten()
            .filter_map(|s| s["minutes"].as_u64())
            .map(|m| m as u32)
            .sum();
        busy.entry(date.to_owned())
            .or_default()
            .push((start, start + minutes));
    }
    // One slot a day, in the evening after the day's last session: a write
    // session moved anywhere inside it can never overlap another session.
    let mut slots = Vec::new();
    for (date, taken) in busy {
        let last_end = taken.iter().map(|(_, end)| *end).max().unwrap_or(DAY_OPENS);
        let earliest = last_end.max(DAY_OPENS) + 2 * 60;
        let latest = earliest + SLOT_MINUTES - WRITE_MINUTES;
        if latest + WRITE_MINUTES + MARGIN <= DAY_CLOSES {
            slots.push((date, earliest, latest));
        }
    }
    Ok(slots)
}

/// Whether every athlete of a squad summary got a plan.
fn all_planned(summary: &Value) -> bool {
    summary["unplanned"].as_array().is_some_and(Vec::is_empty)
        && summary["rows"]
            .as_array()
            .is_some_and(|rows| !rows.is_empty())
}

async fn fetch_summary(args: &Args, client: &Client) -> Result<(Value, usize), String> {
    let res = client
        .get(format!("{}/v1/teams/{}/plan/summary", args.base, args.team))
        .bearer_auth(&args.token)
        .send()
        .await
        .map_err(|e| format!("GET summary: {e}"))?;
    if res.status() != 200 {
        return Err(format!("GET summary answered {}", res.status()));
    }
    let bytes = res.bytes().await.map_err(|e| e.to_string())?;
    let summary: Value = serde_json::from_slice(&bytes).map_err(|e| e.to_string())?;
    Ok((summary, bytes.len()))
}

type Setup = (Vec<(String, u32, u32)>, String, usize);

async fn setup(args: &Args, client: &Client) -> Result<Setup, String> {
    let (summary, summary_bytes) = fetch_summary(args, client).await?;
    if !all_planned(&summary) {
        return Err("some athletes have no plan before the run; fix the data first".into());
    }
    let from = summary["from"]
        .as_str()
        .ok_or("the summary has no from date")?;
    let to = summary["to"].as_str().ok_or("the summary has no to date")?;
    let rows = summary["rows"].as_array().map_or(0, Vec::len);
    let slots = free_slots(args, client, from, to).await?;
    if slots.is_empty() {
        return Err("no free slot in the planned week for the write sessions".into());
    }
    let mut sessions = Vec::new();
    for (i, (date, earliest, latest)) in slots.into_iter().take(args.write_sessions).enumerate() {
        let body = json!({
            "local_date": date,
            "start_time": format!("{:02}:{:02}", earliest / 60, earliest % 60),
            "kind": "strength",
            "title": format!("Load test gym block {}", i + 1),
            "segments": [{"minutes": WRITE_MINUTES, "intensity": {"form": "session_rpe", "rating": 4}}]
        });
        let res = client
            .post(format!("{}/v1/teams/{}/sessions", args.base, args.team))
            .bearer_auth(&args.token)
            .json(&body)
            .send()
            .await
            .map_err(|e| format!("POST session: {e}"))?;
        if res.status() != 201 {
            return Err(format!(
                "creating a session answered {}: {}",
                res.status(),
                res.text().await.unwrap_or_default()
            ));
        }
        let made: Value = res.json().await.map_err(|e| e.to_string())?;
        let id = made["id"].as_str().ok_or("no session id")?.to_owned();
        sessions.push((id, earliest, latest));
    }
    let note = format!(
        "squad summary: {rows} athlete-days, {from} to {to}, {summary_bytes} bytes; {} write sessions",
        sessions.len()
    );
    Ok((sessions, note, summary_bytes))
}

fn median(mut values: Vec<f64>) -> f64 {
    values.sort_by(f64::total_cmp);
    match values.len() {
        0 => f64::NAN,
        n if n % 2 == 1 => values[n / 2],
        n => (values[n / 2 - 1] + values[n / 2]) / 2.0,
    }
}

/// `loadgen bare FILE`: a bare axum server answering every GET with FILE.
async fn serve_bare(file: &str) -> std::process::ExitCode {
    let body = match std::fs::read(file) {
        Ok(bytes) => axum::body::Bytes::from(bytes),
        Err(e) => {
            eprintln!("loadgen bare: cannot read {file}: {e}");
            return std::process::ExitCode::FAILURE;
        }
    };
    let app = axum::Router::new().fallback(move || {
        let body = body.clone();
        async move {
            (
                [(axum::http::header::CONTENT_TYPE, "application/json")],
                body,
            )
        }
    });
    let listener = match tokio::net::TcpListener::bind("127.0.0.1:0").await {
        Ok(l) => l,
        Err(e) => {
            eprintln!("loadgen bare: {e}");
            return std::process::ExitCode::FAILURE;
        }
    };
    let addr = listener.local_addr().expect("address");
    eprintln!("listening on http://{addr}");
    match axum::serve(listener, app).await {
        Ok(()) => std::process::ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("loadgen bare: {e}");
            std::process::ExitCode::FAILURE
        }
    }
}

#[tokio::main]
async fn main() -> std::process::ExitCode {
    let argv: Vec<String> = std::env::args().collect();
    if argv.get(1).map(String::as_str) == Some("bare") {
        let Some(file) = argv.get(2) else {
            eprintln!("usage: loadgen bare FILE");
            return std::process::ExitCode::FAILURE;
        };
        return serve_bare(file).await;
    }
    let args = Args::parse();
    if args.requests == 0
        || args.concurrency == 0
        || args.duration_secs == 0
        || args.rounds == 0
        || args.round_secs == 0
        || args.mix_concurrency == 0
    {
        eprintln!("loadgen: requests, concurrency, rounds and durations must be positive");
        return std::process::ExitCode::FAILURE;
    }
    let client = Client::builder()
        .timeout(Duration::from_secs(30))
        .pool_max_idle_per_host(args.concurrency.max(args.mix_concurrency))
        .build()
        .expect("client");
    let (sessions, note, summary_bytes) = match setup(&args, &client).await {
        Ok(s) => s,
        Err(e) => {
            eprintln!("loadgen: setup failed: {e}");
            return std::process::ExitCode::FAILURE;
        }
    };
    eprintln!("loadgen: {note}");
    let target = Arc::new(Target {
        client,
        base: args.base.trim_end_matches('/').to_owned(),
        token: args.token.clone(),
        team: args.team.clone(),
        sessions,
        bare: args.bare.trim_end_matches('/').to_owned(),
    });
    let warm_up = 2 * args.concurrency;

    // 1. The cached summary against the bare server, interleaved.
    eprintln!(
        "loadgen: summary vs bare axum, {} rounds of {} s each, concurrency {}",
        args.rounds, args.round_secs, args.concurrency
    );
    let round = Duration::from_secs(args.round_secs);
    phase(&target, warm_up, args.concurrency, round, |_| Kind::Summary).await;
    phase(&target, warm_up, args.concurrency, round, |_| Kind::Bare).await;
    let (mut summary_rates, mut bare_rates) = (Vec::new(), Vec::new());
    let (mut summary_all, mut bare_all) = (Vec::new(), Vec::new());
    let (mut summary_wall, mut bare_wall) = (Duration::ZERO, Duration::ZERO);
    for _ in 0..args.rounds {
        let (samples, wall) = phase(&target, usize::MAX, args.concurrency, round, |_| {
            Kind::Summary
        })
        .await;
        summary_rates.push(samples.len() as f64 / wall.as_secs_f64());
        summary_wall += wall;
        summary_all.extend(samples);
        let (samples, wall) =
            phase(&target, usize::MAX, args.concurrency, round, |_| Kind::Bare).await;
        bare_rates.push(samples.len() as f64 / wall.as_secs_f64());
        bare_wall += wall;
        bare_all.extend(samples);
    }
    let (summary_rate, bare_rate) = (median(summary_rates), median(bare_rates));

    // 2. The mixed load.
    eprintln!(
        "loadgen: mix (80 % summary reads, 20 % session writes), {} connections",
        args.mix_concurrency
    );
    let limit = Duration::from_secs(args.duration_secs);
    phase(
        &target,
        2 * args.mix_concurrency,
        args.mix_concurrency,
        limit,
        mix,
    )
    .await;
    let (mixed, mixed_wall) = phase(&target, args.requests, args.mix_concurrency, limit, mix).await;
    // The writes must not have broken the plan (a refused plan is small and
    // fast, and would flatter every figure).
    match fetch_summary(&args, &target.client).await {
        Ok((summary, _)) if all_planned(&summary) => {}
        Ok(_) => {
            eprintln!("loadgen: after the writes, some athletes have no plan");
            return std::process::ExitCode::FAILURE;
        }
        Err(e) => {
            eprintln!("loadgen: {e}");
            return std::process::ExitCode::FAILURE;
        }
    }

    let all = of(&mixed, &[Kind::Summary, Kind::Write]);
    let figures = [
        Figures::of("mix: all", &all, mixed_wall, 200),
        Figures::of(
            "mix: summary reads",
            &of(&mixed, &[Kind::Summary]),
            mixed_wall,
            200,
        ),
        Figures::of(
            "mix: session writes",
            &of(&mixed, &[Kind::Write]),
            mixed_wall,
            200,
        ),
        Figures::of(
            "cached summary (all rounds)",
            &of(&summary_all, &[Kind::Summary]),
            summary_wall,
            200,
        ),
        Figures::of(
            "bare axum, same bytes (all rounds)",
            &of(&bare_all, &[Kind::Bare]),
            bare_wall,
            200,
        ),
    ];
    let kb = format!("{:.0} KB", summary_bytes as f64 / 1000.0);
    println!("{note}");
    println!();
    println!(
        "| cached `/plan/summary` req/s vs bare axum, same {kb} (medians of {} interleaved rounds of {} s, concurrency {}) | {:.0} vs {:.0} ({:.2}) |",
        args.rounds,
        args.round_secs,
        args.concurrency,
        summary_rate,
        bare_rate,
        summary_rate / bare_rate
    );
    let m = &figures[0];
    println!(
        "| mixed load, {} connections, 80% reads / 20% writes | {:.0} req/s, p50 {:.1} ms, p99 {:.1} ms |",
        args.mix_concurrency, m.throughput, m.p50_ms, m.p99_ms
    );
    println!();
    println!("| phase | requests | req/s | p50 ms | p90 ms | p99 ms | errors | 5xx |");
    println!("|---|---:|---:|---:|---:|---:|---:|---:|");
    for f in &figures {
        println!("{}", f.row());
    }
    let failed = figures[0].errors + figures[3].errors + figures[4].errors;
    if failed > 0 {
        eprintln!("loadgen: {failed} requests failed");
        return std::process::ExitCode::FAILURE;
    }
    std::process::ExitCode::SUCCESS
}
