//! The `glycoweek` binary: parse the command line, then hand over to the library.

#![forbid(unsafe_code)]

use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand};
use glycoweek::config::{Config, DEFAULT_DATABASE, LogFormat};
use glycoweek::domain::token::{Role, TokenInput};
use glycoweek::store::{Db, audit::Actor, tokens};
use glycoweek::{AppState, demo};
use tokio::net::TcpListener;
use uuid::Uuid;

/// mimalloc instead of the system allocator: planning allocates and frees
/// many small strings and vectors per day, which glibc's allocator handles
/// slowly (see the README's Performance section).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

#[derive(Parser)]
#[command(
    name = "glycoweek",
    version,
    about = "Carbohydrate periodization for a squad's planned week"
)]
struct Cli {
    #[command(subcommand)]
    command: Option<Command>,
    #[command(flatten)]
    serve: ServeArgs,
}

#[derive(clap::Args)]
struct ServeArgs {
    #[command(flatten)]
    config: Config,
    /// Load the fictional demo club into an empty database before serving.
    #[arg(long)]
    demo: bool,
}

#[derive(Subcommand)]
enum Command {
    /// Serve the API (the default).
    Serve(ServeArgs),
    /// Create, list or revoke API tokens.
    #[command(subcommand)]
    Token(TokenCommand),
    /// Check that a running service answers `GET /health` (for container health checks).
    Probe {
        #[arg(long, default_value = "http://127.0.0.1:8080/health")]
        url: String,
    },
    /// Time the planning engine on synthetic squads (build with --release).
    Bench {
        /// Squad sizes to time.
        #[arg(long, value_delimiter = ',', default_value = "10,40,160")]
        athletes: Vec<usize>,
        /// Plan lengths in weeks.
        #[arg(long, value_delimiter = ',', default_value = "1,4,12")]
        weeks: Vec<u64>,
        /// Interleaved rounds; the figures are medians.
        #[arg(long, default_value_t = 5)]
        repeats: usize,
        /// Only the API rows (the first read after a change), e.g. to profile them.
        #[arg(long)]
        api_only: bool,
    },
    /// Write a consistent copy of a live database.
    Backup {
        #[arg(long, env = "GLYCOWEEK_DATABASE", default_value = DEFAULT_DATABASE)]
        database: PathBuf,
        /// Destination file (must not exist).
        #[arg(long)]
        to: PathBuf,
    },
}

#[derive(Subcommand)]
enum TokenCommand {
    /// Create a token and print its secret alone on standard output.
    Create {
        #[arg(long, env = "GLYCOWEEK_DATABASE", default_value = DEFAULT_DATABASE)]
        database: PathBuf,
        #[arg(long, value_enum)]
        role: Role,
        /// Team of a planner or reader token.
        #[arg(long)]
        team: Option<Uuid>,
        #[arg(long, default_value = "created on the command line")]
        label: String,
    },
    /// Revoke a token by id; it stops working at once.
    Revoke {
        #[arg(long, env = "GLYCOWEEK_DATABASE", default_value = DEFAULT_DATABASE)]
        database: PathBuf,
        token_id: Uuid,
    },
    /// List tokens (ids, roles, teams; never secrets).
    List {
        #[arg(long, env = "GLYCOWEEK_DATABASE", default_value = DEFAULT_DATABASE)]
        database: PathBuf,
    },
}

const CLI: Actor = Actor { token_id: None };

fn main() -> ExitCode {
    no_transparent_huge_pages();
    match tokio::runtime::Builder::new_multi_thread()
        .enable_all()
        .build()
    {
        Ok(runtime) => runtime.block_on(run()),
        Err(e) => {
            eprintln!("error: could not start the async runtime: {e}");
            ExitCode::FAILURE
        }
    }
}

/// Turns transparent huge pages off for this process, before the runtime
/// starts its threads. mimalloc asks for huge pages on its larger OS
/// allocations, and where the kernel grants them (`madvise` mode, the common
/// default) each 2 MiB page is resident as a whole however little of it is
/// used: about 20 MiB of the idle footprint and of the peak under load,
/// with no measurable gain in speed here (README, Performance).
fn no_transparent_huge_pages() {
    #[cfg(target_os = "linux")]
    if let Err(e) = nix::sys::prctl::set_thp_disable(true) {
        eprintln!(
            "note: could not turn transparent huge pages off ({e}); memory use may be higher"
        );
    }
}

async fn run() -> ExitCode {
    let cli = Cli::parse();
    let result = match cli.command {
        None => serve(cli.serve).await,
        Some(Command::Serve(args)) => serve(args).await,
        Some(Command::Token(cmd)) => token(cmd).await,
        Some(Command::Backup { database, to }) => backup(database, to).await,
        Some(Command::Probe { url }) => probe(&url).await,
        Some(Command::Bench {
            athletes,
            weeks,
            repeats,
            api_only,
        }) => {
            if athletes.iter().any(|&n| n == 0 || n > 1000)
                || weeks.iter().any(|&w| w == 0 || w > 16)
            {
                return {
                    eprintln!("glycoweek: bench takes 1 to 1000 athletes and 1 to 16 weeks");
                    ExitCode::FAILURE
                };
            }
            // RUST_LOG=glycoweek=debug shows where each request's time goes.
            if std::env::var_os("RUST_LOG").is_some() {
                init_tracing(LogFormat::Text);
            }
            if api_only {
                glycoweek::bench::run_api(repeats).await
            } else {
                glycoweek::bench::run(&athletes, &weeks, repeats).await
            }
        }
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(message) => {
            eprintln!("glycoweek: {message}");
            ExitCode::FAILURE
        }
    }
}

fn init_tracing(format: LogFormat) {
    let filter = tracing_subscriber::EnvFilter::try_from_default_env()
        .unwrap_or_else(|_| "info,sqlx=warn,tower_http=info".into());
    let builder = tracing_subscriber::fmt()
        .with_env_filter(filter)
        .with_writer(std::io::stderr);
    match format {
        LogFormat::Text => builder.init(),
        LogFormat::Json => builder.json().init(),
    }
}

async fn open(database: &std::path::Path) -> Result<Db, String> {
    Db::open(database).await.map_err(|e| e.to_string())
}

async fn serve(args: ServeArgs) -> Result<(), String> {
    let config = args.config.finish();
    init_tracing(config.log_format);
    let db = open(&config.database).await?;
    if args.demo {
        match demo::load_if_empty(&db)
            .await
            .map_err(|e| format!("loading the demo failed: {e}"))?
        {
            Some(summary) => eprintln!("{summary}"),
            None => eprintln!("The database already holds teams; the demo was not loaded again."),
        }
    }
    if !tokens::any_token(&db).await.map_err(|e| e.to_string())? {
        let created = tokens::create(
            &db,
            CLI,
            &TokenInput {
                label: "first administrator".into(),
                role: Role::Admin,
                team_id: None,
            },
        )
        .await
        .map_err(|e| e.to_string())?;
        eprintln!(
            "\nFirst start: an administrator token was created. It is shown once; store it now:\n\n    {}\n",
            created.secret
        );
    }
    let listener = TcpListener::bind(config.listen)
        .await
        .map_err(|e| format!("cannot listen on {}: {e}", config.listen))?;
    let addr = listener.local_addr().map_err(|e| e.to_string())?;
    eprintln!("glycoweek is listening on http://{addr}  (API docs: http://{addr}/docs)");
    tracing::info!(%addr, database = %config.database.display(), "serving");
    let state = AppState::new(db.clone(), config);
    glycoweek::serve(listener, state, glycoweek::shutdown_signal())
        .await
        .map_err(|e| e.to_string())?;
    db.close().await;
    Ok(())
}

/// Opens the database of a running (or stopped) service for maintenance.
/// Unlike `serve`, it never creates one: a token written into a new, empty
/// file would be unknown to the service, which reads another database.
async fn open_existing(database: &std::path::Path) -> Result<Db, String> {
    if !database.exists() {
        return Err(format!(
            "no database at {}: nothing was created. Give the database the service uses \
             with --database (or GLYCOWEEK_DATABASE); `serve` creates it at first start.",
            database.display()
        ));
    }
    open(database).await
}

async fn token(cmd: TokenCommand) -> Result<(), String> {
    match cmd {
        TokenCommand::Create {
            database,
            role,
            team,
            label,
        } => {
            let db = open_existing(&database).await?;
            let input = TokenInput {
                label,
                role,
                team_id: team,
            };
            input.validate().map_err(|e| {
                e.issues
                    .iter()
                    .map(|i| format!("{}: {}", i.field, i.reason))
                    .collect::<Vec<_>>()
                    .join("; ")
            })?;
            if let Some(team) = team {
                glycoweek::store::teams::get(&db, team)
                    .await
                    .map_err(|e| e.to_string())?
                    .ok_or_else(|| format!("no team with id {team}"))?;
            }
            let created = tokens::create(&db, CLI, &input)
                .await
                .map_err(|e| e.to_string())?;
            println!("{}", created.secret);
            db.close().await;
            Ok(())
        }
        TokenCommand::Revoke { database, token_id } => {
            let db = open_existing(&database).await?;
            match tokens::revoke(&db, CLI, token_id)
                .await
                .map_err(|e| e.to_string())?
            {
                glycoweek::store::Write::Done(_) => {
                    eprintln!("revoked {token_id}");
                    db.close().await;
                    Ok(())
                }
                _ => Err(format!("no token with id {token_id}")),
            }
        }
        TokenCommand::List { database } => {
            let db = open_existing(&database).await?;
            let list = tokens::list(&db, None, None, 10_000)
                .await
                .map_err(|e| e.to_string())?;
            for t in list {
                println!(
                    "{}\t{:?}\t{}\t{}\t{}",
                    t.id,
                    t.role,
                    t.team_id
                        .map(|t| t.to_string())
                        .unwrap_or_else(|| "-".into()),
                    if t.revoked_at.is_some() {
                        "revoked"
                    } else {
                        "live"
                    },
                    t.label
                );
            }
            db.close().await;
            Ok(())
        }
    }
}

async fn backup(database: PathBuf, to: PathBuf) -> Result<(), String> {
    if !database.exists() {
        return Err(format!("no database at {}", database.display()));
    }
    if to.exists() {
        return Err(format!("{} exists; choose a new file", to.display()));
    }
    let db = open(&database).await?;
    db.backup(&to)
        .await
        .map_err(|e| format!("backup failed: {e}"))?;
    db.close().await;
    eprintln!(
        "wrote a consistent copy of {} to {}",
        database.display(),
        to.display()
    );
    Ok(())
}

/// A minimal HTTP/1.0 GET, so the container image needs no curl.
async fn probe(url: &str) -> Result<(), String> {
    use tokio::io::{AsyncReadExt, AsyncWriteExt};
    let rest = url
        .strip_prefix("http://")
        .ok_or("only http:// URLs can be probed")?;
    let (authority, path) = rest
        .split_once('/')
        .map_or((rest, "/".to_owned()), |(a, p)| (a, format!("/{p}")));
    let connect = tokio::net::TcpStream::connect(authority);
    let mut stream = tokio::time::timeout(std::time::Duration::from_secs(3), connect)
        .await
        .map_err(|_| "timed out connecting".to_owned())?
        .map_err(|e| format!("cannot connect to {authority}: {e}"))?;
    let request = format!("GET {path} HTTP/1.0\r\nHost: {authority}\r\n\r\n");
    stream
        .write_all(request.as_bytes())
        .await
        .map_err(|e| e.to_string())?;
    let mut head = [0u8; 16];
    let n = tokio::time::timeout(std::time::Duration::from_secs(3), stream.read(&mut head))
        .await
        .map_err(|_| "timed out waiting for an answer".to_owned())?
        .map_err(|e| e.to_string())?;
    let status_line = String::from_utf8_lossy(&head[..n]);
    if status_line.starts_with("HTTP/1.0 200") || status_line.starts_with("HTTP/1.1 200") {
        Ok(())
    } else {
        Err(format!("unhealthy: {}", status_line.trim()))
    }
}
