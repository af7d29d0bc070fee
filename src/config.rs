//! Typed configuration, read once at start from flags and `GLYCOWEEK_*`
//! environment variables (flags win). Bad values stop the start with a
//! clear message.

use std::net::SocketAddr;
use std::path::PathBuf;

use clap::{Args, ValueEnum};

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum, Default)]
pub enum LogFormat {
    #[default]
    Text,
    Json,
}

/// The database file used when none is given, by `serve` and by every
/// maintenance command alike.
pub const DEFAULT_DATABASE: &str = "./glycoweek.db";

/// Settings of a running service.
#[derive(Debug, Clone, Args)]
pub struct Config {
    /// Address to listen on.
    #[arg(long, env = "GLYCOWEEK_LISTEN", default_value = "127.0.0.1:8080")]
    pub listen: SocketAddr,
    /// SQLite database file (created if missing).
    #[arg(long, env = "GLYCOWEEK_DATABASE", default_value = DEFAULT_DATABASE)]
    pub database: PathBuf,
    /// Log format.
    #[arg(long, env = "GLYCOWEEK_LOG_FORMAT", value_enum, default_value_t = LogFormat::Text)]
    pub log_format: LogFormat,
    /// Origins allowed by CORS, comma-separated (none by default: CORS off).
    #[arg(long, env = "GLYCOWEEK_CORS_ORIGINS", value_delimiter = ',')]
    pub cors_origins: Vec<String>,
    /// Largest accepted request body in bytes.
    #[arg(long = "body-limit-bytes", value_name = "BYTES", env = "GLYCOWEEK_BODY_LIMIT_BYTES", default_value_t = 1_048_576,
          value_parser = clap::value_parser!(u64).range(1024..=67_108_864))]
    pub body_limit_bytes_raw: u64,
    /// Longest a request may take, in seconds.
    #[arg(long, env = "GLYCOWEEK_REQUEST_TIMEOUT_SECS", default_value_t = 30,
          value_parser = clap::value_parser!(u64).range(1..=600))]
    pub request_timeout_secs: u64,
    /// Requests per minute allowed per token (or per client address without
    /// one); 0 turns rate limiting off.
    #[arg(long, env = "GLYCOWEEK_RATE_LIMIT_PER_MINUTE", default_value_t = 1200)]
    pub rate_limit_per_minute: u32,
    /// Serve `GET /v1/ceiling?bytes=N`, a pre-built response used by the load
    /// script to measure what the HTTP stack allows (off in production).
    #[arg(long, env = "GLYCOWEEK_CEILING_ENDPOINT")]
    pub ceiling_endpoint: bool,
    /// Memory for computed plans, MiB (plans are keyed by their inputs'
    /// version, so a cached plan is never stale); 0 turns the cache off.
    #[arg(long = "plan-cache-mib", value_name = "MIB", env = "GLYCOWEEK_PLAN_CACHE_MIB", default_value_t = DEFAULT_PLAN_CACHE_MIB as u64,
          value_parser = clap::value_parser!(u64).range(0..=16384))]
    pub plan_cache_mib_raw: u64,
    /// How long a squad-board sign-in lasts, hours (1 to 168).
    #[arg(long, value_name = "HOURS", env = "GLYCOWEEK_BOARD_SESSION_HOURS", default_value_t = 12,
          value_parser = clap::value_parser!(u32).range(1..=168))]
    pub board_session_hours: u32,
    /// Mark the board's session cookie `Secure` (and name it `__Host-…`):
    /// set this when the service is reached over https, e.g. behind a
    /// TLS-terminating reverse proxy.
    #[arg(long, env = "GLYCOWEEK_BOARD_SECURE_COOKIE")]
    pub board_secure_cookie: bool,
    #[arg(skip)]
    pub plan_cache_mib: usize,
    /// Memory for per-athlete week plans and (in half of it) their simulated
    /// days, MiB: a change recomputes only the athletes and days it reaches;
    /// 0 turns the memo off.
    #[arg(long = "plan-memo-mib", value_name = "MIB", env = "GLYCOWEEK_PLAN_MEMO_MIB", default_value_t = DEFAULT_PLAN_MEMO_MIB as u64,
          value_parser = clap::value_parser!(u64).range(0..=16384))]
    pub plan_memo_mib_raw: u64,
    #[arg(skip)]
    pub plan_memo_mib: usize,
    #[arg(skip)]
    pub body_limit_bytes: usize,
}

/// Default memory for computed plan bodies, MiB.
pub const DEFAULT_PLAN_CACHE_MIB: usize = 8;
/// Default memory for per-athlete plans and their days, MiB: a 40-athlete
/// week keeps about 3 MB of days.
pub const DEFAULT_PLAN_MEMO_MIB: usize = 8;

impl Config {
    /// Fills derived values after parsing.
    pub fn finish(mut self) -> Self {
        self.body_limit_bytes = usize::try_from(self.body_limit_bytes_raw).unwrap_or(1_048_576);
        self.plan_cache_mib =
            usize::try_from(self.plan_cache_mib_raw).unwrap_or(DEFAULT_PLAN_CACHE_MIB);
        self.plan_memo_mib =
            usize::try_from(self.plan_memo_mib_raw).unwrap_or(DEFAULT_PLAN_MEMO_MIB);
        self
    }

    /// Defaults for a database path, as used by tests and tools.
    pub fn for_database(database: PathBuf) -> Self {
        Self {
            listen: "127.0.0.1:0".parse().expect("valid"),
            database,
            log_format: LogFormat::Text,
            cors_origins: Vec::new(),
            body_limit_bytes_raw: 1_048_576,
            request_timeout_secs: 30,
            rate_limit_per_minute: 0,
            ceiling_endpoint: false,
            plan_cache_mib_raw: 64,
            plan_cache_mib: 64,
            board_session_hours: 12,
            board_secure_cookie: false,
            plan_memo_mib_raw: 32,
            plan_memo_mib: 32,
            body_limit_bytes: 1_048_576,
        }
    }
}
