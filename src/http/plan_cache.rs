//! Computed plans kept in memory under their ETag. The ETag holds the team's
//! input version, so any change makes new requests miss the cache: nothing
//! is ever served stale, and no invalidation is needed. Each plan is kept
//! as JSON and, from the first read by a client that accepts gzip, also
//! gzip-compressed, so later gzip reads are served without compressing
//! again (and a plan nobody reads compressed is never compressed). Bounded
//! in bytes (both forms count); the least recently used plans go first.

use std::collections::HashMap;
use std::io::Write as _;
use std::sync::Mutex;

use axum::body::Bytes;

/// One plan body, plain and (once a client asked for it) gzip.
#[derive(Clone)]
pub struct CachedBody {
    pub plain: Bytes,
    pub gzip: Option<Bytes>,
}

impl CachedBody {
    pub fn new(plain: Bytes) -> Self {
        Self { plain, gzip: None }
    }

    fn bytes(&self) -> usize {
        self.plain.len() + self.gzip.as_ref().map_or(0, Bytes::len)
    }
}

/// Gzip of a body (default level).
pub fn gzip(plain: &[u8]) -> std::io::Result<Bytes> {
    let mut encoder = flate2::write::GzEncoder::new(
        Vec::with_capacity(plain.len() / 8),
        flate2::Compression::default(),
    );
    encoder.write_all(plain)?;
    Ok(Bytes::from(encoder.finish()?))
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

    /// Compresses a plan read from the cache without its gzip form and
    /// keeps the result beside the plain body (the compression runs outside
    /// the lock; a plan evicted meanwhile is simply not updated).
    pub fn gzip_of(&self, key: &str, plain: &Bytes) -> std::io::Result<Bytes> {
        let packed = gzip(plain)?;
        let mut inner = self.inner.lock().unwrap_or_else(|p| p.into_inner());
        let Inner { entries, bytes, .. } = &mut *inner;
        if let Some((body, _)) = entries.get_mut(key)
            && body.gzip.is_none()
            && body.plain == *plain
        {
            *bytes += packed.len();
            body.gzip = Some(packed.clone());
        }
        drop(inner);
        Ok(packed)
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
            gzip: Some(Bytes::from_static(b"z")),
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
    fn the_compressed_form_is_made_once_kept_counted_and_decompresses_to_the_plain_one() {
        use std::io::Read as _;
        let cache = PlanCache::new(1 << 20);
        let plain = Bytes::from("{\"a\":1}".repeat(100));
        cache.put("p", CachedBody::new(plain.clone()));
        assert_eq!(
            cache.bytes(),
            plain.len(),
            "nothing compressed before a gzip read"
        );
        let packed = cache.gzip_of("p", &plain).unwrap();
        assert!(packed.len() < plain.len());
        assert_eq!(cache.get("p").unwrap().gzip.as_ref(), Some(&packed), "kept");
        assert_eq!(cache.bytes(), plain.len() + packed.len(), "and counted");
        let mut out = String::new();
        flate2::read::GzDecoder::new(&packed[..])
            .read_to_string(&mut out)
            .unwrap();
        assert_eq!(out.as_bytes(), &plain[..]);
    }
}
