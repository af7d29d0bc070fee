//! Signing in to the board: a bearer token is exchanged once for a
//! server-side session whose secret travels only in an HttpOnly, SameSite
//! cookie that page scripts cannot read. Every POST from the board also
//! carries a per-session CSRF token and must come from the board's own
//! origin.

use axum::extract::FromRequestParts;
use axum::http::request::Parts;
use axum::http::{HeaderMap, HeaderValue, Method, StatusCode, header};
use axum::response::{IntoResponse, Redirect, Response};
use sha2::{Digest, Sha256};

use super::Board;
use super::html::{self, Viewer};
use crate::http::auth::Caller;
use crate::store::board_sessions;

const COOKIE: &str = "glycoweek_board";
const SECURE_COOKIE: &str = "__Host-glycoweek_board";

pub fn cookie_name(secure: bool) -> &'static str {
    if secure { SECURE_COOKIE } else { COOKIE }
}

/// The Set-Cookie value of a new session.
pub fn session_cookie(secret: &str, secure: bool, max_age_secs: u64) -> HeaderValue {
    let value = format!(
        "{}={secret}; Path=/; HttpOnly; SameSite=Strict; Max-Age={max_age_secs}{}",
        cookie_name(secure),
        if secure { "; Secure" } else { "" }
    );
    HeaderValue::from_str(&value).expect("ascii cookie")
}

/// The Set-Cookie value that removes the session cookie.
pub fn cleared_cookie(secure: bool) -> HeaderValue {
    let value = format!(
        "{}=; Path=/; HttpOnly; SameSite=Strict; Max-Age=0{}",
        cookie_name(secure),
        if secure { "; Secure" } else { "" }
    );
    HeaderValue::from_str(&value).expect("ascii cookie")
}

/// The session secret from the request's cookies, if well-formed.
pub fn session_secret(headers: &HeaderMap, secure: bool) -> Option<String> {
    let name = cookie_name(secure);
    headers
        .get_all(header::COOKIE)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .flat_map(|v| v.split(';'))
        .filter_map(|pair| pair.trim().split_once('='))
        .find(|(k, _)| *k == name)
        .map(|(_, v)| v.to_owned())
        .filter(|v| v.len() == 64 && v.bytes().all(|b| b.is_ascii_hexdigit()))
}

/// The CSRF token of a session: derived from its secret, so it needs no
/// storage, yet differs from both the secret and its stored hash.
pub fn csrf_token(secret: &str) -> String {
    let mut h = Sha256::new();
    h.update(b"glycoweek board csrf\0");
    h.update(secret.as_bytes());
    hex::encode(h.finalize())
}

/// Compares in time independent of where the strings differ.
pub fn same_secret(a: &str, b: &str) -> bool {
    a.len() == b.len()
        && a.bytes()
            .zip(b.bytes())
            .fold(0u8, |acc, (x, y)| acc | (x ^ y))
            == 0
}

/// Whether a state-changing request comes from the board's own pages:
/// browsers say where a request started (`Sec-Fetch-Site`) or send its
/// `Origin`; either must name this site.
pub fn same_origin(headers: &HeaderMap) -> bool {
    if let Some(site) = headers.get("sec-fetch-site").and_then(|v| v.to_str().ok()) {
        return site == "same-origin" || site == "none";
    }
    let Some(origin) = headers.get(header::ORIGIN).and_then(|v| v.to_str().ok()) else {
        // Neither header: not a browser's cross-site form; the CSRF token decides.
        return true;
    };
    let host = headers
        .get(header::HOST)
        .and_then(|v| v.to_str().ok())
        .unwrap_or("");
    let origin_host = origin.split_once("://").map(|(_, rest)| rest).unwrap_or("");
    !host.is_empty() && origin_host.eq_ignore_ascii_case(host)
}

/// A signed-in board user: the token's identity and the session's CSRF token.
pub struct SignedIn {
    pub caller: Caller,
    pub secret: String,
    pub csrf: String,
}

impl SignedIn {
    pub fn viewer(&self) -> Viewer<'_> {
        Viewer {
            role: self.caller.role,
            csrf: &self.csrf,
        }
    }
}

impl FromRequestParts<Board> for SignedIn {
    type Rejection = Response;

    async fn from_request_parts(parts: &mut Parts, board: &Board) -> Result<Self, Response> {
        let secure = board.app.config.board_secure_cookie;
        let not_signed_in = |parts: &Parts| {
            if parts.method == Method::GET || parts.method == Method::HEAD {
                let next = parts
                    .uri
                    .path_and_query()
                    .map(|p| p.as_str())
                    .filter(|p| p.starts_with("/board/"))
                    .unwrap_or("/board");
                let target = format!(
                    "/board/sign-in?next={}",
                    form_urlencoded::byte_serialize(next.as_bytes()).collect::<String>()
                );
                Redirect::to(&target).into_response()
            } else {
                html::message_page(
                    StatusCode::UNAUTHORIZED,
                    "Signed out",
                    "Your board session has ended (expired, signed out, or its token was revoked). Nothing was changed. Sign in again and repeat the change.",
                    None,
                )
            }
        };
        let Some(secret) = session_secret(&parts.headers, secure) else {
            return Err(not_signed_in(parts));
        };
        let owner = match board_sessions::owner(&board.app.db, &secret).await {
            Ok(Some(owner)) => owner,
            Ok(None) => return Err(not_signed_in(parts)),
            Err(e) => {
                tracing::warn!(error = %e, "board session lookup failed");
                return Err(html::message_page(
                    StatusCode::SERVICE_UNAVAILABLE,
                    "Busy",
                    "The database did not answer in time. Try again in a moment.",
                    None,
                ));
            }
        };
        let csrf = csrf_token(&secret);
        Ok(SignedIn {
            caller: Caller {
                token_id: owner.token_id,
                role: owner.role,
                team_id: owner.team_id,
            },
            secret,
            csrf,
        })
    }
}

/// Refuses a POST that is cross-site or lacks the session's CSRF token.
// The refusal is the page itself, built once per request.
#[allow(clippy::result_large_err)]
pub fn check_post(
    headers: &HeaderMap,
    user: &SignedIn,
    form_csrf: Option<&str>,
) -> Result<(), Response> {
    let token_ok = form_csrf.is_some_and(|t| same_secret(t, &user.csrf));
    if same_origin(headers) && token_ok {
        Ok(())
    } else {
        Err(html::message_page(
            StatusCode::FORBIDDEN,
            "Change refused",
            "This change did not come from a board page of this session, so it was refused and nothing was changed. Reload the page and try again.",
            Some(&user.viewer()),
        ))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn headers(pairs: &[(&'static str, &str)]) -> HeaderMap {
        let mut h = HeaderMap::new();
        for (k, v) in pairs {
            h.append(*k, HeaderValue::from_str(v).unwrap());
        }
        h
    }

    #[test]
    fn cross_site_posts_are_recognised() {
        assert!(same_origin(&headers(&[("sec-fetch-site", "same-origin")])));
        assert!(!same_origin(&headers(&[("sec-fetch-site", "cross-site")])));
        assert!(!same_origin(&headers(&[("sec-fetch-site", "same-site")])));
        assert!(same_origin(&headers(&[
            ("host", "127.0.0.1:8080"),
            ("origin", "http://127.0.0.1:8080")
        ])));
        assert!(!same_origin(&headers(&[
            ("host", "127.0.0.1:8080"),
            ("origin", "https://evil.example")
        ])));
        assert!(!same_origin(&headers(&[("origin", "null")])));
    }

    #[test]
    fn the_session_cookie_is_read_only_when_well_formed() {
        let secret = "a".repeat(64);
        let h = headers(&[("cookie", &format!("x=1; glycoweek_board={secret}"))]);
        assert_eq!(session_secret(&h, false), Some(secret.clone()));
        assert_eq!(
            session_secret(&h, true),
            None,
            "secure mode reads the __Host- cookie"
        );
        let bad = headers(&[("cookie", "glycoweek_board=<script>")]);
        assert_eq!(session_secret(&bad, false), None);
    }

    #[test]
    fn the_cookie_is_http_only_and_same_site() {
        let c = session_cookie(&"b".repeat(64), true, 3600);
        let c = c.to_str().unwrap();
        assert!(c.starts_with("__Host-glycoweek_board="));
        assert!(c.contains("HttpOnly") && c.contains("SameSite=Strict") && c.contains("Secure"));
        assert!(c.contains("Max-Age=3600"));
        let plain = session_cookie(&"b".repeat(64), false, 60);
        assert!(!plain.to_str().unwrap().contains("Secure"));
    }

    #[test]
    fn csrf_tokens_differ_per_session_and_compare_exactly() {
        let a = csrf_token(&"a".repeat(64));
        let b = csrf_token(&"b".repeat(64));
        assert_ne!(a, b);
        assert!(same_secret(&a, &a.clone()));
        assert!(!same_secret(&a, &b));
        assert!(!same_secret(&a, &a[..10]));
    }
}
