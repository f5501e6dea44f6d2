//! Unsteady checks on one foil against linear theory (Wagner, Theodorsen, Garrick), Kelvin's
//! theorem, the vortex-impulse force, and numerical convergence.

use crate::common::{angle_diff, run, single, tandem, thin_foil};
use crate::reference::*;
use finwake::sim::steady_solution;
use finwake::{Case, Numerics, Simulation};
use std::f64::consts::PI;

/// Panels for the thin-foil checks: a 2 % section needs panels shorter than its thickness
/// (300 cosine-spaced panels give mid-chord panels of 1 % chord).
const THIN_PANELS: usize = 300;

#[test]
fn wagner_lift_growth_after_an_impulsive_start() {
    let mut case = thin_foil(0.0, THIN_PANELS);
    let (c, u) = (case.foils[0].chord, case.flow.speed);
    case.frequency = 0.0;
    case.foils[0].pitch_mean = 2.0;
    let semichord_time = 0.5 * c / u;
    case.numerics.time_step = Some(0.025 * semichord_time);
    case.numerics.duration = Some(21.0 * semichord_time);
    let mut sim = Simulation::new(&case).unwrap();
    sim.run_to_end();
    // Normalise by the steady lift of the same discretisation (thickness and panels cancel).
    let nodes = finwake::geometry::symmetric_section(0.02, THIN_PANELS);
    let alpha = 2f64.to_radians();
    let steady = steady_solution(&nodes, 1.0, alpha);
    let dt = sim.time_step();
    let hist = sim.history();
    let mut worst: f64 = 0.0;
    for &(s, phi) in WAGNER.iter().filter(|r| r.0 <= 20.0) {
        let k = (s * semichord_time / dt).round() as usize;
        let ratio = hist[k][0].lift_coefficient / steady.lift_coefficient;
        eprintln!(
            "Wagner s = {s}: C_L/C_L,steady = {ratio:.5}, Phi = {phi}, error {:+.3} %",
            100.0 * (ratio / phi - 1.0)
        );
        worst = worst.max((ratio / phi - 1.0).abs());
    }
    // Tolerance: 1 % for s >= 2 semichords (the accuracy asked of the solver).
    assert!(worst < 0.01, "worst relative error {worst}");
    // Bound circulation against Küssner's function (secondary check, 1.5 %).
    let gamma_steady = -0.5 * steady.lift_coefficient_circulation * u * c;
    for &(s, psi) in &KUSSNER {
        let k = (s * semichord_time / dt).round() as usize;
        let ratio = hist[k][0].circulation / gamma_steady;
        eprintln!("Kussner s = {s}: Gamma/Gamma_steady = {ratio:.5}, psi = {psi}");
        assert!(
            (ratio / psi - 1.0).abs() < 0.015,
            "s = {s}: {ratio} vs {psi}"
        );
    }
    // The vortex-impulse lift, rho d/dt sum(Gamma x), agrees with the pressure lift (2 %).
    let imp = sim.impulse_history();
    let q = 0.5 * sim.summary().density * u * u;
    for &(s, _) in WAGNER.iter().filter(|r| r.0 <= 20.0) {
        let k = (s * semichord_time / dt).round() as usize;
        let lift_impulse =
            -sim.summary().density * (imp[k + 1][1] - imp[k - 1][1]) / (2.0 * dt) / (q * c);
        let lift = hist[k][0].lift_coefficient;
        eprintln!("impulse lift at s = {s}: {lift_impulse:.5} vs pressure {lift:.5}");
        assert!((lift_impulse / lift - 1.0).abs() < 0.02);
    }
}

fn theodorsen_case(k: f64, pivot: Option<f64>) -> (f64, f64) {
    let mut case = thin_foil(k, THIN_PANELS);
    let norm = match pivot {
        None => {
            case.foils[0].heave = 0.02 * case.foils[0].chord;
            0.02
        }
        Some(p) => {
            case.foils[0].pivot = p;
            case.foils[0].pitch = 1.0;
            1f64.to_radians()
        }
    };
    let s = run(&case);
    (s.foils[0].lift_amplitude / norm, s.foils[0].lift_phase)
}

fn check_theodorsen(name: &str, table: &[(f64, f64, f64)], pivot: Option<f64>) {
    for &(k, amp, phase) in table {
        let (a, p) = theodorsen_case(k, pivot);
        eprintln!(
            "Theodorsen {name} k = {k}: |C_L| {a:.4} vs {amp} ({:+.2} %), phase {p:.2} vs {phase} ({:+.2} deg)",
            100.0 * (a / amp - 1.0),
            angle_diff(p, phase)
        );
        // Tolerances: amplitude 2 %, phase 2 deg (the accuracy asked of the solver; a 2 % thick
        // section accounts for about 1 % of it).
        assert!((a / amp - 1.0).abs() < 0.02, "{name} k = {k}: {a} vs {amp}");
        assert!(
            angle_diff(p, phase).abs() < 2.0,
            "{name} k = {k}: {p} vs {phase}"
        );
    }
}

#[test]
fn theodorsen_pure_heave() {
    check_theodorsen("heave", &THEODORSEN_HEAVE, None);
}

#[test]
fn theodorsen_pitch_about_quarter_chord() {
    check_theodorsen("pitch c/4", &THEODORSEN_PITCH_QUARTER, Some(0.25));
}

#[test]
fn theodorsen_pitch_about_third_chord() {
    check_theodorsen("pitch c/3", &THEODORSEN_PITCH_THIRD, Some(1.0 / 3.0));
}

#[test]
fn garrick_pure_heave_thrust_and_efficiency() {
    for &(k, ct_ref, cp_ref, eta_ref) in &GARRICK_HEAVE {
        let mut case = thin_foil(k, THIN_PANELS);
        // Heave velocity amplitude 0.05 U: small enough for linear theory, large enough that the
        // thrust stands well above the steady discretisation error (about 1e-5 in C_T).
        let h = 0.025 / k;
        case.foils[0].heave = h * case.foils[0].chord;
        let s = run(&case);
        let f = &s.foils[0];
        let ct = f.thrust_coefficient / (h * h);
        let cp = f.power_coefficient / (h * h);
        let eta = f.efficiency.expect("thrust and power are positive");
        eprintln!(
            "Garrick heave k = {k}: C_T/(h/c)^2 {ct:.4} vs {ct_ref} ({:+.2} %), C_P {cp:.4} vs {cp_ref} ({:+.2} %), eta {eta:.4} vs {eta_ref}",
            100.0 * (ct / ct_ref - 1.0),
            100.0 * (cp / cp_ref - 1.0)
        );
        // Tolerances: thrust 5 % for k <= 1, efficiency 0.03 (the accuracy asked of the solver).
        assert!(
            (ct / ct_ref - 1.0).abs() < 0.05,
            "k = {k}: {ct} vs {ct_ref}"
        );
        assert!((eta - eta_ref).abs() < 0.03, "k = {k}: {eta} vs {eta_ref}");
    }
}

#[test]
fn garrick_combined_heave_and_pitch() {
    let (ct_ref, cp_ref, eta_ref, cl_ref, ph_ref) = GARRICK_COMBINED;
    let mut case = thin_foil(1.0, THIN_PANELS);
    let f = &mut case.foils[0];
    f.pivot = 1.0 / 3.0;
    f.heave = 0.05 * f.chord;
    f.pitch = 0.05f64.to_degrees();
    f.pitch_lead = 90.0;
    let s = run(&case);
    let r = &s.foils[0];
    let eta = r.efficiency.expect("thrust and power are positive");
    eprintln!(
        "Garrick combined: C_T {:.6} vs {ct_ref} ({:+.2} %), C_P {:.6} vs {cp_ref}, eta {eta:.4} vs {eta_ref}, |C_L| {:.5} vs {cl_ref}, phase {:.2} vs {ph_ref}",
        r.thrust_coefficient,
        100.0 * (r.thrust_coefficient / ct_ref - 1.0),
        r.power_coefficient,
        r.lift_amplitude,
        r.lift_phase
    );
    assert!((r.thrust_coefficient / ct_ref - 1.0).abs() < 0.05);
    assert!((eta - eta_ref).abs() < 0.03);
    assert!((r.lift_amplitude / cl_ref - 1.0).abs() < 0.02);
    assert!(angle_diff(r.lift_phase, ph_ref).abs() < 2.0);
}

fn kelvin_residual(case: &finwake::Case) -> f64 {
    let mut sim = Simulation::new(case).unwrap();
    let mut worst: f64 = 0.0;
    let mut scale: f64 = 0.0;
    while !sim.is_finished() {
        sim.step();
        for l in sim.loads() {
            scale = scale.max(l.circulation.abs());
        }
        worst = worst.max(sim.total_circulation().abs());
    }
    worst / scale
}

#[test]
fn kelvin_total_circulation_stays_zero_every_step() {
    let mut one = single();
    one.numerics.cycles = 4;
    let mut two = tandem();
    two.numerics.cycles = 4;
    let (r1, r2) = (kelvin_residual(&one), kelvin_residual(&two));
    eprintln!(
        "Kelvin: max |sum Gamma| / max |Gamma_bound| = {r1:.2e} (one foil), {r2:.2e} (two foils)"
    );
    // Round-off: the sums run over a few thousand terms of double precision (1e-16 each).
    assert!(r1 < 1e-12 && r2 < 1e-12, "{r1} {r2}");
}

#[test]
fn impulse_thrust_agrees_with_pressure_thrust() {
    // Mean force from the vortex impulse over whole cycles (Saffman 1992, ch. 3), against the
    // pressure integral: two independent paths to the thrust (physics note: cross-check).
    let mut case = thin_foil(1.0, THIN_PANELS);
    case.foils[0].heave = 0.025 * case.foils[0].chord;
    let mut sim = Simulation::new(&case).unwrap();
    let s = sim.run_to_end();
    let spc = case.numerics.steps_per_cycle;
    let first = s.first_cycle_averaged * spc;
    let last = sim.steps_taken();
    let imp = sim.impulse_history();
    let dt = sim.time_step();
    let u = case.flow.speed;
    let q = 0.5 * s.density * u * u;
    // Thrust = -F_x = rho dI_x/dt; impulse after step k is at time k dt + dt (after convection).
    let thrust_impulse =
        s.density * (imp[last - 1][0] - imp[first - 1][0]) / ((last - first) as f64 * dt);
    let ct_impulse = thrust_impulse / (q * case.foils[0].chord);
    eprintln!(
        "thrust: impulse C_T {ct_impulse:.6} vs pressure C_T {:.6}",
        s.foils[0].thrust_coefficient
    );
    // Tolerance 5 %: pressure thrust converges from above as panels resolve the leading-edge
    // suction (+8.6 % at 120 panels, measured), the impulse path does not depend on it.
    assert!((ct_impulse / s.foils[0].thrust_coefficient - 1.0).abs() < 0.05);
}

#[test]
fn tandem_thrust_converges_with_time_step_and_panels() {
    let base = run(&tandem());
    let mut fine = tandem();
    fine.numerics.steps_per_cycle *= 2;
    fine.numerics.panels *= 2;
    let fine = run(&fine);
    let change = (fine.total.thrust / base.total.thrust - 1.0).abs();
    eprintln!(
        "convergence: total thrust {:.5} N (80 panels, 100 steps/cycle) vs {:.5} N (160, 200): {:.2} %",
        base.total.thrust,
        fine.total.thrust,
        100.0 * change
    );
    assert!(change < 0.02, "{change}");
}

#[test]
fn forces_insensitive_to_blob_core_at_small_amplitude() {
    let mut results = Vec::new();
    for core in [0.02, 0.05, 0.1] {
        let mut case = thin_foil(1.0, 200);
        case.foils[0].heave = 0.02 * case.foils[0].chord;
        case.numerics.core_size = core;
        let s = run(&case);
        results.push((
            core,
            s.foils[0].lift_amplitude,
            s.foils[0].thrust_coefficient,
        ));
    }
    for r in &results {
        eprintln!("core {}: |C_L| {:.5}, C_T {:.4e}", r.0, r.1, r.2);
    }
    // Within 1 % across a five-fold change of the core (small amplitude: the wake is nearly planar).
    for r in &results[1..] {
        assert!((r.1 / results[0].1 - 1.0).abs() < 0.01);
        assert!((r.2 / results[0].2 - 1.0).abs() < 0.01);
    }
    let _ = PI;
}

#[test]
fn coarsening_the_far_wake_leaves_mean_forces_unchanged() {
    // The default tandem case with every particle kept (no merging, no cap) against the two
    // kinds of wake management: merging by distance from the foils (the default,
    // numerics.wake_merge = 0.1), and a cap that forces the oldest particles to be merged from
    // the fourth cycle on. Both keep circulation and its first moment.
    let mut free = tandem();
    free.numerics.max_particles = 200_000;
    free.numerics.wake_merge = 0.0;
    let mut merged = tandem();
    merged.numerics.max_particles = 200_000;
    let mut capped = tandem();
    capped.numerics.max_particles = 600;
    capped.numerics.wake_merge = 0.0;
    let (a, m, b) = (run(&free), run(&merged), run(&capped));
    assert!(
        b.particles <= 600 && a.particles > 600,
        "{} {}",
        a.particles,
        b.particles
    );
    // Merging bounds the count well below the full wake (1600 particles after 8 cycles).
    assert!(
        m.particles < a.particles / 4,
        "{} {}",
        m.particles,
        a.particles
    );
    for (label, r) in [("merging", &m), ("cap", &b)] {
        for i in 0..2 {
            let (ta, tb) = (a.foils[i].thrust, r.foils[i].thrust);
            let (pa, pb) = (a.foils[i].power, r.foils[i].power);
            eprintln!(
                "{label}: foil {i} thrust {ta:.5} vs {tb:.5} N ({:+.3} %), power {pa:.5} vs {pb:.5} W ({:+.3} %), particles {} vs {}",
                100.0 * (tb / ta - 1.0),
                100.0 * (pb / pa - 1.0),
                a.particles,
                r.particles
            );
            // 0.5 %: the accuracy asked of wake management (mean forces against an unpruned run).
            assert!((tb / ta - 1.0).abs() < 0.005 && (pb / pa - 1.0).abs() < 0.005);
        }
    }
}

#[test]
fn refreshing_the_far_wake_every_few_steps_leaves_mean_forces_unchanged() {
    // Far-wake particles (beyond four chords of every foil) evaluated every
    // numerics.far_wake_refresh steps and moved in between with their velocity extrapolated
    // from their last two evaluations, against the run that evaluates every particle at every
    // step (refresh 1). Every particle is kept (no merging) so that most of the wake is far:
    // the default tandem case, and the high-Strouhal example (2 Hz, St 0.52), whose strong
    // wake vortices are the hardest of the shipped cases to follow.
    let sprint = Case::from_json(include_str!("../../cases/high-strouhal-sprint.json"))
        .expect("shipped case is valid");
    for (name, base) in [("tandem", tandem()), ("high-Strouhal", sprint)] {
        let with = |refresh: usize| {
            let mut c = base.clone();
            c.numerics.wake_merge = 0.0;
            c.numerics.max_particles = 200_000;
            c.numerics.far_wake_refresh = refresh;
            run(&c)
        };
        let every = with(1);
        let default = Numerics::default().far_wake_refresh;
        for refresh in [4, default] {
            let r = with(refresh);
            for (i, (a, b)) in every.foils.iter().zip(&r.foils).enumerate() {
                let (dt, dp) = (b.thrust / a.thrust - 1.0, b.power / a.power - 1.0);
                eprintln!(
                    "far-wake refresh {refresh}, {name} foil {i}: thrust {:+.4} %, power {:+.4} % against every step ({} particles)",
                    100.0 * dt,
                    100.0 * dp,
                    r.particles
                );
                // 0.5 % is the accuracy asked of wake management (mean forces against a run
                // that keeps the full wake at every step). The refresh is held to a fifth of
                // that (our choice, so that it costs little of the allowance).
                assert!(dt.abs() < 0.001 && dp.abs() < 0.001);
            }
        }
    }
}

#[test]
fn far_wake_extrapolation_is_second_order() {
    // The particle positions after three cycles of the default tandem case (every particle
    // kept), against the run that evaluates every particle at every step. The median distance is
    // taken: a few particles in the rolled-up vortex cores drift apart chaotically whatever the
    // scheme. The extrapolated velocity is second order in time, so the error grows as the
    // square of the refresh interval (ratio 4 from 4 to 8 steps); holding the last evaluated
    // velocity instead (first order) gives ratio 2.
    let mut case = tandem();
    case.numerics.wake_merge = 0.0;
    case.numerics.cycles = 3;
    let positions = |refresh: usize| {
        let mut c = case.clone();
        c.numerics.far_wake_refresh = refresh;
        let mut sim = Simulation::new(&c).expect("valid case");
        sim.run_to_end();
        let (x, y, _) = sim.particles();
        (x.to_vec(), y.to_vec())
    };
    let every = positions(1);
    let median_error = |refresh: usize| {
        let (x, y) = positions(refresh);
        assert_eq!(x.len(), every.0.len());
        let mut d: Vec<f64> = (0..x.len())
            .map(|i| ((x[i] - every.0[i]).powi(2) + (y[i] - every.1[i]).powi(2)).sqrt())
            .collect();
        d.sort_by(f64::total_cmp);
        d[d.len() / 2]
    };
    let (e4, e8) = (median_error(4), median_error(8));
    eprintln!(
        "far-wake refresh: median position error {e4:.3e} m at 4 steps, {e8:.3e} m at 8 (ratio {:.2})",
        e8 / e4
    );
    // An observed order of at least 1.5 (ratio 2^1.5 = 2.83) tells second order (ratio 4) from
    // first (ratio 2). Measured: 3.26; with the last evaluated velocity held, 1.81.
    assert!(e8 / e4 > 2f64.powf(1.5), "ratio {}", e8 / e4);
    // And the error stays small against the 5 mm the stream moves in one step.
    assert!(e8 < 5e-3, "{e8}");
}
