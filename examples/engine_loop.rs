//! Plans the bench's 40-athlete week in a loop on one thread, for a profiler:
//! `cargo build --release --example engine_loop` then
//! `perf record -g target/release/examples/engine_loop 200`; with
//! `INCREMENTAL_WEEKDAY=3` it replans after a Thursday session moves instead.

use glycoweek::bench::squad_inputs;
use glycoweek::engine::week::plan_week;

/// mimalloc instead of the system allocator: planning allocates and frees
/// many small strings and vectors per day, which glibc's allocator handles
/// slowly (see the README's Performance section).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn main() {
    let rounds: usize = std::env::args()
        .nth(1)
        .and_then(|arg| arg.parse().ok())
        .unwrap_or(100);
    let weeks: u64 = std::env::args()
        .nth(2)
        .and_then(|arg| arg.parse().ok())
        .unwrap_or(1);
    if let Ok(weekday) = std::env::var("INCREMENTAL_WEEKDAY") {
        // The bench's replanning row: one team session moves, days reused.
        let weekday: u64 = weekday.parse().expect("a weekday, 0 = Monday");
        let ms = glycoweek::bench::incremental_once(weekday, rounds);
        println!("{ms:.2} ms median to replan after a session on weekday {weekday} moves");
        return;
    }
    let inputs = squad_inputs(40, weeks);
    let start = std::time::Instant::now();
    for _ in 0..rounds {
        for input in &inputs {
            std::hint::black_box(plan_week(input).expect("synthetic inputs are valid"));
        }
    }
    let ms = start.elapsed().as_secs_f64() * 1000.0 / rounds as f64;
    println!("{ms:.2} ms per 40-athlete plan of {weeks} week(s)");
}
