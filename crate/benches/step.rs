//! Solver cost: time per step against wake particle count, and the wall time of ten cycles of
//! the default tandem case. Run with `cargo bench --bench step`; it prints a table (no timing
//! assertions: machines are shared and noisy, so figures are for reading, not for pass/fail).
//! Steps are timed in blocks of 16, a multiple of the default far-wake refresh (8 steps), so
//! every block holds the same number of full evaluations of the wake. At about 4,000 particles it
//! also times the step on one thread, splits that into the wake tree's build (every step), the
//! wake's velocity on itself (all of it every 8th step) and the rest, compares it with the
//! 3.33 ms a step may take for 300 steps per second (the live page runs the solver on one
//! thread), and times the same wake with every particle evaluated at every step (refresh 1);
//! the figures go out as one `STEP_4000_JSON` line for `cargo xtask bench`.

use std::time::Instant;

use finwake::fast::{Elements, Tree};
use finwake::sim::{TREE_THETA, TREE_TOLERANCE};
use finwake::{Case, Numerics, Simulation};

/// ms. Fastest of five runs of `f` (the machine is shared), each divided by `per_run`.
fn fastest(per_run: usize, mut f: impl FnMut()) -> f64 {
    let mut ms = f64::INFINITY;
    for _ in 0..5 {
        let t0 = Instant::now();
        f();
        ms = ms.min(t0.elapsed().as_secs_f64() * 1e3 / per_run as f64);
    }
    ms
}

/// Steps in one timed block (a multiple of the default far-wake refresh).
const BLOCK: usize = 16;

fn tandem() -> Case {
    Case::from_json(include_str!("../../cases/tandem-two-chords.json")).expect("shipped case")
}

/// The default tandem case run long with far-wake merging off, so that every particle stays.
fn growing(refresh: usize) -> Simulation {
    let mut case = tandem();
    case.numerics.cycles = 30;
    case.numerics.max_particles = 200_000;
    case.numerics.wake_merge = 0.0;
    case.numerics.far_wake_refresh = refresh;
    Simulation::new(&case).expect("valid")
}

fn main() {
    // Time per step as the wake grows (far-wake merging off so that every particle stays).
    let mut sim = growing(Numerics::default().far_wake_refresh);
    println!("{:>10} {:>14} {:>12}", "particles", "ms per step", "ratio");
    let mut first: Option<f64> = None;
    for target in [250usize, 500, 1000, 2000, 4000] {
        while sim.particles().0.len() < target && !sim.is_finished() {
            sim.step();
        }
        let n = sim.particles().0.len();
        // Fastest of five blocks.
        let ms = fastest(BLOCK, || (0..BLOCK).for_each(|_| sim.step()));
        let base = *first.get_or_insert(ms);
        println!("{n:>10} {ms:>14.3} {:>12.2}", ms / base);
        if target == 4000 {
            breakdown(&mut sim, ms);
        }
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

/// The 4,000-particle step on one thread and where its time goes (see the module doc).
fn breakdown(sim: &mut Simulation, all_cores_ms: f64) {
    // Inside a pool of one thread every parallel loop of the solver runs sequentially.
    let one = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .expect("a pool of one thread");
    let n = sim.particles().0.len();
    let refresh = sim.case().numerics.far_wake_refresh;
    let step_ms = one.install(|| fastest(BLOCK, || (0..BLOCK).for_each(|_| sim.step())));
    // The wake as one set of blobs of the solver's core (the solver leaves out the few newest
    // particles that form the near-wake panels, so this slightly overstates its share; the
    // solver's call also carries the foils' and near-wake blobs' far fields, a few dozen
    // translations more, which this leaves in the rest).
    let delta_sq = sim.core_radius().powi(2);
    let (x, y, g) = sim.particles();
    let mut wake = Elements::default();
    for k in 0..x.len() {
        wake.push([x[k], y[k]], g[k], 0.0, delta_sq);
    }
    let build_ms = one.install(|| {
        fastest(1, || {
            std::hint::black_box(Tree::new(&wake, TREE_THETA, TREE_TOLERANCE));
        })
    });
    let tree = Tree::new(&wake, TREE_THETA, TREE_TOLERANCE);
    let self_ms = one.install(|| {
        fastest(1, || {
            std::hint::black_box(tree.velocity_at_elements());
        })
    });
    let rest_ms = step_ms - build_ms - self_ms / refresh as f64;
    // The same wake with every particle evaluated at every step.
    let mut every = growing(1);
    while every.particles().0.len() < n && !every.is_finished() {
        every.step();
    }
    let n_every = every.particles().0.len();
    let every_ms = one.install(|| fastest(BLOCK, || (0..BLOCK).for_each(|_| every.step())));
    let budget_ms = 1e3 / 300.0;
    println!(
        "{n} particles, one thread: {step_ms:.2} ms per step = wake tree {build_ms:.2} + wake on wake {self_ms:.2} / {refresh} + rest {rest_ms:.2}; \
         {:.2} times the {budget_ms:.2} ms of 300 steps/s; all cores {all_cores_ms:.2} ms ({:.2} times faster than one thread)",
        step_ms / budget_ms,
        step_ms / all_cores_ms
    );
    println!(
        "{n_every} particles, every particle at every step (refresh 1), one thread: {every_ms:.2} ms per step, {:.2} times the refresh-{refresh} step",
        every_ms / step_ms
    );
    println!(
        "STEP_4000_JSON {{\"particles\": {n}, \"far_wake_refresh\": {refresh}, \"one_thread_ms\": {step_ms:.3}, \"tree_build_ms\": {build_ms:.3}, \"wake_on_wake_ms\": {self_ms:.3}, \"rest_ms\": {rest_ms:.3}, \"over_300_per_s_budget\": {:.2}, \"all_cores_ms\": {all_cores_ms:.3}, \"threads_speedup\": {:.2}, \"every_step_particles\": {n_every}, \"every_step_one_thread_ms\": {every_ms:.3}, \"every_step_over_refresh\": {:.2}}}",
        step_ms / budget_ms,
        step_ms / all_cores_ms,
        every_ms / step_ms
    );
}
