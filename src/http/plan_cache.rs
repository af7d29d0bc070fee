//! Computed plans kept in memory under their ETag. The ETag holds the team's
//! input version, so any change makes new requests miss the cache: nothing
//! is ever served stale, and no invalidation is needed. Each plan is kept
//! both as JSON and gzip-compressed, so a cached read by a client that
//! accepts gzip is served without compressing again. Bounded in bytes (both
//! forms count); the least recently used plans go first.

use std::collections::HashMap;
use std::io::Write as _;
use std::sync::Mutex;

use axum::body::Bytes;

/// One plan body in both encodings.
#[derive(Clone)]
pub struct CachedBody {
    pub plain: Bytes,
    pub gzip: Bytes,
}

impl CachedBody {
    /// Compresses `plain` once (gzip, default level).
    pub fn new(plain: Bytes) -> std::io::Result<Self> {
        let mut encoder = flate2::write::GzEncoder::new(
            Vec::with_capacity(plain.len() / 8),
            flate2::Compression::default(),
        );
        encoder.write_all(&plain)?;
        let gzip = Bytes::from(encoder.finish()?);
        Ok(Self { plain, gzip })
    }

    fn bytes(&self) -> usize {
        self.plain.len() + self.gzip.len()
    }
}

pub struct PlanCache {
    max_bytes: usize,
    inner: Mutex<Inner>,
}

#[derive(Default)]
struct Inner {
    entries: HashMap<String, (CachedBody, u64)>,
    bytes: usize,
    clock: u64,
}

impl PlanCache {
    pub fn new(max_bytes: usize) -> Self {
        Self {
            max_bytes,
            inner: Mutex::default(),
        }
    }

    pub fn get(&self, key: &str) -> Option<CachedBody> {
        let mut inner = self.inner.lock().unwrap_or_else(|p| p.into_inner());
        inner.clock += 1;
        let now = inner.clock;
        inner.entries.get_mut(key).map(|(body, used)| {
            *used = now;
            body.clone()
        })
    }

    pub fn put(&self, key: &str, value: CachedBody) {
        if value.bytes() > self.max_bytes {
            return;
        }
        let mut inner = self.inner.lock().unwrap_or_else(|p| p.into_inner());
        inner.clock += 1;
        let now = inner.clock;
        let size = value.bytes();
        if let Some((old, _)) = inner.entries.insert(key.to_owned(), (value, now)) {
            inner.bytes -= old.bytes();
        }
        inner.bytes += size;
        while inner.bytes > self.max_bytes {
            let Some(oldest) = inner
                .entries
                .iter()
                .min_by_key(|(_, (_, used))| *used)
                .map(|(k, _)| k.clone())
            else {
                break;
            };
            if let Some((evicted, _)) = inner.entries.remove(&oldest) {
                inner.bytes -= evicted.bytes();
            }
        }
    }

    /// Bytes held (both encodings of every plan).
    pub fn bytes(&self) -> usize {
        self.inner.lock().unwrap_or_else(|p| p.into_inner()).bytes
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn body(plain: &'static [u8]) -> CachedBody {
        CachedBody {
            plain: Bytes::from_static(plain),
            gzip: Bytes::from_static(b"z"),
        }
    }

    #[test]
    fn the_least_recently_used_plan_is_evicted_first_and_the_size_stays_bounded() {
        let cache = PlanCache::new(10);
        cache.put("a", body(b"aaaa"));
        cache.put("b", body(b"bbbb"));
        assert!(cache.get("a").is_some());
        cache.put("c", body(b"cccc"));
        assert!(cache.get("b").is_none(), "b was least recently used");
        assert!(cache.get("a").is_some() && cache.get("c").is_some());
        assert_eq!(cache.bytes(), 10, "both encodings count");
        cache.put("huge", body(b"0123456789"));
        assert!(cache.get("huge").is_none(), "larger than the whole cache");
    }

    #[test]
    fn the_compressed_form_decompresses_to_the_plain_one() {
        use std::io::Read as _;
        let plain = Bytes::from("{\"a\":1}".repeat(100));
        let body = CachedBody::new(plain.clone()).unwrap();
        assert!(body.gzip.len() < plain.len());
        let mut out = String::new();
        flate2::read::GzDecoder::new(&body.gzip[..])
            .read_to_string(&mut out)
            .unwrap();
        assert_eq!(out.as_bytes(), &plain[..]);
    }
}
