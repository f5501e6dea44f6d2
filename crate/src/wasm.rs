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

use crate::case::Case;
use crate::error::CaseError;
use crate::sim::{FoilLoads, Simulation};

/// Numbers per foil in the loads buffers (the fields of [`FoilLoads`]).
pub const LOAD_STRIDE: usize = 11;

/// Names of the loads fields, in buffer order, with their units.
const LOAD_FIELDS: [&str; LOAD_STRIDE] = [
    "heave (m)",
    "pitch (deg)",
    "angle_of_attack (deg)",
    "lift_coefficient",
    "thrust_coefficient",
    "moment_coefficient",
    "power_coefficient",
    "lift (N)",
    "thrust (N)",
    "moment (N m)",
    "power (W)",
];

/// Appends one foil's loads in buffer order.
fn push_loads(out: &mut Vec<f64>, l: &FoilLoads) {
    out.extend_from_slice(&[
        l.heave,
        l.pitch,
        l.angle_of_attack,
        l.lift_coefficient,
        l.thrust_coefficient,
        l.moment_coefficient,
        l.power_coefficient,
        l.lift,
        l.thrust,
        l.moment,
        l.power,
    ]);
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
    Simulation::new(&case).map(|_| ()).map_err(|e| case_error(&e))
}

/// The case as the crate reads it, written back as case-file JSON (defaults filled in).
#[wasm_bindgen(js_name = normaliseCase)]
pub fn normalise_case(case_json: &str) -> Result<String, JsValue> {
    Case::from_json(case_json)
        .map(|c| c.to_json())
        .map_err(|e| case_error(&e))
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
        let serializer = serde_wasm_bindgen::Serializer::json_compatible();
        serde::Serialize::serialize(&self.sim.summary(), &serializer).map_err(JsValue::from)
    }
}
