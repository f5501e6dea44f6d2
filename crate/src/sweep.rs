//! Parameter sweeps over one or two case keys (the engine behind `finwake sweep` and the page's
//! spacing-phase maps).
//!
//! A sweep sets each key of the grid in the case's JSON form (so every value is validated exactly
//! as a case file would be), runs each point like `finwake simulate`, and relates every foil's
//! thrust and efficiency to an isolated foil with the same motion. Isolated baselines are run once
//! per distinct motion.

use serde_json::Value;

use crate::case::Case;
use crate::error::{CaseError, ErrorKind};
use crate::summary::Summary;
use crate::Simulation;

/// Largest number of grid points in one sweep.
pub const MAX_POINTS: usize = 10_000;

/// One swept key: `count` values from `start` to `stop`, both included.
#[derive(Debug, Clone, PartialEq)]
pub struct Axis {
    /// Case key path, e.g. `foils.1.phase`.
    pub key: String,
    /// First value (in the key's own unit).
    pub start: f64,
    /// Last value.
    pub stop: f64,
    /// Number of values (1 to 1000).
    pub count: usize,
}

impl Axis {
    /// Parses `KEY=START:STOP:COUNT`.
    pub fn parse(spec: &str) -> Result<Axis, CaseError> {
        let bad = |why: &str| {
            CaseError::new(
                "--vary",
                spec,
                "KEY=START:STOP:COUNT, e.g. foils.1.phase=0:330:12",
                why,
            )
            .with_kind(ErrorKind::Syntax)
        };
        let (key, range) = spec
            .split_once('=')
            .ok_or_else(|| bad("write the key, '=', then START:STOP:COUNT"))?;
        let parts: Vec<&str> = range.split(':').collect();
        if parts.len() != 3 {
            return Err(bad("give three numbers separated by ':'"));
        }
        let start: f64 = parts[0]
            .trim()
            .parse()
            .map_err(|_| bad("START is not a number"))?;
        let stop: f64 = parts[1]
            .trim()
            .parse()
            .map_err(|_| bad("STOP is not a number"))?;
        let count: usize = parts[2]
            .trim()
            .parse()
            .map_err(|_| bad("COUNT is not a whole number"))?;
        if !start.is_finite() || !stop.is_finite() {
            return Err(bad("START and STOP must be finite"));
        }
        if !(1..=1000).contains(&count) {
            return Err(bad("COUNT must be 1 to 1000"));
        }
        if count == 1 && start != stop {
            return Err(bad("with COUNT 1, START and STOP must be equal"));
        }
        Ok(Axis {
            key: key.trim().to_string(),
            start,
            stop,
            count,
        })
    }

    /// The values, evenly spaced, ends included.
    pub fn values(&self) -> Vec<f64> {
        if self.count == 1 {
            return vec![self.start];
        }
        (0..self.count)
            .map(|i| self.start + (self.stop - self.start) * i as f64 / (self.count - 1) as f64)
            .collect()
    }
}

/// A copy of `case` with the numeric key `key` (dotted path) set to `value`, validated.
pub fn set_key(case: &Case, key: &str, value: f64) -> Result<Case, CaseError> {
    let mut v = serde_json::to_value(case).expect("a case always serialises");
    let mut slot = &mut v;
    for part in key.split('.') {
        slot = match slot {
            Value::Object(map) => map.get_mut(part),
            Value::Array(items) => part.parse::<usize>().ok().and_then(|i| items.get_mut(i)),
            _ => None,
        }
        .ok_or_else(|| {
            CaseError::new(
                key,
                format!("{value}"),
                "a numeric key of the case, e.g. foils.1.phase, foils.1.x, flow.speed, frequency",
                "check the key's spelling and the foil index",
            )
            .with_kind(ErrorKind::UnknownKey)
        })?;
    }
    *slot = match slot {
        Value::Number(n) if n.is_u64() || n.is_i64() => {
            if value.fract() != 0.0 || value < 0.0 {
                return Err(CaseError::new(
                    key,
                    format!("{value}"),
                    "whole numbers",
                    "sweep this key over whole numbers",
                ));
            }
            Value::from(value as u64)
        }
        Value::Number(_) | Value::Null => serde_json::Number::from_f64(value)
            .map(Value::Number)
            .ok_or_else(|| {
                CaseError::new(
                    key,
                    format!("{value}"),
                    "finite numbers",
                    "give finite START and STOP",
                )
            })?,
        _ => {
            return Err(CaseError::new(
                key,
                format!("{value}"),
                "a numeric key",
                "sweep a key that holds a number",
            )
            .with_kind(ErrorKind::WrongType))
        }
    };
    Case::from_json(&v.to_string())
}

/// The case of foil `i` alone, with the same motion, at the origin and with phase 0 (for an
/// isolated foil a phase is a shift of time, which leaves whole-cycle means unchanged once the
/// start-up is over, and a position changes nothing).
pub fn isolated(case: &Case, i: usize) -> Case {
    let mut c = case.clone();
    let mut foil = case.foils[i].clone();
    foil.phase = 0.0;
    foil.x = 0.0;
    foil.y = 0.0;
    c.foils = vec![foil];
    c
}

/// A key identifying the motion (and everything else that sets an isolated foil's result).
pub fn motion_key(case: &Case, i: usize) -> String {
    isolated(case, i).to_json()
}

/// One finished grid point.
#[derive(Debug, Clone)]
pub struct Point {
    /// Position in the grid (row-major: the last axis varies fastest).
    pub index: usize,
    /// The swept values, in axis order.
    pub values: Vec<f64>,
    /// The summary, or the reason this configuration cannot run.
    pub result: Result<Summary, CaseError>,
    /// Each foil's mean thrust over the isolated foil's with the same motion.
    pub thrust_ratio: Vec<Option<f64>>,
    /// Each foil's efficiency over the isolated foil's.
    pub efficiency_ratio: Vec<Option<f64>>,
}

/// One grid point before it runs: its swept values and its case, or why it cannot run.
pub type GridPoint = (Vec<f64>, Result<Case, CaseError>);

/// All grid points of `axes` applied to `case` (row-major), each as its values and its case or
/// the validation error of that configuration. Fails only for a bad key or too many points.
pub fn grid(case: &Case, axes: &[Axis]) -> Result<Vec<GridPoint>, CaseError> {
    let total: usize = axes.iter().map(|a| a.count).product();
    if axes.is_empty() || axes.len() > 2 || total > MAX_POINTS {
        return Err(CaseError::new(
            "--vary",
            format!("{} keys, {total} points", axes.len()),
            format!("one or two keys and at most {MAX_POINTS} points"),
            "vary one or two keys with fewer values",
        ));
    }
    // A bad key fails the whole sweep at once (checked on the first value).
    for a in axes {
        if let Err(e) = set_key(case, &a.key, a.start) {
            if matches!(e.kind, ErrorKind::UnknownKey | ErrorKind::WrongType) {
                return Err(e);
            }
        }
    }
    let mut out = Vec::with_capacity(total);
    let vals: Vec<Vec<f64>> = axes.iter().map(|a| a.values()).collect();
    for idx in 0..total {
        let mut rest = idx;
        let mut values = vec![0.0; axes.len()];
        for k in (0..axes.len()).rev() {
            values[k] = vals[k][rest % axes[k].count];
            rest /= axes[k].count;
        }
        let mut c = Ok(case.clone());
        for (a, &v) in axes.iter().zip(&values) {
            c = c.and_then(|c| set_key(&c, &a.key, v));
        }
        out.push((values, c));
    }
    Ok(out)
}

/// Runs one configuration as `finwake simulate` does.
pub fn run(case: &Case) -> Result<Summary, CaseError> {
    Ok(Simulation::new(case)?.run_to_end())
}

/// Ratios of `summary`'s foils to their isolated baselines (`baseline(i)` gives foil i's).
pub fn ratios(
    summary: &Summary,
    baseline: impl Fn(usize) -> Option<Summary>,
) -> (Vec<Option<f64>>, Vec<Option<f64>>) {
    let mut thrust = Vec::new();
    let mut eff = Vec::new();
    for (i, f) in summary.foils.iter().enumerate() {
        let b = baseline(i);
        let bf = b.as_ref().map(|b| &b.foils[0]);
        thrust.push(bf.and_then(|bf| (bf.thrust != 0.0).then(|| f.thrust / bf.thrust)));
        eff.push(bf.and_then(|bf| match (f.efficiency, bf.efficiency) {
            (Some(a), Some(b)) if b > 0.0 => Some(a / b),
            _ => None,
        }));
    }
    (thrust, eff)
}

/// The summary as flat (key path, value) pairs in a fixed order: the sweep's columns.
pub fn flatten(summary: &Summary) -> Vec<(String, Value)> {
    fn walk(prefix: &str, v: &Value, out: &mut Vec<(String, Value)>) {
        match v {
            Value::Object(map) => {
                for (k, x) in map {
                    let p = if prefix.is_empty() {
                        k.clone()
                    } else {
                        format!("{prefix}.{k}")
                    };
                    walk(&p, x, out);
                }
            }
            Value::Array(items) => {
                for (i, x) in items.iter().enumerate() {
                    walk(&format!("{prefix}.{i}"), x, out);
                }
            }
            _ => out.push((prefix.to_string(), v.clone())),
        }
    }
    let mut out = Vec::new();
    walk(
        "",
        &serde_json::to_value(summary).expect("summaries serialise"),
        &mut out,
    );
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tandem() -> Case {
        Case::from_json(include_str!("../../cases/tandem-two-chords.json")).unwrap()
    }

    #[test]
    fn axis_values_include_both_ends() {
        let a = Axis::parse("foils.1.phase=0:330:12").unwrap();
        let v = a.values();
        assert_eq!(v.len(), 12);
        assert_eq!(v[0], 0.0);
        assert_eq!(v[11], 330.0);
        assert!((v[1] - 30.0).abs() < 1e-12);
        assert!(Axis::parse("foils.1.phase=0:330").is_err());
        assert!(Axis::parse("phase").is_err());
        assert!(Axis::parse("x=0:1:0").is_err());
    }

    #[test]
    fn set_key_validates_like_a_case_file() {
        let c = set_key(&tandem(), "foils.1.phase", 45.0).unwrap();
        assert_eq!(c.foils[1].phase, 45.0);
        let e = set_key(&tandem(), "foils.1.chord", -1.0).unwrap_err();
        assert_eq!(e.path, "foils.1.chord");
        let e = set_key(&tandem(), "foils.7.phase", 1.0).unwrap_err();
        assert_eq!(e.kind, ErrorKind::UnknownKey);
        let c = set_key(&tandem(), "numerics.panels", 60.0).unwrap();
        assert_eq!(c.numerics.panels, 60);
        assert!(set_key(&tandem(), "numerics.panels", 60.5).is_err());
    }

    #[test]
    fn grid_is_row_major_and_keeps_bad_points() {
        let axes = [
            Axis::parse("foils.1.x=0.3:0.5:3").unwrap(),
            Axis::parse("foils.1.phase=0:90:2").unwrap(),
        ];
        let g = grid(&tandem(), &axes).unwrap();
        assert_eq!(g.len(), 6);
        assert_eq!(g[1].0, vec![0.3, 90.0]);
        assert_eq!(g[2].0, vec![0.4, 0.0]);
        let bad = grid(&tandem(), &[Axis::parse("flow.speed=-1:1:3").unwrap()]).unwrap();
        assert!(bad[0].1.is_err() && bad[2].1.is_ok());
        assert!(grid(&tandem(), &[Axis::parse("foils.1.nothing=0:1:2").unwrap()]).is_err());
    }
}
