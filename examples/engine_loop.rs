//! Plans the bench's 40-athlete week in a loop on one thread, for a profiler:
//! `cargo build --release --example engine_loop` then
//! `perf record -g target/release/examples/engine_loop 200`.

use glycoweek::bench::squad_inputs;
use glycoweek::engine::week::plan_week;

fn main() {
    let rounds: usize = std::env::args()
        .nth(1)
        .and_then(|arg| arg.parse().ok())
        .unwrap_or(100);
    let weeks: u64 = std::env::args()
        .nth(2)
        .and_then(|arg| arg.parse().ok())
        .unwrap_or(1);
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
