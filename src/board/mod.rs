//! The squad board: web pages served by the binary itself, where a
//! dietitian signs in, sees the squad's week, an athlete's week, a
//! session's fuel mix and a printable kitchen sheet, and adjusts the week.
//!
//! A tour:
//! - [`auth`]: sign-in sessions (HttpOnly SameSite cookie, server-side,
//!   hashed), CSRF tokens and the same-origin check on every POST;
//! - [`api`]: the board reads and writes by sending requests to the API's
//!   own router in-process, as the signed-in token, so the same handlers,
//!   validation, audit and ETag rules apply and the numbers are the API's;
//! - [`view`]: the only place that knows the API's JSON shapes;
//! - [`html`], [`chart`], [`scale`]: escaping and the page frame, inline SVG
//!   charts, and the colour scale;
//! - one module per view: [`signin`], [`squad`], [`athlete`], [`session`],
//!   [`kitchen`], [`changes`].
//!
//! Pages are plain server-rendered HTML with inline SVG; the one small
//! script only adds a print button. Assets are compiled into the binary.

pub mod api;
pub mod athlete;
pub mod auth;
pub mod changes;
pub mod chart;
pub mod html;
pub mod kitchen;
pub mod scale;
pub mod session;
pub mod signin;
pub mod squad;
pub mod view;

use std::sync::Arc;
use std::time::Duration;

use axum::Router;
use axum::extract::{DefaultBodyLimit, State};
use axum::http::{HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Redirect, Response};
use axum::routing::{get, post};
use tower_http::catch_panic::CatchPanicLayer;
use tower_http::limit::RequestBodyLimitLayer;
use tower_http::timeout::TimeoutLayer;
use uuid::Uuid;

use crate::AppState;
use crate::http::middleware::RateLimiter;
use api::{Api, ApiFailure};
use auth::SignedIn;
use html::{Viewer, esc};

/// Largest form the board accepts.
const FORM_LIMIT_BYTES: usize = 64 * 1024;

/// State of the board's routes.
#[derive(Clone)]
pub struct Board {
    pub app: AppState,
    pub api: Api,
    /// Sign-in attempts per client address (tokens are not guessable, but
    /// a flood of attempts should not reach the database).
    pub sign_in_limiter: Arc<RateLimiter>,
}

/// The board's routes, with their own limits and HTML error pages.
pub fn router(state: AppState) -> Router {
    let (api, _) = crate::http::api_router().split_for_parts();
    let board = Board {
        api: Api::new(api.with_state(state.clone())),
        sign_in_limiter: Arc::new(RateLimiter::new(30)),
        app: state.clone(),
    };
    let timeout = Duration::from_secs(state.config.request_timeout_secs);
    Router::new()
        .route("/", get(|| async { Redirect::to("/board") }))
        .route("/board", get(home))
        .route("/board/", get(home))
        .route("/board/sign-in", get(signin::form).post(signin::submit))
        .route("/board/sign-out", post(signin::sign_out))
        .route("/board/assets/board.css", get(css))
        .route("/board/assets/scale.css", get(scale_css))
        .route("/board/assets/board.js", get(js))
        .route("/board/teams/{team_id}", get(squad::page))
        .route("/board/teams/{team_id}/kitchen", get(kitchen::page))
        .route("/board/teams/{team_id}/changes", get(changes::page))
        .route("/board/athletes/{athlete_id}", get(athlete::page))
        .route("/board/athletes/{athlete_id}/pins/{date}", post(athlete::pin))
        .route("/board/sessions/{session_id}", get(session::page))
        .route("/board/sessions/{session_id}/move", post(session::move_session))
        .route(
            "/board/sessions/{session_id}/minutes/{athlete_id}",
            post(session::minutes_played),
        )
        .route("/board/{*rest}", get(not_found).post(not_found))
        .with_state(board)
        .layer(DefaultBodyLimit::max(FORM_LIMIT_BYTES))
        .layer(RequestBodyLimitLayer::new(FORM_LIMIT_BYTES))
        .layer(TimeoutLayer::with_status_code(
            StatusCode::REQUEST_TIMEOUT,
            timeout,
        ))
        .layer(CatchPanicLayer::custom(|_| {
            html::message_page(
                StatusCode::INTERNAL_SERVER_ERROR,
                "Something went wrong",
                "The board hit an internal error; nothing was half-changed. Try again, and tell your administrator if it happens again.",
                None,
            )
        }))
}

/// `/board`: straight to the squad for a team token; a list for an administrator.
async fn home(State(board): State<Board>, user: SignedIn) -> Response {
    if let (Some(team), false) = (user.caller.team_id, user.caller.is_admin()) {
        return Redirect::to(&format!("/board/teams/{team}")).into_response();
    }
    let teams: Vec<view::Team> = match all_pages(&board.api, &user, "/v1/teams").await {
        Ok(t) => t,
        Err(f) => return fail(Some(&user), f),
    };
    let mut body = String::from("<h1>Squads</h1><ul class=\"teams\">");
    for t in &teams {
        body.push_str(&format!(
            r#"<li><a href="/board/teams/{}">{}</a> <span class="muted">({})</span></li>"#,
            t.id,
            esc(&t.name),
            esc(&t.time_zone)
        ));
    }
    if teams.is_empty() {
        body.push_str("<li>No squads yet. Create one through the API.</li>");
    }
    body.push_str("</ul>");
    html::respond(
        StatusCode::OK,
        html::page("Squads", Some(&user.viewer()), &[], &body),
    )
}

async fn not_found() -> Response {
    html::message_page(
        StatusCode::NOT_FOUND,
        "Not found",
        "There is no board page at this address.",
        None,
    )
}

fn asset(content_type: &'static str, body: impl Into<axum::body::Body>) -> Response {
    let mut res = Response::new(body.into());
    let h = res.headers_mut();
    h.insert(header::CONTENT_TYPE, HeaderValue::from_static(content_type));
    // The URL carries the build version, so a new build is a new URL.
    h.insert(
        header::CACHE_CONTROL,
        HeaderValue::from_static("public, max-age=86400"),
    );
    h.insert(
        header::X_CONTENT_TYPE_OPTIONS,
        HeaderValue::from_static("nosniff"),
    );
    res
}

async fn css() -> Response {
    asset("text/css; charset=utf-8", include_str!("assets/board.css"))
}

async fn scale_css() -> Response {
    asset("text/css; charset=utf-8", scale::stylesheet())
}

async fn js() -> Response {
    asset(
        "text/javascript; charset=utf-8",
        include_str!("assets/board.js"),
    )
}

/// Every page of a list endpoint (`uri` without query, or with one).
pub async fn all_pages<T: serde::de::DeserializeOwned>(
    api: &Api,
    user: &SignedIn,
    uri: impl Into<String>,
) -> Result<Vec<T>, ApiFailure> {
    let uri: String = uri.into();
    let sep = if uri.contains('?') { '&' } else { '?' };
    let mut items = Vec::new();
    let mut cursor: Option<String> = None;
    // Bounded: 50 pages of 200 is far beyond a squad.
    for _ in 0..50 {
        let page_uri = match &cursor {
            None => format!("{uri}{sep}limit=200"),
            Some(c) => format!("{uri}{sep}limit=200&cursor={}", enc(c)),
        };
        let (page, _): (view::Page<T>, _) = api.get(user.caller, page_uri).await?;
        items.extend(page.items);
        match page.next_cursor {
            Some(c) => cursor = Some(c),
            None => break,
        }
    }
    Ok(items)
}

/// Percent-encodes a query value.
pub fn enc(s: &str) -> String {
    form_urlencoded::byte_serialize(s.as_bytes()).collect()
}

/// The query string's pairs.
pub fn query_pairs(raw: Option<&str>) -> Vec<(String, String)> {
    form_urlencoded::parse(raw.unwrap_or("").as_bytes())
        .map(|(k, v)| (k.into_owned(), v.into_owned()))
        .collect()
}

pub fn query_value<'a>(pairs: &'a [(String, String)], key: &str) -> Option<&'a str> {
    pairs
        .iter()
        .find(|(k, _)| k == key)
        .map(|(_, v)| v.as_str())
        .filter(|v| !v.is_empty())
}

/// The span part of an API plan query, from the board's own query:
/// `week=2026-W50` passes through (the API validates it).
pub fn span_query(pairs: &[(String, String)]) -> String {
    match query_value(pairs, "week") {
        Some(w) => format!("week={}", enc(w)),
        None => String::new(),
    }
}

/// An id from the path, or a clear page.
#[allow(clippy::result_large_err)]
pub fn path_id(raw: &str, what: &str, user: &SignedIn) -> Result<Uuid, Response> {
    Uuid::parse_str(raw).map_err(|_| {
        html::message_page(
            StatusCode::NOT_FOUND,
            "Not found",
            &format!("That address does not name a {what}."),
            Some(&user.viewer()),
        )
    })
}

/// A form body's fields.
pub fn form_fields(body: &[u8]) -> Vec<(String, String)> {
    form_urlencoded::parse(body)
        .map(|(k, v)| (k.into_owned(), v.into_owned()))
        .collect()
}

/// A page for an API refusal the view cannot handle itself.
pub fn fail(user: Option<&SignedIn>, failure: ApiFailure) -> Response {
    let viewer: Option<Viewer<'_>> = user.map(SignedIn::viewer);
    let status = failure.status();
    let (title, text) = match &failure {
        ApiFailure::Refused(StatusCode::NOT_FOUND, _) => (
            "Not found".to_owned(),
            "This does not exist, or your token may not see it.".to_owned(),
        ),
        ApiFailure::Refused(StatusCode::FORBIDDEN, p) => (
            "Not allowed".to_owned(),
            format!("{} Nothing was changed.", p.detail),
        ),
        ApiFailure::Refused(StatusCode::SERVICE_UNAVAILABLE, _) => (
            "Busy".to_owned(),
            "The database is busy or out of space. Nothing was lost; try again in a moment.".to_owned(),
        ),
        ApiFailure::Refused(_, p) => {
            let mut text = p.detail.clone();
            for e in &p.errors {
                text.push_str(&format!(" {}: {}.", e.field, e.reason));
            }
            (p.title.clone(), text)
        }
        ApiFailure::Unreadable(_) => (
            "Something went wrong".to_owned(),
            "The board could not read the service's answer. Nothing was changed. Tell your administrator.".to_owned(),
        ),
    };
    html::message_page(status, &title, &text, viewer.as_ref())
}

/// The header links of a team's pages.
pub fn team_nav(team: Uuid, week: &str, current: &str) -> Vec<(&'static str, String, bool)> {
    let q = if week.is_empty() {
        String::new()
    } else {
        format!("?week={}", enc(week))
    };
    vec![
        (
            "Squad week",
            format!("/board/teams/{team}{q}"),
            current == "squad",
        ),
        (
            "Kitchen sheet",
            format!("/board/teams/{team}/kitchen{q}"),
            current == "kitchen",
        ),
    ]
}
