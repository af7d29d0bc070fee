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

/// A change of one field as a person reads it: glycogen as a percentage of
/// normal stores, eating occasions as "kind hh:mm" with only the ones that
/// moved, other values as they are.
fn show_change(field: &str, before: &serde_json::Value, after: &serde_json::Value) -> String {
    use serde_json::Value;
    if let (Value::Array(b), Value::Array(a)) = (before, after)
        && field == "eating_occasions"
    {
        let only = |xs: &[Value], ys: &[Value]| -> String {
            let left: Vec<String> = xs.iter().filter(|x| !ys.contains(x)).map(show).collect();
            if left.is_empty() {
                "none".into()
            } else {
                left.join(", ")
            }
        };
        return format!("{} → {}", only(b, a), only(a, b));
    }
    let as_percent = |v: &Value| match v.as_f64() {
        Some(f) => format!("{} %", crate::board::html::num(f * 100.0, 1)),
        None => show(v),
    };
    if field.contains("glycogen") {
        format!("{} → {}", as_percent(before), as_percent(after))
    } else {
        format!("{} → {}", show(before), show(after))
    }
}

fn show(v: &serde_json::Value) -> String {
    match v {
        serde_json::Value::Null => "–".into(),
        serde_json::Value::Object(map)
            if map.get("kind").is_some_and(|k| k.is_string())
                && map.get("time").is_some_and(|t| t.is_string()) =>
        {
            format!(
                "{} {}",
                words(map["kind"].as_str().unwrap_or_default()),
                map["time"].as_str().unwrap_or_default()
            )
        }
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
                    "<li>{}: {}</li>",
                    esc(&words(&f.field)),
                    esc(&show_change(&f.field, &f.before, &f.after))
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

#[cfg(test)]
mod tests {
    use super::show_change;
    use serde_json::json;

    #[test]
    fn changes_read_as_a_person_reads_them() {
        let before = json!([{"kind": "breakfast", "time": "07:30"}, {"kind": "pre_session", "time": "08:00"}]);
        let after = json!([{"kind": "breakfast", "time": "07:30"}, {"kind": "pre_session", "time": "15:45"}]);
        assert_eq!(
            show_change("eating_occasions", &before, &after),
            "pre session 08:00 → pre session 15:45"
        );
        assert_eq!(
            show_change("muscle_glycogen_end", &json!(0.968), &json!(0.954)),
            "96.8 % → 95.4 %"
        );
        assert_eq!(
            show_change("carbohydrate_g_per_kg", &json!(6.5), &json!(6.25)),
            "6.5 → 6.25"
        );
    }
}
