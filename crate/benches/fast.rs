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
        "{:>8} {:>11} {:>11} {:>11} {:>9} {:>9} {:>13}",
        "n", "direct s", "leaves s", "points s", "speedup", "(points)", "max rel error"
    );
    let mut rows = Vec::new();
    for n in [1_000usize, 10_000, 100_000] {
        let el = wake(n);
        let sample: Vec<usize> = if n <= 10_000 {
            (0..n).collect()
        } else {
            (0..n).step_by(100).collect()
        };
        let targets: Vec<[f64; 2]> = (0..n).map(|k| [el.x[k], el.y[k]]).collect();
        // Fastest of three repetitions of each (the machine is shared). "leaves": all targets
        // at once through leaf-local expansions (Tree::eval_points, what the solver uses);
        // "points": one tree walk per target (Tree::eval).
        let (mut direct_s, mut leaves_s, mut points_s) =
            (f64::INFINITY, f64::INFINITY, f64::INFINITY);
        let (mut direct, mut fast, mut per_point) = (Vec::new(), Vec::new(), Vec::new());
        for _ in 0..3 {
            let t0 = Instant::now();
            direct = sample
                .iter()
                .map(|&k| el.direct(targets[k]).0)
                .collect::<Vec<[f64; 2]>>();
            direct_s = direct_s.min(t0.elapsed().as_secs_f64() * n as f64 / sample.len() as f64);
            let t0 = Instant::now();
            let tree = Tree::new(&el, theta, tolerance);
            fast = tree
                .eval_points(&targets, true)
                .into_iter()
                .map(|v| v.0)
                .collect::<Vec<[f64; 2]>>();
            leaves_s = leaves_s.min(t0.elapsed().as_secs_f64());
            let t0 = Instant::now();
            let tree = Tree::new(&el, theta, tolerance);
            per_point = targets
                .iter()
                .map(|&p| tree.eval(p).0)
                .collect::<Vec<[f64; 2]>>();
            points_s = points_s.min(t0.elapsed().as_secs_f64());
        }
        let scale = direct
            .iter()
            .map(|w| (w[0] * w[0] + w[1] * w[1]).sqrt())
            .fold(0.0, f64::max);
        let worst = |f: &[[f64; 2]]| {
            sample
                .iter()
                .zip(&direct)
                .map(|(&k, d)| ((f[k][0] - d[0]).powi(2) + (f[k][1] - d[1]).powi(2)).sqrt())
                .fold(0.0, f64::max)
                / scale
        };
        let err = worst(&fast).max(worst(&per_point));
        println!(
            "{n:>8} {direct_s:>11.4} {leaves_s:>11.4} {points_s:>11.4} {:>9.1} {:>9.1} {err:>13.2e}",
            direct_s / leaves_s,
            direct_s / points_s
        );
        rows.push(format!(
            "{{\"n\": {n}, \"speedup\": {:.2}, \"speedup_point_by_point\": {:.2}, \"max_rel_error\": {err:.3e}}}",
            direct_s / leaves_s,
            direct_s / points_s
        ));
        std::hint::black_box(&fast);
    }
    println!(
        "order {}, theta {theta}; error = max |du| / max |u| over the sampled targets (both fast paths)",
        Tree::new(&wake(10), theta, tolerance).order()
    );
    println!("FAST_VS_DIRECT_JSON [{}]", rows.join(", "));
}
