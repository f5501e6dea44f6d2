//! Exports for reports: the header block of a time-history CSV file, with every case value and
//! its unit, the definitions behind the columns, and the finwake version.
//!
//! The block is a run of lines that start with `# `, so that spreadsheet and data-frame readers
//! can skip it as comments (`pandas.read_csv(..., comment="#")`). Numbers are written in full
//! precision (the shortest text that reads back to the same `f64`). The page writes the block,
//! then its column line and the data; see `www/ui/exports.js`.

use serde_json::Value;

use crate::case::Case;
use crate::link::{self, Kind, KEYS};
use crate::water::{self, Water};

/// This build's version (the crate version).
pub const FINWAKE_VERSION: &str = env!("CARGO_PKG_VERSION");

/// The definitions of a load history, one line each (units and signs as in
/// [`crate::conventions`]).
pub const DEFINITIONS: &[&str] = &[
    "frame: flow along +x at speed U, y up; lift positive +y; thrust positive upstream (against the flow); pitch, moment and pitch rate nose-up positive",
    "heave of foil i: y_i(t) = y0_i + heave_i sin(2 pi f t - phase_i), the pivot's vertical position",
    "pitch of foil i about its pivot: theta_i(t) = pitch_mean_i + pitch_i sin(2 pi f t - phase_i + pitch_lead_i); pitch_lead 90 deg is feathering",
    "phase sign: phase_i is how many degrees foil i's motion lags foil 0's (foil 0 has phase 0 by definition)",
    "gap: streamwise distance from the fore foil's trailing edge to the hind foil's leading edge at mean pose, in chords of the fore foil; x, y in the case are leading edges at mean pose",
    "angle_of_attack: effective angle at the pivot, theta - atan(ydot_pivot / U), deg",
    "coefficients of foil i with q = 0.5 rho U^2: lift and thrust / (q c_i s_i); moment about the pivot / (q c_i^2 s_i); input power / (q U c_i s_i)",
    "input power: the power the actuators deliver to the water, -F . v_pivot - M theta_dot; propulsive efficiency = mean thrust U / mean input power where both are positive",
    "smooth start: the oscillating terms are multiplied by 0.5 (1 - cos(pi t / T_ramp)) for t < T_ramp = ramp_cycles / f",
    "time: s, the solved instant of each step; one row per foil per step",
];

/// The header block of a time-history CSV for `case`: lines starting with `# `, each ending in
/// a newline.
pub fn history_header(case: &Case) -> String {
    let mut out = Vec::new();
    out.push(format!("finwake {FINWAKE_VERSION} time history"));
    out.push(
        "2D inviscid screening estimates (panel method, free vortex wake): no viscosity, stall, 3D or free-surface effects; not design loads".to_string(),
    );
    out.push("case (case-file keys, values in full precision, units):".to_string());
    out.push(format!("version = {}", case.version));
    let tree = serde_json::to_value(case).expect("a case always serialises");
    let head: Vec<&link::LinkKey> = KEYS
        .iter()
        .filter(|k| !k.path.starts_with("foils.") && !k.path.starts_with("numerics."))
        .collect();
    for k in &head {
        out.push(value_line(k.path, k, &tree));
    }
    for i in 0..case.foils.len() {
        for k in KEYS.iter().filter(|k| k.path.starts_with("foils.*.")) {
            let path = k.path.replacen('*', &i.to_string(), 1);
            out.push(value_line(&path, k, &tree));
        }
    }
    for k in KEYS
        .iter()
        .filter(|k| !k.path.starts_with("foils.") && !head.iter().any(|h| h.path == k.path))
    {
        out.push(value_line(k.path, k, &tree));
    }
    if let Ok(fragment) = link::encode(case) {
        out.push(format!("link: #{fragment}"));
    }
    let props = water::properties(case.flow.water, case.flow.temperature);
    let water = match case.flow.water {
        Water::Fresh => "fresh water",
        Water::Sea => "sea water",
    };
    out.push(format!(
        "water: {water} at {} deg C: density rho = {} kg/m^3, kinematic viscosity {} m^2/s",
        link::format_number(case.flow.temperature),
        link::format_number(props.density),
        link::format_number(props.kinematic_viscosity)
    ));
    for i in 1..case.foils.len() {
        let (fore, hind) = (&case.foils[i - 1], &case.foils[i]);
        let te = fore.x + fore.chord * fore.pitch_mean.to_radians().cos();
        out.push(format!(
            "gap of foil {i} behind foil {}: {} chords of foil {} ({} m); leading edge to leading edge {} chords; vertical offset {} chords (derived, 12 significant digits)",
            i - 1,
            sig12((hind.x - te) / fore.chord),
            i - 1,
            sig12(hind.x - te),
            sig12((hind.x - fore.x) / fore.chord),
            sig12((hind.y - fore.y) / fore.chord),
        ));
    }
    out.push("definitions:".to_string());
    out.extend(DEFINITIONS.iter().map(|d| (*d).to_string()));
    out.iter().map(|l| format!("# {l}\n")).collect()
}

/// A derived value to 12 significant digits (so that 0.3 - 0.1 shows as 0.2), as link text.
fn sig12(v: f64) -> String {
    if v == 0.0 || !v.is_finite() {
        return link::format_number(v);
    }
    let rounded: f64 = format!("{v:.11e}").parse().unwrap_or(v);
    link::format_number(rounded)
}

/// `path = value unit` for one case value.
fn value_line(path: &str, k: &link::LinkKey, tree: &Value) -> String {
    let value = path
        .split('.')
        .try_fold(tree, |v, part| match v {
            Value::Object(m) => m.get(part),
            Value::Array(a) => part.parse::<usize>().ok().and_then(|i| a.get(i)),
            _ => None,
        })
        .cloned()
        .unwrap_or(Value::Null);
    let text = match (&value, k.kind) {
        (Value::Null, _) => "none (solver default)".to_string(),
        (Value::Number(n), Kind::Number) => n.as_f64().map_or(n.to_string(), link::format_number),
        (Value::String(s), _) => s.clone(),
        (v, _) => v.to_string(),
    };
    if k.unit == "-" || value.is_null() {
        format!("{path} = {text}")
    } else {
        format!("{path} = {text} {}", k.unit)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_case_value_is_in_the_header() {
        let text = include_str!("../../cases/tandem-two-chords.json");
        let case = Case::from_json(text).unwrap();
        let header = history_header(&case);
        assert!(header.lines().all(|l| l.starts_with("# ")));
        for needle in [
            "# flow.speed = 0.5 m/s",
            "# foils.1.x = 0.3 m",
            "# foils.1.phase = 90 deg",
            "# numerics.time_step = none",
            "# link: #v1;",
            FINWAKE_VERSION,
            "phase sign",
            "gap of foil 1 behind foil 0: 2 chords",
        ] {
            assert!(header.contains(needle), "{needle} missing from\n{header}");
        }
    }
}
