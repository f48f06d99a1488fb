//! Prints draws of `nivalis_physics::random::Rng` as JSON (seed 20261202), for
//! tests/python/check_random_draws.py to test against scipy.stats (docs/model.md section 13).
//! Run: `cargo run -q -p nivalis-physics --example random_draws [N]` (default N = 20000).

use nivalis_physics::random::Rng;

fn list(xs: &[f64]) -> String {
    let v: Vec<String> = xs.iter().map(|x| format!("{x:e}")).collect();
    format!("[{}]", v.join(","))
}

fn main() {
    let n: usize = std::env::args()
        .nth(1)
        .and_then(|a| a.parse().ok())
        .unwrap_or(20_000);
    let mut rng = Rng::seeded(20_261_202);
    let uniform: Vec<f64> = (0..n).map(|_| rng.uniform()).collect();
    let normal: Vec<f64> = (0..n).map(|_| rng.normal()).collect();
    let lognormal: Vec<f64> = (0..n).map(|_| rng.lognormal_dex(2.0, 0.3)).collect();
    let shapes = [0.4, 1.0, 2.5, 30.0];
    let gammas: Vec<String> = shapes
        .iter()
        .map(|&a| {
            let g: Vec<f64> = (0..n).map(|_| rng.gamma(a)).collect();
            format!("\"{a}\": {}", list(&g))
        })
        .collect();
    let alpha = [15.0, 5.0, 2.0, 8.0];
    let mut out = [0.0; 4];
    let mut first = Vec::with_capacity(n);
    let mut third = Vec::with_capacity(n);
    for _ in 0..n {
        rng.dirichlet(&alpha, &mut out);
        first.push(out[0]);
        third.push(out[2]);
    }
    let index: Vec<f64> = (0..n).map(|_| rng.index(7) as f64).collect();
    println!(
        "{{\"n\": {n}, \"uniform\": {}, \"normal\": {}, \"lognormal_median_2_sigma_dex_0_3\": {}, \"gamma\": {{{}}}, \"dirichlet_alpha\": {}, \"dirichlet_first\": {}, \"dirichlet_third\": {}, \"index_of_7\": {}}}",
        list(&uniform),
        list(&normal),
        list(&lognormal),
        gammas.join(", "),
        list(&alpha),
        list(&first),
        list(&third),
        list(&index)
    );
}
