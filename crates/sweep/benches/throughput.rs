//! Sweep throughput and per-model overhead, for `cargo xtask bench`.
//!
//! The same disks (the default disk with the luminosity stepped over 1.00 to
//! 1.10 Lsun) are run as bare `Model::run` calls on already-read parameters
//! and as sweep points (`Sweep::run_points`: set the value, read and validate
//! the disk, run, snowlines, provenance hash), in alternating rounds so both
//! see the same machine state. Prints one JSON line with the medians over the
//! rounds of the time per model [ns].

use nivalis_sweep::Sweep;
use std::path::Path;
use std::time::Instant;

const POINTS: usize = 16;
const ROUNDS: usize = 7;

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        0.5 * (v[n / 2 - 1] + v[n / 2])
    }
}

fn main() {
    let sweep = Sweep::from_value(
        &serde_json::json!({
            "axes": [{"path": "star.luminosity_lsun", "linear": {"from": 1.0, "to": 1.1, "count": POINTS}}]
        }),
        Path::new("."),
    )
    .expect("the benchmark sweep is valid");
    let parameters: Vec<_> = (0..POINTS)
        .map(|i| {
            nivalis_disk_files::from_value(&sweep.disk_value_at(i))
                .expect("valid disk")
                .parameters
        })
        .collect();
    // Warm-up.
    let _ = nivalis_physics::Model::run(&parameters[0]);
    let _ = sweep.run_points(0..1);
    let mut bare = Vec::new();
    let mut swept = Vec::new();
    for _ in 0..ROUNDS {
        let t = Instant::now();
        for p in &parameters {
            std::hint::black_box(nivalis_physics::Model::run(p).expect("runs"));
        }
        bare.push(t.elapsed().as_nanos() as f64 / POINTS as f64);
        let t = Instant::now();
        let part = std::hint::black_box(sweep.run_points(0..POINTS));
        swept.push(t.elapsed().as_nanos() as f64 / POINTS as f64);
        assert_eq!(part.rows(), POINTS);
    }
    println!(
        "{{\"bare_ns\": {}, \"sweep_ns\": {}, \"points\": {POINTS}, \"rounds\": {ROUNDS}}}",
        median(bare),
        median(swept)
    );
}
