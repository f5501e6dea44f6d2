//! Case builders and small statistics helpers shared by the checks.

use finwake::{Case, Simulation, Summary};

/// The shipped single-foil example with chord 0.1 m at 0.5 m/s.
pub fn single() -> Case {
    Case::from_json(include_str!("../../cases/single-efficient.json"))
        .expect("shipped case is valid")
}

/// The shipped tandem example (gap two chords, hind phase 90 deg).
pub fn tandem() -> Case {
    Case::from_json(include_str!("../../cases/tandem-two-chords.json"))
        .expect("shipped case is valid")
}

/// A thin foil (2 % thick, close to the flat plate of linear theory) at reduced frequency `k`.
pub fn thin_foil(k: f64, panels: usize) -> Case {
    let mut c = single();
    let (chord, speed) = (c.foils[0].chord, c.flow.speed);
    c.frequency = k * speed / (std::f64::consts::PI * chord);
    let f = &mut c.foils[0];
    f.thickness = 0.02;
    f.heave = 0.0;
    f.pitch = 0.0;
    f.pitch_lead = 0.0;
    c.numerics.panels = panels;
    c
}

/// Runs `case` to the end.
pub fn run(case: &Case) -> Summary {
    Simulation::new(case).expect("valid case").run_to_end()
}

/// Mean and first-harmonic coefficients of `y(phi)` sampled at equally spaced phases (deg) over
/// one turn: returns (a0, a1, b1, share of the variance in the first harmonic).
pub fn first_harmonic(phases_deg: &[f64], y: &[f64]) -> (f64, f64, f64, f64) {
    let n = y.len() as f64;
    let a0 = y.iter().sum::<f64>() / n;
    let (mut a1, mut b1) = (0.0, 0.0);
    for (p, v) in phases_deg.iter().zip(y) {
        a1 += 2.0 / n * v * p.to_radians().cos();
        b1 += 2.0 / n * v * p.to_radians().sin();
    }
    let var = y.iter().map(|v| (v - a0).powi(2)).sum::<f64>() / n;
    (a0, a1, b1, 0.5 * (a1 * a1 + b1 * b1) / var)
}

/// Difference of two angles in degrees, wrapped to (-180, 180].
pub fn angle_diff(a: f64, b: f64) -> f64 {
    let mut d = (a - b) % 360.0;
    if d > 180.0 {
        d -= 360.0;
    }
    if d <= -180.0 {
        d += 360.0;
    }
    d
}
