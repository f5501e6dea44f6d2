//! The `finwake` command line, run as a separate process: exit status, stderr, stdout and the
//! history file.

use std::path::PathBuf;
use std::process::{Command, Output};

use serde_json::Value;

const SINGLE: &str = include_str!("../../cases/single-efficient.json");
const TANDEM: &str = include_str!("../../cases/tandem-two-chords.json");

fn finwake(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_finwake"))
        .args(args)
        .output()
        .expect("the finwake binary runs")
}

/// A fresh scratch folder for one test.
fn scratch(name: &str) -> PathBuf {
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR"))
        .join("cli")
        .join(name);
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn write(dir: &std::path::Path, name: &str, text: &str) -> String {
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path.to_str().unwrap().to_string()
}

fn stderr(out: &Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

/// Bad input: status 2, nothing on stdout, exactly one line on stderr, no panic.
fn assert_bad_input(out: &Output) -> String {
    let err = stderr(out);
    assert_eq!(out.status.code(), Some(2), "status; stderr: {err}");
    assert!(!err.contains("panicked"), "panic: {err}");
    assert_eq!(err.trim_end().lines().count(), 1, "not one line: {err:?}");
    assert!(
        out.stdout.is_empty(),
        "stdout on error: {}",
        String::from_utf8_lossy(&out.stdout)
    );
    err
}

/// `text` with a small `numerics` block so that a run takes a moment.
fn small(text: &str, cycles: usize, steps_per_cycle: usize) -> String {
    let mut case: Value = serde_json::from_str(text).unwrap();
    case["numerics"] = serde_json::json!({
        "panels": 40, "steps_per_cycle": steps_per_cycle, "cycles": cycles, "ramp_cycles": 1.0
    });
    serde_json::to_string_pretty(&case).unwrap()
}

// ---------------------------------------------------------------------------------------------
// Bad input (no solver needed).

#[test]
fn missing_file_names_path_and_reason() {
    let dir = scratch("missing");
    let path = dir.join("no-such-case.json");
    let err = assert_bad_input(&finwake(&["simulate", path.to_str().unwrap()]));
    assert!(err.contains("no-such-case.json"), "{err}");
    assert!(
        err.contains("No such file") || err.contains("cannot find"),
        "no OS reason: {err}"
    );
}

#[test]
fn folder_instead_of_file_is_bad_input() {
    let dir = scratch("folder");
    let err = assert_bad_input(&finwake(&["simulate", dir.to_str().unwrap()]));
    assert!(err.contains("cannot read"), "{err}");
}

#[test]
fn malformed_file_gives_line_and_column() {
    let dir = scratch("malformed");
    let path = write(
        &dir,
        "broken.json",
        "{\n  \"version\": 1,\n  \"flow\": { \"speed\": 0.5 \n",
    );
    let err = assert_bad_input(&finwake(&["simulate", &path]));
    assert!(err.contains("broken.json"), "{err}");
    assert!(
        err.contains("not valid JSON") && err.contains("line "),
        "{err}"
    );
}

#[test]
fn bad_value_names_field_value_and_range() {
    let dir = scratch("bad-value");
    let path = write(
        &dir,
        "case.json",
        &SINGLE.replace("\"chord\": 0.1", "\"chord\": -0.1"),
    );
    let err = assert_bad_input(&finwake(&["simulate", &path]));
    assert!(err.contains("foils.0.chord = -0.1"), "{err}");
    assert!(err.contains("0.001 to 10 m"), "{err}");
}

#[test]
fn unknown_key_is_bad_input() {
    let dir = scratch("unknown-key");
    let path = write(&dir, "case.json", &SINGLE.replace("\"span\"", "\"spam\""));
    let err = assert_bad_input(&finwake(&["simulate", &path]));
    assert!(
        err.contains("foils.0.spam") && err.contains("did you mean `span`"),
        "{err}"
    );
}

#[test]
fn bad_arguments_are_one_line() {
    assert_bad_input(&finwake(&[]));
    assert_bad_input(&finwake(&["simulate"]));
    let err = assert_bad_input(&finwake(&["simulate", "case.json", "--no-such-flag"]));
    assert!(
        err.contains("--no-such-flag") && err.contains("usage"),
        "{err}"
    );
}

#[test]
fn help_succeeds() {
    let out = finwake(&["simulate", "--help"]);
    assert_eq!(out.status.code(), Some(0));
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.contains("--json") && text.contains("--history"),
        "{text}"
    );
}

#[test]
fn unwritable_history_path_is_bad_input() {
    let dir = scratch("history-path");
    let case = write(&dir, "case.json", &small(SINGLE, 2, 40));
    let target = dir.join("no-such-folder").join("h.csv");
    let err = assert_bad_input(&finwake(&[
        "simulate",
        &case,
        "--history",
        target.to_str().unwrap(),
    ]));
    assert!(
        err.contains("history file") && err.contains("h.csv"),
        "{err}"
    );
}

// ---------------------------------------------------------------------------------------------
// Runs (need the solver).

#[test]
fn overlapping_foils_are_bad_input() {
    // Hind leading edge 5 cm behind the fore leading edge: inside the 10 cm fore chord.
    let dir = scratch("overlap");
    let mut case: Value = serde_json::from_str(TANDEM).unwrap();
    case["foils"][1]["x"] = serde_json::json!(0.05);
    let path = write(&dir, "case.json", &case.to_string());
    let err = assert_bad_input(&finwake(&["simulate", &path]));
    assert!(err.contains("foils.1") && err.contains("overlap"), "{err}");
}

#[test]
fn simulate_prints_the_table() {
    let dir = scratch("table");
    let case = write(&dir, "case.json", &small(SINGLE, 2, 40));
    let out = finwake(&["simulate", &case]);
    assert_eq!(out.status.code(), Some(0), "stderr: {}", stderr(&out));
    let text = String::from_utf8(out.stdout).unwrap();
    for needle in [
        "foil 0",
        "total",
        "mean thrust",
        "thrust coefficient C_T",
        "power coefficient C_P",
        "propulsive efficiency",
        "peak lift",
        "peak torque",
        "max angle of attack",
        "Strouhal f A / U",
        "Strouhal 2 f h0 / U",
        "reduced frequency pi f c / U",
        "Reynolds",
        "averaged over cycles",
        "converged:",
        "wake particles:",
        "density",
        "kinematic viscosity",
        "screening estimates, not design loads",
    ] {
        assert!(text.contains(needle), "table lacks {needle:?}:\n{text}");
    }
    for unit in [" N ", " W ", " N m ", " deg ", "kg/m^3", "m^2/s"] {
        assert!(text.contains(unit), "table lacks unit {unit:?}:\n{text}");
    }
}

/// Every summary key of the design's interface section.
const FOIL_KEYS: &[&str] = &[
    "thrust_coefficient",
    "lift_coefficient",
    "lift_amplitude",
    "moment_coefficient",
    "power_coefficient",
    "efficiency",
    "thrust",
    "power",
    "peak_lift",
    "peak_torque",
    "max_angle_of_attack",
    "strouhal",
    "reduced_frequency",
    "reynolds",
];
const TOTAL_KEYS: &[&str] = &[
    "thrust_coefficient",
    "power_coefficient",
    "efficiency",
    "thrust",
    "power",
];

#[test]
fn simulate_json_has_every_summary_key() {
    let dir = scratch("json");
    let case = write(&dir, "case.json", &small(TANDEM, 2, 40));
    let out = finwake(&["simulate", &case, "--json"]);
    assert_eq!(out.status.code(), Some(0), "stderr: {}", stderr(&out));
    let v: Value = serde_json::from_slice(&out.stdout).expect("stdout is JSON only");
    let foils = v["foils"].as_array().expect("foils list");
    assert_eq!(foils.len(), 2);
    for (i, f) in foils.iter().enumerate() {
        for k in FOIL_KEYS {
            assert!(f.get(k).is_some(), "foils.{i}.{k} missing");
        }
        for k in ["thrust", "power", "peak_lift", "reynolds", "strouhal"] {
            assert!(f[k].is_number(), "foils.{i}.{k} is not a number: {}", f[k]);
        }
    }
    for k in TOTAL_KEYS {
        assert!(v["total"].get(k).is_some(), "total.{k} missing");
    }
    assert!(v["cycles_averaged"].is_u64());
    assert!(v["converged"].is_boolean());
    // The heave amplitude given, 0.05 m at 1 Hz and 0.5 m/s: St(2 f h0 / U) = 0.2 by definition.
    let st = v["foils"][0]["strouhal_heave"].as_f64().unwrap();
    assert!((st - 0.2).abs() < 1e-12, "{st}");
}

#[test]
fn simulate_writes_history_csv() {
    let dir = scratch("history");
    let case = write(&dir, "case.json", &small(TANDEM, 2, 40));
    let csv = dir.join("history.csv");
    let out = finwake(&[
        "simulate",
        &case,
        "--json",
        "--history",
        csv.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(0), "stderr: {}", stderr(&out));
    let summary: Value = serde_json::from_slice(&out.stdout).unwrap();
    let steps = summary["steps"].as_u64().unwrap() as usize;
    let text = std::fs::read_to_string(&csv).unwrap();
    let mut lines = text.lines();
    assert_eq!(
        lines.next(),
        Some("time,foil,heave,pitch,lift_coefficient,thrust_coefficient,moment_coefficient,power_coefficient")
    );
    let rows: Vec<Vec<f64>> = lines
        .map(|l| l.split(',').map(|c| c.parse::<f64>().unwrap()).collect())
        .collect();
    // 2 cycles of 40 steps, 2 foils.
    assert_eq!(steps, 80, "steps in the summary");
    assert_eq!(rows.len(), steps * 2, "one row per foil per step");
    for (i, r) in rows.iter().enumerate() {
        assert_eq!(r.len(), 8);
        assert_eq!(r[1] as usize, i % 2, "foil index column");
        assert!(r.iter().all(|x| x.is_finite()), "row {i}: {r:?}");
    }
    // Time advances by one step every two rows; heave stays within the 0.05 m amplitude.
    let dt = summary["time_step"].as_f64().unwrap();
    assert!((rows[2][0] - rows[0][0] - dt).abs() < 1e-12);
    assert!(rows.iter().all(|r| r[2].abs() <= 0.05 + 1e-12));
}
