//! Plan bodies served gzip-compressed without compressing them per request:
//! the compressed body is kept in the plan cache beside the plain one, under
//! the same ETag plus `+gzip`, so both follow the plan's version and share
//! the cache's byte bound. The compression layer passes responses that
//! already carry `Content-Encoding` through untouched.

use axum::body::Bytes;
use axum::http::{HeaderMap, HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Response};

use super::plan_cache::PlanCache;

/// Whether the client takes gzip (`Accept-Encoding: gzip`, not `q=0`).
pub fn accepts_gzip(headers: &HeaderMap) -> bool {
    headers
        .get_all(header::ACCEPT_ENCODING)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .flat_map(|v| v.split(','))
        .any(|item| {
            let mut parts = item.split(';').map(str::trim);
            let coding = parts.next().unwrap_or_default();
            let refused = parts.any(|p| {
                p.strip_prefix("q=")
                    .and_then(|q| q.parse::<f32>().ok())
                    .is_some_and(|q| q == 0.0)
            });
            (coding.eq_ignore_ascii_case("gzip") || coding == "*") && !refused
        })
}

/// Gzip of a body (level 6, as the compression layer's default).
pub fn gzip(body: &[u8]) -> std::io::Result<Bytes> {
    use std::io::Write;
    let mut encoder = flate2::write::GzEncoder::new(
        Vec::with_capacity(body.len() / 6 + 64),
        flate2::Compression::new(6),
    );
    encoder.write_all(body)?;
    Ok(Bytes::from(encoder.finish()?))
}

/// The cached body of `key` as a response, compressed when the client
/// takes gzip (compressed once per plan version, then kept).
pub fn cached_response(cache: &PlanCache, key: &str, headers: &HeaderMap) -> Option<Response> {
    let gzip_key = format!("{key}+gzip");
    let wants_gzip = accepts_gzip(headers);
    if wants_gzip && let Some(body) = cache.get(&gzip_key) {
        return Some(gzip_response(body));
    }
    let plain = cache.get(key)?;
    if wants_gzip && let Ok(body) = gzip(&plain) {
        cache.put(&gzip_key, body.clone());
        return Some(gzip_response(body));
    }
    Some(json_response(plain))
}

fn json_response(body: Bytes) -> Response {
    let mut res = (StatusCode::OK, body).into_response();
    res.headers_mut().insert(
        header::CONTENT_TYPE,
        HeaderValue::from_static("application/json"),
    );
    res
}

fn gzip_response(body: Bytes) -> Response {
    let mut res = json_response(body);
    let headers = res.headers_mut();
    headers.insert(header::CONTENT_ENCODING, HeaderValue::from_static("gzip"));
    headers.insert(header::VARY, HeaderValue::from_static("accept-encoding"));
    res
}

#[cfg(test)]
mod tests {
    use super::*;

    fn accept(value: &str) -> HeaderMap {
        let mut headers = HeaderMap::new();
        headers.insert(
            header::ACCEPT_ENCODING,
            HeaderValue::from_str(value).unwrap(),
        );
        headers
    }

    #[test]
    fn gzip_is_chosen_only_when_the_client_takes_it() {
        assert!(accepts_gzip(&accept("gzip, deflate, br")));
        assert!(accepts_gzip(&accept("br;q=1.0, gzip;q=0.5")));
        assert!(!accepts_gzip(&accept("gzip;q=0")));
        assert!(!accepts_gzip(&accept("br")));
        assert!(!accepts_gzip(&HeaderMap::new()));
    }

    #[test]
    fn the_compressed_body_is_made_once_and_decompresses_to_the_plain_one() {
        use std::io::Read;
        let cache = PlanCache::new(1 << 20);
        let plain = Bytes::from(r#"{"rows":[1,2,3]}"#.repeat(100));
        cache.put("\"plan-1\"", plain.clone());
        let first = cached_response(&cache, "\"plan-1\"", &accept("gzip")).unwrap();
        assert_eq!(first.headers()[header::CONTENT_ENCODING], "gzip");
        let stored = cache
            .get("\"plan-1\"+gzip")
            .expect("kept beside the plain body");
        let mut unpacked = Vec::new();
        flate2::read::GzDecoder::new(&stored[..])
            .read_to_end(&mut unpacked)
            .unwrap();
        assert_eq!(unpacked, plain);
        let identity = cached_response(&cache, "\"plan-1\"", &HeaderMap::new()).unwrap();
        assert!(identity.headers().get(header::CONTENT_ENCODING).is_none());
    }
}
