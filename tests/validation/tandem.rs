//! Tandem behaviour on which published studies agree (summarised in the design notes' literature
//! review: Boschitsch, Dewey & Smits 2014; Broering & Lian 2012; Deng, Shao & Yu 2007; Kurt et al.
//! 2020; Li et al. 2020), and robustness of the wake-foil encounter.

use crate::common::{first_harmonic, run, tandem};
use finwake::{Case, Simulation};

/// The default tandem pair with the hind foil `gap` chords behind the fore foil's trailing edge,
/// `offset` chords above it, lagging by `phase` deg.
fn pair(gap: f64, offset: f64, phase: f64) -> Case {
    let mut c = tandem();
    let chord = c.foils[0].chord;
    c.foils[1].x = c.foils[0].x + chord * (1.0 + gap);
    c.foils[1].y = c.foils[0].y + chord * offset;
    c.foils[1].phase = phase;
    c
}

fn isolated() -> Case {
    let mut c = tandem();
    c.foils.truncate(1);
    c
}

const PHASES: [f64; 8] = [0.0, 45.0, 90.0, 135.0, 180.0, 225.0, 270.0, 315.0];

/// Mean thrust coefficients (fore, hind) at each phase of [`PHASES`].
fn phase_sweep(gap: f64) -> Vec<(f64, f64)> {
    PHASES
        .iter()
        .map(|&p| {
            let s = run(&pair(gap, 0.0, p));
            (s.foils[0].thrust_coefficient, s.foils[1].thrust_coefficient)
        })
        .collect()
}

#[test]
fn tandem_phase_and_gap_behaviour() {
    let alone = run(&isolated()).foils[0].thrust_coefficient;
    let gaps = [0.5, 1.0, 2.0, 4.0];
    let mut optima = Vec::new();
    let mut departures = Vec::new();
    for &g in &gaps {
        let sweep = phase_sweep(g);
        let hind: Vec<f64> = sweep.iter().map(|r| r.1).collect();
        let (a0, a1, b1, share) = first_harmonic(&PHASES, &hind);
        let best = b1.atan2(a1).to_degrees();
        let dep = sweep
            .iter()
            .map(|r| (r.0 / alone - 1.0).abs())
            .fold(0.0, f64::max);
        eprintln!(
            "gap {g} c: hind C_T over phase {hind:.4?}; mean {a0:.4}, first harmonic {:.4} ({:.1} % of variance), best phase {best:.1} deg; largest fore departure from isolated {:.2} %",
            (a1 * a1 + b1 * b1).sqrt(),
            100.0 * share,
            100.0 * dep
        );
        // S1: published studies show one maximum and one minimum per turn of phase; the first
        // harmonic carries at least 80 % of the variance (common-practice threshold).
        assert!(share > 0.8, "gap {g}: first harmonic share {share}");
        optima.push(best);
        departures.push(dep);
    }
    // S4: the fore foil's largest departure (over phase) from an isolated foil shrinks as the gap
    // grows and is small from two chords on. Potential flow keeps a 1/distance upwash from the
    // hind foil's bound circulation, so a few percent remain; the literature review puts it below
    // about 10 % at two chords (order of magnitude).
    for w in departures.windows(2) {
        assert!(w[1] < w[0], "fore departure did not shrink: {departures:?}");
    }
    assert!(departures[2] < 0.1 && departures[3] < 0.1, "{departures:?}");

    // S2: the best phase moves with the gap at 360 f (gap change) / U_c. U_c, the wake's
    // convection speed between the foils, is measured on the isolated fore foil: the mean
    // streamwise velocity of its wake particles between 0.5 and 3 chords behind its TE.
    let case = isolated();
    let mut sim = Simulation::new(&case).unwrap();
    sim.run_to_end();
    let (x, y, g) = sim.particles();
    let chord = case.foils[0].chord;
    let te = case.foils[0].x + chord;
    let (mut num, mut den) = (0.0, 0.0);
    for i in 0..x.len() {
        if x[i] > te + 0.5 * chord && x[i] < te + 3.0 * chord {
            let w = g[i].abs();
            num += w * sim.velocity([x[i], y[i]])[0];
            den += w;
        }
    }
    let uc = num / den;
    let f = case.frequency;
    for (i, j) in [(1, 2), (2, 3)] {
        let dg = gaps[j] - gaps[i];
        let predicted = 360.0 * f * chord * dg / uc;
        let nominal = 360.0 * f * chord * dg / case.flow.speed;
        let mut shift = (optima[j] - optima[i]).rem_euclid(360.0);
        if shift < predicted - 180.0 {
            shift += 360.0;
        }
        eprintln!(
            "gap {} -> {} c: best phase moves {shift:.1} deg; 360 f dgap / U_c = {predicted:.1} deg (U_c = {uc:.4} m/s), with U: {nominal:.1} deg",
            gaps[i], gaps[j]
        );
        // Within 20 % of the wake-convection prediction (common practice: hind-foil data
        // collapse when the phase is corrected for wake convection).
        assert!(
            (shift / predicted - 1.0).abs() < 0.2,
            "{shift} vs {predicted}"
        );
    }
}

#[test]
fn hind_foil_far_above_the_pair_line_behaves_as_isolated() {
    let alone = run(&isolated()).foils[0].clone();
    let far = run(&pair(2.0, 10.0, 90.0));
    for (i, f) in far.foils.iter().enumerate() {
        let r = f.thrust_coefficient / alone.thrust_coefficient;
        eprintln!("foil {i} ten chords above: C_T ratio to isolated {r:.4}");
        // "Within a few percent" (interaction weakens beyond the wake width; common practice).
        assert!((r - 1.0).abs() < 0.03, "foil {i}: {r}");
    }
}

#[test]
fn hind_foil_cutting_the_fore_wake_at_quarter_chord_gap_stays_finite_and_periodic() {
    let mut case = pair(0.25, 0.0, 180.0);
    case.numerics.cycles = 50;
    case.numerics.steps_per_cycle = 60;
    case.numerics.max_particles = 1500;
    let mut sim = Simulation::new(&case).unwrap();
    let mut peak_particles = 0;
    while !sim.is_finished() {
        sim.step();
        peak_particles = peak_particles.max(sim.particles().0.len());
        assert!(sim
            .loads()
            .iter()
            .all(|l| l.thrust_coefficient.is_finite() && l.lift_coefficient.is_finite()));
    }
    let (x, y, g) = sim.particles();
    assert!(x.iter().chain(y).chain(g).all(|v| v.is_finite()));
    // Bounded wake: never above the cap.
    assert!(peak_particles <= 1500, "{peak_particles}");
    // Periodic: the per-cycle mean thrust of each foil over the last ten cycles varies by less
    // than 10 % of its mean (a wake hitting the foil makes cycles differ somewhat).
    let spc = case.numerics.steps_per_cycle;
    let h = sim.history();
    for foil in 0..2 {
        let means: Vec<f64> = (40..50)
            .map(|c| {
                h[c * spc..(c + 1) * spc]
                    .iter()
                    .map(|r| r[foil].thrust_coefficient)
                    .sum::<f64>()
                    / spc as f64
            })
            .collect();
        let avg = means.iter().sum::<f64>() / means.len() as f64;
        let spread = means.iter().map(|m| (m - avg).abs()).fold(0.0, f64::max);
        eprintln!("quarter-chord gap, foil {foil}: cycle-mean C_T {avg:.4}, largest departure {spread:.4}, peak particles {peak_particles}");
        assert!(spread < 0.1 * avg.abs().max(0.05), "foil {foil}: {means:?}");
    }
}
