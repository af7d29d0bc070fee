//! The sign-in page: a token is exchanged for a board session.

use axum::body::Bytes;
use axum::body::to_bytes;
use axum::extract::{ConnectInfo, RawQuery, Request, State};
use axum::http::{HeaderMap, HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Redirect, Response};
use sha2::{Digest, Sha256};

use super::auth::{self, SignedIn};
use super::html::{self, esc};
use super::{Board, form_fields, query_pairs, query_value};
use crate::store::{board_sessions, tokens};

/// Only board paths are followed after sign-in (no open redirect, and
/// nothing a Location header cannot carry).
fn safe_next(next: Option<&str>) -> &str {
    match next {
        Some(n)
            if n.starts_with("/board/")
                && !n.contains('\\')
                && n.len() <= 2048
                && n.bytes().all(|b| b.is_ascii_graphic()) =>
        {
            n
        }
        _ => "/board",
    }
}

fn form_page(status: StatusCode, next: &str, message: Option<&str>) -> Response {
    let mut body = String::from(
        r#"<div class="signin"><h1>Sign in to the squad board</h1>
<p>Paste an API token of your squad. A <strong>planner</strong> token can adjust the week; a <strong>reader</strong> token can look but not change. The token is exchanged for a session on this server and is not kept in the browser.</p>"#,
    );
    if let Some(m) = message {
        body.push_str(&format!(
            r#"<div class="notice error" role="alert"><p>{}</p></div>"#,
            esc(m)
        ));
    }
    body.push_str(&format!(
        r#"<form method="post" action="/board/sign-in" class="stack">
<input type="hidden" name="next" value="{}">
<label for="token">API token</label>
<input id="token" name="token" type="password" autocomplete="off" required maxlength="256" spellcheck="false">
<button type="submit">Sign in</button>
</form>
<p class="muted">Lost the token? An administrator can create one with <code>glycoweek token create</code>.</p></div>"#,
        esc(next)
    ));
    html::respond(status, html::page("Sign in", None, &[], &body))
}

pub async fn form(RawQuery(q): RawQuery) -> Response {
    let pairs = query_pairs(q.as_deref());
    form_page(StatusCode::OK, safe_next(query_value(&pairs, "next")), None)
}

pub async fn submit(State(board): State<Board>, req: Request) -> Response {
    let peer = req
        .extensions()
        .get::<ConnectInfo<std::net::SocketAddr>>()
        .map(|c| c.0.ip().to_string())
        .unwrap_or_default();
    let headers = req.headers().clone();
    let Ok(body) = to_bytes(req.into_body(), super::FORM_LIMIT_BYTES).await else {
        return form_page(
            StatusCode::PAYLOAD_TOO_LARGE,
            "/board",
            Some("The form was too large."),
        );
    };
    let fields = form_fields(&body);
    let get = |k: &str| {
        fields
            .iter()
            .find(|(n, _)| n == k)
            .map(|(_, v)| v.trim().to_owned())
    };
    let next = get("next");
    let next = safe_next(next.as_deref()).to_owned();
    if !auth::same_origin(&headers) {
        return form_page(
            StatusCode::FORBIDDEN,
            &next,
            Some("This sign-in did not come from the board's own page, so it was refused."),
        );
    }
    let key: [u8; 32] = Sha256::digest(format!("board sign-in {peer}").as_bytes()).into();
    if board
        .sign_in_limiter
        .check(key, std::time::Instant::now())
        .is_err()
    {
        return form_page(
            StatusCode::TOO_MANY_REQUESTS,
            &next,
            Some("Too many sign-in attempts from this address. Wait a minute and try again."),
        );
    }
    let token = get("token").unwrap_or_default();
    if token.is_empty() || token.len() > 256 {
        return form_page(
            StatusCode::UNPROCESSABLE_ENTITY,
            &next,
            Some("Paste the whole API token (it starts with gwk_)."),
        );
    }
    let info = match tokens::authenticate(&board.app.db, &token).await {
        Ok(Some(info)) => info,
        Ok(None) => {
            return form_page(
                StatusCode::UNAUTHORIZED,
                &next,
                Some("That token is not valid, or it has been revoked."),
            );
        }
        Err(e) => {
            tracing::warn!(error = %e, "board sign-in: token lookup failed");
            return form_page(
                StatusCode::SERVICE_UNAVAILABLE,
                &next,
                Some("The database did not answer. Try again in a moment."),
            );
        }
    };
    let hours = board.app.config.board_session_hours;
    let expires = chrono::Utc::now() + chrono::Duration::hours(i64::from(hours));
    let secret = match board_sessions::create(&board.app.db, info.id, expires).await {
        Ok(s) => s,
        Err(e) => {
            tracing::warn!(error = %e, "board sign-in: session not stored");
            return form_page(
                StatusCode::SERVICE_UNAVAILABLE,
                &next,
                Some(
                    "The sign-in could not be stored (the database is busy or read-only). Try again in a moment.",
                ),
            );
        }
    };
    tracing::info!(token_id = %info.id, "board sign-in");
    let secure = board.app.config.board_secure_cookie;
    let mut res = Redirect::to(&next).into_response();
    res.headers_mut().insert(
        header::SET_COOKIE,
        auth::session_cookie(&secret, secure, u64::from(hours) * 3600),
    );
    res.headers_mut()
        .insert(header::CACHE_CONTROL, HeaderValue::from_static("no-store"));
    res
}

pub async fn sign_out(
    State(board): State<Board>,
    headers: HeaderMap,
    user: SignedIn,
    body: Bytes,
) -> Response {
    let fields = form_fields(&body);
    let csrf = fields
        .iter()
        .find(|(k, _)| k == "csrf")
        .map(|(_, v)| v.as_str());
    if let Err(refused) = auth::check_post(&headers, &user, csrf) {
        return refused;
    }
    if let Err(e) = board_sessions::delete(&board.app.db, &user.secret).await {
        tracing::warn!(error = %e, "board sign-out: session not deleted");
        return html::message_page(
            StatusCode::SERVICE_UNAVAILABLE,
            "Busy",
            "The sign-out could not be stored. Try again in a moment.",
            Some(&user.viewer()),
        );
    }
    let mut res = Redirect::to("/board/sign-in").into_response();
    res.headers_mut().insert(
        header::SET_COOKIE,
        auth::cleared_cookie(board.app.config.board_secure_cookie),
    );
    res
}

#[cfg(test)]
mod tests {
    use super::safe_next;

    #[test]
    fn only_plain_board_paths_are_followed_after_sign_in() {
        assert_eq!(
            safe_next(Some("/board/teams/x?week=2026-W50")),
            "/board/teams/x?week=2026-W50"
        );
        assert_eq!(safe_next(Some("//evil.example/board/")), "/board");
        assert_eq!(safe_next(Some("https://evil.example")), "/board");
        assert_eq!(safe_next(Some("/board/\r\nSet-Cookie: x")), "/board");
        assert_eq!(safe_next(Some("/board/\\evil")), "/board");
        assert_eq!(safe_next(None), "/board");
    }
}
