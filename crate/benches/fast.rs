//! Fast summation against the direct sum: speed-up and largest error for 1e3, 1e4 and 1e5
//! Gaussian blobs spread like a flapping-foil wake. Prints a table and one JSON line
//! (`fast_vs_direct`); both paths compute velocity and stream function, fastest of three runs
//! each. For n = 1e5 the direct sum is timed on a sample of targets and scaled to
//! all of them (the direct cost per target does not depend on which target it is).

use std::time::Instant;

use finwake::fast::{Elements, Tree};

fn wake(n: usize) -> Elements {
    let mut el = Elements::default();
    let mut s: u64 = 987654321;
    let mut rnd = || {
        s = s
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (s >> 11) as f64 / (1u64 << 53) as f64
    };
    // Two vortex rows along 1 m per 1000 particles, 0.05 m apart, wavy, alternating signs.
    let length = n as f64 / 1000.0;
    for i in 0..n {
        let x = length * rnd();
        let row = if i % 2 == 0 { 1.0 } else { -1.0 };
        let y = 0.025 * row + 0.02 * (6.0 * x).sin() + 0.005 * (rnd() - 0.5);
        el.push([x, y], row * 1e-3 * (0.5 + rnd()), 0.0, (0.005f64).powi(2));
    }
    el
}

fn main() {
    let tolerance = 1e-7;
    let theta = 0.5;
    println!(
        "{:>8} {:>12} {:>12} {:>10} {:>14}",
        "n", "direct s", "fast s", "speedup", "max rel error"
    );
    let mut rows = Vec::new();
    for n in [1_000usize, 10_000, 100_000] {
        let el = wake(n);
        let sample: Vec<usize> = if n <= 10_000 {
            (0..n).collect()
        } else {
            (0..n).step_by(100).collect()
        };
        // Fastest of three repetitions of each (the machine is shared).
        let (mut direct_s, mut fast_s) = (f64::INFINITY, f64::INFINITY);
        let (mut direct, mut fast) = (Vec::new(), Vec::new());
        for _ in 0..3 {
            let t0 = Instant::now();
            direct = sample
                .iter()
                .map(|&k| el.direct([el.x[k], el.y[k]]).0)
                .collect::<Vec<[f64; 2]>>();
            direct_s = direct_s.min(t0.elapsed().as_secs_f64() * n as f64 / sample.len() as f64);
            let t0 = Instant::now();
            let tree = Tree::new(&el, theta, tolerance);
            fast = (0..n)
                .map(|k| tree.eval([el.x[k], el.y[k]]).0)
                .collect::<Vec<[f64; 2]>>();
            fast_s = fast_s.min(t0.elapsed().as_secs_f64());
        }
        let scale = direct
            .iter()
            .map(|w| (w[0] * w[0] + w[1] * w[1]).sqrt())
            .fold(0.0, f64::max);
        let err = sample
            .iter()
            .zip(&direct)
            .map(|(&k, d)| ((fast[k][0] - d[0]).powi(2) + (fast[k][1] - d[1]).powi(2)).sqrt())
            .fold(0.0, f64::max)
            / scale;
        println!(
            "{n:>8} {direct_s:>12.4} {fast_s:>12.4} {:>10.1} {err:>14.2e}",
            direct_s / fast_s
        );
        rows.push(format!(
            "{{\"n\": {n}, \"speedup\": {:.2}, \"max_rel_error\": {err:.3e}}}",
            direct_s / fast_s
        ));
        std::hint::black_box(&fast);
    }
    println!(
        "order {}, theta {theta}; error = max |du| / max |u| over the sampled targets",
        Tree::new(&wake(10), theta, tolerance).order()
    );
    println!("FAST_VS_DIRECT_JSON [{}]", rows.join(", "));
}
