//! Kitchen sheet: one printable A4 page per day and eating occasion (who
//! eats, carbohydrate and protein grams, dietary notes), and a page of the
//! day's totals per athlete with the same figures as the summary CSV.

use std::collections::{BTreeMap, HashMap};
use std::fmt::Write as _;

use axum::extract::{Path, RawQuery, State};
use axum::http::StatusCode;
use axum::response::Response;
use chrono::NaiveDate;

use super::auth::SignedIn;
use super::html::{self, esc, num, words};
use super::view;
use super::{Board, all_pages, enc, fail, path_id, query_pairs, query_value, span_query, team_nav};

/// The order occasions take on the sheet (a day's running order).
const KINDS: [&str; 7] = [
    "breakfast",
    "pre_session",
    "during_session",
    "recovery",
    "lunch",
    "dinner",
    "evening_snack",
];

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
    let span = span_query(&pairs);
    let (team, plan, summary, athletes) = tokio::join!(
        board
            .api
            .get::<view::Team>(user.caller, &format!("/v1/teams/{team_id}")),
        board
            .api
            .get::<view::TeamPlan>(user.caller, &format!("/v1/teams/{team_id}/plan?{span}")),
        board.api.get::<view::Summary>(
            user.caller,
            &format!("/v1/teams/{team_id}/plan/summary?{span}")
        ),
        all_pages::<view::Athlete>(&board.api, &user, format!("/v1/teams/{team_id}/athletes")),
    );
    let (team, plan, summary, athletes) = match (team, plan, summary, athletes) {
        (Ok((t, _)), Ok((p, _)), Ok((s, _)), Ok(a)) => (t, p, s, a),
        (Err(f), ..) | (_, Err(f), ..) | (_, _, Err(f), _) | (.., Err(f)) => {
            return fail(Some(&user), f);
        }
    };
    let week = view::iso_week(plan.from);
    let all_dates = view::dates(plan.from, plan.to);
    let chosen: Vec<NaiveDate> = match query_value(&pairs, "date") {
        Some("all") => all_dates.clone(),
        Some(d) => match d.parse::<NaiveDate>() {
            Ok(d) if all_dates.contains(&d) => vec![d],
            _ => {
                return html::message_page(
                    StatusCode::BAD_REQUEST,
                    "No such day",
                    "Choose a day of this week for the kitchen sheet.",
                    Some(&user.viewer()),
                );
            }
        },
        None => {
            let today = chrono::Utc::now().date_naive();
            vec![if all_dates.contains(&today) {
                today
            } else {
                plan.from
            }]
        }
    };
    let body = render(
        &team, &plan, &summary, &athletes, &all_dates, &chosen, &week,
    );
    html::respond(
        StatusCode::OK,
        html::page(
            &format!("{} · kitchen sheet", team.name),
            Some(&user.viewer()),
            &team_nav(team_id, &week, "kitchen"),
            &body,
        ),
    )
}

fn render(
    team: &view::Team,
    plan: &view::TeamPlan,
    summary: &view::Summary,
    athletes: &[view::Athlete],
    all_dates: &[NaiveDate],
    chosen: &[NaiveDate],
    week: &str,
) -> String {
    let mut out = String::with_capacity(128 * 1024);
    let by_id: HashMap<_, _> = athletes.iter().map(|a| (a.id, a)).collect();
    let _ = write!(
        out,
        r#"<div class="noprint"><h1>Kitchen sheet <span class="muted">{} · week {}</span></h1><nav class="days" aria-label="Day">"#,
        esc(&team.name),
        esc(week)
    );
    for d in all_dates {
        let _ = write!(
            out,
            r#"<a href="?week={}&amp;date={d}"{}>{}</a>"#,
            enc(week),
            if chosen.len() == 1 && chosen[0] == *d {
                r#" aria-current="page""#
            } else {
                ""
            },
            view::short_date(*d)
        );
    }
    let _ = write!(
        out,
        r#"<a href="?week={}&amp;date=all"{}>whole week</a></nav><p><button type="button" class="print" data-print>Print</button> <span class="muted">Prints one A4 page per eating occasion, then the day's totals (the same figures as the summary CSV).</span></p></div>"#,
        enc(week),
        if chosen.len() > 1 {
            r#" aria-current="page""#
        } else {
            ""
        }
    );
    for date in chosen {
        // (kind) -> rows of (name, athlete id, occasion)
        let mut by_kind: BTreeMap<usize, Vec<(&str, uuid::Uuid, &view::Occasion)>> =
            BTreeMap::new();
        for a in &plan.athletes {
            let Some(wp) = &a.plan else { continue };
            let Some(day) = wp.days.iter().find(|d| d.date == *date) else {
                continue;
            };
            for o in &day.plan.eating_occasions {
                let k = KINDS
                    .iter()
                    .position(|k| *k == o.kind)
                    .unwrap_or(KINDS.len());
                by_kind
                    .entry(k)
                    .or_default()
                    .push((&a.display_name, a.athlete_id, o));
            }
        }
        for (k, mut rows) in by_kind {
            rows.sort_by(|a, b| (a.2.time, a.0).cmp(&(b.2.time, b.0)));
            let kind = KINDS.get(k).map_or("other", |s| *s);
            let _ = write!(
                out,
                r#"<section class="sheet" data-date="{date}" data-occasion="{kind}"><h2>{} · {}</h2><p class="meta">{} · {} athletes · times local to {}</p><table class="list kitchen"><thead><tr><th scope="col">Athlete</th><th scope="col">Time</th><th scope="col">Carbohydrate, g</th><th scope="col">Protein, g</th><th scope="col">Dietary notes</th></tr></thead><tbody>"#,
                view::long_date(*date),
                esc(&capitalised(&words(kind))),
                esc(&team.name),
                rows.len(),
                esc(&team.time_zone),
            );
            let (mut carbohydrate, mut protein) = (0.0, 0.0);
            for (name, id, o) in &rows {
                carbohydrate += o.carbohydrate_g;
                protein += o.protein_g;
                let mut notes = by_id
                    .get(id)
                    .and_then(|a| a.dietary_notes.clone())
                    .unwrap_or_default();
                if o.carbohydrate_withheld_for_train_low {
                    notes.push_str(" Carbohydrate withheld before a train-low session.");
                }
                let _ = write!(
                    out,
                    r#"<tr><th scope="row">{}{}</th><td>{}</td><td>{}</td><td>{}</td><td>{}</td></tr>"#,
                    esc(name),
                    caution_mark(by_id.get(id).copied(), *date),
                    o.time.format("%H:%M"),
                    num(o.carbohydrate_g, 0),
                    num(o.protein_g, 0),
                    esc(notes.trim())
                );
            }
            let _ = write!(
                out,
                r#"</tbody><tfoot><tr><th scope="row">Total</th><td></td><td>{}</td><td>{}</td><td></td></tr></tfoot></table>{}</section>"#,
                num(carbohydrate, 0),
                num(protein, 0),
                SHEET_FOOTNOTE
            );
        }
        // The day's totals: the summary rows, exactly as in the CSV.
        let mut rows: Vec<&view::SummaryRow> =
            summary.rows.iter().filter(|r| r.date == *date).collect();
        rows.sort_by(|a, b| a.display_name.cmp(&b.display_name));
        let _ = write!(
            out,
            r#"<section class="sheet totals" data-date="{date}"><h2>{} · day totals</h2><p class="meta">{} · the same figures as the summary CSV</p><table class="list kitchen"><thead><tr><th scope="col">Athlete</th><th scope="col">Carbohydrate, g</th><th scope="col">Protein, g</th><th scope="col">Fat, g</th><th scope="col">Energy, kcal</th><th scope="col">Dietary notes</th></tr></thead><tbody>"#,
            view::long_date(*date),
            esc(&team.name)
        );
        let mut t = [0.0f64; 4];
        for r in &rows {
            t[0] += r.carbohydrate_g;
            t[1] += r.protein_g;
            t[2] += r.fat_g;
            t[3] += r.energy_kcal;
            let a = by_id.get(&r.athlete_id).copied();
            let _ = write!(
                out,
                r#"<tr data-athlete="{}"><th scope="row">{}{}</th><td data-field="carbohydrate_g">{}</td><td data-field="protein_g">{}</td><td>{}</td><td>{}</td><td>{}</td></tr>"#,
                r.athlete_id,
                esc(&r.display_name),
                caution_mark(a, *date),
                num(r.carbohydrate_g, 1),
                num(r.protein_g, 1),
                num(r.fat_g, 1),
                num(r.energy_kcal, 0),
                esc(a.and_then(|a| a.dietary_notes.as_deref()).unwrap_or(""))
            );
        }
        let _ = write!(
            out,
            r#"</tbody><tfoot><tr><th scope="row">TOTAL</th><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td></td></tr></tfoot></table>{}</section>"#,
            num(t[0], 1),
            num(t[1], 1),
            num(t[2], 1),
            num(t[3], 0),
            SHEET_FOOTNOTE
        );
    }
    out
}

const SHEET_FOOTNOTE: &str = r#"<p class="footnote">Grams are estimated targets. † Under 18 or a medical flag: confirm this athlete's portions with the registered dietitian. Defer to a physician and to local rules.</p>"#;

fn caution_mark(a: Option<&view::Athlete>, date: NaiveDate) -> &'static str {
    match a {
        Some(a) if view::under_18(a.date_of_birth, date) || !a.health_flags.is_empty() => {
            r#" <span class="mark" title="caution: see the dietitian">†</span>"#
        }
        _ => "",
    }
}

fn capitalised(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_uppercase().chain(c).collect(),
        None => String::new(),
    }
}
