//! The native half of the wasm parity test (tests/wasm/parity.test.mjs): runs a case natively and
//! records the exact f64 bit patterns of every step's time and loads, a hash of the wake particles
//! after every step, and all particles after the last step. The node test runs the same case in
//! the wasm build and demands the same bits.

use std::path::Path;

use finwake::{Case, FoilLoads, Simulation};
use serde_json::json;

use crate::Result;

/// Steps of the parity run (the parity case's three cycles of 100 steps).
pub const PARITY_STEPS: usize = 300;

/// The loads fields in the order of the wasm loads buffers (crate/src/wasm.rs, `loadFields()`).
const LOAD_FIELDS: [&str; 11] = FoilLoads::FIELDS;

fn load_values(l: &FoilLoads) -> [f64; 11] {
    l.values()
}

fn hex(v: f64) -> String {
    format!("{:016x}", v.to_bits())
}

/// 64-bit FNV-1a over the bit patterns of x, then y, then circulation of every particle (the
/// node test computes the same with BigInt).
fn particle_hash(x: &[f64], y: &[f64], g: &[f64]) -> String {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for v in x.iter().chain(y).chain(g) {
        h ^= v.to_bits();
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    format!("{h:016x}")
}

/// Runs `case_path` for `steps` steps and writes the record as JSON to `out`.
pub fn write_native(case_path: &Path, steps: usize, out: &Path) -> Result<()> {
    let text = std::fs::read_to_string(case_path)
        .map_err(|e| format!("cannot read {}: {e}", case_path.display()))?;
    let case = Case::from_json(&text).map_err(|e| format!("{}: {e}", case_path.display()))?;
    let mut sim = Simulation::new(&case).map_err(|e| format!("{}: {e}", case_path.display()))?;
    let mut per_step = Vec::with_capacity(steps);
    for _ in 0..steps {
        if sim.is_finished() {
            break;
        }
        sim.step();
        let loads: Vec<String> = sim
            .loads()
            .iter()
            .flat_map(|l| load_values(l).map(hex))
            .collect();
        let (x, y, g) = sim.particles();
        per_step.push(json!({
            "time": hex(sim.time()),
            "loads": loads,
            "particles": x.len(),
            "particle_hash": particle_hash(x, y, g),
        }));
    }
    let (x, y, g) = sim.particles();
    let record = json!({
        "target": format!("{}-{}", std::env::consts::ARCH, std::env::consts::OS),
        "steps": per_step.len(),
        "foils": case.foils.len(),
        "load_fields": LOAD_FIELDS,
        "per_step": per_step,
        "final_particles": {
            "x": x.iter().map(|v| hex(*v)).collect::<Vec<_>>(),
            "y": y.iter().map(|v| hex(*v)).collect::<Vec<_>>(),
            "circulation": g.iter().map(|v| hex(*v)).collect::<Vec<_>>(),
        },
        "summary": sim.summary(),
    });
    if let Some(dir) = out.parent() {
        std::fs::create_dir_all(dir)
            .map_err(|e| format!("cannot create {}: {e}", dir.display()))?;
    }
    std::fs::write(out, serde_json::to_string(&record).expect("json"))
        .map_err(|e| format!("cannot write {}: {e}", out.display()))?;
    println!(
        "xtask: native parity record of {} steps written to {}",
        record["steps"],
        out.display()
    );
    Ok(())
}
