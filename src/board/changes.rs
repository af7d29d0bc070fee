//! What a change did to the plan: after every adjustment the board shows,
//! per athlete and day, each figure that moved (the API's plan-changes
//! comparison between the version before the change and now).

use std::fmt::Write as _;

use axum::extract::{Path, RawQuery, State};
use axum::http::StatusCode;
use axum::response::Response;
use chrono::{Datelike, Days, NaiveDate};
use uuid::Uuid;

use super::api::ApiFailure;
use super::auth::SignedIn;
use super::html::{self, esc, words};
use super::view;
use super::{Board, enc, fail, path_id, query_pairs, query_value, team_nav};

/// The Monday-to-Sunday span around a date.
pub fn week_of(d: NaiveDate) -> (NaiveDate, NaiveDate) {
    let monday = d - Days::new(u64::from(d.weekday().num_days_from_monday()));
    (monday, monday + Days::new(6))
}

/// The smallest span of whole weeks covering both dates.
pub fn weeks_covering(a: NaiveDate, b: NaiveDate) -> (NaiveDate, NaiveDate) {
    let (a0, a1) = week_of(a);
    let (b0, b1) = week_of(b);
    (a0.min(b0), a1.max(b1))
}

/// Reads the squad summary over `span` before a change: the API keeps a
/// snapshot of it under the returned version, to compare with afterwards.
pub async fn version_before(
    board: &Board,
    user: &SignedIn,
    team_id: Uuid,
    span: (NaiveDate, NaiveDate),
) -> Result<i64, ApiFailure> {
    let (summary, _): (view::Summary, _) = board
        .api
        .get(
            user.caller,
            &format!(
                "/v1/teams/{team_id}/plan/summary?from={}&to={}",
                span.0, span.1
            ),
        )
        .await?;
    Ok(summary.version)
}

/// Where the board goes after a successful change.
pub fn changes_url(team_id: Uuid, since: i64, span: (NaiveDate, NaiveDate), done: &str) -> String {
    format!(
        "/board/teams/{team_id}/changes?since={since}&from={}&to={}&done={}",
        span.0,
        span.1,
        enc(done)
    )
}

fn show(v: &serde_json::Value) -> String {
    match v {
        serde_json::Value::Null => "–".into(),
        serde_json::Value::String(s) => words(s),
        serde_json::Value::Array(items) if items.is_empty() => "none".into(),
        serde_json::Value::Array(items) => items.iter().map(show).collect::<Vec<_>>().join(", "),
        serde_json::Value::Number(n) => n
            .as_f64()
            .map(|f| {
                let s = format!("{f:.3}");
                s.trim_end_matches('0').trim_end_matches('.').to_owned()
            })
            .unwrap_or_default(),
        other => other.to_string(),
    }
}

pub async fn page(
    State(board): State<Board>,
    user: SignedIn,
    Path(team_id): Path<String>,
    RawQuery(q): RawQuery,
) -> Response {
    let team_id = match path_id(&team_id, "squad", &user) {
        Ok(id) => id,
        Err(r) => return r,
    };
    let pairs = query_pairs(q.as_deref());
    let since = query_value(&pairs, "since").and_then(|s| s.parse::<i64>().ok());
    let from = query_value(&pairs, "from").and_then(|s| s.parse::<NaiveDate>().ok());
    let to = query_value(&pairs, "to").and_then(|s| s.parse::<NaiveDate>().ok());
    let done = query_value(&pairs, "done").unwrap_or("The change");
    let (Some(since), Some(from), Some(to)) = (since, from, to) else {
        return html::message_page(
            StatusCode::BAD_REQUEST,
            "Nothing to compare",
            "This page shows what a change did to the plan; open it from a change you made.",
            Some(&user.viewer()),
        );
    };
    let team = match board
        .api
        .get::<view::Team>(user.caller, &format!("/v1/teams/{team_id}"))
        .await
    {
        Ok((t, _)) => t,
        Err(f) => return fail(Some(&user), f),
    };
    let week = view::iso_week(from);
    let mut body = format!(
        r#"<h1>What changed in the plan</h1><div class="notice ok" role="status"><p>{} was saved. {} – {}, {}.</p></div>"#,
        esc(done),
        view::short_date(from),
        view::long_date(to),
        esc(&team.name)
    );
    let changes = board
        .api
        .get::<view::PlanChanges>(
            user.caller,
            &format!("/v1/teams/{team_id}/plan/changes?since_version={since}&from={from}&to={to}"),
        )
        .await;
    match changes {
        Err(ApiFailure::Refused(_, p)) => {
            let _ = write!(
                body,
                r#"<div class="notice" role="alert"><p>The plan before the change cannot be compared: {}</p></div>"#,
                esc(&p
                    .errors
                    .first()
                    .map_or(p.detail.clone(), |e| e.reason.clone()))
            );
        }
        Err(f) => return fail(Some(&user), f),
        Ok((c, _)) => render(&mut body, &c, &week),
    }
    let _ = write!(
        body,
        r#"<p><a href="/board/teams/{team_id}?week={w}">Back to the squad week</a></p>"#,
        w = enc(&week)
    );
    html::respond(
        StatusCode::OK,
        html::page(
            "What changed",
            Some(&user.viewer()),
            &team_nav(team_id, &week, ""),
            &body,
        ),
    )
}

fn render(out: &mut String, c: &view::PlanChanges, week: &str) {
    let _ = write!(
        out,
        r#"<p class="meta">Plan version {} → {} · {} input change(s): {}</p>"#,
        c.from_version,
        c.to_version,
        c.input_changes.len(),
        esc(&c
            .input_changes
            .iter()
            .map(|i| format!("{} {}", i.entity_type, i.action))
            .collect::<Vec<_>>()
            .join(", "))
    );
    if c.days.is_empty() {
        out.push_str("<p>No athlete's targets moved.</p>");
        return;
    }
    let _ = write!(
        out,
        r#"<p>{} athlete-day(s) changed.</p><table class="list changes"><thead><tr><th scope="col">Athlete</th><th scope="col">Day</th><th scope="col">What moved (before → after)</th></tr></thead><tbody>"#,
        c.days.len()
    );
    for d in &c.days {
        let moved: Vec<String> = d
            .fields
            .iter()
            .filter(|f| f.field != "athlete_id" && f.field != "date")
            .map(|f| {
                format!(
                    "<li>{}: {} → {}</li>",
                    esc(&words(&f.field)),
                    esc(&show(&f.before)),
                    esc(&show(&f.after))
                )
            })
            .collect();
        let what = if moved.is_empty() {
            esc(&d.kind).to_string()
        } else {
            format!("<ul class=\"moved\">{}</ul>", moved.concat())
        };
        let _ = write!(
            out,
            r#"<tr><th scope="row"><a href="/board/athletes/{}?week={}#d-{}">{}</a></th><td>{}</td><td>{what}</td></tr>"#,
            d.athlete_id,
            enc(week),
            d.date,
            esc(&d.display_name),
            view::short_date(d.date),
        );
    }
    out.push_str("</tbody></table>");
}
