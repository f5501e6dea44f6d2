//! Cycle statistics and the summary whose JSON keys are the contract with the page and scripts.

use crate::detmath::DetMath;
use serde::Serialize;

/// Per-foil cycle statistics. Coefficients use each foil's own chord and span with the free-stream
/// dynamic pressure (see [`crate::conventions`]). Means are over the averaged cycles only.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FoilSummary {
    /// Mean thrust coefficient, positive upstream.
    pub thrust_coefficient: f64,
    /// Mean lift coefficient, positive +y.
    pub lift_coefficient: f64,
    /// Amplitude of the first harmonic of the lift coefficient.
    pub lift_amplitude: f64,
    /// deg. Phase of the first harmonic of the lift coefficient, against `sin(2 pi f t)`
    /// (the lift coefficient is `mean + amplitude * sin(2 pi f t + lift_phase)`).
    pub lift_phase: f64,
    /// Mean moment coefficient about the pivot, nose-up positive.
    pub moment_coefficient: f64,
    /// Mean input-power coefficient (power delivered by the actuators to the fluid).
    pub power_coefficient: f64,
    /// Propulsive efficiency mean(thrust) U / mean(power); `None` unless both are positive.
    pub efficiency: Option<f64>,
    /// N. Mean thrust.
    pub thrust: f64,
    /// W. Mean input power.
    pub power: f64,
    /// N. Largest absolute lift over the averaged cycles.
    pub peak_lift: f64,
    /// N m. Largest absolute moment about the pivot over the averaged cycles.
    pub peak_torque: f64,
    /// deg. Largest absolute effective angle of attack at the pivot over a cycle.
    pub max_angle_of_attack: f64,
    /// Strouhal number f A / U, A = peak-to-peak trailing-edge excursion.
    pub strouhal: f64,
    /// Heave-based Strouhal number 2 f h0 / U.
    pub strouhal_heave: f64,
    /// Reduced frequency pi f c / U (semichord based).
    pub reduced_frequency: f64,
    /// Reynolds number U c / nu.
    pub reynolds: f64,
}

/// Statistics of all foils together. Coefficients use the summed planform area.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TotalSummary {
    /// Mean thrust coefficient on the summed planform area.
    pub thrust_coefficient: f64,
    /// Mean input-power coefficient on the summed planform area.
    pub power_coefficient: f64,
    /// Propulsive efficiency of the group; `None` unless thrust and power are both positive.
    pub efficiency: Option<f64>,
    /// N. Mean thrust of all foils.
    pub thrust: f64,
    /// W. Mean input power of all foils.
    pub power: f64,
}

/// Everything `finwake simulate --json` prints.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Summary {
    /// Per-foil statistics, in case order.
    pub foils: Vec<FoilSummary>,
    /// Statistics of all foils together.
    pub total: TotalSummary,
    /// Number of whole cycles averaged (0 for a start from rest, whose values are final values).
    pub cycles_averaged: usize,
    /// First averaged cycle (0-based); cycles before it are the start-up transient.
    pub first_cycle_averaged: usize,
    /// Cycles whose motion amplitude was reduced by the smooth start (0-based, half-open range).
    pub ramp_cycles: [usize; 2],
    /// True when the last two averaged cycles agree (mean thrust and power within 1 % of the scale
    /// of the forces), or for a start from rest when the lift changed by less than 1 % over the last
    /// tenth of the run.
    pub converged: bool,
    /// s. Time step used.
    pub time_step: f64,
    /// Time steps taken.
    pub steps: usize,
    /// Free wake particles at the end of the run.
    pub particles: usize,
    /// Particle cap beyond which the far wake is coarsened.
    pub particle_cap: usize,
    /// kg/m^3. Water density used.
    pub density: f64,
    /// m^2/s. Water kinematic viscosity used.
    pub kinematic_viscosity: f64,
}

/// Computes the summary of `sim` from its load history.
pub(crate) fn summarise(sim: &crate::sim::Simulation) -> Summary {
    use crate::kinematics;
    let case = sim.case();
    let hist = sim.history();
    let nf = case.foils.len();
    let speed = case.flow.speed;
    let rho = sim.density();
    let props = crate::water::properties(case.flow.water, case.flow.temperature);
    let q = 0.5 * rho * speed * speed;
    let oscillating = case.frequency > 0.0;
    let spc = case.numerics.steps_per_cycle;
    let done_cycles = if oscillating { hist.len() / spc } else { 0 };
    let ramp_end = if oscillating {
        case.numerics.ramp_cycles.ceil() as usize
    } else {
        0
    };
    let first = ramp_end.max(case.numerics.cycles / 2);
    let (lo, hi, cycles_averaged, first_cycle) = if oscillating {
        if done_cycles > first {
            (first * spc, done_cycles * spc, done_cycles - first, first)
        } else if done_cycles > 0 {
            // Not enough cycles yet: the last complete one.
            (
                (done_cycles - 1) * spc,
                done_cycles * spc,
                1,
                done_cycles - 1,
            )
        } else {
            (0, hist.len(), 0, 0)
        }
    } else {
        (hist.len().saturating_sub(1), hist.len(), 0, 0)
    };
    let motions = crate::sim::case_motions(sim);
    let omega = 2.0 * std::f64::consts::PI * case.frequency;
    let dt = sim.time_step();
    let mean = |f: &dyn Fn(&crate::sim::FoilLoads) -> f64, i: usize, a: usize, b: usize| -> f64 {
        if b <= a {
            return f64::NAN;
        }
        hist[a..b].iter().map(|r| f(&r[i])).sum::<f64>() / (b - a) as f64
    };
    let mut foils = Vec::with_capacity(nf);
    let mut converged = oscillating && cycles_averaged >= 2;
    for (i, foil) in case.foils.iter().enumerate() {
        let ct = mean(&|l| l.thrust_coefficient, i, lo, hi);
        let cl = mean(&|l| l.lift_coefficient, i, lo, hi);
        let cm = mean(&|l| l.moment_coefficient, i, lo, hi);
        let cpw = mean(&|l| l.power_coefficient, i, lo, hi);
        let (mut a, mut b) = (0.0, 0.0);
        if oscillating && hi > lo {
            for (k, r) in hist[lo..hi].iter().enumerate() {
                let t = (lo + k) as f64 * dt;
                a += r[i].lift_coefficient * (omega * t).dsin();
                b += r[i].lift_coefficient * (omega * t).dcos();
            }
            a *= 2.0 / (hi - lo) as f64;
            b *= 2.0 / (hi - lo) as f64;
        }
        let slice = if hi > lo { &hist[lo..hi] } else { &hist[0..0] };
        let peak_lift = slice.iter().map(|r| r[i].lift.abs()).fold(0.0, f64::max);
        let peak_torque = slice.iter().map(|r| r[i].moment.abs()).fold(0.0, f64::max);
        let (motion, chord, pivot) = motions[i];
        let area = chord * foil.span;
        if oscillating && cycles_averaged >= 2 {
            let (c1, c2) = ((done_cycles - 2) * spc, (done_cycles - 1) * spc);
            let t1 = mean(&|l| l.thrust_coefficient, i, c1, c2);
            let t2 = mean(&|l| l.thrust_coefficient, i, c2, c2 + spc);
            let p1 = mean(&|l| l.power_coefficient, i, c1, c2);
            let p2 = mean(&|l| l.power_coefficient, i, c2, c2 + spc);
            let scale = ct.abs().max(cpw.abs()).max(0.01);
            if (t1 - t2).abs() > 0.01 * scale || (p1 - p2).abs() > 0.01 * scale {
                converged = false;
            }
        }
        if !oscillating {
            let n = hist.len();
            let k = n - n / 10 - 1;
            let (l0, l1) = (
                hist[k.min(n - 1)][i].lift_coefficient,
                hist[n - 1][i].lift_coefficient,
            );
            converged = n >= 10 && (l1 - l0).abs() <= 0.01 * l1.abs().max(1e-3);
        }
        foils.push(FoilSummary {
            thrust_coefficient: ct,
            lift_coefficient: cl,
            lift_amplitude: (a * a + b * b).sqrt(),
            lift_phase: b.datan2(a).to_degrees(),
            moment_coefficient: cm,
            power_coefficient: cpw,
            efficiency: if ct > 0.0 && cpw > 0.0 {
                Some(ct / cpw)
            } else {
                None
            },
            thrust: ct * q * area,
            power: cpw * q * speed * area,
            peak_lift,
            peak_torque,
            max_angle_of_attack: kinematics::max_angle_of_attack(&motion, speed).to_degrees(),
            strouhal: case.frequency * kinematics::trailing_edge_excursion(&motion, chord, pivot)
                / speed,
            strouhal_heave: 2.0 * case.frequency * foil.heave / speed,
            reduced_frequency: std::f64::consts::PI * case.frequency * chord / speed,
            reynolds: speed * chord / props.kinematic_viscosity,
        });
    }
    let area: f64 = case.foils.iter().map(|f| f.chord * f.span).sum();
    let thrust: f64 = foils.iter().map(|f| f.thrust).sum();
    let power: f64 = foils.iter().map(|f| f.power).sum();
    let tc = thrust / (q * area);
    let pc = power / (q * speed * area);
    Summary {
        total: TotalSummary {
            thrust_coefficient: tc,
            power_coefficient: pc,
            efficiency: if tc > 0.0 && pc > 0.0 {
                Some(tc / pc)
            } else {
                None
            },
            thrust,
            power,
        },
        foils,
        cycles_averaged,
        first_cycle_averaged: first_cycle,
        ramp_cycles: [0, ramp_end],
        converged,
        time_step: dt,
        steps: hist.len(),
        particles: sim.particles().0.len(),
        particle_cap: sim.particle_cap(),
        density: rho,
        kinematic_viscosity: props.kinematic_viscosity,
    }
}
