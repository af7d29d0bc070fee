//! Session: the fuel mix across the session's elapsed time for the squad
//! taking part, each athlete's energy and carbohydrate, and (for planners)
//! moving the session and recording minutes played.

use std::collections::HashMap;
use std::fmt::Write as _;

use axum::body::Bytes;
use axum::extract::{Path, State};
use axum::http::{HeaderMap, Method, StatusCode};
use axum::response::{IntoResponse, Redirect, Response};
use chrono::NaiveDate;
use uuid::Uuid;

use super::api::ApiFailure;
use super::auth::{self, SignedIn};
use super::changes::{changes_url, version_before, weeks_covering};
use super::html::{self, esc, num, pct, words};
use super::view;
use super::{Board, enc, fail, form_fields, path_id, team_nav};

/// Which form on the page came back, with what was typed.
pub enum Returned {
    Move,
    Minutes(Uuid),
}

pub struct SessionForm {
    pub which: Returned,
    pub values: HashMap<String, String>,
    pub notice: String,
    pub errors: Vec<view::FieldError>,
}

pub async fn page(State(board): State<Board>, user: SignedIn, Path(id): Path<String>) -> Response {
    let id = match path_id(&id, "session", &user) {
        Ok(id) => id,
        Err(r) => return r,
    };
    render_page(&board, &user, id, None, StatusCode::OK).await
}

async fn render_page(
    board: &Board,
    user: &SignedIn,
    id: Uuid,
    form: Option<SessionForm>,
    status: StatusCode,
) -> Response {
    let (session, fuel, participation) = tokio::join!(
        board
            .api
            .get::<view::Session>(user.caller, &format!("/v1/sessions/{id}")),
        board
            .api
            .get::<view::StoredSessionFuel>(user.caller, &format!("/v1/sessions/{id}/fuel")),
        super::all_pages::<view::Participation>(
            &board.api,
            user,
            format!("/v1/sessions/{id}/participation")
        ),
    );
    let (session, fuel, participation) = match (session, fuel, participation) {
        (Ok((s, _)), Ok((f, _)), Ok(p)) => (s, f, p),
        (Err(f), _, _) | (_, Err(f), _) | (_, _, Err(f)) => return fail(Some(user), f),
    };
    let team = match board
        .api
        .get::<view::Team>(user.caller, &format!("/v1/teams/{}", session.team_id))
        .await
    {
        Ok((t, _)) => t,
        Err(f) => return fail(Some(user), f),
    };
    let week = view::iso_week(session.local_date);
    let body = render(
        user,
        &team,
        &session,
        &fuel,
        &participation,
        &week,
        form.as_ref(),
    );
    html::respond(
        status,
        html::page(
            &format!("{} · session", session.title),
            Some(&user.viewer()),
            &team_nav(session.team_id, &week, ""),
            &body,
        ),
    )
}

fn notice(out: &mut String, form: &SessionForm) {
    let _ = write!(
        out,
        r#"<div class="notice error" role="alert"><p>{}</p>"#,
        esc(&form.notice)
    );
    if !form.errors.is_empty() {
        out.push_str("<ul>");
        for e in &form.errors {
            let _ = write!(
                out,
                "<li>{}: {}</li>",
                esc(&words(&e.field)),
                esc(&e.reason)
            );
        }
        out.push_str("</ul>");
    }
    out.push_str("</div>");
}

fn render(
    user: &SignedIn,
    team: &view::Team,
    session: &view::Session,
    fuel: &view::StoredSessionFuel,
    participation: &[view::Participation],
    week: &str,
    form: Option<&SessionForm>,
) -> String {
    let mut out = String::with_capacity(96 * 1024);
    let _ = write!(
        out,
        r#"<p class="crumbs"><a href="/board/teams/{}?week={}">{}</a> › session</p><h1>{}</h1><p class="meta">{} · {} at {} ({}) · {} minutes{}{}</p>"#,
        team.id,
        enc(week),
        esc(&team.name),
        esc(&session.title),
        esc(&words(&session.kind)),
        view::long_date(session.local_date),
        esc(&session.start_time),
        esc(&team.time_zone),
        num(session.total_minutes, 0),
        if session.key_session {
            " · key session"
        } else {
            ""
        },
        if session.train_low {
            " · train low"
        } else {
            ""
        },
    );
    if let Some(f) = form.filter(|f| matches!(f.which, Returned::Move)) {
        notice(&mut out, f);
    }
    if user.viewer().can_write() {
        let value = |key: &str, current: String| {
            form.filter(|f| matches!(f.which, Returned::Move))
                .and_then(|f| f.values.get(key).cloned())
                .unwrap_or(current)
        };
        let _ = write!(
            out,
            r#"<details class="adjust"{}><summary>Move this session</summary><form method="post" action="/board/sessions/{}/move" class="row">
<input type="hidden" name="csrf" value="{}"><input type="hidden" name="version" value="{}">
<label>Date <input type="date" name="local_date" required value="{}"></label>
<label>Start (local) <input type="time" name="start_time" required value="{}"></label>
<button type="submit">Move session</button></form></details>"#,
            if form.is_some_and(|f| matches!(f.which, Returned::Move)) {
                " open"
            } else {
                ""
            },
            session.id,
            esc(&user.csrf),
            session.version,
            esc(&value("local_date", session.local_date.to_string())),
            esc(&value("start_time", session.start_time.clone())),
        );
    }
    // The fuel mix.
    let mix = view::squad_fuel_mix(fuel);
    let _ = write!(
        out,
        r#"<section><h2>Fuel mix across the session</h2><p class="muted">Estimates: mean of the {} athletes taking full part, with normal glycogen stores at the start.</p>"#,
        mix.athletes
    );
    if mix.athletes == 0 {
        out.push_str("<p>No athlete takes full part, so there is no squad fuel mix to show.</p>");
    } else {
        let _ = write!(
            out,
            r#"<figure>{}<figcaption>Share of energy from carbohydrate (dark) and fat (light), every 5 minutes.</figcaption></figure><figure>{}<figcaption>Grams oxidised per minute in each part of the session.</figcaption></figure>"#,
            super::chart::fuel_share(&mix, session.total_minutes),
            super::chart::fuel_rate(&mix, session.total_minutes)
        );
        out.push_str(r#"<table class="list"><caption>Fuel mix by part of the session (squad means, estimates)</caption><thead><tr><th scope="col">Part</th><th scope="col">Minutes</th><th scope="col">Carbohydrate, g/min</th><th scope="col">Fat, g/min</th><th scope="col">Carbohydrate share of grams</th></tr></thead><tbody>"#);
        for (start, end, label, carbohydrate, fat) in &mix.segments {
            let _ = write!(
                out,
                "<tr><td>{}</td><td>{}–{}</td><td>{}</td><td>{}</td><td>{}</td></tr>",
                esc(label),
                num(*start, 0),
                num(*end, 0),
                num(*carbohydrate, 2),
                num(*fat, 2),
                if carbohydrate + fat > 0.0 {
                    pct(carbohydrate / (carbohydrate + fat))
                } else {
                    "–".into()
                }
            );
        }
        out.push_str("</tbody></table>");
    }
    out.push_str("</section>");
    // Each athlete.
    let exceptions: HashMap<Uuid, &view::Participation> =
        participation.iter().map(|p| (p.athlete_id, p)).collect();
    out.push_str(r#"<section><h2>Each athlete</h2>"#);
    if let Some(f) = form.filter(|f| matches!(f.which, Returned::Minutes(_))) {
        notice(&mut out, f);
    }
    let can_write = user.viewer().can_write();
    let _ = write!(
        out,
        r#"<div class="scroll"><table class="list athletes"><caption>Energy and fuel per athlete for this session (estimates)</caption><thead><tr><th scope="col">Athlete</th><th scope="col">Takes part</th><th scope="col">Minutes</th><th scope="col">Energy, kcal</th><th scope="col">Carbohydrate, g</th><th scope="col">Fat, g</th><th scope="col">Carbohydrate share</th><th scope="col">Muscle glycogen used</th><th scope="col">Notes</th>{}</tr></thead><tbody>"#,
        if can_write {
            r#"<th scope="col">Minutes played</th>"#
        } else {
            ""
        }
    );
    for a in &fuel.athletes {
        let exception = exceptions.get(&a.athlete_id);
        let part = match exception {
            Some(p) if p.mode == "shortened" => format!(
                "{} min {}",
                num(p.minutes.unwrap_or(0.0), 0),
                p.portion
                    .as_deref()
                    .map(|x| format!("({})", words(x)))
                    .unwrap_or_default()
            ),
            Some(p) => words(&p.mode),
            None => words(&a.takes_part),
        };
        let mut notes: Vec<String> = a.notes.clone();
        if let Some(f) = &a.fuel {
            for w in &f.warnings {
                if !notes.contains(&w.message) {
                    notes.push(w.message.clone());
                }
            }
        }
        let _ = write!(
            out,
            r#"<tr data-athlete="{}"><th scope="row"><a href="/board/athletes/{}?week={}">{}</a></th><td>{}</td>"#,
            a.athlete_id,
            a.athlete_id,
            enc(week),
            esc(&a.display_name),
            esc(&part)
        );
        match &a.fuel {
            Some(f) => {
                let _ = write!(
                    out,
                    r#"<td>{}</td><td data-field="gross_energy_kcal">{}</td><td data-field="carbohydrate_g">{}</td><td>{}</td><td>{}</td><td>{}</td>"#,
                    num(f.total_minutes, 0),
                    num(f.gross_energy_kcal, 0),
                    num(f.carbohydrate_g, 0),
                    num(f.fat_g, 0),
                    pct(f.mean_carbohydrate_share),
                    pct(f.muscle_glycogen_used_fraction)
                );
            }
            None => out.push_str(r#"<td colspan="6" class="muted">no estimate</td>"#),
        }
        let _ = write!(out, "<td class=\"small\">{}</td>", esc(&notes.join(" ")));
        if can_write {
            let returned =
                form.filter(|f| matches!(f.which, Returned::Minutes(id) if id == a.athlete_id));
            let typed = |key: &str| returned.and_then(|f| f.values.get(key).cloned());
            let minutes = typed("minutes").unwrap_or_else(|| match exception {
                Some(p) if p.mode == "skipped" => "0".into(),
                Some(p) => p.minutes.map(|m| num(m, 0)).unwrap_or_default(),
                None => num(session.total_minutes, 0),
            });
            let portion = typed("portion")
                .or_else(|| exception.and_then(|p| p.portion.clone()))
                .unwrap_or_else(|| "from_start".into());
            let _ = write!(
                out,
                r#"<td><form method="post" action="/board/sessions/{}/minutes/{}" class="inline">
<input type="hidden" name="csrf" value="{}"><input type="hidden" name="version" value="{}">
<label class="sr" for="m-{aid}">Minutes played by {name}</label><input id="m-{aid}" name="minutes" inputmode="numeric" size="4" value="{}">
<label class="sr" for="p-{aid}">Which part {name} played</label><select id="p-{aid}" name="portion"><option value="from_start"{}>from the start</option><option value="until_end"{}>until the end</option></select>
<button type="submit" class="small">Save</button></form></td>"#,
                session.id,
                a.athlete_id,
                esc(&user.csrf),
                exception.map(|p| p.version.to_string()).unwrap_or_default(),
                esc(&minutes),
                if portion == "from_start" {
                    " selected"
                } else {
                    ""
                },
                if portion == "until_end" {
                    " selected"
                } else {
                    ""
                },
                aid = a.athlete_id,
                name = esc(&a.display_name),
            );
        }
        out.push_str("</tr>");
    }
    out.push_str("</tbody></table></div>");
    if can_write {
        let _ = write!(
            out,
            r#"<p class="muted small">Minutes played: 0 records that the athlete skipped the session; the full {} minutes returns them to full part.</p>"#,
            num(session.total_minutes, 0)
        );
    }
    out.push_str("</section>");
    super::squad::cautions(&mut out, &fuel.cautions);
    out
}

async fn session_for_write(
    board: &Board,
    user: &SignedIn,
    id: Uuid,
) -> Result<view::Session, ApiFailure> {
    board
        .api
        .get::<view::Session>(user.caller, &format!("/v1/sessions/{id}"))
        .await
        .map(|(s, _)| s)
}

pub async fn move_session(
    State(board): State<Board>,
    user: SignedIn,
    headers: HeaderMap,
    Path(id): Path<String>,
    body: Bytes,
) -> Response {
    let id = match path_id(&id, "session", &user) {
        Ok(id) => id,
        Err(r) => return r,
    };
    let fields: HashMap<String, String> = form_fields(&body).into_iter().collect();
    if let Err(refused) = auth::check_post(&headers, &user, fields.get("csrf").map(String::as_str))
    {
        return refused;
    }
    let again = |notice: String, errors: Vec<view::FieldError>, status: StatusCode| {
        let form = SessionForm {
            which: Returned::Move,
            values: fields.clone(),
            notice,
            errors,
        };
        let board = board.clone();
        let user = &user;
        async move { render_page(&board, user, id, Some(form), status).await }
    };
    let session = match session_for_write(&board, &user, id).await {
        Ok(s) => s,
        Err(f) => return fail(Some(&user), f),
    };
    let date = fields
        .get("local_date")
        .map(|s| s.trim().to_owned())
        .unwrap_or_default();
    let time = fields
        .get("start_time")
        .map(|s| s.trim().to_owned())
        .unwrap_or_default();
    let new_date = date.parse::<NaiveDate>().unwrap_or(session.local_date);
    let span = weeks_covering(session.local_date, new_date);
    let before = match version_before(&board, &user, session.team_id, span).await {
        Ok(v) => v,
        Err(ApiFailure::Refused(StatusCode::BAD_REQUEST | StatusCode::UNPROCESSABLE_ENTITY, p)) => {
            return again(
                format!("The session was not moved: {}", p.detail),
                p.errors,
                StatusCode::UNPROCESSABLE_ENTITY,
            )
            .await;
        }
        Err(f) => return fail(Some(&user), f),
    };
    let if_match = fields
        .get("version")
        .and_then(|v| v.parse::<i64>().ok())
        .map(|v| format!("\"v{v}\""));
    let patch = serde_json::json!({"local_date": date, "start_time": time});
    match board
        .api
        .send(
            user.caller,
            Method::PATCH,
            &format!("/v1/sessions/{id}"),
            if_match.as_deref(),
            Some(patch),
            "application/merge-patch+json",
        )
        .await
    {
        Ok(_) => {
            let done = format!(
                "Moving {} to {} {}",
                session.title,
                view::short_date(new_date),
                time
            );
            Redirect::to(&changes_url(session.team_id, before, span, &done)).into_response()
        }
        Err(ApiFailure::Refused(StatusCode::PRECONDITION_FAILED, _)) => {
            again(
                format!(
                    "Someone else changed this session after you opened the page, so it was not moved. It is now on {} at {}. Your date and time are kept in the form: press Move session again to apply them to the current version.",
                    view::short_date(session.local_date),
                    session.start_time
                ),
                Vec::new(),
                StatusCode::PRECONDITION_FAILED,
            )
            .await
        }
        Err(ApiFailure::Refused(s, p)) if s == StatusCode::UNPROCESSABLE_ENTITY || s == StatusCode::BAD_REQUEST => {
            again(format!("The session was not moved: {}", p.detail), p.errors, s).await
        }
        Err(f) => fail(Some(&user), f),
    }
}

pub async fn minutes_played(
    State(board): State<Board>,
    user: SignedIn,
    headers: HeaderMap,
    Path((id, athlete_id)): Path<(String, String)>,
    body: Bytes,
) -> Response {
    let id = match path_id(&id, "session", &user) {
        Ok(id) => id,
        Err(r) => return r,
    };
    let athlete_id = match path_id(&athlete_id, "athlete", &user) {
        Ok(id) => id,
        Err(r) => return r,
    };
    let fields: HashMap<String, String> = form_fields(&body).into_iter().collect();
    if let Err(refused) = auth::check_post(&headers, &user, fields.get("csrf").map(String::as_str))
    {
        return refused;
    }
    let again = |notice: String, errors: Vec<view::FieldError>, status: StatusCode| {
        let form = SessionForm {
            which: Returned::Minutes(athlete_id),
            values: fields.clone(),
            notice,
            errors,
        };
        let board = board.clone();
        let user = &user;
        async move { render_page(&board, user, id, Some(form), status).await }
    };
    let minutes = match super::athlete::parse_number(&fields, "minutes") {
        Ok(Some(m)) if m >= 0.0 => m,
        Ok(_) => {
            return again(
                "Minutes played were not saved.".into(),
                vec![view::FieldError {
                    field: "minutes".into(),
                    reason: "give the minutes played, 0 or more".into(),
                }],
                StatusCode::UNPROCESSABLE_ENTITY,
            )
            .await;
        }
        Err(reason) => {
            return again(
                "Minutes played were not saved.".into(),
                vec![view::FieldError {
                    field: "minutes".into(),
                    reason,
                }],
                StatusCode::UNPROCESSABLE_ENTITY,
            )
            .await;
        }
    };
    let session = match session_for_write(&board, &user, id).await {
        Ok(s) => s,
        Err(f) => return fail(Some(&user), f),
    };
    let span = weeks_covering(session.local_date, session.local_date);
    let before = match version_before(&board, &user, session.team_id, span).await {
        Ok(v) => v,
        Err(f) => return fail(Some(&user), f),
    };
    let version = fields.get("version").and_then(|v| v.parse::<i64>().ok());
    let if_match = version.map(|v| format!("\"v{v}\""));
    let uri = format!("/v1/sessions/{id}/participation/{athlete_id}");
    let portion = match fields.get("portion").map(String::as_str) {
        Some("until_end") => "until_end",
        _ => "from_start",
    };
    let full = minutes >= session.total_minutes;
    let result = if full {
        if version.is_none() {
            // Already taking full part: nothing to change.
            return again(
                "Nothing to change: the athlete already takes full part.".into(),
                Vec::new(),
                StatusCode::OK,
            )
            .await;
        }
        board
            .api
            .send(
                user.caller,
                Method::DELETE,
                &uri,
                if_match.as_deref(),
                None,
                "application/json",
            )
            .await
    } else {
        let body = if minutes == 0.0 {
            serde_json::json!({"mode": "skipped", "note": "recorded on the board"})
        } else {
            serde_json::json!({"mode": "shortened", "minutes": minutes, "portion": portion, "note": "minutes played, recorded on the board"})
        };
        board
            .api
            .send(
                user.caller,
                Method::PUT,
                &uri,
                if_match.as_deref(),
                Some(body),
                "application/json",
            )
            .await
    };
    match result {
        Ok(_) => {
            let done = format!(
                "Minutes played ({}) in {}",
                num(minutes, 0),
                session.title
            );
            Redirect::to(&changes_url(session.team_id, before, span, &done)).into_response()
        }
        Err(ApiFailure::Refused(StatusCode::PRECONDITION_FAILED | StatusCode::NOT_FOUND, _)) => {
            again(
                "Someone else changed this athlete's participation after you opened the page, so your entry was not saved. The table shows the current state; your entry is kept in the form: press Save again to apply it.".into(),
                Vec::new(),
                StatusCode::PRECONDITION_FAILED,
            )
            .await
        }
        Err(ApiFailure::Refused(s, p)) if s == StatusCode::UNPROCESSABLE_ENTITY || s == StatusCode::BAD_REQUEST => {
            again(format!("Minutes played were not saved: {}", p.detail), p.errors, s).await
        }
        Err(f) => fail(Some(&user), f),
    }
}
