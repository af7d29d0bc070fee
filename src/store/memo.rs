//! A read-through memo of the three small reads every plan request makes
//! (the caller's token, the team, the team's input version), so that a
//! cached plan is served without a database round trip.
//!
//! Correctness rests on one counter: every committed write transaction of
//! this process ([`super::Tx::commit`]) bumps it after the commit is visible,
//! and a memo entry is valid only while the counter still has the value it
//! had *before* the entry was read from the database. A read that raced a
//! write is therefore never reused. Entries also expire after [`MAX_AGE`],
//! so a change made by another process on the live database (the
//! `glycoweek token revoke` command) is seen within that time; through the
//! API, at once.
//!
//! Each memo holds at most [`MAX_ENTRIES`] small entries (a token's id, role
//! and team; a team row; a number), well under a megabyte in all, and is
//! emptied when full.

use std::collections::HashMap;
use std::hash::Hash;
use std::sync::Mutex;
use std::sync::atomic::{AtomicU64, Ordering};
use std::time::{Duration, Instant};

use uuid::Uuid;

use crate::domain::team::Team;
use crate::domain::token::TokenInfo;

/// Entries per memo.
pub const MAX_ENTRIES: usize = 4096;
/// Longest an entry is trusted without asking the database again.
pub const MAX_AGE: Duration = Duration::from_secs(1);

struct Entry<V> {
    value: V,
    generation: u64,
    read_at: Instant,
}

struct Memo<K, V> {
    entries: Mutex<HashMap<K, Entry<V>>>,
}

impl<K: Eq + Hash, V: Clone> Memo<K, V> {
    fn new() -> Self {
        Self {
            entries: Mutex::new(HashMap::new()),
        }
    }

    fn get(&self, key: &K, generation: u64) -> Option<V> {
        let entries = self.entries.lock().unwrap_or_else(|p| p.into_inner());
        let entry = entries.get(key)?;
        let fresh = entry.read_at.elapsed() < MAX_AGE;
        (entry.generation == generation && fresh).then(|| entry.value.clone())
    }

    fn put(&self, key: K, value: V, generation: u64, read_at: Instant) {
        let mut entries = self.entries.lock().unwrap_or_else(|p| p.into_inner());
        if entries.len() >= MAX_ENTRIES {
            entries.clear();
        }
        entries.insert(
            key,
            Entry {
                value,
                generation,
                read_at,
            },
        );
    }
}

/// The memo of one database.
pub struct ReadMemo {
    writes: AtomicU64,
    tokens: Memo<Vec<u8>, Option<TokenInfo>>,
    teams: Memo<Uuid, Option<Team>>,
    versions: Memo<Uuid, i64>,
}

impl std::fmt::Debug for ReadMemo {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("ReadMemo")
            .field("writes", &self.writes.load(Ordering::Relaxed))
            .finish_non_exhaustive()
    }
}

impl Default for ReadMemo {
    fn default() -> Self {
        Self {
            writes: AtomicU64::new(0),
            tokens: Memo::new(),
            teams: Memo::new(),
            versions: Memo::new(),
        }
    }
}

/// What a read must remember to store its result: the write counter and
/// the time before it asked the database.
#[derive(Clone, Copy)]
pub struct Ticket {
    generation: u64,
    read_at: Instant,
}

impl ReadMemo {
    /// Called after every committed write.
    pub fn wrote(&self) {
        self.writes.fetch_add(1, Ordering::SeqCst);
    }

    /// Taken before a database read whose result may be memoised.
    pub fn ticket(&self) -> Ticket {
        Ticket {
            generation: self.writes.load(Ordering::SeqCst),
            read_at: Instant::now(),
        }
    }

    fn current(&self) -> u64 {
        self.writes.load(Ordering::SeqCst)
    }

    pub fn token(&self, hash: &Vec<u8>) -> Option<Option<TokenInfo>> {
        self.tokens.get(hash, self.current())
    }

    pub fn put_token(&self, ticket: Ticket, hash: Vec<u8>, info: Option<TokenInfo>) {
        self.tokens
            .put(hash, info, ticket.generation, ticket.read_at);
    }

    pub fn team(&self, id: Uuid) -> Option<Option<Team>> {
        self.teams.get(&id, self.current())
    }

    pub fn put_team(&self, ticket: Ticket, id: Uuid, team: Option<Team>) {
        self.teams.put(id, team, ticket.generation, ticket.read_at);
    }

    pub fn version(&self, team: Uuid) -> Option<i64> {
        self.versions.get(&team, self.current())
    }

    pub fn put_version(&self, ticket: Ticket, team: Uuid, version: i64) {
        self.versions
            .put(team, version, ticket.generation, ticket.read_at);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_read_that_raced_a_write_is_never_reused() {
        let memo = ReadMemo::default();
        let team = Uuid::now_v7();
        let before = memo.ticket();
        // A write commits while the read is in flight.
        memo.wrote();
        memo.put_version(before, team, 7);
        assert_eq!(
            memo.version(team),
            None,
            "the racing read must be asked again"
        );
        let after = memo.ticket();
        memo.put_version(after, team, 8);
        assert_eq!(memo.version(team), Some(8));
        memo.wrote();
        assert_eq!(memo.version(team), None, "any later write invalidates it");
    }

    #[test]
    fn entries_are_asked_again_after_their_maximum_age() {
        let memo = ReadMemo::default();
        let old = Ticket {
            generation: 0,
            read_at: Instant::now() - MAX_AGE - Duration::from_millis(1),
        };
        memo.put_token(old, vec![1], None);
        assert!(memo.token(&vec![1]).is_none());
        memo.put_token(memo.ticket(), vec![2], None);
        assert_eq!(memo.token(&vec![2]).map(|t| t.is_none()), Some(true));
    }
}
