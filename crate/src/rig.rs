//! Rig check (`finwake check`): dimensional sanity checks, actuator loads and cautions before a
//! tank test.
//!
//! [`check`] runs the case with the same solver and averaging window as `finwake simulate` and
//! reports, per foil:
//!
//! * **checks**, each with a [`Status`] (usual practice / caution / outside what the model can
//!   predict), its thresholds and the thresholds' source: Reynolds number, Strouhal number
//!   (trailing-edge and heave based), reduced frequency, largest effective angle of attack, the
//!   peak leading-edge suction parameter, the cavitation number against the worst `-Cp_min`, and
//!   with the optional `rig` keys the clearance to the surface and to the floor and the blockage;
//! * **loads**: peak relative speed, peak and RMS heave force and pitch torque with the moving
//!   mass and the added mass, peak, mean and regenerative actuator power, load cycles per hour,
//!   and the sizing rules of common practice applied to them;
//! * the **cautions**: the loads are 2D inviscid screening estimates, and a rig-safety note that
//!   defers to the lab's rules, local codes and licensed practice.
//!
//! # Definitions
//!
//! The frame is the model's (see [`crate::conventions`]): y up, heave vertical, the span across
//! the tank. `rig.depth` is the depth of y = 0 below the water surface at rest, so a foil's depth
//! is `depth - y`.
//!
//! * **Leading-edge suction parameter** (LESP): `A0`, the first coefficient of the thin-aerofoil
//!   vorticity series, as defined by Ramesh et al. (2014, J. Fluid Mech. 751:500-538), with `U`
//!   the free-stream speed. It is the strength of the leading-edge singularity, whose suction
//!   force is `pi rho c U^2 A0^2` per span (Garrick 1936, NACA Report 567), i.e. a chordwise
//!   suction coefficient `C_s = 2 pi A0^2`. The estimate used here reads `C_s` from the panel
//!   solution's integrated pressures, as the force along the chord towards the leading edge,
//!   `C_s = C_T cos theta + C_L sin theta`, and returns `|A0| = sqrt(max(C_s, 0) / (2 pi))` with
//!   the sign of the side of the pressure minimum (positive: suction peak on the upper surface,
//!   flow meeting the leading edge from below). On a flat plate every chordwise pressure force is
//!   leading-edge suction; on a thick section the estimate also holds the section's small
//!   chordwise pressure force and reads a few per cent high (steady: `sqrt(1 + 0.77 t/c)`, from
//!   the thick-section lift slope), which errs on the safe side. The rig tests check it against
//!   Garrick's `A0 = C(k) (-h_dot / U)` in heave. (Integrating the onset flow over the chord
//!   line instead, Ramesh's own route, underestimates the wake's share by about a tenth with
//!   0.05-chord vortex cores at 100 steps per cycle, because the discrete near wake resolves the
//!   singular weight at the trailing edge poorly.)
//! * **Cavitation number** `sigma = (p_atm + rho g d - p_v) / (rho U^2 / 2)`, at the shallowest
//!   depth `d` any point of the foil reaches over a cycle (0 when `rig.depth` is not given),
//!   against the worst `-Cp_min` of the panel solution over the averaged cycles. The panel
//!   pressure coefficient is normalised by the free-stream dynamic pressure, so the comparison is
//!   made with the free-stream `sigma`; `sigma` at the peak relative speed is shown beside it.
//! * **Actuator loads.** The heave actuator's force is `F = m h_ddot - L` and the pitch
//!   actuator's torque `T = I theta_ddot - M`, with `L` the hydrodynamic lift and `M` the moment
//!   about the pivot from the panel solution, which already contain the added-mass (apparent
//!   mass) reaction of the water; `m` and `I` are `foils.*.rig.moving_mass` and `pitch_inertia`.
//!   The classical flat-plate added mass `rho pi c^2 s / 4` and added pitch inertia about the
//!   pivot `rho pi (c/2)^4 s (1/8 + a^2)` (a = pivot offset from mid-chord in semichords;
//!   Theodorsen 1935) are shown as the share of the hydrodynamic load they explain. Actuator
//!   powers are `F h_dot` and `T theta_dot`; their sum's mean equals the summary's input power
//!   (inertia averages out over whole cycles). Peaks are peaks of the combined time series, not
//!   sums of peaks that occur at different times. The static weight of the moving parts is left
//!   out.
//!
//! A value exactly on a threshold takes the better status.

use std::f64::consts::PI;
use std::fmt::Write as _;

use serde::Serialize;

use crate::case::{Case, Foil};
use crate::error::CaseError;
use crate::geometry;
use crate::kinematics::{self, Motion, Pose};
use crate::sim::{FoilLoads, Simulation};
use crate::summary::Summary;
use crate::water::{self, Water};

/// Pa. Standard atmospheric pressure at the water surface (ISO 2533 standard atmosphere).
pub const ATMOSPHERIC_PRESSURE: f64 = 101_325.0;

/// m/s^2. Standard acceleration of gravity (3rd CGPM, 1901).
pub const GRAVITY: f64 = 9.806_65;

/// Safety margin on the cavitation number: caution while `sigma < 1.5 (-Cp_min)` (common
/// practice: measured inception scatters about `-Cp_min`, Amromin & Rozhdestvensky 2022).
pub const CAVITATION_MARGIN: f64 = 1.5;

/// The correlations behind [`crate::water`], as shown with the properties.
pub const WATER_SOURCES: &str = "density: CIPM (Tanaka et al. 2001) fresh, UNESCO EOS-80 sea; viscosity: Landolt-Boernstein V/3a after Millero, Sharqawy et al. 2010 for sea; vapour pressure: Wagner & Pruss 2002";

/// Hours of running after which a rig has seen this many load cycles: the start of the
/// high-cycle fatigue range that joints and stings are designed for (common practice).
pub const FATIGUE_CYCLES: f64 = 1e6;

/// What a check says about a value.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Status {
    /// Within usual practice for flapping-foil tests and within what the model can predict.
    UsualPractice,
    /// Unusual, or at the edge of what the model can predict: read the message.
    Caution,
    /// Outside what a 2D inviscid attached-flow model can predict.
    OutsideModel,
}

impl Status {
    /// The status as shown to users.
    pub fn label(self) -> &'static str {
        match self {
            Status::UsualPractice => "usual practice",
            Status::Caution => "caution",
            Status::OutsideModel => "outside what the model can predict",
        }
    }

    /// The worse of two statuses.
    pub fn worst(self, other: Status) -> Status {
        let rank = |s: Status| match s {
            Status::UsualPractice => 0,
            Status::Caution => 1,
            Status::OutsideModel => 2,
        };
        if rank(other) > rank(self) {
            other
        } else {
            self
        }
    }
}

/// How a check's value maps to a [`Status`]. A value exactly on a threshold takes the better
/// status; a value that is not a finite number is outside what the model can predict.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "worse", rename_all = "snake_case")]
pub enum Thresholds {
    /// Higher is worse: usual practice up to `caution`, caution up to `outside`, outside above.
    Higher {
        /// Largest value of usual practice.
        caution: f64,
        /// Largest value short of outside the model.
        outside: f64,
    },
    /// Lower is worse: usual practice from `caution` up, caution from `outside` up, outside below.
    Lower {
        /// Smallest value of usual practice.
        caution: f64,
        /// Smallest value short of outside the model.
        outside: f64,
    },
    /// Usual practice from `low` to `high`, caution outside that band.
    Band {
        /// Lowest value of usual practice.
        low: f64,
        /// Highest value of usual practice.
        high: f64,
    },
}

impl Thresholds {
    /// The status of `value`.
    pub fn status(&self, value: f64) -> Status {
        if !value.is_finite() {
            return Status::OutsideModel;
        }
        match *self {
            Thresholds::Higher { caution, outside } => {
                if value <= caution {
                    Status::UsualPractice
                } else if value <= outside {
                    Status::Caution
                } else {
                    Status::OutsideModel
                }
            }
            Thresholds::Lower { caution, outside } => {
                if value >= caution {
                    Status::UsualPractice
                } else if value >= outside {
                    Status::Caution
                } else {
                    Status::OutsideModel
                }
            }
            Thresholds::Band { low, high } => {
                if (low..=high).contains(&value) {
                    Status::UsualPractice
                } else {
                    Status::Caution
                }
            }
        }
    }

    /// The thresholds in words, with `unit` (`-` for none).
    pub fn describe(&self, unit: &str) -> String {
        let u = |v: f64| {
            if unit == "-" {
                short(v)
            } else {
                format!("{} {unit}", short(v))
            }
        };
        match *self {
            Thresholds::Higher { caution, outside } => format!(
                "usual practice up to {}; caution above, up to {}; outside the model above {}",
                u(caution),
                u(outside),
                u(outside)
            ),
            Thresholds::Lower { caution, outside } => format!(
                "usual practice from {} up; caution from {} to {}; outside the model below {}",
                u(caution),
                u(outside),
                u(caution),
                u(outside)
            ),
            Thresholds::Band { low, high } => format!(
                "usual practice from {} to {}; caution outside that band",
                u(low),
                u(high)
            ),
        }
    }
}

/// One kind of check: what it measures, its thresholds and their source.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Rule {
    /// Identifier (the `id` of a [`Check`]).
    pub id: &'static str,
    /// Name as shown to users, with its definition.
    pub name: &'static str,
    /// Unit of the value (`-` for a pure number).
    pub unit: &'static str,
    /// Thresholds of the statuses.
    pub thresholds: Thresholds,
    /// Where the thresholds come from.
    pub source: &'static str,
}

/// Reynolds number `U c / nu`.
pub const REYNOLDS: Rule = Rule {
    id: "reynolds",
    name: "Reynolds number U c / nu",
    unit: "-",
    thresholds: Thresholds::Lower {
        caution: 1e4,
        outside: 1e3,
    },
    source: "below about 1e4 the flow is laminar and strongly viscous and the drag-to-thrust transition shifts; flapping-foil thrust trends depend only weakly on Re above about 1e4 (e.g. Senturk & Smits 2019, AIAA J.; from memory, to be checked); below 1e3 viscous drag is as large as the thrust (common practice)",
};

/// Strouhal number `f A / U` with `A` the peak-to-peak trailing-edge excursion.
pub const STROUHAL: Rule = Rule {
    id: "strouhal",
    name: "Strouhal number f A / U (A = peak-to-peak trailing-edge excursion)",
    unit: "-",
    thresholds: Thresholds::Band {
        low: 0.2,
        high: 0.4,
    },
    source: "efficient band 0.2 to 0.4, optimum about 0.25 to 0.35: Triantafyllou, Triantafyllou & Grosenbaugh 1993, J. Fluids Struct. 7:205; Taylor, Nudds & Thomas 2003, Nature 425:707 (classic values, from memory)",
};

/// Heave-based Strouhal number `2 f h0 / U`.
pub const STROUHAL_HEAVE: Rule = Rule {
    id: "strouhal_heave",
    name: "Strouhal number 2 f h0 / U (heave based)",
    unit: "-",
    thresholds: Thresholds::Band {
        low: 0.2,
        high: 0.4,
    },
    source: "the same efficient band 0.2 to 0.4, quoted with either amplitude definition (Triantafyllou et al. 1993; from memory)",
};

/// Reduced frequency `pi f c / U` (semichord based).
pub const REDUCED_FREQUENCY: Rule = Rule {
    id: "reduced_frequency",
    name: "reduced frequency k = pi f c / U (semichord based)",
    unit: "-",
    thresholds: Thresholds::Band {
        low: 0.05,
        high: 2.0,
    },
    source: "k < 0.05 quasi-steady, 0.05 or more unsteady, 0.2 or more highly unsteady: Leishman, Principles of Helicopter Aerodynamics (from memory); flapping-foil tests usually run at 0.1 to 2 (common practice)",
};

/// Largest effective angle of attack at the pivot over a cycle.
pub const MAX_ANGLE_OF_ATTACK: Rule = Rule {
    id: "max_angle_of_attack",
    name: "largest effective angle of attack theta - atan(ydot / U) at the pivot",
    unit: "deg",
    thresholds: Thresholds::Higher {
        caution: 25.0,
        outside: 30.0,
    },
    source: "best efficiency at 15 to 25 deg (Anderson et al. 1998, J. Fluid Mech. 360:41, from memory; Read, Hover & Triantafyllou 2003, J. Fluids Struct. 17:163); above about 25 to 30 deg a strong leading-edge vortex forms and an attached-flow model is unreliable (common practice)",
};

/// Peak leading-edge suction parameter.
pub const LEADING_EDGE_SUCTION: Rule = Rule {
    id: "leading_edge_suction",
    name: "peak leading-edge suction parameter |A0| (LESP)",
    unit: "-",
    thresholds: Thresholds::Higher {
        caution: 0.1,
        outside: 0.25,
    },
    source: "leading-edge vortex shedding starts when the LESP exceeds a critical value that depends on the section and Re but not on the motion: Ramesh, Gopalarathnam, Granlund, Ol & Edwards 2014, J. Fluid Mech. 751:500; critical values 0.1 to 0.25 from memory, to be checked",
};

/// Cavitation number against the worst `-Cp_min`; thresholds on `sigma / (-Cp_min)`.
pub const CAVITATION: Rule = Rule {
    id: "cavitation",
    name: "cavitation number (p_atm + rho g d - p_v) / (rho U^2 / 2) against -Cp_min",
    unit: "-",
    thresholds: Thresholds::Lower {
        caution: CAVITATION_MARGIN,
        outside: 1.0,
    },
    source: "inception, to first order, when sigma <= -Cp_min (Brennen 1995, Cavitation and Bubble Dynamics; Franc & Michel 2004; from memory); measured inception differs from -Cp_min (Amromin & Rozhdestvensky 2022, J. Mar. Sci. Eng. 10:871), hence the margin of 1.5 (common practice)",
};

/// Clearance from the foil's highest point over a cycle to the water surface.
pub const SURFACE_CLEARANCE: Rule = Rule {
    id: "surface_clearance",
    name: "clearance from the foil's highest point to the water surface",
    unit: "chords",
    thresholds: Thresholds::Lower {
        caution: 4.0,
        outside: 2.0,
    },
    source: "a steady hydrofoil loses much lift within 2 chords of the surface (\"The hydrofoil in surface proximity, theory and experiment\", Ocean Eng. 2000); rigs keep the top excursion 3 to 4 chords down, more at high depth Froude number (common practice; 4 taken here)",
};

/// Clearance from the foil's lowest point over a cycle to the tank floor.
pub const FLOOR_CLEARANCE: Rule = Rule {
    id: "floor_clearance",
    name: "clearance from the foil's lowest point to the tank floor",
    unit: "chords",
    thresholds: Thresholds::Lower {
        caution: 3.0,
        outside: 1.0,
    },
    source: "near a wall a flapping foil's thrust rises (Quinn, Lauder & Smits 2014; Mivehchi, Dahl & Licht 2016, J. Fluid Mech.); keep 2 to 3 chords from the floor unless ground effect is the subject, and within a chord the floor changes the flow at leading order (common practice)",
};

/// Blockage of the swept frontal area.
pub const BLOCKAGE: Rule = Rule {
    id: "blockage",
    name: "blockage: swept frontal area / tank cross-section",
    unit: "%",
    thresholds: Thresholds::Higher {
        caution: 5.0,
        outside: 10.0,
    },
    source: "keep the swept frontal area (peak-to-peak height x span) below about 5 to 10 % of the cross-section, or correct for it (common practice; 2D corrections: Barlow, Rae & Pope 1999, Low-Speed Wind Tunnel Testing, ch. 10)",
};

/// Every rule, in report order.
pub const RULES: &[Rule] = &[
    REYNOLDS,
    STROUHAL,
    STROUHAL_HEAVE,
    REDUCED_FREQUENCY,
    MAX_ANGLE_OF_ATTACK,
    LEADING_EDGE_SUCTION,
    CAVITATION,
    SURFACE_CLEARANCE,
    FLOOR_CLEARANCE,
    BLOCKAGE,
];

/// One check of one foil.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Check {
    /// The rule's identifier (`reynolds`, `cavitation`, ...).
    pub id: &'static str,
    /// Index of the foil.
    pub foil: usize,
    /// What is checked, with its definition.
    pub name: &'static str,
    /// The verdict.
    pub status: Status,
    /// The checked value, in `unit`.
    pub value: f64,
    /// Unit of the value and thresholds (`-` for a pure number).
    pub unit: &'static str,
    /// The thresholds in words.
    pub limit: String,
    /// The thresholds as numbers, in `unit`.
    pub thresholds: Thresholds,
    /// Where the thresholds come from.
    pub source: &'static str,
    /// What the value means here, on one line.
    pub message: String,
}

/// A check that could not be made, and why.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Skipped {
    /// The rule's identifier.
    pub id: &'static str,
    /// Index of the foil.
    pub foil: usize,
    /// What the check would measure.
    pub name: &'static str,
    /// Why it was skipped and which key to give.
    pub message: String,
}

/// The water, with the properties the checks use.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WaterReport {
    /// Fresh or sea water.
    pub kind: Water,
    /// deg C. Temperature.
    pub temperature: f64,
    /// kg/m^3. Density.
    pub density: f64,
    /// Pa s. Dynamic viscosity.
    pub dynamic_viscosity: f64,
    /// m^2/s. Kinematic viscosity.
    pub kinematic_viscosity: f64,
    /// Pa. Saturation vapour pressure.
    pub vapour_pressure: f64,
    /// Where the properties come from.
    pub source: &'static str,
}

/// A force or torque over the averaged cycles.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Load {
    /// N or N m. Largest absolute value the actuator delivers (hydrodynamic plus body inertia).
    pub peak: f64,
    /// N or N m. Root mean square of the actuator load.
    pub rms: f64,
    /// N or N m. Largest absolute hydrodynamic load (panel solution; contains the added mass).
    pub hydrodynamic_peak: f64,
    /// N or N m. Largest body-inertia load, moving mass (or inertia) times peak acceleration.
    pub inertia_peak: f64,
    /// N or N m. Classical flat-plate added mass (or added inertia) times the peak acceleration:
    /// the apparent-mass load of this motion alone. It is already inside `hydrodynamic_peak`,
    /// where other terms (those of the pitch rate in a feathering motion) can cancel part of it.
    pub added_mass_peak: f64,
}

/// An actuator's power over the averaged cycles (actuator to foil and water positive).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Power {
    /// W. Largest instantaneous power delivered.
    pub peak: f64,
    /// W. Mean power.
    pub mean: f64,
    /// W. Mean of the negative (regenerative) part, `mean(min(P, 0))`; 0 or negative.
    pub regenerative_mean: f64,
    /// W. Most negative instantaneous power (power returned to the drive); 0 or negative.
    pub regenerative_peak: f64,
    /// Fraction of the time with negative power (0 to 1).
    pub regenerative_fraction: f64,
}

/// One sizing rule of common practice applied to the estimates.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Sizing {
    /// What is sized.
    pub item: &'static str,
    /// The rule's value for this foil, in `unit`.
    pub value: f64,
    /// Unit of the value.
    pub unit: &'static str,
    /// The rule.
    pub rule: String,
    /// Where the rule comes from.
    pub source: &'static str,
}

/// Actuator loads and power of one foil: 2D inviscid screening estimates (see [`Cautions`]).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LoadReport {
    /// Index of the foil.
    pub foil: usize,
    /// kg. Moving mass used (`foils.*.rig.moving_mass`, 0 if not given).
    pub moving_mass: f64,
    /// kg m^2. Pitch inertia used (`foils.*.rig.pitch_inertia`, 0 if not given).
    pub pitch_inertia: f64,
    /// kg. Classical flat-plate added mass in heave, `rho pi c^2 s / 4`.
    pub added_mass: f64,
    /// kg m^2. Classical flat-plate added pitch inertia about the pivot,
    /// `rho pi (c/2)^4 s (1/8 + a^2)`.
    pub added_pitch_inertia: f64,
    /// m/s. Largest speed of any point of the foil relative to the water over a cycle.
    pub peak_relative_speed: f64,
    /// m/s^2. Largest heave acceleration over the averaged cycles.
    pub peak_heave_acceleration: f64,
    /// rad/s^2. Largest pitch acceleration over the averaged cycles.
    pub peak_pitch_acceleration: f64,
    /// N. Heave actuator force.
    pub heave_force: Load,
    /// N m. Pitch actuator torque about the pivot.
    pub pitch_torque: Load,
    /// W. Heave actuator power.
    pub heave_power: Power,
    /// W. Pitch actuator power.
    pub pitch_power: Power,
    /// W. Both actuators together (regenerative parts offset only if they share a supply).
    pub total_power: Power,
    /// 1/h. Load cycles per hour of running (one per flapping cycle).
    pub load_cycles_per_hour: f64,
    /// h. Running time to [`FATIGUE_CYCLES`] load cycles (`None` for frequency 0).
    pub hours_to_fatigue_cycles: Option<f64>,
    /// The sizing rules of common practice applied to these estimates.
    pub sizing: Vec<Sizing>,
    /// Notes on what the figures include, one per line.
    pub notes: Vec<String>,
}

/// The cautions shown with the loads and with the whole check.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Cautions {
    /// Beside loads and power: they are screening estimates.
    pub loads: &'static str,
    /// Rig safety, deferring to the lab's rules, local codes and licensed practice.
    pub safety: &'static str,
}

/// Beside loads and power.
pub const LOADS_CAUTION: &str = "Loads and power are 2D inviscid screening estimates from an attached-flow panel model, not design loads: no viscosity, stall, leading-edge vortex, 3D, free-surface or cavitation effects. Confirm them by measurement (in-air inertial tare, trial runs ramped up from small amplitude) and size the rig with margin.";

/// Rig safety.
pub const SAFETY_CAUTION: &str = "Rig safety: heave carriages, linear stages and pitch shafts have pinch and crush points. Guard them; fit a hard-wired emergency stop within reach of the control position and hardware limit switches besides software limits; ramp amplitude and frequency up from small values; keep hands out of the tank and frame while the drive is enabled, and lock out for changes. Electricity near water: residual-current protection (RCD/GFCI) on all mains equipment, low-voltage drives in the wet area, IP-rated connectors with drip loops, proper earthing. These notes do not replace your lab's safety rules, local codes and licensed practice, which take precedence.";

/// Which steps the statistics use.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Averaging {
    /// First cycle used (0-based), as in the summary.
    pub first_cycle: usize,
    /// Whole cycles used (0 for a start from rest: final values).
    pub cycles: usize,
    /// Time steps used.
    pub steps: usize,
}

/// Everything `finwake check` reports.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RigCheck {
    /// The water and its properties.
    pub water: WaterReport,
    /// The steps the statistics use.
    pub averaging: Averaging,
    /// Every check made, foil after foil, in [`RULES`] order.
    pub checks: Vec<Check>,
    /// Checks that need keys the case does not give.
    pub skipped: Vec<Skipped>,
    /// Actuator loads and power per foil.
    pub loads: Vec<LoadReport>,
    /// The cautions.
    pub cautions: Cautions,
    /// The worst status of all checks.
    pub worst: Status,
}

// ---------------------------------------------------------------------------------------------
// Formulas (public for the tests against outside references).

/// Cavitation number `(p_atm + rho g d - p_v) / (rho u^2 / 2)` at depth `depth` (m) for water
/// of density `density` (kg/m^3) and vapour pressure `vapour_pressure` (Pa) at speed `speed`
/// (m/s), with the standard atmosphere and gravity.
pub fn cavitation_number(density: f64, depth: f64, vapour_pressure: f64, speed: f64) -> f64 {
    (ATMOSPHERIC_PRESSURE + density * GRAVITY * depth - vapour_pressure)
        / (0.5 * density * speed * speed)
}

/// kg. Classical added mass of a flat plate of chord `chord` and span `span` (m) moving normal
/// to itself in water of density `density`: `rho pi c^2 s / 4` (the mass of water in the circle
/// on the chord; e.g. Newman 1977, Marine Hydrodynamics, ch. 4; Theodorsen 1935).
pub fn flat_plate_added_mass(density: f64, chord: f64, span: f64) -> f64 {
    density * PI * chord * chord * span / 4.0
}

/// kg m^2. Classical added moment of inertia of a flat plate pitching about an axis `a`
/// semichords behind mid-chord: `rho pi (c/2)^4 s (1/8 + a^2)` (Theodorsen 1935, the `alpha_ddot`
/// term of the moment; `rho pi (c/2)^4 s / 8` about mid-chord, e.g. Newman 1977).
pub fn flat_plate_added_pitch_inertia(density: f64, chord: f64, span: f64, a: f64) -> f64 {
    let b = 0.5 * chord;
    density * PI * b.powi(4) * span * (0.125 + a * a)
}

/// Leading-edge suction parameter `A0` from one foil's loads at one instant and its panel
/// pressure coefficients at that instant (outline order, see
/// [`Simulation::pressure_coefficients`]); see the module docs. Positive when the suction peak is
/// on the upper surface (nose-up effective incidence).
pub fn leading_edge_suction(loads: &FoilLoads, cp: &[f64]) -> f64 {
    let theta = loads.pitch.to_radians();
    let suction = loads.thrust_coefficient * theta.cos() + loads.lift_coefficient * theta.sin();
    let a0 = (suction.max(0.0) / (2.0 * PI)).sqrt();
    let lowest = cp
        .iter()
        .enumerate()
        .min_by(|a, b| a.1.total_cmp(b.1))
        .map_or(0, |(j, _)| j);
    if lowest >= cp.len() / 2 {
        a0
    } else {
        -a0
    }
}

// ---------------------------------------------------------------------------------------------
// The check.

/// Per-step records of one foil over the averaged window.
#[derive(Debug, Clone, Default)]
struct Record {
    /// Worst (lowest) pressure coefficient, its time (s) and panel.
    cp_min: (f64, f64, usize),
    /// Largest |A0| with its sign and time.
    lesp: (f64, f64),
}

/// Kinematic extremes of one foil over a cycle of the motion without the smooth start.
struct Extremes {
    /// m. Highest and lowest y of the outline.
    top: f64,
    bottom: f64,
    /// m/s. Largest speed of a point of the foil relative to the water.
    relative_speed: f64,
    /// Where on the chord (fraction from the LE) it occurs.
    relative_speed_at: f64,
}

fn extremes(foil: &Foil, motion: &Motion, speed: f64, panels: usize) -> Extremes {
    let m = motion.without_ramp();
    let section = geometry::symmetric_section(foil.thickness, panels);
    let samples = if m.omega > 0.0 {
        kinematics::EXTREME_SAMPLES
    } else {
        1
    };
    let period = if m.omega > 0.0 {
        2.0 * PI / m.omega
    } else {
        0.0
    };
    let mut e = Extremes {
        top: f64::NEG_INFINITY,
        bottom: f64::INFINITY,
        relative_speed: 0.0,
        relative_speed_at: 0.0,
    };
    for k in 0..samples {
        let pose = m.pose(period * k as f64 / samples as f64);
        for s in &section {
            let p = pose.to_world(*s, foil.chord, foil.pivot);
            e.top = e.top.max(p[1]);
            e.bottom = e.bottom.min(p[1]);
        }
        // Rigid motion: the relative speed along the chord is largest at one of its ends.
        for xi in [0.0, 1.0] {
            let p = pose.to_world([xi, 0.0], foil.chord, foil.pivot);
            let v = pose.velocity_at(p);
            let w = ((speed - v[0]).powi(2) + v[1].powi(2)).sqrt();
            if w > e.relative_speed {
                e.relative_speed = w;
                e.relative_speed_at = xi;
            }
        }
    }
    e
}

/// Heave and pitch accelerations (m/s^2, rad/s^2) at `t`, by central differences of the exact
/// rates over a ten-thousandth of a period (relative error (2 pi 1e-4)^2 / 6, below 1e-7). From
/// the end of the smooth start on, the motion without the ramp is differenced (the same poses,
/// without the kink of the ramp's end inside the difference).
fn accelerations(m: &Motion, t: f64) -> (f64, f64) {
    if m.omega == 0.0 {
        return (0.0, 0.0);
    }
    let steady = m.without_ramp();
    let m = if t >= m.ramp_time { &steady } else { m };
    let h = 1e-4 * 2.0 * PI / m.omega;
    let (a, b) = (m.pose(t - h), m.pose(t + h));
    (
        (b.pivot_velocity[1] - a.pivot_velocity[1]) / (2.0 * h),
        (b.theta_dot - a.theta_dot) / (2.0 * h),
    )
}

/// The motions of the case's foils exactly as the solver builds them.
fn motions(case: &Case) -> Vec<Motion> {
    let ramp_time = if case.frequency > 0.0 {
        case.numerics.ramp_cycles / case.frequency
    } else {
        0.0
    };
    case.foils
        .iter()
        .map(|f| Motion::new(f, case.frequency, ramp_time))
        .collect()
}

/// First step of the averaged window, as the summary chooses it (whole cycles after the
/// start-up transient; the final step for a start from rest).
fn window_start(case: &Case, total_steps: usize) -> (usize, usize, usize) {
    if case.frequency > 0.0 {
        let spc = case.numerics.steps_per_cycle;
        let cycles = total_steps / spc;
        let ramp_end = case.numerics.ramp_cycles.ceil() as usize;
        let first = ramp_end.max(case.numerics.cycles / 2).min(cycles - 1);
        (first * spc, first, cycles - first)
    } else {
        (total_steps - 1, 0, 0)
    }
}

/// Runs the rig check of `case` (the whole simulation; as long as `finwake simulate`).
pub fn check(case: &Case) -> Result<RigCheck, CaseError> {
    let mut sim = Simulation::new(case)?;
    let motions = motions(case);
    let (lo, first_cycle, cycles) = window_start(case, sim.total_steps());
    let nf = case.foils.len();
    let mut records = vec![
        Record {
            cp_min: (f64::INFINITY, 0.0, 0),
            lesp: (0.0, 0.0),
        };
        nf
    ];
    while !sim.is_finished() {
        sim.step();
        if sim.steps_taken() <= lo {
            continue;
        }
        let t = sim.time();
        for (i, r) in records.iter_mut().enumerate() {
            for (j, &cp) in sim.pressure_coefficients(i).iter().enumerate() {
                if cp < r.cp_min.0 {
                    r.cp_min = (cp, t, j);
                }
            }
            let a0 = leading_edge_suction(&sim.loads()[i], sim.pressure_coefficients(i));
            if a0.abs() > r.lesp.0.abs() || !a0.is_finite() {
                r.lesp = (a0, t);
            }
        }
    }
    let summary = sim.summary();
    Ok(report(
        &sim,
        &summary,
        &motions,
        &records,
        (lo, first_cycle, cycles),
    ))
}

/// Runs the rig check of a case given as case-file JSON and returns the report as JSON (for the
/// page's worker).
pub fn check_json(case_json: &str) -> Result<String, CaseError> {
    let case = Case::from_json(case_json)?;
    let report = check(&case)?;
    Ok(serde_json::to_string(&report).expect("a rig check always serialises"))
}

/// `v` with about four significant digits, in plain notation where that stays short.
fn short(v: f64) -> String {
    if !v.is_finite() {
        return v.to_string();
    }
    let a = v.abs();
    if a == 0.0 {
        "0".to_string()
    } else if (1e3..1e7).contains(&a) && 10f64.powi(a.log10().round() as i32) == a {
        format!("{v:e}")
    } else if (1e-3..1e5).contains(&a) {
        let decimals = (3 - a.log10().floor() as i32).max(0) as usize;
        let s = format!("{v:.decimals$}");
        if s.contains('.') {
            s.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            s
        }
    } else {
        format!("{v:.3e}")
    }
}

fn make(rule: &Rule, foil: usize, value: f64, message: String) -> Check {
    make_with(rule, rule.thresholds, foil, value, message)
}

fn make_with(
    rule: &Rule,
    thresholds: Thresholds,
    foil: usize,
    value: f64,
    message: String,
) -> Check {
    Check {
        id: rule.id,
        foil,
        name: rule.name,
        status: thresholds.status(value),
        value,
        unit: rule.unit,
        limit: thresholds.describe(rule.unit),
        thresholds,
        source: rule.source,
        message,
    }
}

fn skip(rule: &Rule, foil: usize, message: impl Into<String>) -> Skipped {
    Skipped {
        id: rule.id,
        foil,
        name: rule.name,
        message: message.into(),
    }
}

/// Phase in the cycle (deg, 0 to 360) of time `t` at frequency `f`.
fn cycle_phase(t: f64, f: f64) -> f64 {
    if f > 0.0 {
        (t * f).fract() * 360.0
    } else {
        0.0
    }
}

fn report(
    sim: &Simulation,
    summary: &Summary,
    motions: &[Motion],
    records: &[Record],
    (lo, first_cycle, cycles): (usize, usize, usize),
) -> RigCheck {
    let case = sim.case();
    let props = water::properties(case.flow.water, case.flow.temperature);
    let rho = props.density;
    let speed = case.flow.speed;
    let f = case.frequency;
    let rig = case.rig.clone().unwrap_or_default();
    let mut checks = Vec::new();
    let mut skipped = Vec::new();
    let mut loads = Vec::new();

    for (i, foil) in case.foils.iter().enumerate() {
        let s = &summary.foils[i];
        let c = foil.chord;
        let ext = extremes(foil, &motions[i], speed, case.numerics.panels);

        // Reynolds number.
        let re = s.reynolds;
        let regime = if re < 1e4 {
            "laminar and strongly viscous: thrust and efficiency will fall well short of these inviscid figures"
        } else if re < 1e5 {
            "transitional: laminar separation bubbles and hysteresis are possible"
        } else if re < 5e5 {
            "transitional to turbulent boundary layer"
        } else {
            "turbulent boundary layer"
        };
        checks.push(make(
            &REYNOLDS,
            i,
            re,
            format!(
                "Re = {} with nu = {} m^2/s ({} water at {} deg C): {regime}",
                short(re),
                short(props.kinematic_viscosity),
                water_name(case.flow.water),
                short(case.flow.temperature)
            ),
        ));

        if f > 0.0 {
            let excursion = s.strouhal * speed / f;
            let band = |st: f64| {
                if st < 0.2 {
                    "below the efficient band: little thrust, or drag"
                } else if st > 0.4 {
                    "above the efficient band: high power for the thrust, and a deflected wake the model may not capture"
                } else {
                    "in the efficient band"
                }
            };
            checks.push(make(
                &STROUHAL,
                i,
                s.strouhal,
                format!(
                    "St = {} with A = {} m: {}",
                    short(s.strouhal),
                    short(excursion),
                    band(s.strouhal)
                ),
            ));
            checks.push(make(
                &STROUHAL_HEAVE,
                i,
                s.strouhal_heave,
                format!(
                    "St_h = {} with h0 = {} m: {}",
                    short(s.strouhal_heave),
                    short(foil.heave),
                    band(s.strouhal_heave)
                ),
            ));
            let k = s.reduced_frequency;
            let regime = if k < 0.05 {
                "quasi-steady"
            } else if k < 0.2 {
                "unsteady"
            } else if k <= 2.0 {
                "highly unsteady"
            } else {
                "highly unsteady, beyond the usual range: added-mass forces dominate"
            };
            checks.push(make(
                &REDUCED_FREQUENCY,
                i,
                k,
                format!(
                    "k = {} ({regime}); 2 pi f c / U = {}, wake wavelength U / (f c) = {} chords",
                    short(k),
                    short(2.0 * k),
                    short(speed / (f * c))
                ),
            ));
        } else {
            for rule in [&STROUHAL, &STROUHAL_HEAVE, &REDUCED_FREQUENCY] {
                skipped.push(skip(
                    rule,
                    i,
                    "frequency 0 (start from rest): the foil does not flap",
                ));
            }
        }

        checks.push(make(
            &MAX_ANGLE_OF_ATTACK,
            i,
            s.max_angle_of_attack,
            format!(
                "largest |alpha| over a cycle = {} deg (quasi-steady kinematics at the pivot; the pitch amplitude is {} deg)",
                short(s.max_angle_of_attack),
                short(foil.pitch)
            ),
        ));

        // Leading-edge suction parameter.
        let (a0, t_a0) = records[i].lesp;
        let lesp = a0.abs();
        let side = if a0 >= 0.0 { "upper" } else { "lower" };
        let lesp_text = match LEADING_EDGE_SUCTION.thresholds.status(lesp) {
            Status::UsualPractice => "below the lowest critical values quoted: leading-edge flow stays attached".to_string(),
            Status::Caution => format!("within the range of critical values: leading-edge separation on the {side} surface is possible (its onset depends on the section and Re)"),
            Status::OutsideModel => format!("above the critical values quoted: expect leading-edge separation and a leading-edge vortex on the {side} surface, which this attached-flow model does not represent; loads and efficiency are then not predictable"),
        };
        checks.push(make(
            &LEADING_EDGE_SUCTION,
            i,
            lesp,
            format!(
                "peak A0 = {} at {} deg of the cycle (from the panel solution's leading-edge suction, C_s = 2 pi A0^2): {lesp_text}",
                short(a0),
                short(cycle_phase(t_a0, f))
            ),
        ));

        // Cavitation.
        let (cp_min, t_cp, panel) = records[i].cp_min;
        let minus_cp = -cp_min;
        let given_depth = rig.depth;
        let shallowest = given_depth.map(|d| (d - ext.top).max(0.0)).unwrap_or(0.0);
        let sigma = cavitation_number(rho, shallowest, props.vapour_pressure, speed);
        let sigma_rel =
            cavitation_number(rho, shallowest, props.vapour_pressure, ext.relative_speed);
        let thresholds = match CAVITATION.thresholds {
            Thresholds::Lower { caution, outside } => Thresholds::Lower {
                caution: caution * minus_cp,
                outside: outside * minus_cp,
            },
            other => other,
        };
        let n = case.numerics.panels;
        let where_ = format!(
            "{} surface at x/c = {}",
            if panel >= n / 2 { "upper" } else { "lower" },
            short(panel_x(foil.thickness, n, panel))
        );
        let depth_text = match given_depth {
            Some(_) => format!(
                "at d = {} m, the shallowest point of the foil over a cycle",
                short(shallowest)
            ),
            None => {
                "at the surface (rig.depth not given: d = 0, the lowest sigma possible)".to_string()
            }
        };
        let cav_text = match thresholds.status(sigma) {
            Status::UsualPractice => "no cavitation expected",
            Status::Caution => "within the inception margin: cavitation possible",
            Status::OutsideModel => "cavitation expected, which the model does not represent",
        };
        checks.push(make_with(
            &CAVITATION,
            thresholds,
            i,
            sigma,
            format!(
                "sigma = {} {depth_text} against -Cp_min = {} ({where_}, {} deg of the cycle): {cav_text}; sigma at the peak relative speed {} m/s is {}",
                short(sigma),
                short(minus_cp),
                short(cycle_phase(t_cp, f)),
                short(ext.relative_speed),
                short(sigma_rel)
            ),
        ));

        // Tank.
        match given_depth {
            Some(depth) => {
                let clearance = (depth - ext.top) / c;
                let mean_depth = depth - motions[i].pivot_mean[1];
                let froude = if mean_depth > 0.0 {
                    short(speed / (GRAVITY * mean_depth).sqrt())
                } else {
                    "n/a".to_string()
                };
                let text = if clearance < 0.0 {
                    "the foil leaves the water during the cycle".to_string()
                } else {
                    format!(
                        "top of the excursion {} m below the surface",
                        short(depth - ext.top)
                    )
                };
                checks.push(make(
                    &SURFACE_CLEARANCE,
                    i,
                    clearance,
                    format!(
                        "{text}; depth Froude number U / sqrt(g d) = {froude} at the mean depth {} m; the model has no free surface",
                        short(mean_depth)
                    ),
                ));
            }
            None => skipped.push(skip(
                &SURFACE_CLEARANCE,
                i,
                "give rig.depth (depth of y = 0 below the surface, m)",
            )),
        }
        match (given_depth, rig.water_depth) {
            (Some(depth), Some(water_depth)) => {
                let floor = depth - water_depth;
                let clearance = (ext.bottom - floor) / c;
                let text = if clearance < 0.0 {
                    "the foil reaches the floor during the cycle".to_string()
                } else {
                    format!(
                        "bottom of the excursion {} m above the floor",
                        short(ext.bottom - floor)
                    )
                };
                checks.push(make(
                    &FLOOR_CLEARANCE,
                    i,
                    clearance,
                    format!("{text}; the model has no floor"),
                ));
            }
            _ => skipped.push(skip(
                &FLOOR_CLEARANCE,
                i,
                "give rig.depth and rig.water_depth (m)",
            )),
        }
        match (rig.water_depth, rig.tank_width) {
            (Some(water_depth), Some(width)) => {
                let height = ext.top - ext.bottom;
                let blockage = 100.0 * height * foil.span / (water_depth * width);
                let span_note = if foil.span > width {
                    "; the span is wider than the tank: check span and tank_width"
                } else {
                    ""
                };
                checks.push(make(
                    &BLOCKAGE,
                    i,
                    blockage,
                    format!(
                        "swept height {} m x span {} m over {} m x {} m; chord / water depth = {}{span_note}",
                        short(height),
                        short(foil.span),
                        short(water_depth),
                        short(width),
                        short(c / water_depth)
                    ),
                ));
            }
            _ => skipped.push(skip(
                &BLOCKAGE,
                i,
                "give rig.water_depth and rig.tank_width (m)",
            )),
        }

        loads.push(load_report(
            sim,
            i,
            &motions[i],
            &ext,
            lo,
            rho,
            checks
                .iter()
                .filter(|ch| ch.foil == i)
                .fold(Status::UsualPractice, |w, ch| {
                    if ch.id == LEADING_EDGE_SUCTION.id || ch.id == MAX_ANGLE_OF_ATTACK.id {
                        w.worst(ch.status)
                    } else {
                        w
                    }
                }),
        ));
    }

    let worst = checks
        .iter()
        .fold(Status::UsualPractice, |w, ch| w.worst(ch.status));
    RigCheck {
        water: WaterReport {
            kind: case.flow.water,
            temperature: case.flow.temperature,
            density: rho,
            dynamic_viscosity: props.dynamic_viscosity,
            kinematic_viscosity: props.kinematic_viscosity,
            vapour_pressure: props.vapour_pressure,
            source: WATER_SOURCES,
        },
        averaging: Averaging {
            first_cycle,
            cycles,
            steps: sim.steps_taken() - lo,
        },
        checks,
        skipped,
        loads,
        cautions: Cautions {
            loads: LOADS_CAUTION,
            safety: SAFETY_CAUTION,
        },
        worst,
    }
}

fn water_name(w: Water) -> &'static str {
    match w {
        Water::Fresh => "fresh",
        Water::Sea => "sea",
    }
}

/// Chordwise position (fraction of chord) of panel `j`'s midpoint on the section.
fn panel_x(thickness: f64, panels: usize, j: usize) -> f64 {
    let s = geometry::symmetric_section(thickness, panels);
    0.5 * (s[j][0] + s[j + 1][0])
}

fn power_stats(p: &[f64]) -> Power {
    let n = p.len().max(1) as f64;
    Power {
        peak: p.iter().copied().fold(f64::NEG_INFINITY, f64::max).max(0.0),
        mean: p.iter().sum::<f64>() / n,
        regenerative_mean: p.iter().map(|v| v.min(0.0)).sum::<f64>() / n,
        regenerative_peak: p.iter().copied().fold(0.0, f64::min),
        regenerative_fraction: p.iter().filter(|v| **v < 0.0).count() as f64 / n,
    }
}

fn load_report(
    sim: &Simulation,
    i: usize,
    motion: &Motion,
    ext: &Extremes,
    lo: usize,
    rho: f64,
    regime: Status,
) -> LoadReport {
    let case = sim.case();
    let foil = &case.foils[i];
    let rig = foil.rig.unwrap_or_default();
    let (m, inertia) = (rig.moving_mass, rig.pitch_inertia);
    let a = 2.0 * foil.pivot - 1.0;
    let added_mass = flat_plate_added_mass(rho, foil.chord, foil.span);
    let added_inertia = flat_plate_added_pitch_inertia(rho, foil.chord, foil.span, a);
    let dt = sim.time_step();
    let hist = &sim.history()[lo..];
    let mut force = Vec::with_capacity(hist.len());
    let mut torque = Vec::with_capacity(hist.len());
    let mut p_heave = Vec::with_capacity(hist.len());
    let mut p_pitch = Vec::with_capacity(hist.len());
    let (mut hdd_max, mut tdd_max, mut lift_max, mut moment_max) = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
    for (k, row) in hist.iter().enumerate() {
        let t = (lo + k) as f64 * dt;
        let pose: Pose = motion.pose(t);
        let (hdd, tdd) = accelerations(motion, t);
        let l = &row[i];
        let fh = m * hdd - l.lift;
        let tp = inertia * tdd - l.moment;
        force.push(fh);
        torque.push(tp);
        p_heave.push(fh * pose.pivot_velocity[1]);
        p_pitch.push(tp * pose.theta_dot);
        hdd_max = hdd_max.max(hdd.abs());
        tdd_max = tdd_max.max(tdd.abs());
        lift_max = lift_max.max(l.lift.abs());
        moment_max = moment_max.max(l.moment.abs());
    }
    let peak = |v: &[f64]| v.iter().map(|x| x.abs()).fold(0.0, f64::max);
    let rms = |v: &[f64]| (v.iter().map(|x| x * x).sum::<f64>() / v.len().max(1) as f64).sqrt();
    let total: Vec<f64> = p_heave.iter().zip(&p_pitch).map(|(a, b)| a + b).collect();
    let heave_force = Load {
        peak: peak(&force),
        rms: rms(&force),
        hydrodynamic_peak: lift_max,
        inertia_peak: m * hdd_max,
        added_mass_peak: added_mass * hdd_max,
    };
    let pitch_torque = Load {
        peak: peak(&torque),
        rms: rms(&torque),
        hydrodynamic_peak: moment_max,
        inertia_peak: inertia * tdd_max,
        added_mass_peak: added_inertia * tdd_max,
    };
    let f = case.frequency;
    // A foil whose leading edge lies behind another foil's trailing edge meets that foil's wake.
    let in_wake = case
        .foils
        .iter()
        .enumerate()
        .any(|(j, o)| j != i && o.x + o.chord <= foil.x);
    let (factor, factor_why) = if in_wake || regime != Status::UsualPractice {
        (
            (2.0, 3.0),
            if in_wake {
                "uncertain, dynamic loads: a vortex from the foil upstream can hit this foil"
            } else {
                "uncertain, dynamic loads: leading-edge separation or large incidence flagged above"
            },
        )
    } else {
        ((1.5, 2.0), "known peak loads, ductile metal")
    };
    let cp = "common practice";
    let mut sizing = vec![
        Sizing {
            item: "heave actuator peak force rating",
            value: 1.5 * heave_force.peak,
            unit: "N",
            rule: "at least 1.5 x the predicted peak force".into(),
            source: cp,
        },
        Sizing {
            item: "heave actuator continuous force rating",
            value: heave_force.rms,
            unit: "N",
            rule: "at least the RMS force, with margin".into(),
            source: cp,
        },
        Sizing {
            item: "pitch actuator peak torque rating",
            value: 1.5 * pitch_torque.peak,
            unit: "N m",
            rule: "at least 1.5 x the predicted peak torque".into(),
            source: cp,
        },
        Sizing {
            item: "pitch actuator continuous torque rating",
            value: pitch_torque.rms,
            unit: "N m",
            rule: "at least the RMS torque, with margin".into(),
            source: cp,
        },
        Sizing {
            item: "load cell range (force)",
            value: 2.0 * heave_force.peak,
            unit: "N",
            rule: "at least 2 x the predicted peak including inertia".into(),
            source: cp,
        },
        Sizing {
            item: "load cell and mount first natural frequency",
            value: 5.0 * f,
            unit: "Hz",
            rule: format!(
                "at least 5 to 10 x the flapping frequency ({} to {} Hz): the force signal carries harmonics up to about 5 f",
                short(5.0 * f),
                short(10.0 * f)
            ),
            source: cp,
        },
        Sizing {
            item: "fixtures, stings and bolts: design load",
            value: factor.1 * heave_force.peak,
            unit: "N",
            rule: format!(
                "static safety factor {} to {} on the peak load ({factor_why}); check fatigue too",
                short(factor.0),
                short(factor.1)
            ),
            source: cp,
        },
    ];
    if f == 0.0 {
        // A start from rest has no flapping frequency to keep the mount's resonance above.
        sizing.retain(|s| s.unit != "Hz");
    }
    let mut notes = Vec::new();
    if m == 0.0 {
        notes.push(format!(
            "foils.{i}.rig.moving_mass not given: the heave force leaves out the inertia of the moving parts"
        ));
    }
    if inertia == 0.0 && foil.pitch > 0.0 {
        notes.push(format!(
            "foils.{i}.rig.pitch_inertia not given: the pitch torque leaves out the inertia of the turning parts"
        ));
    }
    notes.push(format!(
        "the hydrodynamic force and torque come from the panel solution and contain the added mass of the water (flat plate: {} kg in heave, {} kg m^2 in pitch about the pivot)",
        short(added_mass),
        short(added_inertia)
    ));
    notes.push(
        "peaks are peaks of the combined time series; the static weight of the moving parts is not included"
            .into(),
    );
    LoadReport {
        foil: i,
        moving_mass: m,
        pitch_inertia: inertia,
        added_mass,
        added_pitch_inertia: added_inertia,
        peak_relative_speed: ext.relative_speed,
        peak_heave_acceleration: hdd_max,
        peak_pitch_acceleration: tdd_max,
        heave_force,
        pitch_torque,
        heave_power: power_stats(&p_heave),
        pitch_power: power_stats(&p_pitch),
        total_power: power_stats(&total),
        load_cycles_per_hour: 3600.0 * f,
        hours_to_fatigue_cycles: (f > 0.0).then(|| FATIGUE_CYCLES / (3600.0 * f)),
        sizing,
        notes,
    }
}

// ---------------------------------------------------------------------------------------------
// Text report.

impl RigCheck {
    /// The report as text for the terminal (`finwake check` without `--json`).
    pub fn to_text(&self, title: &str) -> String {
        let mut o = String::new();
        let w = &self.water;
        let _ = writeln!(o, "finwake check {title}");
        let _ = writeln!(
            o,
            "{} water at {} deg C: density {} kg/m^3, kinematic viscosity {} m^2/s, vapour pressure {} Pa ({})",
            water_name(w.kind),
            short(w.temperature),
            short(w.density),
            short(w.kinematic_viscosity),
            short(w.vapour_pressure),
            w.source
        );
        let a = &self.averaging;
        if a.cycles > 0 {
            let _ = writeln!(
                o,
                "statistics over cycles {} to {} (counting from 1; {} steps)",
                a.first_cycle + 1,
                a.first_cycle + a.cycles,
                a.steps
            );
        } else {
            let _ = writeln!(o, "start from rest: values at the end of the run");
        }
        let _ = writeln!(o, "worst status: {}", self.worst.label());
        let nf = self.loads.len();
        for i in 0..nf {
            let _ = writeln!(o);
            let _ = writeln!(o, "foil {i}: checks");
            for ch in self.checks.iter().filter(|c| c.foil == i) {
                let unit = if ch.unit == "-" {
                    String::new()
                } else {
                    format!(" {}", ch.unit)
                };
                let _ = writeln!(
                    o,
                    "  [{}] {} = {}{unit}",
                    ch.status.label(),
                    ch.name,
                    short(ch.value)
                );
                let _ = writeln!(o, "      {}", ch.message);
                let _ = writeln!(o, "      limit: {}", ch.limit);
                let _ = writeln!(o, "      source: {}", ch.source);
            }
            for sk in self.skipped.iter().filter(|s| s.foil == i) {
                let _ = writeln!(o, "  [not checked] {}: {}", sk.name, sk.message);
            }
            let l = &self.loads[i];
            let _ = writeln!(
                o,
                "foil {i}: actuator loads and power (screening estimates; see the caution below)"
            );
            let _ = writeln!(
                o,
                "  peak speed relative to the water     {} m/s",
                short(l.peak_relative_speed)
            );
            for (name, unit, load) in [
                ("heave force", "N", &l.heave_force),
                ("pitch torque", "N m", &l.pitch_torque),
            ] {
                let _ = writeln!(
                    o,
                    "  {name:<12} peak {} {unit}, RMS {} {unit} (hydrodynamic peak {}, inside it flat-plate added mass x peak acceleration {}; body inertia {})",
                    short(load.peak),
                    short(load.rms),
                    short(load.hydrodynamic_peak),
                    short(load.added_mass_peak),
                    short(load.inertia_peak)
                );
            }
            for (name, p) in [
                ("heave power", &l.heave_power),
                ("pitch power", &l.pitch_power),
                ("total power", &l.total_power),
            ] {
                let _ = writeln!(
                    o,
                    "  {name:<12} peak {} W, mean {} W, regenerative: mean {} W, peak {} W, {} % of the time",
                    short(p.peak),
                    short(p.mean),
                    short(p.regenerative_mean),
                    short(p.regenerative_peak),
                    short(100.0 * p.regenerative_fraction)
                );
            }
            let fatigue = match l.hours_to_fatigue_cycles {
                Some(h) => format!("; 1e6 cycles after {} h of running", short(h)),
                None => String::new(),
            };
            let _ = writeln!(
                o,
                "  load cycles  {} per hour{fatigue}",
                short(l.load_cycles_per_hour)
            );
            let _ = writeln!(o, "  sizing (common practice):");
            for s in &l.sizing {
                let _ = writeln!(
                    o,
                    "    {}: {} {} ({})",
                    s.item,
                    short(s.value),
                    s.unit,
                    s.rule
                );
            }
            for n in &l.notes {
                let _ = writeln!(o, "  note: {n}");
            }
        }
        let _ = writeln!(o);
        let _ = writeln!(o, "CAUTION: {}", self.cautions.loads);
        let _ = writeln!(o, "SAFETY: {}", self.cautions.safety);
        o
    }
}
