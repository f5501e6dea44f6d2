//! Cycle statistics and the summary whose JSON keys are the contract with the page and scripts.

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
