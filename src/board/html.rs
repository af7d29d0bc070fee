//! Plain server-rendered HTML: escaping, number formatting and the page
//! frame every view shares. No inline scripts or styles anywhere, so the
//! Content-Security-Policy can forbid them.

use std::fmt::{self, Display, Write as _};

use axum::http::{HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Response};

use crate::domain::token::Role;

/// Text escaped for HTML content and attribute values.
pub struct Esc<'a>(pub &'a str);

impl Display for Esc<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for c in self.0.chars() {
            match c {
                '&' => f.write_str("&amp;")?,
                '<' => f.write_str("&lt;")?,
                '>' => f.write_str("&gt;")?,
                '"' => f.write_str("&quot;")?,
                '\'' => f.write_str("&#39;")?,
                c => f.write_char(c)?,
            }
        }
        Ok(())
    }
}

pub fn esc(s: &str) -> Esc<'_> {
    Esc(s)
}

/// A number with `places` decimals; a dash for a missing or non-finite value.
pub fn num(x: f64, places: usize) -> String {
    if !x.is_finite() {
        return "–".into();
    }
    let s = format!("{x:.places$}");
    // "-0" reads oddly.
    if s.trim_start_matches('-')
        .chars()
        .all(|c| c == '0' || c == '.')
    {
        s.trim_start_matches('-').to_owned()
    } else {
        s
    }
}

/// A fraction as a whole percentage.
pub fn pct(fraction: f64) -> String {
    format!("{} %", num(fraction * 100.0, 0))
}

/// A snake_case label in words ("very_high" → "very high").
pub fn words(label: &str) -> String {
    label.replace('_', " ")
}

/// The signed-in person, for the page frame.
pub struct Viewer<'a> {
    pub role: Role,
    pub csrf: &'a str,
}

impl Viewer<'_> {
    pub fn can_write(&self) -> bool {
        self.role != Role::Reader
    }
}

/// Links in the header bar: (label, href, current).
pub type Nav<'a> = &'a [(&'a str, String, bool)];

pub const ASSET_VERSION: &str = env!("CARGO_PKG_VERSION");

/// A whole page around `body`.
pub fn page(title: &str, viewer: Option<&Viewer<'_>>, nav: Nav<'_>, body: &str) -> String {
    let mut out = String::with_capacity(body.len() + 2048);
    let _ = write!(
        out,
        r##"<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>{title} · glycoweek board</title><link rel="icon" href="data:,">
<link rel="stylesheet" href="/board/assets/board.css?v={v}"><link rel="stylesheet" href="/board/assets/scale.css?v={v}">
<script src="/board/assets/board.js?v={v}" defer></script></head>
<body><a class="skip" href="#main">Skip to content</a>
<header class="bar"><a class="brand" href="/board">glycoweek <span>board</span></a><nav aria-label="Board">"##,
        title = esc(title),
        v = ASSET_VERSION,
    );
    for (label, href, current) in nav {
        let _ = write!(
            out,
            r#"<a href="{}"{}>{}</a>"#,
            esc(href),
            if *current {
                r#" aria-current="page""#
            } else {
                ""
            },
            esc(label)
        );
    }
    out.push_str("</nav>");
    if let Some(v) = viewer {
        let role = match v.role {
            Role::Admin => "administrator",
            Role::Planner => "planner",
            Role::Reader => "read only",
        };
        let _ = write!(
            out,
            r#"<div class="who"><span>Signed in: {role}</span><form method="post" action="/board/sign-out"><input type="hidden" name="csrf" value="{}"><button type="submit" class="quiet">Sign out</button></form></div>"#,
            esc(v.csrf)
        );
    }
    out.push_str("</header>\n<main id=\"main\">\n");
    out.push_str(body);
    out.push_str(
        "\n</main>\n<footer><p>Every figure on this board is an <strong>estimate</strong> from published equations and population averages, for healthy adult athletes. It is a starting point for a qualified practitioner, not a prescription: apply it with a registered (sports) dietitian, and defer to a physician and to local rules and regulations.</p></footer>\n</body></html>\n",
    );
    out
}

/// Headers every board page carries: no caching of health data, no framing,
/// and a policy that allows only the board's own scripts and styles.
pub fn secure_headers(res: &mut Response) {
    let h = res.headers_mut();
    h.insert(
        header::CONTENT_SECURITY_POLICY,
        HeaderValue::from_static(
            "default-src 'none'; script-src 'self'; style-src 'self'; img-src 'self' data:; form-action 'self'; frame-ancestors 'none'; base-uri 'none'",
        ),
    );
    h.insert(header::CACHE_CONTROL, HeaderValue::from_static("no-store"));
    h.insert(header::X_FRAME_OPTIONS, HeaderValue::from_static("DENY"));
    h.insert(
        header::X_CONTENT_TYPE_OPTIONS,
        HeaderValue::from_static("nosniff"),
    );
    h.insert(
        header::REFERRER_POLICY,
        HeaderValue::from_static("same-origin"),
    );
}

/// An HTML response.
pub fn respond(status: StatusCode, html: String) -> Response {
    let mut res = (status, html).into_response();
    res.headers_mut().insert(
        header::CONTENT_TYPE,
        HeaderValue::from_static("text/html; charset=utf-8"),
    );
    secure_headers(&mut res);
    res
}

/// A short page that says what went wrong and what to do.
pub fn message_page(
    status: StatusCode,
    title: &str,
    text: &str,
    viewer: Option<&Viewer<'_>>,
) -> Response {
    let body = format!(
        r#"<h1>{}</h1><div class="notice" role="alert"><p>{}</p></div><p><a href="/board">Back to the board</a></p>"#,
        esc(title),
        esc(text)
    );
    respond(status, page(title, viewer, &[], &body))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn markup_in_names_is_escaped() {
        assert_eq!(
            esc(r#"<b a="1">'&'</b>"#).to_string(),
            "&lt;b a=&quot;1&quot;&gt;&#39;&amp;&#39;&lt;/b&gt;"
        );
    }

    #[test]
    fn numbers_are_rounded_and_never_negative_zero() {
        assert_eq!(num(6.449, 1), "6.4");
        assert_eq!(num(-0.01, 1), "0.0");
        assert_eq!(num(f64::NAN, 1), "–");
        assert_eq!(pct(0.456), "46 %");
    }
}
