//! `finwake sweep` as a user runs it: output format, a grid point equals `finwake simulate` on
//! that configuration, interruption keeps finished points, bad input exits 2.

use std::io::{BufRead, BufReader};
use std::path::PathBuf;
use std::process::{Command, Stdio};

fn bin() -> &'static str {
    env!("CARGO_BIN_EXE_finwake")
}

/// The shipped tandem case made cheap (coarse numerics) in a temporary file.
fn small_case(name: &str) -> PathBuf {
    let mut v: serde_json::Value =
        serde_json::from_str(include_str!("../../cases/tandem-two-chords.json")).unwrap();
    v["numerics"] = serde_json::json!({"panels": 40, "steps_per_cycle": 40, "cycles": 3});
    let p = std::env::temp_dir().join(format!("finwake-sweep-{}-{name}.json", std::process::id()));
    std::fs::write(&p, v.to_string()).unwrap();
    p
}

#[test]
fn csv_has_every_summary_key_and_one_row_per_point() {
    let case = small_case("csv");
    let out = Command::new(bin())
        .args([
            "sweep",
            case.to_str().unwrap(),
            "--vary",
            "foils.1.phase=0:180:3",
            "--vary",
            "foils.1.x=0.2:0.3:2",
        ])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    for key in [
        "index",
        "foils.1.phase",
        "foils.1.x",
        "foils.0.thrust_coefficient",
        "foils.1.efficiency",
        "total.thrust",
        "total.efficiency",
        "cycles_averaged",
        "converged",
        "foils.1.thrust_ratio",
        "foils.1.efficiency_ratio",
        "error",
    ] {
        assert!(header.contains(&key), "missing column {key}");
    }
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    assert_eq!(rows.len(), 6);
    let mut seen: Vec<usize> = rows.iter().map(|r| r[0].parse().unwrap()).collect();
    seen.sort();
    assert_eq!(seen, (0..6).collect::<Vec<_>>());
    assert!(rows.iter().all(|r| r.len() == header.len()));
    // Progress went to stderr.
    assert!(String::from_utf8_lossy(&out.stderr).contains("6/6 points"));
}

#[test]
fn a_grid_point_equals_simulate_on_that_configuration() {
    let case = small_case("cell");
    let out = Command::new(bin())
        .args([
            "sweep",
            case.to_str().unwrap(),
            "--vary",
            "foils.1.phase=45:135:2",
            "--json",
        ])
        .output()
        .unwrap();
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    let point: serde_json::Value = text
        .lines()
        .map(|l| serde_json::from_str::<serde_json::Value>(l).unwrap())
        .find(|v| v["index"] == 1)
        .unwrap();
    assert_eq!(point["values"]["foils.1.phase"], 135.0);
    // The same configuration as a case file, through `finwake simulate --json`.
    let mut v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&case).unwrap()).unwrap();
    v["foils"][1]["phase"] = serde_json::json!(135.0);
    let single =
        std::env::temp_dir().join(format!("finwake-sweep-{}-single.json", std::process::id()));
    std::fs::write(&single, v.to_string()).unwrap();
    let sim = Command::new(bin())
        .args(["simulate", single.to_str().unwrap(), "--json"])
        .output()
        .unwrap();
    assert!(sim.status.success());
    let summary: serde_json::Value = serde_json::from_slice(&sim.stdout).unwrap();
    // Identical numbers: the same solver on the same inputs is deterministic.
    assert_eq!(point["summary"], summary);
    // The ratio is the foil's thrust over an isolated foil's with the same motion.
    let ratio = point["thrust_ratio"][1].as_f64().unwrap();
    let mut iso = v.clone();
    iso["foils"] = serde_json::json!([v["foils"][1].clone()]);
    iso["foils"][0]["phase"] = serde_json::json!(0.0);
    iso["foils"][0]["x"] = serde_json::json!(0.0);
    let isof = std::env::temp_dir().join(format!("finwake-sweep-{}-iso.json", std::process::id()));
    std::fs::write(&isof, iso.to_string()).unwrap();
    let s = Command::new(bin())
        .args(["simulate", isof.to_str().unwrap(), "--json"])
        .output()
        .unwrap();
    let iso: serde_json::Value = serde_json::from_slice(&s.stdout).unwrap();
    let expect = summary["foils"][1]["thrust"].as_f64().unwrap()
        / iso["foils"][0]["thrust"].as_f64().unwrap();
    assert_eq!(ratio, expect);
}

#[test]
fn interrupting_keeps_the_finished_points() {
    let case = small_case("stop");
    let mut child = Command::new(bin())
        .args([
            "sweep",
            case.to_str().unwrap(),
            "--vary",
            "foils.1.phase=0:350:36",
        ])
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let mut reader = BufReader::new(child.stdout.take().unwrap());
    let mut header = String::new();
    reader.read_line(&mut header).unwrap();
    let mut first = String::new();
    reader.read_line(&mut first).unwrap();
    child.kill().unwrap();
    child.wait().unwrap();
    // Whatever was printed before the stop is whole rows.
    let ncols = header.trim_end().split(',').count();
    assert_eq!(first.trim_end().split(',').count(), ncols);
    let mut rest = String::new();
    let _ = std::io::Read::read_to_string(&mut reader, &mut rest);
    for line in rest.lines().filter(|l| !l.is_empty()) {
        if line.split(',').count() != ncols {
            // Only the line being written at the kill may be cut short, and it is the last one.
            assert_eq!(line, rest.lines().last().unwrap());
        }
    }
}

#[test]
fn bad_vary_and_bad_points() {
    let case = small_case("bad");
    for vary in [
        "foils.1.phase",
        "foils.1.phase=0:1",
        "foils.9.phase=0:1:2",
        "foils.1.phase=a:1:2",
    ] {
        let out = Command::new(bin())
            .args(["sweep", case.to_str().unwrap(), "--vary", vary])
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(2), "{vary}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(err.trim_end().lines().count(), 1, "{err}");
        assert!(!err.contains("panicked"));
    }
    // A grid point that cannot run (here a negative speed) reports its error in its row.
    let out = Command::new(bin())
        .args([
            "sweep",
            case.to_str().unwrap(),
            "--vary",
            "flow.speed=-0.5:0.5:2",
        ])
        .output()
        .unwrap();
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text
        .lines()
        .any(|l| l.starts_with("0,") && l.contains("flow.speed")));
}
