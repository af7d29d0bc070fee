//! Athlete week: glycogen through the week with sessions and alert levels,
//! each day's carbohydrate, protein, fat and energy with the reason for each
//! number, the eating occasions on a local-time line, the athlete's
//! cautions, and (for planners) the day pins.

use std::collections::HashMap;
use std::fmt::Write as _;

use axum::body::Bytes;
use axum::extract::{Path, RawQuery, State};
use axum::http::{HeaderMap, Method, StatusCode};
use axum::response::{IntoResponse, Redirect, Response};
use chrono::{Days, NaiveDate};
use uuid::Uuid;

use super::api::ApiFailure;
use super::auth::{self, SignedIn};
use super::changes::{changes_url, version_before, week_of};
use super::html::{self, esc, num, pct, words};
use super::view;
use super::{Board, enc, fail, form_fields, path_id, query_pairs, span_query, team_nav};

/// A pin form that comes back to the page: the values typed and what the
/// service said about them.
pub struct PinForm {
    pub date: NaiveDate,
    pub values: HashMap<String, String>,
    pub notice: String,
    pub errors: Vec<view::FieldError>,
}

pub async fn page(
    State(board): State<Board>,
    user: SignedIn,
    Path(athlete_id): Path<String>,
    RawQuery(q): RawQuery,
) -> Response {
    let athlete_id = match path_id(&athlete_id, "athlete", &user) {
        Ok(id) => id,
        Err(r) => return r,
    };
    let pairs = query_pairs(q.as_deref());
    render_page(
        &board,
        &user,
        athlete_id,
        &span_query(&pairs),
        None,
        StatusCode::OK,
    )
    .await
}

async fn render_page(
    board: &Board,
    user: &SignedIn,
    athlete_id: Uuid,
    span: &str,
    form: Option<PinForm>,
    status: StatusCode,
) -> Response {
    let (athlete, plan) = tokio::join!(
        board
            .api
            .get::<view::Athlete>(user.caller, &format!("/v1/athletes/{athlete_id}")),
        board.api.get::<view::AthletePlan>(
            user.caller,
            &format!("/v1/athletes/{athlete_id}/plan?include_glycogen_series=true&{span}")
        )
    );
    let athlete = match athlete {
        Ok((a, _)) => a,
        Err(f) => return fail(Some(user), f),
    };
    let plan = match plan {
        Ok((p, _)) => Some(p),
        // Archived athletes are not planned (409): the page still shows them.
        Err(ApiFailure::Refused(StatusCode::CONFLICT, _)) => None,
        Err(f) => return fail(Some(user), f),
    };
    let week_plan = plan.as_ref().and_then(|p| p.plan.as_ref());
    let span_dates = week_plan.map(|p| (p.from, p.to));
    let (team, pins) = tokio::join!(
        board
            .api
            .get::<view::Team>(user.caller, &format!("/v1/teams/{}", athlete.team_id)),
        async {
            match span_dates {
                Some((from, to)) => {
                    super::all_pages::<view::Pin>(
                        &board.api,
                        user,
                        format!("/v1/athletes/{athlete_id}/pins?from={from}&to={to}"),
                    )
                    .await
                }
                None => Ok(Vec::new()),
            }
        }
    );
    let (team, pins) = match (team, pins) {
        (Ok((t, _)), Ok(p)) => (t, p),
        (Err(f), _) | (_, Err(f)) => return fail(Some(user), f),
    };
    let week = span_dates.map_or_else(String::new, |(from, _)| view::iso_week(from));
    let body = render(
        user,
        &team,
        &athlete,
        plan.as_ref(),
        &pins,
        &week,
        form.as_ref(),
    );
    html::respond(
        status,
        html::page(
            &format!("{} · week {week}", athlete.display_name),
            Some(&user.viewer()),
            &team_nav(athlete.team_id, &week, ""),
            &body,
        ),
    )
}

fn render(
    user: &SignedIn,
    team: &view::Team,
    athlete: &view::Athlete,
    plan: Option<&view::AthletePlan>,
    pins: &[view::Pin],
    week: &str,
    form: Option<&PinForm>,
) -> String {
    let mut out = String::with_capacity(128 * 1024);
    let week_plan = plan.and_then(|p| p.plan.as_ref());
    let _ = write!(
        out,
        r#"<p class="crumbs"><a href="/board/teams/{}?week={}">{}</a> › athlete</p><h1>{} <span class="muted">week {}</span></h1><p class="meta">{}{} · times local to {}</p>"#,
        team.id,
        enc(week),
        esc(&team.name),
        esc(&athlete.display_name),
        esc(week),
        athlete
            .position_group
            .as_deref()
            .map(|p| format!("{} · ", esc(p)))
            .unwrap_or_default(),
        athlete
            .latest_body_mass
            .as_ref()
            .map(|b| format!("{} kg on {}", num(b.body_mass_kg, 1), b.measured_on))
            .unwrap_or_else(|| "no body-mass reading".into()),
        esc(&team.time_zone)
    );
    if let Some(p) = week_plan {
        let prev = view::iso_week(p.from - Days::new(7));
        let next = view::iso_week(p.from + Days::new(7));
        let _ = write!(
            out,
            r#"<nav aria-label="Weeks" class="weeks"><a href="?week={prev}">← {prev}</a><a href="?week={next}">{next} →</a></nav>"#
        );
    }
    // Cautions first: they decide how every number below may be used.
    let cautions = view::athlete_cautions(athlete, week_plan);
    out.push_str(r#"<aside class="cautions athlete" aria-label="Cautions for this athlete"><h2>Cautions</h2>"#);
    if cautions.is_empty() {
        out.push_str("<p>No athlete-specific cautions this week.</p>");
    } else {
        out.push_str("<ul>");
        for c in &cautions {
            let _ = write!(
                out,
                r#"<li class="caution"><strong>{}.</strong> {}</li>"#,
                esc(&c.heading),
                esc(&c.text)
            );
        }
        out.push_str("</ul>");
    }
    out.push_str("<p>All targets are estimates. Apply them with a registered (sports) dietitian, and defer to a physician and to local rules and regulations.</p>");
    if let Some(notes) = athlete.dietary_notes.as_deref().filter(|n| !n.is_empty()) {
        let _ = write!(
            out,
            r#"<p><strong>Dietary notes:</strong> {}</p>"#,
            esc(notes)
        );
    }
    out.push_str("</aside>");
    let Some(plan) = plan else {
        out.push_str(r#"<div class="notice"><p>This athlete is archived and is not planned. Set their status to active to plan them.</p></div>"#);
        return out;
    };
    let Some(wp) = plan.plan.as_ref() else {
        let _ = write!(
            out,
            r#"<div class="notice" role="alert"><p>No plan can be made for this athlete: {}</p></div>"#,
            esc(&plan.problems.join("; "))
        );
        return out;
    };
    // The week's glycogen.
    let _ = write!(
        out,
        r#"<section><h2>Estimated muscle glycogen through the week</h2><figure>{}<figcaption>{} Levels: key-session alert {} and near empty {} of normal stores.</figcaption></figure>"#,
        super::chart::glycogen_week(
            wp.from,
            wp.to,
            &wp.glycogen_series,
            &wp.days,
            &wp.thresholds
        ),
        esc(&wp.start_assumption.text),
        pct(wp.thresholds.key_session_min_muscle_fraction),
        pct(wp.thresholds.near_empty_muscle_fraction)
    );
    out.push_str(r#"<table class="list"><caption>Sessions this week (estimates)</caption><thead><tr><th scope="col">#</th><th scope="col">Session</th><th scope="col">Start</th><th scope="col">Minutes</th><th scope="col">Glycogen at start</th><th scope="col">at end</th><th scope="col">Energy, kcal</th><th scope="col">Carbohydrate used, g</th></tr></thead><tbody>"#);
    let mut n = 0;
    for day in &wp.days {
        for s in &day.sessions {
            n += 1;
            let title = match s.session_id {
                Some(id) => format!(r#"<a href="/board/sessions/{id}">{}</a>"#, esc(&s.title)),
                None => esc(&s.title).to_string(),
            };
            let _ = write!(
                out,
                r#"<tr><td>{n}</td><td>{title}{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td></tr>"#,
                if s.key {
                    r#" <span class="badge">key</span>"#
                } else {
                    ""
                },
                s.start.format("%a %H:%M"),
                num(s.fuel_summary.minutes, 0),
                pct(s.glycogen_at_start.muscle_fraction),
                pct(s.glycogen_at_end.muscle_fraction),
                num(s.fuel_summary.gross_energy_kcal, 0),
                num(s.fuel_summary.carbohydrate_g, 0)
            );
        }
    }
    if n == 0 {
        out.push_str(r#"<tr><td colspan="8">No sessions this week.</td></tr>"#);
    }
    out.push_str("</tbody></table></section>");
    let matches: Vec<NaiveDate> = wp
        .days
        .iter()
        .filter(|d| d.sessions.iter().any(|s| s.kind == "match"))
        .map(|d| d.date)
        .collect();
    for day in &wp.days {
        let pin = pins.iter().find(|p| p.local_date == day.date);
        let this_form = form.filter(|f| f.date == day.date);
        render_day(
            &mut out, user, athlete, wp, day, &matches, pin, week, this_form,
        );
    }
    super::squad::cautions(&mut out, &wp.cautions);
    out
}

#[allow(clippy::too_many_arguments)]
fn render_day(
    out: &mut String,
    user: &SignedIn,
    athlete: &view::Athlete,
    wp: &view::WeekPlan,
    day: &view::WeekDay,
    matches: &[NaiveDate],
    pin: Option<&view::Pin>,
    week: &str,
    form: Option<&PinForm>,
) {
    let p = &day.plan;
    let _ = write!(
        out,
        r#"<section class="day" id="d-{}" data-date="{}"><h2>{}{}</h2>"#,
        day.date,
        day.date,
        view::long_date(day.date),
        view::match_distance(day.date, matches)
            .map(|m| format!(r#" <span class="muted">· {}</span>"#, esc(&m)))
            .unwrap_or_default()
    );
    let pinned = |b: bool| {
        if b {
            r#" <span class="pin">pinned</span>"#
        } else {
            ""
        }
    };
    let computed = |b: bool, v: String| {
        if b {
            format!(r#" <span class="muted">(computed {v})</span>"#)
        } else {
            String::new()
        }
    };
    let _ = write!(
        out,
        r#"<dl class="figures">
<div><dt>Load band</dt><dd data-field="load_band">{}</dd></div>
<div class="s{}"><dt>Carbohydrate</dt><dd><span data-field="carbohydrate_g_per_kg">{}</span> g/kg · <span data-field="carbohydrate_g">{}</span> g{}{}</dd></div>
<div><dt>Protein</dt><dd><span data-field="protein_g_per_kg">{}</span> g/kg · <span data-field="protein_g">{}</span> g{}{}</dd></div>
<div><dt>Fat</dt><dd><span data-field="fat_g">{}</span> g · {} % of energy</dd></div>
<div><dt>Energy</dt><dd><span data-field="energy_kcal">{}</span> kcal{}{}</dd></div>
<div><dt>Energy availability</dt><dd><span data-field="energy_availability">{}</span> kcal/kg FFM · <span class="eaband {}">{}</span></dd></div>
</dl><p class="muted small">Estimates. Body mass used: {} kg. Glycogen from {} to {} of normal stores over the day.</p>"#,
        esc(&words(&p.load.band)),
        super::scale::step_of(p.carbohydrate.g_per_kg),
        num(p.carbohydrate.g_per_kg, 1),
        num(p.carbohydrate.g, 0),
        pinned(p.carbohydrate.pinned),
        computed(
            p.carbohydrate.pinned,
            format!("{} g/kg", num(p.carbohydrate.computed_g_per_kg, 1))
        ),
        num(p.protein.g_per_kg, 1),
        num(p.protein.g, 0),
        pinned(p.protein.pinned),
        computed(
            p.protein.pinned,
            format!("{} g/kg", num(p.protein.computed_g_per_kg, 1))
        ),
        num(p.fat.g, 0),
        num(p.fat.percent_of_energy, 0),
        num(p.energy.kcal, 0),
        pinned(p.energy.pinned),
        computed(
            p.energy.pinned,
            format!("{} kcal", num(p.energy.computed_kcal, 0))
        ),
        num(p.energy_availability.kcal_per_kg_fat_free_mass, 1),
        esc(&p.energy_availability.band),
        esc(&words(&p.energy_availability.band)),
        num(day.body_mass_kg, 1),
        pct(day.glycogen_at_start.muscle_fraction),
        pct(day.glycogen_at_end.muscle_fraction),
    );
    // Day and week warnings for this day.
    let week_warnings: Vec<&view::WeekWarning> =
        view::week_warnings_on(&wp.warnings, athlete.id, day.date).collect();
    let day_warnings: Vec<&view::DayWarning> = p
        .warnings
        .iter()
        .filter(|w| w.severity != "notice")
        .collect();
    if !day_warnings.is_empty() || !week_warnings.is_empty() {
        out.push_str(r#"<ul class="warnings">"#);
        for w in day_warnings {
            let _ = write!(
                out,
                r#"<li><span class="sev {}">{}</span> {}</li>"#,
                esc(&w.severity),
                esc(&w.severity),
                esc(&w.message)
            );
        }
        for w in week_warnings {
            let _ = write!(
                out,
                r#"<li><span class="sev {}">{}</span> {} <em>Fix:</em> {}</li>"#,
                esc(&w.severity),
                esc(&w.severity),
                esc(&w.cause),
                esc(&w.fix)
            );
        }
        out.push_str("</ul>");
    }
    // Why each number.
    out.push_str(r#"<details class="why" open><summary>Why these numbers</summary><dl>"#);
    for topic in [
        "load_band",
        "carbohydrate",
        "protein",
        "fat",
        "energy",
        "resting_metabolic_rate",
        "energy_availability",
    ] {
        for e in p.explanations.iter().filter(|e| e.topic == topic) {
            let _ = write!(
                out,
                r#"<dt>{}</dt><dd>{} <span class="source">{}</span></dd>"#,
                esc(&words(topic)),
                esc(&e.text),
                esc(&e.source)
            );
        }
    }
    out.push_str("</dl></details>");
    // Eating occasions.
    let _ = write!(
        out,
        r#"<h3>Eating occasions</h3><figure class="timeline">{}</figure><table class="list occasions"><thead><tr><th scope="col">#</th><th scope="col">Time</th><th scope="col">Occasion</th><th scope="col">Carbohydrate, g</th><th scope="col">Protein, g</th><th scope="col">Fat, g</th><th scope="col">kcal</th><th scope="col">Note</th></tr></thead><tbody>"#,
        super::chart::day_timeline(day, &format!("tl-{}", day.date))
    );
    for (i, o) in p.eating_occasions.iter().enumerate() {
        let mut what = words(&o.kind);
        if let Some(also) = &o.also_serves_as {
            what.push_str(&format!(" (also {})", words(also)));
        }
        if let Some(s) = &o.session {
            what.push_str(&format!(" · {}", s.title));
        }
        let _ = write!(
            out,
            r#"<tr><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td></tr>"#,
            i + 1,
            o.time.format("%H:%M"),
            esc(&what),
            num(o.carbohydrate_g, 0),
            num(o.protein_g, 0),
            num(o.fat_g, 0),
            num(o.energy_kcal, 0),
            esc(&o.note)
        );
    }
    out.push_str("</tbody></table>");
    if user.viewer().can_write() {
        pin_form(out, user, athlete.id, day.date, pin, week, form);
    } else if let Some(pin) = pin {
        let _ = write!(
            out,
            r#"<p class="muted">Pinned by a dietitian{}.</p>"#,
            pin.note
                .as_deref()
                .map(|n| format!(": {}", esc(n)))
                .unwrap_or_default()
        );
    }
    out.push_str("</section>");
}

fn pin_form(
    out: &mut String,
    user: &SignedIn,
    athlete_id: Uuid,
    date: NaiveDate,
    pin: Option<&view::Pin>,
    week: &str,
    form: Option<&PinForm>,
) {
    let stored = |f: Option<f64>| f.map(|v| format!("{v}")).unwrap_or_default();
    let value = |key: &str, from_pin: String| -> String {
        form.and_then(|f| f.values.get(key).cloned())
            .unwrap_or(from_pin)
    };
    let carbohydrate = value(
        "carbohydrate_g_per_kg",
        stored(pin.and_then(|p| p.carbohydrate_g_per_kg)),
    );
    let protein = value(
        "protein_g_per_kg",
        stored(pin.and_then(|p| p.protein_g_per_kg)),
    );
    let energy = value("energy_kcal", stored(pin.and_then(|p| p.energy_kcal)));
    let note = value("note", pin.and_then(|p| p.note.clone()).unwrap_or_default());
    let d = date;
    let _ = write!(
        out,
        r#"<details class="adjust"{}><summary>Pin this day's targets{}</summary>"#,
        if form.is_some() { " open" } else { "" },
        if pin.is_some() { " (pinned)" } else { "" }
    );
    if let Some(f) = form {
        let _ = write!(
            out,
            r#"<div class="notice error" role="alert" id="pin-msg-{d}"><p>{}</p>"#,
            esc(&f.notice)
        );
        if !f.errors.is_empty() {
            out.push_str("<ul>");
            for e in &f.errors {
                let _ = write!(
                    out,
                    "<li>{}: {}</li>",
                    esc(&words(if e.field.is_empty() { "pin" } else { &e.field })),
                    esc(&e.reason)
                );
            }
            out.push_str("</ul>");
        }
        out.push_str("</div>");
    }
    let _ = write!(
        out,
        r#"<form method="post" action="/board/athletes/{athlete_id}/pins/{d}" class="row">
<input type="hidden" name="csrf" value="{csrf}"><input type="hidden" name="version" value="{version}"><input type="hidden" name="week" value="{week}">
<label>Carbohydrate, g/kg <input name="carbohydrate_g_per_kg" inputmode="decimal" size="5" value="{carbohydrate}"></label>
<label>Protein, g/kg <input name="protein_g_per_kg" inputmode="decimal" size="5" value="{protein}"></label>
<label>Energy, kcal <input name="energy_kcal" inputmode="numeric" size="6" value="{energy}"></label>
<label>Note <input name="note" size="24" maxlength="500" value="{note}"></label>
<button type="submit" name="action" value="set">Set pin</button>{clear}
</form><p class="muted small">A pin fixes the day's value; the plan shows the computed value beside it and warns when a pin lies outside the published range.</p></details>"#,
        csrf = esc(&user.csrf),
        version = pin.map(|p| p.version.to_string()).unwrap_or_default(),
        week = esc(week),
        carbohydrate = esc(&carbohydrate),
        protein = esc(&protein),
        energy = esc(&energy),
        note = esc(&note),
        clear = if pin.is_some() {
            r#" <button type="submit" name="action" value="clear" class="quiet">Clear pin</button>"#
        } else {
            ""
        },
    );
}

/// A number typed in a form: empty means "not set".
pub fn parse_number(fields: &HashMap<String, String>, key: &str) -> Result<Option<f64>, String> {
    match fields.get(key).map(|v| v.trim()).filter(|v| !v.is_empty()) {
        None => Ok(None),
        Some(v) => v
            .replace(',', ".")
            .parse::<f64>()
            .ok()
            .filter(|x| x.is_finite())
            .map(Some)
            .ok_or_else(|| format!("“{v}” is not a number")),
    }
}

pub async fn pin(
    State(board): State<Board>,
    user: SignedIn,
    headers: HeaderMap,
    Path((athlete_id, date)): Path<(String, String)>,
    body: Bytes,
) -> Response {
    let athlete_id = match path_id(&athlete_id, "athlete", &user) {
        Ok(id) => id,
        Err(r) => return r,
    };
    let Ok(date) = date.parse::<NaiveDate>() else {
        return html::message_page(
            StatusCode::NOT_FOUND,
            "Not found",
            "That address does not name a date.",
            Some(&user.viewer()),
        );
    };
    let fields: HashMap<String, String> = form_fields(&body).into_iter().collect();
    if let Err(refused) = auth::check_post(&headers, &user, fields.get("csrf").map(String::as_str))
    {
        return refused;
    }
    let week = fields.get("week").cloned().unwrap_or_default();
    let span = if week.is_empty() {
        String::new()
    } else {
        format!("week={}", enc(&week))
    };
    let again = |notice: String, errors: Vec<view::FieldError>, status: StatusCode| {
        let board = board.clone();
        let fields = fields.clone();
        let span = span.clone();
        let user = &user;
        async move {
            let form = PinForm {
                date,
                values: fields,
                notice,
                errors,
            };
            render_page(&board, user, athlete_id, &span, Some(form), status).await
        }
    };
    let clear = fields.get("action").map(String::as_str) == Some("clear");
    let mut errors = Vec::new();
    let mut number = |key: &str| match parse_number(&fields, key) {
        Ok(v) => v,
        Err(reason) => {
            errors.push(view::FieldError {
                field: key.to_owned(),
                reason,
            });
            None
        }
    };
    let carbohydrate = number("carbohydrate_g_per_kg");
    let protein = number("protein_g_per_kg");
    let energy = number("energy_kcal");
    if !errors.is_empty() && !clear {
        return again(
            "The pin was not saved: check the values below.".into(),
            errors,
            StatusCode::UNPROCESSABLE_ENTITY,
        )
        .await;
    }
    let athlete = match board
        .api
        .get::<view::Athlete>(user.caller, &format!("/v1/athletes/{athlete_id}"))
        .await
    {
        Ok((a, _)) => a,
        Err(f) => return fail(Some(&user), f),
    };
    let change_span = week_of(date);
    let before = match version_before(&board, &user, athlete.team_id, change_span).await {
        Ok(v) => v,
        Err(f) => return fail(Some(&user), f),
    };
    let if_match = fields
        .get("version")
        .and_then(|v| v.parse::<i64>().ok())
        .map(|v| format!("\"v{v}\""));
    let uri = format!("/v1/athletes/{athlete_id}/pins/{date}");
    let result = if clear {
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
        let note = fields
            .get("note")
            .map(|n| n.trim())
            .filter(|n| !n.is_empty());
        let body = serde_json::json!({
            "carbohydrate_g_per_kg": carbohydrate,
            "protein_g_per_kg": protein,
            "energy_kcal": energy,
            "note": note,
        });
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
                "{} for {} on {}",
                if clear { "Clearing the pin" } else { "The pin" },
                athlete.display_name,
                view::short_date(date)
            );
            Redirect::to(&changes_url(athlete.team_id, before, change_span, &done)).into_response()
        }
        Err(ApiFailure::Refused(StatusCode::PRECONDITION_FAILED, _)) => {
            again(
                "Someone else changed this day's pin after you opened the page, so your change was not saved. The page now shows the current plan; your values are kept in the form. Press the button again to apply them over the current pin.".into(),
                Vec::new(),
                StatusCode::PRECONDITION_FAILED,
            )
            .await
        }
        Err(ApiFailure::Refused(StatusCode::NOT_FOUND, _)) if clear => {
            again(
                "There was no pin to clear on this day (someone may have cleared it already). Nothing was changed.".into(),
                Vec::new(),
                StatusCode::CONFLICT,
            )
            .await
        }
        Err(ApiFailure::Refused(s, p)) if s == StatusCode::UNPROCESSABLE_ENTITY || s == StatusCode::BAD_REQUEST => {
            again(
                format!("The pin was not saved: {}", p.detail),
                p.errors,
                s,
            )
            .await
        }
        Err(f) => fail(Some(&user), f),
    }
}
