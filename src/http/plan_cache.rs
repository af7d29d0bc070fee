//! Computed plans kept in memory under their ETag. The ETag holds the team's
//! input version, so any change makes new requests miss the cache: nothing
//! is ever served stale, and no invalidation is needed. Bounded in bytes;
//! the least recently used plans go first.

use std::collections::HashMap;
use std::sync::Mutex;

use axum::body::Bytes;

pub struct PlanCache {
    max_bytes: usize,
    inner: Mutex<Inner>,
}

#[derive(Default)]
struct Inner {
    entries: HashMap<String, (Bytes, u64)>,
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

    pub fn get(&self, key: &str) -> Option<Bytes> {
        let mut inner = self.inner.lock().unwrap_or_else(|p| p.into_inner());
        inner.clock += 1;
        let now = inner.clock;
        inner.entries.get_mut(key).map(|(bytes, used)| {
            *used = now;
            bytes.clone()
        })
    }

    pub fn put(&self, key: &str, value: Bytes) {
        if value.len() > self.max_bytes {
            return;
        }
        let mut inner = self.inner.lock().unwrap_or_else(|p| p.into_inner());
        inner.clock += 1;
        let now = inner.clock;
        if let Some((old, _)) = inner.entries.insert(key.to_owned(), (value.clone(), now)) {
            inner.bytes -= old.len();
        }
        inner.bytes += value.len();
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
                inner.bytes -= evicted.len();
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_least_recently_used_plan_is_evicted_first_and_the_size_stays_bounded() {
        let cache = PlanCache::new(10);
        cache.put("a", Bytes::from_static(b"aaaa"));
        cache.put("b", Bytes::from_static(b"bbbb"));
        assert!(cache.get("a").is_some());
        cache.put("c", Bytes::from_static(b"cccc"));
        assert!(cache.get("b").is_none(), "b was least recently used");
        assert!(cache.get("a").is_some() && cache.get("c").is_some());
        cache.put("huge", Bytes::from(vec![0u8; 11]));
        assert!(cache.get("huge").is_none(), "larger than the whole cache");
    }
}
