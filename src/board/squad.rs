//! Squad week: athletes by days; each cell the day's carbohydrate g/kg with
//! its load band, pins and warnings; days named by their distance to the
//! match; ordered by name or position group.

use std::collections::HashMap;
use std::fmt::Write as _;

use axum::extract::{Path, RawQuery, State};
use axum::http::StatusCode;
use axum::response::Response;
use chrono::Days;

use super::auth::SignedIn;
use super::html::{self, esc, num, words};
use super::view::{self, SquadOrder};
use super::{Board, all_pages, enc, fail, path_id, query_pairs, query_value, span_query, team_nav};

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
    let order = match query_value(&pairs, "order") {
        Some("position") => SquadOrder::Position,
        _ => SquadOrder::Name,
    };
    let span = span_query(&pairs);
    let (team, summary) = tokio::join!(
        board
            .api
            .get::<view::Team>(user.caller, &format!("/v1/teams/{team_id}")),
        board.api.get::<view::Summary>(
            user.caller,
            &format!("/v1/teams/{team_id}/plan/summary?{span}")
        )
    );
    let (team, summary) = match (team, summary) {
        (Ok((t, _)), Ok((s, _))) => (t, s),
        (Err(f), _) | (_, Err(f)) => return fail(Some(&user), f),
    };
    // Matches just outside the week still name its first and last days.
    let around = (summary.from - Days::new(3), summary.to + Days::new(3));
    let (athletes, sessions) = tokio::join!(
        all_pages::<view::Athlete>(&board.api, &user, format!("/v1/teams/{team_id}/athletes")),
        all_pages::<view::Session>(
            &board.api,
            &user,
            format!(
                "/v1/teams/{team_id}/sessions?from={}&to={}",
                around.0, around.1
            )
        )
    );
    let (athletes, sessions) = match (athletes, sessions) {
        (Ok(a), Ok(s)) => (a, s),
        (Err(f), _) | (_, Err(f)) => return fail(Some(&user), f),
    };
    let week = view::iso_week(summary.from);
    let body = render(&team, &summary, &athletes, &sessions, order, &week);
    html::respond(
        StatusCode::OK,
        html::page(
            &format!("{} · squad week {week}", team.name),
            Some(&user.viewer()),
            &team_nav(team_id, &week, "squad"),
            &body,
        ),
    )
}

fn render(
    team: &view::Team,
    summary: &view::Summary,
    athletes: &[view::Athlete],
    sessions: &[view::Session],
    order: SquadOrder,
    week: &str,
) -> String {
    let dates = view::dates(summary.from, summary.to);
    let matches: Vec<_> = sessions
        .iter()
        .filter(|s| s.kind == "match")
        .map(|s| s.local_date)
        .collect();
    let by_id: HashMap<_, _> = athletes.iter().map(|a| (a.id, a)).collect();
    let rows = view::squad_rows(summary, athletes, &dates, order);
    let mut out = String::with_capacity(64 * 1024);
    let _ = write!(
        out,
        r#"<h1>{} <span class="muted">squad week {}</span></h1>
<p class="meta">{} – {} · times local to {} · plan version {}</p>"#,
        esc(&team.name),
        esc(week),
        view::short_date(summary.from),
        view::long_date(summary.to),
        esc(&team.time_zone),
        summary.version
    );
    let order_q = if order == SquadOrder::Position {
        "&order=position"
    } else {
        ""
    };
    let prev = view::iso_week(summary.from - Days::new(7));
    let next = view::iso_week(summary.from + Days::new(7));
    let _ = write!(
        out,
        r#"<div class="toolbar"><nav aria-label="Weeks" class="weeks"><a href="?week={p}{order_q}">← {p}</a><a href="?week={n}{order_q}">{n} →</a></nav>
<div class="order" role="group" aria-label="Order">Order: <a href="?week={w}"{by_name}>by name</a> <a href="?week={w}&amp;order=position"{by_pos}>by position group</a></div></div>"#,
        p = esc(&prev),
        n = esc(&next),
        w = enc(week),
        order_q = esc(order_q),
        by_name = if order == SquadOrder::Name {
            r#" aria-current="true""#
        } else {
            ""
        },
        by_pos = if order == SquadOrder::Position {
            r#" aria-current="true""#
        } else {
            ""
        },
    );
    legend(&mut out);
    out.push_str(r#"<div class="scroll"><table class="grid"><caption>Daily carbohydrate target in g per kg body mass (estimate), with the day's load band. A pin mark means a dietitian fixed the value; a warning mark gives the number of warnings that day.</caption><thead><tr><th scope="col">Athlete</th><th scope="col">Position</th>"#);
    for d in &dates {
        let _ = write!(
            out,
            r#"<th scope="col"><span class="dname">{}</span>"#,
            view::short_date(*d)
        );
        if let Some(label) = view::match_distance(*d, &matches) {
            let _ = write!(out, r#"<span class="mdist">{}</span>"#, esc(&label));
        }
        for s in sessions
            .iter()
            .filter(|s| s.local_date == *d && s.kind != "travel")
        {
            let _ = write!(
                out,
                r#"<a class="dsess" href="/board/sessions/{}">{} {}</a>"#,
                s.id,
                esc(&s.start_time),
                esc(&s.title)
            );
        }
        out.push_str("</th>");
    }
    out.push_str("</tr></thead><tbody>");
    let mut group: Option<Option<&str>> = None;
    for row in &rows {
        if order == SquadOrder::Position && group != Some(row.position_group) {
            group = Some(row.position_group);
            let _ = write!(
                out,
                r#"<tr class="group"><th scope="rowgroup" colspan="{}">{}</th></tr>"#,
                dates.len() + 2,
                esc(row.position_group.unwrap_or("no position group"))
            );
        }
        let athlete = by_id.get(&row.athlete_id);
        let _ = write!(
            out,
            r#"<tr><th scope="row"><a href="/board/athletes/{}?week={}">{}</a>"#,
            row.athlete_id,
            enc(week),
            esc(row.display_name)
        );
        if let Some(a) = athlete {
            if view::under_18(a.date_of_birth, summary.from) {
                out.push_str(r#" <span class="badge">under 18</span>"#);
            }
            if !a.health_flags.is_empty() {
                out.push_str(r#" <span class="badge">medical flag</span>"#);
            }
        }
        let _ = write!(
            out,
            "</th><td>{}</td>",
            esc(row.position_group.unwrap_or(""))
        );
        for (d, cell) in dates.iter().zip(&row.days) {
            match cell {
                None => out.push_str(r#"<td class="none">–</td>"#),
                Some(r) => {
                    let step = super::scale::step_of(r.carbohydrate_g_per_kg);
                    let mut flags = Vec::new();
                    if r.carbohydrate_pinned {
                        flags.push(r#"<span class="pin">pin</span>"#.to_owned());
                    }
                    if r.energy_availability_band == "low" {
                        flags.push(r#"<span class="ea">low EA</span>"#.to_owned());
                    }
                    if !r.warnings.is_empty() {
                        let list: Vec<String> = r.warnings.iter().map(|w| words(w)).collect();
                        flags.push(format!(
                            r#"<span class="warn" title="{}">⚠ {}</span>"#,
                            esc(&list.join(", ")),
                            r.warnings.len()
                        ));
                    }
                    let _ = write!(
                        out,
                        r#"<td class="cell s{step}" data-date="{d}" data-g-per-kg="{}"><a href="/board/athletes/{}?week={}#d-{d}"><span class="g">{}</span><span class="band">{}</span>{}</a></td>"#,
                        num(r.carbohydrate_g_per_kg, 1),
                        row.athlete_id,
                        enc(week),
                        num(r.carbohydrate_g_per_kg, 1),
                        esc(&words(&r.load_band)),
                        if flags.is_empty() {
                            String::new()
                        } else {
                            format!(r#"<span class="flags">{}</span>"#, flags.join(" "))
                        }
                    );
                }
            }
        }
        out.push_str("</tr>");
    }
    out.push_str("</tbody></table></div>");
    if !summary.unplanned.is_empty() {
        out.push_str(r#"<section><h2>Not planned</h2><ul>"#);
        for u in &summary.unplanned {
            let _ = write!(
                out,
                r#"<li><a href="/board/athletes/{}">{}</a>: {}</li>"#,
                u.athlete_id,
                esc(&u.display_name),
                esc(&u.problems.join("; "))
            );
        }
        out.push_str("</ul></section>");
    }
    warnings_section(&mut out, summary, week);
    cautions(&mut out, &summary.cautions);
    out
}

fn legend(out: &mut String) {
    out.push_str(r#"<figure class="legend"><figcaption>Carbohydrate, g/kg/day</figcaption><ol>"#);
    for i in 0..super::scale::STEPS.len() {
        let _ = write!(
            out,
            r#"<li class="s{i}">{}</li>"#,
            esc(&super::scale::step_label(i))
        );
    }
    out.push_str("</ol></figure>");
}

fn warnings_section(out: &mut String, summary: &view::Summary, week: &str) {
    let names: HashMap<_, _> = summary
        .rows
        .iter()
        .map(|r| (r.athlete_id, r.display_name.as_str()))
        .collect();
    let _ = write!(
        out,
        r#"<section><h2>Warnings this week <span class="muted">({})</span></h2>"#,
        summary.warnings.len()
    );
    if summary.warnings.is_empty() {
        out.push_str("<p>No week-level warnings.</p>");
    } else {
        out.push_str(r#"<table class="list"><thead><tr><th scope="col">Athlete</th><th scope="col">When</th><th scope="col">Level</th><th scope="col">What</th><th scope="col">What would fix it</th></tr></thead><tbody>"#);
        for w in &summary.warnings {
            let who = w
                .athlete_id
                .map(|id| {
                    format!(
                        r#"<a href="/board/athletes/{id}?week={}">{}</a>"#,
                        enc(week),
                        esc(names.get(&id).copied().unwrap_or("athlete"))
                    )
                })
                .unwrap_or_default();
            let when = match (w.time, w.until) {
                (Some(t), _) => t.format("%a %-d %b %H:%M").to_string(),
                (None, Some(u)) => {
                    format!("{} – {}", view::short_date(w.date), view::short_date(u))
                }
                _ => view::short_date(w.date),
            };
            let _ = write!(
                out,
                r#"<tr><td>{who}</td><td>{}</td><td><span class="sev {}">{}</span></td><td>{}</td><td>{}</td></tr>"#,
                esc(&when),
                esc(&w.severity),
                esc(&w.severity),
                esc(&w.cause),
                esc(&w.fix)
            );
        }
        out.push_str("</tbody></table>");
    }
    out.push_str("</section>");
}

/// The plan's cautions, in a box.
pub fn cautions(out: &mut String, cautions: &[String]) {
    if cautions.is_empty() {
        return;
    }
    out.push_str(r#"<aside class="cautions" aria-label="Cautions"><h2>Cautions</h2><ul>"#);
    for c in cautions {
        let _ = write!(out, "<li>{}</li>", esc(c));
    }
    out.push_str("</ul></aside>");
}
