//! One computation per plan version: requests that miss the plan cache for
//! the same ETag at the same time wait for the first one's result instead
//! of each computing the same plan (after a write, every client asks for
//! the new version at once).

use std::collections::HashMap;
use std::sync::{Arc, Mutex, Weak};

use tokio::sync::OwnedMutexGuard;

/// In-flight plan computations by ETag, and the right to use the cores.
pub struct Flights {
    inner: Mutex<HashMap<String, Weak<tokio::sync::Mutex<()>>>>,
    /// Plans of different versions computed at once: no more than the
    /// machine has cores (each already spreads its athletes over them), so
    /// a burst of writes queues computations instead of piling up threads
    /// and memory.
    cores: Arc<tokio::sync::Semaphore>,
}

impl Default for Flights {
    fn default() -> Self {
        let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
        Self {
            inner: Mutex::default(),
            cores: Arc::new(tokio::sync::Semaphore::new(cores)),
        }
    }
}

/// Held while a plan is computed and cached; others asking for it wait.
pub type Flight = OwnedMutexGuard<()>;

impl Flights {
    /// Waits for a core to compute on.
    pub async fn core(&self) -> tokio::sync::OwnedSemaphorePermit {
        self.cores
            .clone()
            .acquire_owned()
            .await
            .expect("the semaphore is never closed")
    }

    /// Waits until no other request computes `key`, then holds it.
    pub async fn enter(&self, key: &str) -> Flight {
        let lock = {
            let mut map = self.inner.lock().unwrap_or_else(|p| p.into_inner());
            if map.len() > 64 {
                map.retain(|_, flight| flight.strong_count() > 0);
            }
            match map.get(key).and_then(Weak::upgrade) {
                Some(lock) => lock,
                None => {
                    let lock = Arc::new(tokio::sync::Mutex::new(()));
                    map.insert(key.to_owned(), Arc::downgrade(&lock));
                    lock
                }
            }
        };
        lock.lock_owned().await
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[tokio::test]
    async fn a_second_request_for_the_same_plan_waits_for_the_first() {
        let flights = Arc::new(Flights::default());
        let first = flights.enter("\"plan-1\"").await;
        let other = flights.enter("\"plan-2\"").await;
        drop(other);
        let waiting = {
            let flights = flights.clone();
            tokio::spawn(async move { flights.enter("\"plan-1\"").await })
        };
        tokio::task::yield_now().await;
        assert!(!waiting.is_finished(), "the same plan waits");
        drop(first);
        waiting.await.expect("joins");
    }
}
