//! The only code that speaks SQL. Functions return domain types.
//!
//! SQLite is opened in WAL mode with two pools: a read pool of a few
//! connections, and a writer pool of exactly one connection whose
//! transactions start with `BEGIN IMMEDIATE`. Writes are therefore
//! serialised inside the process and take the write lock up front, so a
//! read-then-write transaction never fails half-way with SQLITE_BUSY.

pub mod athletes;
pub mod audit;
pub mod board_sessions;
pub mod memo;
pub mod planning;
pub mod plans;
pub mod sessions;
pub mod teams;
pub mod tokens;

use std::path::{Path, PathBuf};
use std::str::FromStr;
use std::time::Duration;

use chrono::{DateTime, SecondsFormat, Utc};
use sqlx::sqlite::SqliteConnection;
use sqlx::sqlite::{
    SqliteConnectOptions, SqliteJournalMode, SqlitePool, SqlitePoolOptions, SqliteSynchronous,
};
use sqlx::{Sqlite, Transaction};

/// A write transaction on the writer connection. Committing it tells the
/// read memo ([`memo`]) that data changed.
pub struct Tx {
    inner: Transaction<'static, Sqlite>,
    memo: std::sync::Arc<memo::ReadMemo>,
}

impl Tx {
    /// Commits a write that changes no token, team or audit row (a plan
    /// snapshot): the read memo stays valid.
    pub async fn commit_outside_memo(self) -> Result<(), sqlx::Error> {
        self.inner.commit().await
    }

    pub async fn commit(self) -> Result<(), sqlx::Error> {
        let result = self.inner.commit().await;
        // After the commit is visible (or failed): bumping either way is safe.
        self.memo.wrote();
        result
    }
}

impl std::ops::Deref for Tx {
    type Target = SqliteConnection;
    fn deref(&self) -> &SqliteConnection {
        &self.inner
    }
}

impl std::ops::DerefMut for Tx {
    fn deref_mut(&mut self) -> &mut SqliteConnection {
        &mut self.inner
    }
}

static MIGRATOR: sqlx::migrate::Migrator = sqlx::migrate!();

#[derive(Debug, thiserror::Error)]
pub enum OpenError {
    #[error("cannot open database {path}: {source}")]
    Open { path: PathBuf, source: sqlx::Error },
    #[error(
        "database {path} was written by a newer glycoweek (schema version {found}, this build knows up to {known}); refusing to start. Upgrade glycoweek or restore a backup."
    )]
    NewerSchema {
        path: PathBuf,
        found: i64,
        known: i64,
    },
    #[error("cannot migrate database {path}: {source}")]
    Migrate {
        path: PathBuf,
        source: sqlx::migrate::MigrateError,
    },
}

#[derive(Clone, Debug)]
pub struct Db {
    pub read: SqlitePool,
    pub write: SqlitePool,
    /// Tokens, teams and input versions read recently (see [`memo`]).
    pub memo: std::sync::Arc<memo::ReadMemo>,
}

impl Db {
    /// Opens (creating if missing) and migrates the database at `path`.
    pub async fn open(path: &Path) -> Result<Self, OpenError> {
        let open_err = |source| OpenError::Open {
            path: path.to_owned(),
            source,
        };
        let options = SqliteConnectOptions::from_str("sqlite:")
            .map_err(open_err)?
            .filename(path)
            .create_if_missing(true)
            .journal_mode(SqliteJournalMode::Wal)
            .synchronous(SqliteSynchronous::Normal)
            .foreign_keys(true)
            .busy_timeout(Duration::from_secs(5));
        let write = SqlitePoolOptions::new()
            .max_connections(1)
            .acquire_timeout(Duration::from_secs(10))
            .connect_with(options.clone())
            .await
            .map_err(open_err)?;
        check_schema_not_newer(&write, path).await?;
        MIGRATOR
            .run(&write)
            .await
            .map_err(|source| OpenError::Migrate {
                path: path.to_owned(),
                source,
            })?;
        let read = SqlitePoolOptions::new()
            .max_connections(4)
            .acquire_timeout(Duration::from_secs(10))
            .connect_with(options.read_only(true))
            .await
            .map_err(open_err)?;
        Ok(Self {
            read,
            write,
            memo: Default::default(),
        })
    }

    /// Starts a write transaction holding the database write lock.
    pub async fn begin_write(&self) -> Result<Tx, sqlx::Error> {
        Ok(Tx {
            inner: self.write.begin_with("BEGIN IMMEDIATE").await?,
            memo: self.memo.clone(),
        })
    }

    /// Writes a consistent copy of the live database to `to` (`VACUUM INTO`).
    pub async fn backup(&self, to: &Path) -> Result<(), sqlx::Error> {
        let target = to.to_string_lossy().into_owned();
        sqlx::query("VACUUM INTO ?")
            .bind(target)
            .execute(&self.write)
            .await?;
        Ok(())
    }

    /// Liveness and readiness: the database answers a query.
    pub async fn ping(&self) -> Result<(), sqlx::Error> {
        sqlx::query("SELECT 1")
            .execute(&self.read)
            .await
            .map(|_| ())
    }

    pub async fn close(&self) {
        self.read.close().await;
        self.write.close().await;
    }
}

/// Refuses a database migrated by a newer build: running old code on it
/// could silently corrupt data that the newer schema relies on.
async fn check_schema_not_newer(pool: &SqlitePool, path: &Path) -> Result<(), OpenError> {
    let known = MIGRATOR.iter().map(|m| m.version).max().unwrap_or(0);
    let has_table: Option<i64> = sqlx::query_scalar(
        "SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = '_sqlx_migrations'",
    )
    .fetch_optional(pool)
    .await
    .map_err(|source| OpenError::Open {
        path: path.to_owned(),
        source,
    })?;
    if has_table.is_none() {
        return Ok(());
    }
    let found: Option<i64> = sqlx::query_scalar("SELECT MAX(version) FROM _sqlx_migrations")
        .fetch_one(pool)
        .await
        .map_err(|source| OpenError::Open {
            path: path.to_owned(),
            source,
        })?;
    match found {
        Some(found) if found > known => Err(OpenError::NewerSchema {
            path: path.to_owned(),
            found,
            known,
        }),
        _ => Ok(()),
    }
}

/// Instants are stored as RFC 3339 UTC text with microseconds.
pub fn now_text() -> String {
    instant_text(Utc::now())
}

pub fn instant_text(t: DateTime<Utc>) -> String {
    t.to_rfc3339_opts(SecondsFormat::Micros, true)
}

pub fn parse_instant(s: &str) -> Result<DateTime<Utc>, sqlx::Error> {
    DateTime::parse_from_rfc3339(s)
        .map(|t| t.with_timezone(&Utc))
        .map_err(|e| sqlx::Error::Decode(Box::new(e)))
}

/// Decodes a JSON column; a failure means the row is corrupt, not the request.
pub fn from_json<T: serde::de::DeserializeOwned>(s: &str) -> Result<T, sqlx::Error> {
    serde_json::from_str(s).map_err(|e| sqlx::Error::Decode(Box::new(e)))
}

pub fn to_json<T: serde::Serialize>(v: &T) -> String {
    serde_json::to_string(v).unwrap_or_else(|_| "null".into())
}

pub fn label<T: serde::de::DeserializeOwned>(s: &str) -> Result<T, sqlx::Error> {
    crate::domain::parse_label(s).map_err(|e| sqlx::Error::Decode(Box::new(e)))
}

pub fn uuid(s: &str) -> Result<uuid::Uuid, sqlx::Error> {
    uuid::Uuid::parse_str(s).map_err(|e| sqlx::Error::Decode(Box::new(e)))
}

pub fn date(s: &str) -> Result<chrono::NaiveDate, sqlx::Error> {
    chrono::NaiveDate::parse_from_str(s, "%Y-%m-%d").map_err(|e| sqlx::Error::Decode(Box::new(e)))
}

/// What a conditional write requires of the stored version (`If-Match`).
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Precondition {
    /// No condition: write whatever is stored.
    None,
    /// The stored version must be one of these (an absent row matches none).
    OneOf(Vec<i64>),
}

impl Precondition {
    pub fn exactly(version: i64) -> Self {
        Self::OneOf(vec![version])
    }

    /// Whether a row at `version` (`None`: no row) may be written.
    pub fn allows(&self, version: Option<i64>) -> bool {
        match self {
            Self::None => true,
            Self::OneOf(versions) => version.is_some_and(|v| versions.contains(&v)),
        }
    }
}

/// Result of a conditional write.
pub enum Write<T> {
    Done(T),
    NotFound,
    Stale,
}
