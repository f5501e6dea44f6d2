//! Browser bindings (feature `wasm`): a thin wrapper of [`Simulation`] for the page's Web Worker.
//!
//! No physics lives here: every number comes from [`Simulation`], [`Case`] or the summary. This
//! module only moves data across the boundary, as copies (JS never keeps a view into wasm memory,
//! which a memory growth would detach).
//!
//! # Buffer layouts (all `Float64Array`, units as in [`crate::conventions`])
//! * [`WasmSim::particles`]: structure of arrays, length `3 n` for `n` particles:
//!   `[x_0 .. x_{n-1}, y_0 .. y_{n-1}, circulation_0 .. circulation_{n-1}]`; x, y in m in the
//!   inertial frame (flow along +x, y up); circulation in m^2/s, counter-clockwise positive.
//! * [`WasmSim::outline`]: one foil's closed outline, interleaved `[x_0, y_0, x_1, y_1, ..]` in m,
//!   inertial frame, trailing edge first, then the lower surface to the leading edge and back
//!   along the upper surface (the order of [`Simulation::foil_outline`]).
//! * [`WasmSim::loads`]: `LOAD_STRIDE` numbers per foil, foil after foil, in the order of
//!   [`load_fields`] (the fields of [`FoilLoads`], same units).
//! * [`WasmSim::advance`]: for every step taken, `1 + foils * LOAD_STRIDE` numbers: the time in s
//!   of the solved instant, then that step's loads laid out as in [`WasmSim::loads`].

use wasm_bindgen::prelude::*;

use serde::Serialize;

use crate::case::Case;
use crate::error::CaseError;
use crate::kinematics::{self, Motion};
use crate::sim::{FoilLoads, Simulation};
use crate::validate as limits;
use crate::water;

/// Numbers per foil in the loads buffers (the fields of [`FoilLoads`]).
pub const LOAD_STRIDE: usize = FoilLoads::FIELDS.len();

/// Names of the loads fields, in buffer order, with their units.
const LOAD_FIELDS: [&str; LOAD_STRIDE] = FoilLoads::FIELDS;

/// Appends one foil's loads in buffer order.
fn push_loads(out: &mut Vec<f64>, l: &FoilLoads) {
    out.extend_from_slice(&l.values());
}

/// A JS `Error` whose message is the case error's text, with the fields `path`, `value`,
/// `allowed` and `fix` so the page can point at the control at fault.
fn case_error(err: &CaseError) -> JsValue {
    let js = js_sys::Error::new(&err.to_string());
    js.set_name("CaseError");
    for (key, value) in [
        ("path", &err.path),
        ("value", &err.value),
        ("allowed", &err.allowed),
        ("fix", &err.fix),
    ] {
        // Setting a plain data property on a fresh Error object cannot fail.
        let _ = js_sys::Reflect::set(&js, &JsValue::from_str(key), &JsValue::from_str(value));
    }
    js.into()
}

/// Installs the panic hook, so a Rust panic reaches the console (and the page) with its message.
#[wasm_bindgen(start)]
pub fn start() {
    console_error_panic_hook::set_once();
}

/// The fields of the loads buffers, in order, with their units (see the module docs).
#[wasm_bindgen(js_name = loadFields)]
#[must_use]
pub fn load_fields() -> Vec<String> {
    LOAD_FIELDS.iter().map(|s| (*s).to_string()).collect()
}

/// Numbers per foil in the loads buffers.
#[wasm_bindgen(js_name = loadStride)]
#[must_use]
pub fn load_stride() -> usize {
    LOAD_STRIDE
}

/// Checks a case without running it. Throws a `CaseError` (see [`WasmSim::new`]) if it is bad.
#[wasm_bindgen(js_name = checkCase)]
pub fn check_case(case_json: &str) -> Result<(), JsValue> {
    let case = Case::from_json(case_json).map_err(|e| case_error(&e))?;
    Simulation::new(&case)
        .map(|_| ())
        .map_err(|e| case_error(&e))
}

/// The case as the crate reads it, written back as case-file JSON (defaults filled in).
#[wasm_bindgen(js_name = normaliseCase)]
pub fn normalise_case(case_json: &str) -> Result<String, JsValue> {
    Case::from_json(case_json)
        .map(|c| c.to_json())
        .map_err(|e| case_error(&e))
}

/// The allowed range of every case value, from the crate's validation (see [`crate::validate`]), as
/// `{ key: [low, high] }`. Keys are case key paths with `*` for the foil index; ranges marked
/// `_chords` are multiples of that foil's chord.
#[wasm_bindgen(js_name = caseLimits)]
pub fn case_limits() -> Result<JsValue, JsValue> {
    let pair = |r: (f64, f64)| [r.0, r.1];
    let count = |r: (usize, usize)| [r.0 as f64, r.1 as f64];
    let table = serde_json::json!({
        "flow.speed": pair(limits::SPEED_RANGE),
        "flow.temperature": pair(water::TEMPERATURE_RANGE),
        "frequency": [0.0, limits::FREQUENCY_MAX],
        "foils.*.chord": pair(limits::CHORD_RANGE),
        "foils.*.thickness": pair(limits::THICKNESS_RANGE),
        "foils.*.span": pair(limits::SPAN_RANGE),
        "foils.*.pivot": [0.0, 1.0],
        "foils.*.heave_chords": [0.0, limits::HEAVE_MAX_CHORDS],
        "foils.*.pitch": [0.0, limits::PITCH_MAX],
        "foils.*.pitch_mean": [-limits::PITCH_MEAN_MAX, limits::PITCH_MEAN_MAX],
        "foils.*.pitch_lead": [-limits::ANGLE_TURN_MAX, limits::ANGLE_TURN_MAX],
        "foils.*.phase": [-limits::ANGLE_TURN_MAX, limits::ANGLE_TURN_MAX],
        "foils.*.x_chords": [-limits::POSITION_MAX_CHORDS, limits::POSITION_MAX_CHORDS],
        "foils.*.y_chords": [-limits::POSITION_MAX_CHORDS, limits::POSITION_MAX_CHORDS],
        "numerics.panels": count(limits::PANELS_RANGE),
        "numerics.steps_per_cycle": count(limits::STEPS_PER_CYCLE_RANGE),
        "numerics.cycles": count(limits::CYCLES_RANGE),
        "numerics.core_size": pair(limits::CORE_SIZE_RANGE),
        "numerics.max_particles": count(limits::MAX_PARTICLES_RANGE),
        "numerics.wake_merge": pair(limits::WAKE_MERGE_RANGE),
        "numerics.far_wake_refresh": count(limits::FAR_WAKE_REFRESH_RANGE),
        "numerics.ramp_cycles": [0.0, limits::RAMP_CYCLES_MAX],
        "foils": [1.0, crate::case::MAX_FOILS as f64],
    });
    to_js(&table)
}

/// Numbers of one foil's motion known before any step, each from the crate's kinematics and water
/// properties with the definitions of [`crate::summary::FoilSummary`].
#[derive(Serialize)]
struct Derived {
    /// Strouhal number f A / U, A = peak-to-peak trailing-edge excursion.
    strouhal: f64,
    /// Heave-based Strouhal number 2 f h0 / U.
    strouhal_heave: f64,
    /// Reduced frequency pi f c / U (semichord based).
    reduced_frequency: f64,
    /// Reynolds number U c / nu.
    reynolds: f64,
    /// deg. Largest absolute effective angle of attack at the pivot over a cycle.
    max_angle_of_attack: f64,
    /// m. Peak-to-peak trailing-edge excursion A.
    trailing_edge_excursion: f64,
    /// Wake wavelength U / f in chords of this foil (`None` for frequency 0).
    wake_wavelength_chords: Option<f64>,
}

/// The derived numbers of every foil of a case (see `Derived`), as an array of plain objects.
/// Throws a `CaseError` if the case is bad.
#[wasm_bindgen(js_name = derivedNumbers)]
pub fn derived_numbers(case_json: &str) -> Result<JsValue, JsValue> {
    let case = Case::from_json(case_json).map_err(|e| case_error(&e))?;
    let f = case.frequency;
    let u = case.flow.speed;
    let nu = water::properties(case.flow.water, case.flow.temperature).kinematic_viscosity;
    let out: Vec<Derived> = case
        .foils
        .iter()
        .map(|foil| {
            let motion = Motion::new(foil, f, 0.0);
            let excursion = kinematics::trailing_edge_excursion(&motion, foil.chord, foil.pivot);
            Derived {
                strouhal: f * excursion / u,
                strouhal_heave: 2.0 * f * foil.heave / u,
                reduced_frequency: std::f64::consts::PI * f * foil.chord / u,
                reynolds: u * foil.chord / nu,
                max_angle_of_attack: kinematics::max_angle_of_attack(&motion, u).to_degrees(),
                trailing_edge_excursion: excursion,
                wake_wavelength_chords: (f > 0.0).then(|| u / (f * foil.chord)),
            }
        })
        .collect();
    to_js(&out)
}

/// A serialisable value as a plain JS value (`None` becomes `null`).
fn to_js<T: Serialize + ?Sized>(value: &T) -> Result<JsValue, JsValue> {
    value
        .serialize(&serde_wasm_bindgen::Serializer::json_compatible())
        .map_err(JsValue::from)
}

/// A running simulation, owned by JS; call `free()` when done with it.
#[wasm_bindgen]
pub struct WasmSim {
    sim: Simulation,
}

#[wasm_bindgen]
impl WasmSim {
    /// Parses and validates a case-file JSON text and builds the simulation. Throws a JS `Error`
    /// named `CaseError` with fields `path`, `value`, `allowed`, `fix` if the case is bad.
    #[wasm_bindgen(constructor)]
    pub fn new(case_json: &str) -> Result<WasmSim, JsValue> {
        let case = Case::from_json(case_json).map_err(|e| case_error(&e))?;
        let sim = Simulation::new(&case).map_err(|e| case_error(&e))?;
        Ok(WasmSim { sim })
    }

    /// Takes up to `n` steps (fewer once the run is finished) and returns the time and loads of
    /// every step taken (layout in the module docs); its length divided by
    /// `1 + foils * LOAD_STRIDE` is the number of steps taken.
    pub fn advance(&mut self, n: usize) -> Vec<f64> {
        let per_step = 1 + self.foil_count() * LOAD_STRIDE;
        let mut out = Vec::with_capacity(n * per_step);
        for _ in 0..n {
            if self.sim.is_finished() {
                break;
            }
            self.sim.step();
            out.push(self.sim.time());
            for l in self.sim.loads() {
                push_loads(&mut out, l);
            }
        }
        out
    }

    /// True once all steps of the case have been taken.
    #[wasm_bindgen(js_name = isFinished)]
    #[must_use]
    pub fn is_finished(&self) -> bool {
        self.sim.is_finished()
    }

    /// s. Time of the latest solved instant.
    #[must_use]
    pub fn time(&self) -> f64 {
        self.sim.time()
    }

    /// s. Time step.
    #[wasm_bindgen(js_name = timeStep)]
    #[must_use]
    pub fn time_step(&self) -> f64 {
        self.sim.time_step()
    }

    /// Steps taken so far.
    #[wasm_bindgen(js_name = stepsTaken)]
    #[must_use]
    pub fn steps_taken(&self) -> usize {
        self.sim.steps_taken()
    }

    /// Steps the case asks for in all.
    #[wasm_bindgen(js_name = totalSteps)]
    #[must_use]
    pub fn total_steps(&self) -> usize {
        self.sim.total_steps()
    }

    /// Number of foils.
    #[wasm_bindgen(js_name = foilCount)]
    #[must_use]
    pub fn foil_count(&self) -> usize {
        self.sim.case().foils.len()
    }

    /// Number of free wake particles now.
    #[wasm_bindgen(js_name = particleCount)]
    #[must_use]
    pub fn particle_count(&self) -> usize {
        self.sim.particles().0.len()
    }

    /// Wake particles as `[x.., y.., circulation..]` (layout in the module docs).
    pub fn particles(&self) -> Vec<f64> {
        let (x, y, g) = self.sim.particles();
        let mut out = Vec::with_capacity(3 * x.len());
        out.extend_from_slice(x);
        out.extend_from_slice(y);
        out.extend_from_slice(g);
        out
    }

    /// Outline of foil `i` now, as `[x0, y0, x1, y1, ..]` in m (layout in the module docs).
    /// Empty for a foil index out of range.
    pub fn outline(&self, i: usize) -> Vec<f64> {
        if i >= self.foil_count() {
            return Vec::new();
        }
        self.sim
            .foil_outline(i)
            .iter()
            .flat_map(|p| [p[0], p[1]])
            .collect()
    }

    /// Loads of every foil at the latest solved instant (layout in the module docs).
    pub fn loads(&self) -> Vec<f64> {
        let mut out = Vec::with_capacity(self.foil_count() * LOAD_STRIDE);
        for l in self.sim.loads() {
            push_loads(&mut out, l);
        }
        out
    }

    /// Cycle statistics of the steps taken so far, as a plain object with the keys of
    /// `finwake simulate --json` (`efficiency` is `null` where it is undefined).
    pub fn summary(&self) -> Result<JsValue, JsValue> {
        to_js(&self.sim.summary())
    }
}

// ---------------------------------------------------------------------------------------------
// Case links and exports (crate/src/link.rs, crate/src/export.rs), for the page's main thread.

/// A JS `Error` named `name` with `message`.
fn named_error(name: &str, message: &str) -> JsValue {
    let js = js_sys::Error::new(message);
    js.set_name(name);
    js.into()
}

/// The link fragment (`v1;...`, without `#`) of a case-file JSON text. Throws a `CaseError` for
/// a bad case.
#[wasm_bindgen(js_name = caseToLink)]
pub fn case_to_link(case_json: &str) -> Result<String, JsValue> {
    let case = Case::from_json(case_json).map_err(|e| case_error(&e))?;
    crate::link::encode(&case).map_err(|e| named_error("LinkError", &e.message))
}

/// A decoded link for the page.
#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct DecodedLink {
    /// The case as case-file JSON.
    case_json: String,
    /// Fields ignored or reset, with their reasons.
    notices: Vec<crate::link::LinkNotice>,
    /// The same, each as one line of text (as `finwake link --decode` prints them).
    messages: Vec<String>,
    /// Notices beyond those listed.
    more_notices: usize,
}

/// Decodes a link (an address, `#v1;...` or `v1;...`) into
/// `{ caseJson, notices: [{ key, path, value, action, reason, used }], messages, moreNotices }`
/// (`messages` holds each notice as one line of text). Throws an
/// `Error` named `LinkError` for text that is not a case link.
#[wasm_bindgen(js_name = linkToCase)]
pub fn link_to_case(link: &str) -> Result<JsValue, JsValue> {
    let d = crate::link::decode(link).map_err(|e| named_error("LinkError", &e.message))?;
    to_js(&DecodedLink {
        case_json: d.case.to_json(),
        messages: d.notices.iter().map(ToString::to_string).collect(),
        notices: d.notices,
        more_notices: d.more_notices,
    })
}

/// The header block (lines starting with `# `) of a time-history CSV of a case. Throws a
/// `CaseError` for a bad case.
#[wasm_bindgen(js_name = historyHeader)]
pub fn history_header(case_json: &str) -> Result<String, JsValue> {
    let case = Case::from_json(case_json).map_err(|e| case_error(&e))?;
    Ok(crate::export::history_header(&case))
}

/// This build's version.
#[wasm_bindgen(js_name = finwakeVersion)]
#[must_use]
pub fn finwake_version() -> String {
    crate::export::FINWAKE_VERSION.to_string()
}

/// The rig check of a case (see [`crate::rig`]) as JSON text: `water`, `checks` (each with `id`,
/// `foil`, `status`, `value`, `limit`, `source`, `message`), `skipped`, `loads` and `cautions`.
/// It runs the whole case, as long as a run to the end. Throws a `CaseError` if the case is bad.
#[wasm_bindgen(js_name = rigCheck)]
pub fn rig_check(case_json: &str) -> Result<String, JsValue> {
    crate::rig::check_json(case_json).map_err(|e| case_error(&e))
}
