//! The time-stepping simulation: panels on every foil, one linear system per step, a free wake.

use crate::case::Case;
use crate::error::CaseError;
use crate::summary::Summary;

/// Loads and pose of one foil at one instant.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct FoilLoads {
    /// m. Heave displacement of the pivot from its mean position.
    pub heave: f64,
    /// deg. Pitch angle, nose-up positive.
    pub pitch: f64,
    /// deg. Effective angle of attack at the pivot.
    pub angle_of_attack: f64,
    /// Lift coefficient (force +y).
    pub lift_coefficient: f64,
    /// Thrust coefficient (force upstream, -x).
    pub thrust_coefficient: f64,
    /// Moment coefficient about the pivot, nose-up positive.
    pub moment_coefficient: f64,
    /// Input-power coefficient.
    pub power_coefficient: f64,
    /// N. Lift.
    pub lift: f64,
    /// N. Thrust.
    pub thrust: f64,
    /// N m. Moment about the pivot, nose-up positive.
    pub moment: f64,
    /// W. Input power (actuators to fluid).
    pub power: f64,
}

/// A running simulation of one case.
#[derive(Debug, Clone)]
pub struct Simulation {
    case: Case,
}

impl Simulation {
    /// Builds the foils and checks that they never overlap or touch during their motion.
    pub fn new(case: &Case) -> Result<Simulation, CaseError> {
        case.validate()?;
        Ok(Simulation { case: case.clone() })
    }
    /// The case being run.
    pub fn case(&self) -> &Case { &self.case }
    /// Advances one time step (solve, loads, wake convection). Does nothing once finished.
    pub fn step(&mut self) { todo!() }
    /// Runs the remaining steps and returns the summary.
    pub fn run_to_end(&mut self) -> Summary { todo!() }
    /// True once all steps of the case have been taken.
    pub fn is_finished(&self) -> bool { todo!() }
    /// s. Time of the latest solved instant.
    pub fn time(&self) -> f64 { todo!() }
    /// s. Time step.
    pub fn time_step(&self) -> f64 { todo!() }
    /// Steps taken so far.
    pub fn steps_taken(&self) -> usize { todo!() }
    /// Steps the case asks for in all.
    pub fn total_steps(&self) -> usize { todo!() }
    /// Free wake particles: x (m), y (m), circulation (m^2/s, counter-clockwise positive).
    pub fn particles(&self) -> (&[f64], &[f64], &[f64]) { todo!() }
    /// m. Outline of foil `i` at the latest instant: closed polygon from the trailing edge along
    /// the lower surface to the leading edge and back along the upper surface, as [x, y] pairs.
    pub fn foil_outline(&self, i: usize) -> Vec<[f64; 2]> { let _ = i; todo!() }
    /// Loads of every foil at the latest solved instant.
    pub fn loads(&self) -> &[FoilLoads] { todo!() }
    /// Loads of every step so far: `history()[step][foil]`, with times `step * time_step()`.
    pub fn history(&self) -> &[Vec<FoilLoads>] { todo!() }
    /// Statistics of the steps taken so far (whole cycles after the transient).
    pub fn summary(&self) -> Summary { todo!() }
}
