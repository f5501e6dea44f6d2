//! Solver cost: time per step against wake particle count, and the wall time of ten cycles of
//! the default tandem case. Run with `cargo bench --bench step`; it prints a table (no timing
//! assertions: machines are shared and noisy, so figures are for reading, not for pass/fail).

use std::time::Instant;

use finwake::{Case, Simulation};

fn tandem() -> Case {
    Case::from_json(include_str!("../../cases/tandem-two-chords.json")).expect("shipped case")
}

fn main() {
    // Time per step as the wake grows (far-wake merging off so that every particle stays).
    let mut case = tandem();
    case.numerics.cycles = 30;
    case.numerics.max_particles = 200_000;
    case.numerics.wake_merge = 0.0;
    let mut sim = Simulation::new(&case).expect("valid");
    println!("{:>10} {:>14} {:>12}", "particles", "ms per step", "ratio");
    let mut first: Option<f64> = None;
    for target in [250usize, 500, 1000, 2000, 4000] {
        while sim.particles().0.len() < target && !sim.is_finished() {
            sim.step();
        }
        let n = sim.particles().0.len();
        // Fastest of five blocks of four steps (the machine is shared).
        let mut ms = f64::INFINITY;
        for _ in 0..5 {
            let t0 = Instant::now();
            for _ in 0..4 {
                sim.step();
            }
            ms = ms.min(t0.elapsed().as_secs_f64() * 1e3 / 4.0);
        }
        let base = *first.get_or_insert(ms);
        println!("{n:>10} {ms:>14.3} {:>12.2}", ms / base);
    }
    // Ten cycles of the default tandem case, as a user runs it.
    let mut case = tandem();
    case.numerics.cycles = 10;
    let t0 = Instant::now();
    let s = Simulation::new(&case).expect("valid").run_to_end();
    let wall = t0.elapsed().as_secs_f64();
    println!(
        "default tandem case, 10 cycles ({} steps, {} particles at the end): {wall:.3} s wall, {:.3} ms per step",
        s.steps,
        s.particles,
        wall * 1e3 / s.steps as f64
    );
    std::hint::black_box(s);
}
