//! `finwake sweep CASE.json --vary KEY=START:STOP:COUNT [--vary KEY2=...] [--csv|--json]`.
//!
//! Runs every grid point on all cores and streams one row per finished point (in the order they
//! finish, each with its grid `index`), so interrupting the sweep keeps every finished point.
//! Progress goes to stderr. `--json` writes JSON Lines: one object per point.

use std::io::{self, Write};
use std::path::PathBuf;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::Mutex;
use std::time::Instant;

use clap::Args;
use rayon::prelude::*;
use serde_json::{json, Value};

use finwake::sweep::{self, Axis};
use finwake::{Case, CaseError, Summary};

/// Arguments of `finwake sweep`.
#[derive(Debug, Args)]
pub struct SweepArgs {
    /// Case file (JSON, version 1): the configuration every grid point starts from.
    #[arg(value_name = "CASE.json")]
    case: PathBuf,
    /// A key to vary: KEY=START:STOP:COUNT (ends included), e.g. foils.1.phase=0:330:12.
    /// Give it once or twice.
    #[arg(long = "vary", value_name = "KEY=START:STOP:COUNT", required = true)]
    vary: Vec<String>,
    /// Write CSV (the default).
    #[arg(long, conflicts_with = "json")]
    csv: bool,
    /// Write JSON Lines (one object per grid point).
    #[arg(long)]
    json: bool,
}

/// Runs the sweep; errors are bad input (one line).
pub fn run(args: &SweepArgs) -> Result<(), String> {
    let shown = args.case.display().to_string();
    let text =
        std::fs::read_to_string(&args.case).map_err(|e| CaseError::io(shown, &e).to_string())?;
    let case = Case::from_json(&text).map_err(|e| e.to_string())?;
    let axes: Vec<Axis> = args
        .vary
        .iter()
        .map(|s| Axis::parse(s))
        .collect::<Result<_, _>>()
        .map_err(|e| e.to_string())?;
    let points = sweep::grid(&case, &axes).map_err(|e| e.to_string())?;
    let started = Instant::now();

    // One isolated baseline per distinct motion, computed once.
    let mut motions: Vec<(String, Case)> = Vec::new();
    for (_, c) in &points {
        if let Ok(c) = c {
            for i in 0..c.foils.len() {
                let key = sweep::motion_key(c, i);
                if !motions.iter().any(|(k, _)| *k == key) {
                    motions.push((key, sweep::isolated(c, i)));
                }
            }
        }
    }
    eprintln!(
        "sweep: {} grid points, {} isolated baselines, {} threads",
        points.len(),
        motions.len(),
        rayon::current_num_threads()
    );
    let baselines: Vec<(String, Option<Summary>)> = motions
        .par_iter()
        .map(|(k, c)| (k.clone(), sweep::run(c).ok()))
        .collect();
    let baseline_of = |c: &Case, i: usize| {
        let key = sweep::motion_key(c, i);
        baselines
            .iter()
            .find(|(k, _)| *k == key)
            .and_then(|(_, s)| s.clone())
    };

    let nfoils = case.foils.len();
    let out = Mutex::new(io::BufWriter::new(io::stdout()));
    let mut columns: Vec<String> = Vec::new();
    if !args.json {
        // Column names come from a one-foil summary widened to every foil (all points share
        // them): an isolated baseline's when one ran, else the case file's first foil alone.
        let template = baselines
            .iter()
            .find_map(|(_, s)| s.clone())
            .or_else(|| sweep::run(&sweep::isolated(&case, 0)).ok());
        let mut keys: Vec<String> = vec!["index".into()];
        keys.extend(axes.iter().map(|a| a.key.clone()));
        if let Some(t) = template {
            let mut s = t.clone();
            s.foils = vec![t.foils[0].clone(); nfoils];
            columns = sweep::flatten(&s).into_iter().map(|(k, _)| k).collect();
        }
        keys.extend(columns.iter().cloned());
        for i in 0..nfoils {
            keys.push(format!("foils.{i}.thrust_ratio"));
            keys.push(format!("foils.{i}.efficiency_ratio"));
        }
        keys.push("error".into());
        let mut o = out.lock().expect("output lock");
        writeln!(o, "{}", keys.join(",")).map_err(|e| e.to_string())?;
        o.flush().map_err(|e| e.to_string())?;
    }
    let done = AtomicUsize::new(0);
    let total = points.len();
    points.par_iter().enumerate().try_for_each(|(index, (values, c))| -> Result<(), String> {
        let result = c.clone().and_then(|c| sweep::run(&c));
        let (thrust, eff) = match (&result, c) {
            (Ok(s), Ok(c)) => sweep::ratios(s, |i| baseline_of(c, i)),
            _ => (vec![None; nfoils], vec![None; nfoils]),
        };
        let line = if args.json {
            let vals: serde_json::Map<String, Value> =
                axes.iter().zip(values).map(|(a, v)| (a.key.clone(), json!(v))).collect();
            let obj = match &result {
                Ok(s) => json!({"index": index, "values": vals, "summary": s,
                    "thrust_ratio": thrust, "efficiency_ratio": eff, "error": Value::Null}),
                Err(e) => json!({"index": index, "values": vals, "summary": Value::Null,
                    "thrust_ratio": thrust, "efficiency_ratio": eff, "error": e.to_string()}),
            };
            obj.to_string()
        } else {
            let mut cells: Vec<String> = vec![index.to_string()];
            cells.extend(values.iter().map(|v| v.to_string()));
            match &result {
                Ok(s) => {
                    let flat = sweep::flatten(s);
                    for col in &columns {
                        let v = flat.iter().find(|(k, _)| k == col).map(|(_, v)| v.clone()).unwrap_or(Value::Null);
                        cells.push(match v {
                            Value::Null => String::new(),
                            Value::String(s) => s,
                            other => other.to_string(),
                        });
                    }
                }
                Err(_) => cells.extend(columns.iter().map(|_| String::new())),
            }
            for i in 0..nfoils {
                cells.push(thrust[i].map(|v| v.to_string()).unwrap_or_default());
                cells.push(eff[i].map(|v| v.to_string()).unwrap_or_default());
            }
            let err = result.as_ref().err().map(|e| format!("\"{}\"", e.to_string().replace('"', "'"))).unwrap_or_default();
            cells.push(err);
            cells.join(",")
        };
        {
            let mut o = out.lock().expect("output lock");
            writeln!(o, "{line}").map_err(|e| e.to_string())?;
            o.flush().map_err(|e| e.to_string())?;
        }
        let n = done.fetch_add(1, Ordering::SeqCst) + 1;
        let elapsed = started.elapsed().as_secs_f64();
        let left = elapsed / n as f64 * (total - n) as f64;
        eprintln!("sweep: {n}/{total} points ({:.0} %), {elapsed:.1} s elapsed, about {left:.0} s left", 100.0 * n as f64 / total as f64);
        Ok(())
    })?;
    eprintln!("sweep: done in {:.1} s", started.elapsed().as_secs_f64());
    Ok(())
}
