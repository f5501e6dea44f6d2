//! The case file: the one input of the command line, the page's import and export, and the link codec.
//!
//! See [`crate::conventions`] for units and signs. Parsing is strict: unknown keys, wrong types and
//! out-of-range values are errors that name the field path, the value, the allowed range and the fix.

use serde::{Deserialize, Serialize};

use crate::error::CaseError;
use crate::water::Water;

/// Newest case-file version this build writes. Older versions keep reading.
pub const CASE_VERSION: u32 = 1;

/// Largest number of foils in one case.
pub const MAX_FOILS: usize = 8;

/// A complete, validated simulation case.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Case {
    /// Case-file format version (1).
    pub version: u32,
    /// Free stream and water.
    pub flow: Flow,
    /// Hz. Flapping frequency shared by all foils; 0 = impulsive start from rest (Wagner's problem).
    pub frequency: f64,
    /// The foils, fore foil first. Foil 0 has phase 0 by definition.
    pub foils: Vec<Foil>,
    /// Numerical settings; every field has a default.
    #[serde(default)]
    pub numerics: Numerics,
    /// Tank and submergence for the rig check (`finwake check`); absent = not given. It does not
    /// change the simulation.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rig: Option<RigSetup>,
}

/// Free stream and water.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Flow {
    /// m/s. Free-stream speed U along +x.
    pub speed: f64,
    /// Fresh or sea water.
    pub water: Water,
    /// deg C. Water temperature (sets density and kinematic viscosity).
    pub temperature: f64,
}

/// One rigid foil with its prescribed heave and pitch.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Foil {
    /// m. Chord length c.
    pub chord: f64,
    /// Fraction of chord. Maximum thickness of the symmetric 4-digit section (0.01 to 0.30).
    pub thickness: f64,
    /// m. Span s, used only to make forces dimensional (the flow is 2D).
    pub span: f64,
    /// m. Leading-edge x at the mean pose.
    pub x: f64,
    /// m. Leading-edge y at the mean pose.
    pub y: f64,
    /// Fraction of chord from the leading edge. Pitch axis position (0 to 1).
    pub pivot: f64,
    /// m. Heave amplitude h0 (half the peak-to-peak heave).
    pub heave: f64,
    /// deg. Pitch amplitude theta0.
    pub pitch: f64,
    /// deg. Mean pitch angle, nose-up positive.
    pub pitch_mean: f64,
    /// deg. Phase by which pitch leads heave (90 = feathering, thrust-producing).
    pub pitch_lead: f64,
    /// deg. How far this foil's motion lags foil 0's (foil 0 must be 0).
    pub phase: f64,
    /// Moving parts of this foil's rig for the rig check (`finwake check`); absent = none given.
    /// It does not change the simulation.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rig: Option<FoilRig>,
}

/// Where the foils sit in the tank, for the rig check. The frame is the model's: y up, heave
/// vertical, the span across the tank. Every field is optional; a check that needs a missing
/// value is skipped and says so.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct RigSetup {
    /// m. Depth of the case origin (y = 0) below the water surface at rest: a foil with y = 0
    /// has its mean pose this deep (0 to 11000). Deeper foils have negative y.
    pub depth: Option<f64>,
    /// m. Water depth of the tank or channel, surface at rest to floor (more than 0 to 11000,
    /// and more than `depth`).
    pub water_depth: Option<f64>,
    /// m. Width of the tank or channel across the stream, along the span (more than 0 to 10000).
    pub tank_width: Option<f64>,
}

/// The moving parts of one foil's rig, for the rig check's actuator loads.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct FoilRig {
    /// kg. Mass the heave actuator moves with this foil: foil, shaft, carriage, pitch drive
    /// (0 to 10000; default 0 = body inertia left out).
    pub moving_mass: f64,
    /// kg m^2. Moment of inertia about the pitch axis of everything the pitch actuator turns
    /// (0 to 10000; default 0 = body inertia left out).
    pub pitch_inertia: f64,
}

/// Numerical settings. Oscillating cases use `panels`, `steps_per_cycle`, `cycles`; a case with
/// frequency 0 uses `time_step` and `duration` instead.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct Numerics {
    /// Panels per foil (cosine clustered; even, 20 to 400).
    pub panels: usize,
    /// Time steps per flapping cycle (20 to 1000).
    pub steps_per_cycle: usize,
    /// Flapping cycles to run (2 to 200).
    pub cycles: usize,
    /// s. Time step for frequency 0 (default: 2 % of chord / speed of the first foil).
    pub time_step: Option<f64>,
    /// s. Duration for frequency 0 (default: 20 chords of travel of the first foil).
    pub duration: Option<f64>,
    /// Fraction of the smallest chord. Vortex-blob core radius (0.005 to 0.5).
    pub core_size: f64,
    /// Largest number of free wake particles before the far wake is coarsened (200 to 200000).
    pub max_particles: usize,
    /// Cycles over which the motion amplitude ramps smoothly from 0 to 1 (0 to 10; 0 = none).
    pub ramp_cycles: f64,
    /// Fraction of their distance to the nearest foil (0 to 0.5). Two neighbouring same-sign
    /// wake particles of one foil farther than two chords from every foil are merged when they
    /// are closer than this; 0 keeps every particle up to `max_particles`.
    pub wake_merge: f64,
    /// Steps between the velocity evaluations of far-wake particles, those farther than four
    /// chords from every foil (1 to 8; 1 = every step). Between evaluations a far-wake particle
    /// moves with its velocity extrapolated from its last two evaluations.
    pub far_wake_refresh: usize,
}

impl Default for Numerics {
    fn default() -> Self {
        Numerics {
            panels: 80,
            steps_per_cycle: 100,
            cycles: 8,
            time_step: None,
            duration: None,
            core_size: 0.05,
            max_particles: 4000,
            ramp_cycles: 1.0,
            wake_merge: 0.1,
            far_wake_refresh: 8,
        }
    }
}

impl Case {
    /// Parses a case from JSON text and validates it: syntax, keys and types (with field paths),
    /// then ranges (see [`crate::validate`]).
    pub fn from_json(text: &str) -> Result<Case, CaseError> {
        let case = crate::validate::parse_case(text)?;
        case.validate()?;
        Ok(case)
    }

    /// Writes the case as pretty JSON (the case-file format).
    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("a case always serialises")
    }

    /// Checks every value against its allowed range. Geometry overlap between foils is checked
    /// by [`crate::Simulation::new`], which owns the section geometry.
    pub fn validate(&self) -> Result<(), CaseError> {
        crate::validate::validate_case(self)
    }
}
