//! Checks of case files: the JSON shape (keys and types, path-precise) and the range of every value.
//!
//! Parsing happens in three stages, each with errors that name the field path
//! (`foils.1.chord`), the value as written, the allowed range and the fix:
//!
//! 1. the text is parsed as JSON (syntax errors give line and column);
//! 2. [`check_shape`] walks the JSON tree against the case format: unknown keys (listing the
//!    allowed ones), missing keys, and values of the wrong type;
//! 3. the tree becomes a [`Case`] and [`validate_case`] checks every value against its range.
//!
//! # Bounds
//!
//! The physical bounds keep out values that are mistakes (a chord typed in mm, a pitch in
//! radians) or far outside what a 2D panel method with a free wake can say anything about. They
//! are engineering judgement (common practice), chosen wide enough for tank rigs and vehicles:
//!
//! | field | allowed | why |
//! |---|---|---|
//! | `version` | 1 | the only case-file version so far |
//! | `flow.speed` | 0.001 to 50 m/s | below 1 mm/s Re < 100 for a 0.1 m chord; above 50 m/s water cavitates |
//! | `flow.temperature` | 0 to 40 deg C | range of the water-property correlations |
//! | `frequency` | 0 to 100 Hz | 0 = start from rest; above 100 Hz no rig or fin flaps |
//! | `foils` | 1 to 8 | [`MAX_FOILS`] |
//! | `chord` | 0.001 to 10 m | |
//! | `thickness` | 0.01 to 0.30 chord | range of the 4-digit section family that stays panel-friendly |
//! | `span` | 0.001 to 100 m | only scales forces |
//! | `x`, `y` | within 1000 chords of the origin | foils farther apart do not interact |
//! | `pivot` | 0 to 1 chord | on the chord line between leading and trailing edge |
//! | `heave` | 0 to 10 chords | |
//! | `pitch` | 0 to 80 deg | amplitude; attached-flow models fail long before |
//! | `pitch_mean` | -45 to 45 deg | |
//! | `pitch_lead`, `phase` | -360 to 360 deg | one turn either way; foil 0's phase is 0 |
//! | `numerics.panels` | even, 20 to 400 | |
//! | `numerics.steps_per_cycle` | 20 to 1000, and one step moves the stream at most one chord of foil 0 | |
//! | `numerics.cycles` | 2 to 200 | |
//! | `numerics.core_size` | 0.005 to 0.5 of the smallest chord | |
//! | `numerics.max_particles` | 200 to 200000 | |
//! | `numerics.ramp_cycles` | 0 to 10 and fewer than `cycles` | at least part of one cycle runs at full amplitude |
//! | `numerics.wake_merge` | 0 to 0.5 of the distance to the nearest foil | above half the distance the wake is too lumpy to follow |
//! | `numerics.far_wake_refresh` | 1 to 8 steps | at 8 (the default) mean loads move by at most 0.1 % from the every-step run (`tests/validation`); at 16 the high-Strouhal example's thrust moved by 0.17 % |
//! | `numerics.time_step` | frequency 0 only; more than 0, at most one chord of travel of foil 0 | |
//! | `numerics.duration` | frequency 0 only; at least one time step | |
//! | all steps of a run | at most 2,000,000 | memory of the load history |
//! | `rig.depth` | 0 to 11000 m, or null | the deepest ocean is about 11 km |
//! | `rig.water_depth` | more than 0 to 11000 m and more than `rig.depth`, or null | the case origin is under water |
//! | `rig.tank_width` | more than 0 to 10000 m, or null | |
//! | `foils.*.rig.moving_mass` | 0 to 10000 kg | a tank rig's carriage is kilograms to a few hundred |
//! | `foils.*.rig.pitch_inertia` | 0 to 10000 kg m^2 | |
//!
//! Every number must be finite. Geometry overlap between foils is checked by
//! [`crate::Simulation::new`], which owns the section geometry.

use crate::detmath::DetMath;
use serde_json::Value;

use crate::case::{Case, CASE_VERSION, MAX_FOILS};
use crate::error::{CaseError, ErrorKind};
use crate::water::TEMPERATURE_RANGE;

/// m/s. Lowest and highest free-stream speed.
pub const SPEED_RANGE: (f64, f64) = (0.001, 50.0);
/// Hz. Highest flapping frequency (0 is allowed: start from rest).
pub const FREQUENCY_MAX: f64 = 100.0;
/// m. Shortest and longest chord.
pub const CHORD_RANGE: (f64, f64) = (0.001, 10.0);
/// m. Shortest and longest span.
pub const SPAN_RANGE: (f64, f64) = (0.001, 100.0);
/// Fraction of chord. Thinnest and thickest section.
pub const THICKNESS_RANGE: (f64, f64) = (0.01, 0.30);
/// Chords. Largest |x| and |y| of a leading edge, in chords of that foil.
pub const POSITION_MAX_CHORDS: f64 = 1000.0;
/// Chords. Largest heave amplitude, in chords of that foil.
pub const HEAVE_MAX_CHORDS: f64 = 10.0;
/// deg. Largest pitch amplitude.
pub const PITCH_MAX: f64 = 80.0;
/// deg. Largest |pitch_mean|.
pub const PITCH_MEAN_MAX: f64 = 45.0;
/// deg. Largest |pitch_lead| and |phase|.
pub const ANGLE_TURN_MAX: f64 = 360.0;
/// Fewest and most panels per foil (even numbers only).
pub const PANELS_RANGE: (usize, usize) = (20, 400);
/// Fewest and most time steps per cycle.
pub const STEPS_PER_CYCLE_RANGE: (usize, usize) = (20, 1000);
/// Fewest and most cycles.
pub const CYCLES_RANGE: (usize, usize) = (2, 200);
/// Fraction of the smallest chord. Smallest and largest vortex-blob core.
pub const CORE_SIZE_RANGE: (f64, f64) = (0.005, 0.5);
/// Smallest and largest wake-particle cap.
pub const MAX_PARTICLES_RANGE: (usize, usize) = (200, 200_000);
/// Fraction of the distance to the nearest foil: `numerics.wake_merge`.
pub const WAKE_MERGE_RANGE: (f64, f64) = (0.0, 0.5);
/// Steps. Fewest and most steps between the velocity evaluations of far-wake particles.
pub const FAR_WAKE_REFRESH_RANGE: (usize, usize) = (1, 8);
/// Cycles. Longest smooth start.
pub const RAMP_CYCLES_MAX: f64 = 10.0;
/// Chords of travel of foil 0. Largest distance the stream may move in one time step.
pub const STEP_TRAVEL_MAX_CHORDS: f64 = 1.0;
/// Most time steps in one run.
pub const MAX_TOTAL_STEPS: usize = 2_000_000;
/// m. Deepest submergence and water depth of the rig check (the deepest ocean is about 11 km).
pub const RIG_DEPTH_MAX: f64 = 11_000.0;
/// m. Widest tank or channel.
pub const TANK_WIDTH_MAX: f64 = 10_000.0;
/// kg and kg m^2. Largest moving mass and pitch inertia of a foil's rig.
pub const RIG_INERTIA_MAX: f64 = 10_000.0;

/// Parses case-file JSON into a [`Case`] without range checks: syntax, then shape, then types.
pub fn parse_case(text: &str) -> Result<Case, CaseError> {
    let value = parse_tree(text)?;
    check_shape(&value)?;
    serde_json::from_value(value).map_err(CaseError::from_serde)
}

/// Parses JSON text into a tree, rejecting a key written twice in one object (a plain
/// [`Value`] would silently keep the last one, losing what the user wrote first).
fn parse_tree(text: &str) -> Result<Value, CaseError> {
    use serde::de::DeserializeSeed;
    let mut de = serde_json::Deserializer::from_str(text);
    let value = Tree {
        path: String::new(),
    }
    .deserialize(&mut de)
    .map_err(CaseError::from_serde)?;
    de.end().map_err(CaseError::from_serde)?;
    Ok(value)
}

/// Deserialises any JSON value at `path`, failing on duplicate keys.
struct Tree {
    path: String,
}

impl<'de> serde::de::DeserializeSeed<'de> for Tree {
    type Value = Value;
    fn deserialize<D: serde::Deserializer<'de>>(self, de: D) -> Result<Value, D::Error> {
        de.deserialize_any(self)
    }
}

impl<'de> serde::de::Visitor<'de> for Tree {
    type Value = Value;
    fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
        f.write_str("a JSON value")
    }
    fn visit_bool<E>(self, v: bool) -> Result<Value, E> {
        Ok(Value::Bool(v))
    }
    fn visit_i64<E>(self, v: i64) -> Result<Value, E> {
        Ok(Value::from(v))
    }
    fn visit_u64<E>(self, v: u64) -> Result<Value, E> {
        Ok(Value::from(v))
    }
    fn visit_f64<E>(self, v: f64) -> Result<Value, E> {
        Ok(Value::from(v))
    }
    fn visit_str<E>(self, v: &str) -> Result<Value, E> {
        Ok(Value::String(v.to_string()))
    }
    fn visit_string<E>(self, v: String) -> Result<Value, E> {
        Ok(Value::String(v))
    }
    fn visit_unit<E>(self) -> Result<Value, E> {
        Ok(Value::Null)
    }
    fn visit_none<E>(self) -> Result<Value, E> {
        Ok(Value::Null)
    }
    fn visit_seq<A: serde::de::SeqAccess<'de>>(self, mut seq: A) -> Result<Value, A::Error> {
        let mut items = Vec::new();
        while let Some(item) = seq.next_element_seed(Tree {
            path: join(&self.path, &items.len().to_string()),
        })? {
            items.push(item);
        }
        Ok(Value::Array(items))
    }
    fn visit_map<A: serde::de::MapAccess<'de>>(self, mut map: A) -> Result<Value, A::Error> {
        let mut object = serde_json::Map::new();
        while let Some(name) = map.next_key::<String>()? {
            let path = join(&self.path, &name);
            if object.contains_key(&name) {
                // Worded like serde's own message so that `CaseError::from_serde` classifies it.
                return Err(serde::de::Error::custom(format!(
                    "duplicate field `{path}`"
                )));
            }
            let item = map.next_value_seed(Tree { path })?;
            object.insert(name, item);
        }
        Ok(Value::Object(object))
    }
}

// ---------------------------------------------------------------------------------------------
// Shape of the JSON tree.

/// What a key holds.
#[derive(Clone, Copy)]
enum Shape {
    /// Any JSON number.
    Number,
    /// A JSON number or null.
    NumberOrNull,
    /// A non-negative whole number.
    Whole,
    /// `"fresh"` or `"sea"`.
    WaterName,
    /// An object with these keys.
    Object(&'static [Key]),
    /// A list of foil objects.
    FoilList,
}

/// One key of an object in the case format.
struct Key {
    name: &'static str,
    shape: Shape,
    required: bool,
    /// Unit and range, as shown in messages.
    allowed: &'static str,
    /// A value to show in the fix.
    example: &'static str,
}

const fn key(
    name: &'static str,
    shape: Shape,
    required: bool,
    allowed: &'static str,
    example: &'static str,
) -> Key {
    Key {
        name,
        shape,
        required,
        allowed,
        example,
    }
}

const FLOW_KEYS: &[Key] = &[
    key("speed", Shape::Number, true, "m/s, 0.001 to 50", "0.5"),
    key(
        "water",
        Shape::WaterName,
        true,
        "\"fresh\" or \"sea\"",
        "\"fresh\"",
    ),
    key("temperature", Shape::Number, true, "deg C, 0 to 40", "20.0"),
];

const FOIL_KEYS: &[Key] = &[
    key("chord", Shape::Number, true, "m, 0.001 to 10", "0.1"),
    key(
        "thickness",
        Shape::Number,
        true,
        "fraction of chord, 0.01 to 0.30",
        "0.12",
    ),
    key("span", Shape::Number, true, "m, 0.001 to 100", "0.4"),
    key(
        "x",
        Shape::Number,
        true,
        "m, leading edge at mean pose, within 1000 chords",
        "0.0",
    ),
    key(
        "y",
        Shape::Number,
        true,
        "m, leading edge at mean pose, within 1000 chords",
        "0.0",
    ),
    key(
        "pivot",
        Shape::Number,
        true,
        "fraction of chord from the leading edge, 0 to 1",
        "0.25",
    ),
    key("heave", Shape::Number, true, "m, 0 to 10 chords", "0.05"),
    key("pitch", Shape::Number, true, "deg, 0 to 80", "15.0"),
    key("pitch_mean", Shape::Number, true, "deg, -45 to 45", "0.0"),
    key(
        "pitch_lead",
        Shape::Number,
        true,
        "deg, -360 to 360",
        "90.0",
    ),
    key(
        "phase",
        Shape::Number,
        true,
        "deg, -360 to 360 (0 for foil 0)",
        "0.0",
    ),
    key(
        "rig",
        Shape::Object(FOIL_RIG_KEYS),
        false,
        "an object with moving_mass, pitch_inertia (rig check only)",
        "{\"moving_mass\": 2.0}",
    ),
];

const FOIL_RIG_KEYS: &[Key] = &[
    key("moving_mass", Shape::Number, false, "kg, 0 to 10000", "2.0"),
    key(
        "pitch_inertia",
        Shape::Number,
        false,
        "kg m^2, 0 to 10000",
        "0.001",
    ),
];

const RIG_KEYS: &[Key] = &[
    key(
        "depth",
        Shape::NumberOrNull,
        false,
        "m, depth of y = 0 below the surface, 0 to 11000, or null",
        "0.5",
    ),
    key(
        "water_depth",
        Shape::NumberOrNull,
        false,
        "m, surface to floor, more than 0 to 11000, or null",
        "1.5",
    ),
    key(
        "tank_width",
        Shape::NumberOrNull,
        false,
        "m, across the stream, more than 0 to 10000, or null",
        "1.0",
    ),
];

const NUMERICS_KEYS: &[Key] = &[
    key(
        "panels",
        Shape::Whole,
        false,
        "an even whole number, 20 to 400",
        "80",
    ),
    key(
        "steps_per_cycle",
        Shape::Whole,
        false,
        "a whole number, 20 to 1000",
        "100",
    ),
    key(
        "cycles",
        Shape::Whole,
        false,
        "a whole number, 2 to 200",
        "8",
    ),
    key(
        "time_step",
        Shape::NumberOrNull,
        false,
        "s, more than 0 (frequency 0 only), or null",
        "0.004",
    ),
    key(
        "duration",
        Shape::NumberOrNull,
        false,
        "s, more than 0 (frequency 0 only), or null",
        "4.0",
    ),
    key(
        "core_size",
        Shape::Number,
        false,
        "fraction of the smallest chord, 0.005 to 0.5",
        "0.05",
    ),
    key(
        "max_particles",
        Shape::Whole,
        false,
        "a whole number, 200 to 200000",
        "4000",
    ),
    key(
        "wake_merge",
        Shape::Number,
        false,
        "fraction of the distance to the nearest foil, 0 to 0.5",
        "0.1",
    ),
    key(
        "far_wake_refresh",
        Shape::Whole,
        false,
        "a whole number of steps, 1 to 8",
        "8",
    ),
    key(
        "ramp_cycles",
        Shape::Number,
        false,
        "cycles, 0 to 10 and fewer than cycles",
        "1.0",
    ),
];

const CASE_KEYS: &[Key] = &[
    key("version", Shape::Whole, true, "1", "1"),
    key(
        "flow",
        Shape::Object(FLOW_KEYS),
        true,
        "an object with speed, water, temperature",
        "{\"speed\": 0.5, \"water\": \"fresh\", \"temperature\": 20.0}",
    ),
    key(
        "frequency",
        Shape::Number,
        true,
        "Hz, 0 to 100 (0 = start from rest)",
        "1.0",
    ),
    key(
        "foils",
        Shape::FoilList,
        true,
        "a list of 1 to 8 foil objects",
        "[{\"chord\": 0.1, ...}]",
    ),
    key(
        "numerics",
        Shape::Object(NUMERICS_KEYS),
        false,
        "an object of numerical settings",
        "{\"panels\": 80}",
    ),
    key(
        "rig",
        Shape::Object(RIG_KEYS),
        false,
        "an object with depth, water_depth, tank_width (rig check only)",
        "{\"depth\": 0.5}",
    ),
];

/// Checks that `value` has the shape of a case file: known keys only, required keys present,
/// and every value of the right JSON type. Ranges are checked later by [`validate_case`].
pub fn check_shape(value: &Value) -> Result<(), CaseError> {
    check_object(
        "",
        "case",
        value,
        CASE_KEYS,
        "an object {\"version\": 1, \"flow\": ..., \"frequency\": ..., \"foils\": [...]}",
    )
}

fn join(prefix: &str, name: &str) -> String {
    if prefix.is_empty() {
        name.to_string()
    } else {
        format!("{prefix}.{name}")
    }
}

/// The value as written, compact.
fn written(value: &Value) -> String {
    value.to_string()
}

fn json_type(value: &Value) -> &'static str {
    match value {
        Value::Null => "null",
        Value::Bool(_) => "a true/false value",
        Value::Number(_) => "a number",
        Value::String(_) => "a string",
        Value::Array(_) => "a list",
        Value::Object(_) => "an object",
    }
}

fn check_object(
    prefix: &str,
    label: &str,
    value: &Value,
    keys: &'static [Key],
    allowed: &str,
) -> Result<(), CaseError> {
    let Value::Object(map) = value else {
        return Err(CaseError::new(
            label,
            written(value),
            allowed,
            format!(
                "write {label} as a JSON object in braces, not {}",
                json_type(value)
            ),
        )
        .with_kind(ErrorKind::WrongType));
    };
    for (name, _) in map.iter() {
        if !keys.iter().any(|k| k.name == name) {
            let names: Vec<&str> = keys.iter().map(|k| k.name).collect();
            let hint = match closest(name, &names) {
                Some(best) => format!(" (did you mean `{best}`?)"),
                None => String::new(),
            };
            let place = if prefix.is_empty() {
                "the case".to_string()
            } else {
                format!("`{prefix}`")
            };
            return Err(CaseError::new(
                join(prefix, name),
                "(unknown key)",
                format!("the keys of {place}: {}", names.join(", ")),
                format!("remove `{name}` or correct its spelling{hint}"),
            )
            .with_kind(ErrorKind::UnknownKey));
        }
    }
    for k in keys {
        let path = join(prefix, k.name);
        match map.get(k.name) {
            None if k.required => {
                return Err(CaseError::new(
                    path,
                    "(missing)",
                    k.allowed,
                    format!("add \"{}\": {}", k.name, k.example),
                )
                .with_kind(ErrorKind::Missing));
            }
            None => {}
            Some(v) => check_value(&path, v, k)?,
        }
    }
    Ok(())
}

fn wrong_type(path: &str, value: &Value, k: &Key, what: &str) -> CaseError {
    CaseError::new(
        path,
        written(value),
        format!("{what} ({})", k.allowed),
        format!(
            "write {what} without quotes or units, e.g. \"{}\": {} (found {})",
            k.name,
            k.example,
            json_type(value)
        ),
    )
    .with_kind(ErrorKind::WrongType)
}

fn check_value(path: &str, value: &Value, k: &'static Key) -> Result<(), CaseError> {
    match k.shape {
        Shape::Number => match value {
            Value::Number(_) => Ok(()),
            _ => Err(wrong_type(path, value, k, "a number")),
        },
        Shape::NumberOrNull => match value {
            Value::Number(_) | Value::Null => Ok(()),
            _ => Err(wrong_type(path, value, k, "a number or null")),
        },
        Shape::Whole => match value {
            Value::Number(n) if n.as_u64().is_some_and(|u| u <= u64::from(u32::MAX)) => Ok(()),
            Value::Number(n) if n.as_i64().is_some_and(|i| i < 0) || n.as_u64().is_some() => {
                Err(CaseError::new(
                    path,
                    written(value),
                    k.allowed,
                    format!("use a value in range, e.g. \"{}\": {}", k.name, k.example),
                ))
            }
            _ => Err(wrong_type(path, value, k, "a whole number")),
        },
        Shape::WaterName => match value {
            Value::String(s) if s == "fresh" || s == "sea" => Ok(()),
            Value::String(_) => Err(CaseError::new(
                path,
                written(value),
                k.allowed,
                "write \"fresh\" or \"sea\" in lower case",
            )),
            _ => Err(wrong_type(path, value, k, "a string")),
        },
        Shape::Object(keys) => check_object(path, path, value, keys, k.allowed),
        Shape::FoilList => {
            let Value::Array(items) = value else {
                return Err(CaseError::new(
                    path,
                    written(value),
                    k.allowed,
                    format!(
                        "write foils as a list in brackets, not {}",
                        json_type(value)
                    ),
                )
                .with_kind(ErrorKind::WrongType));
            };
            for (i, item) in items.iter().enumerate() {
                let p = format!("{path}.{i}");
                check_object(
                    &p,
                    &p,
                    item,
                    FOIL_KEYS,
                    "a foil object {\"chord\": ..., \"thickness\": ..., ...}",
                )?;
            }
            Ok(())
        }
    }
}

/// The allowed name closest to `name` (case-insensitive edit distance at most 2), if any.
fn closest<'a>(name: &str, names: &[&'a str]) -> Option<&'a str> {
    let lower = name.to_lowercase();
    names
        .iter()
        .map(|n| (edit_distance(&lower, n), *n))
        .filter(|(d, _)| *d <= 2)
        .min_by_key(|(d, _)| *d)
        .map(|(_, n)| n)
}

fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut row: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut prev = row[0];
        row[0] = i + 1;
        for j in 0..b.len() {
            let cur = row[j + 1];
            row[j + 1] = if ca == b[j] {
                prev
            } else {
                1 + prev.min(row[j]).min(row[j + 1])
            };
            prev = cur;
        }
    }
    row[b.len()]
}

// ---------------------------------------------------------------------------------------------
// Ranges.

/// `lo..=hi` inclusive (or `lo` exclusive when `open_lo`) for a finite `v`.
fn in_range(v: f64, lo: f64, hi: f64, open_lo: bool) -> bool {
    v.is_finite() && if open_lo { v > lo } else { v >= lo } && v <= hi
}

/// An out-of-range error; non-finite values say so in the allowed text.
fn range_error(path: &str, v: f64, allowed: &str, fix: &str) -> CaseError {
    let allowed = if v.is_finite() {
        allowed.to_string()
    } else {
        format!("a finite number, {allowed}")
    };
    CaseError::new(path, v.to_string(), allowed, fix)
}

fn check_f64(
    path: &str,
    v: f64,
    (lo, hi): (f64, f64),
    allowed: &str,
    fix: &str,
) -> Result<(), CaseError> {
    if in_range(v, lo, hi, false) {
        Ok(())
    } else {
        Err(range_error(path, v, allowed, fix))
    }
}

fn check_usize(
    path: &str,
    v: usize,
    (lo, hi): (usize, usize),
    allowed: &str,
    fix: &str,
) -> Result<(), CaseError> {
    if (lo..=hi).contains(&v) {
        Ok(())
    } else {
        Err(CaseError::new(path, v.to_string(), allowed, fix))
    }
}

/// A length in metres for messages (`0.1 m`).
fn metres(v: f64) -> String {
    format!("{} m", round_sig(v))
}

/// `v` rounded to 6 significant digits, printed without trailing zeros.
fn round_sig(v: f64) -> f64 {
    if v == 0.0 || !v.is_finite() {
        return v;
    }
    let scale = 10f64.powi(5 - v.abs().dlog10().floor() as i32);
    (v * scale).round() / scale
}

/// Checks every value of `case` against its allowed range (see the module docs for the bounds).
/// Returns the first problem found, in file order.
pub fn validate_case(case: &Case) -> Result<(), CaseError> {
    if case.version != CASE_VERSION {
        let fix = if case.version > CASE_VERSION {
            "this file needs a newer finwake; upgrade, or write \"version\": 1 with version-1 keys only"
        } else {
            "write \"version\": 1"
        };
        return Err(CaseError::new(
            "version",
            case.version.to_string(),
            "1",
            fix,
        ));
    }

    let flow = &case.flow;
    check_f64(
        "flow.speed",
        flow.speed,
        SPEED_RANGE,
        "0.001 to 50 m/s",
        "give the free-stream speed in m/s (e.g. 0.5); the stream must move",
    )?;
    check_f64(
        "flow.temperature",
        flow.temperature,
        TEMPERATURE_RANGE,
        "0 to 40 deg C",
        "give the water temperature in deg C (e.g. 20)",
    )?;
    if !in_range(case.frequency, 0.0, FREQUENCY_MAX, false) {
        return Err(range_error(
            "frequency",
            case.frequency,
            "0 to 100 Hz (0 = start from rest)",
            "give the flapping frequency in Hz (e.g. 1.0), or 0 for an impulsive start",
        ));
    }

    let n = case.foils.len();
    if n == 0 || n > MAX_FOILS {
        return Err(CaseError::new(
            "foils",
            format!("{n} foils"),
            "1 to 8 foils",
            if n == 0 {
                "add at least one foil object to the list"
            } else {
                "remove foils until 8 or fewer remain"
            },
        ));
    }

    for (i, foil) in case.foils.iter().enumerate() {
        let p = |name: &str| format!("foils.{i}.{name}");
        check_f64(
            &p("chord"),
            foil.chord,
            CHORD_RANGE,
            "0.001 to 10 m",
            "give the chord in metres (e.g. 0.1)",
        )?;
        check_f64(
            &p("thickness"),
            foil.thickness,
            THICKNESS_RANGE,
            "0.01 to 0.30 (fraction of chord)",
            "give the thickness as a fraction of chord (0.12 for a 12 % section)",
        )?;
        check_f64(
            &p("span"),
            foil.span,
            SPAN_RANGE,
            "0.001 to 100 m",
            "give the span in metres (e.g. 0.4)",
        )?;
        let c = foil.chord;
        let reach = POSITION_MAX_CHORDS * c;
        for (name, v) in [("x", foil.x), ("y", foil.y)] {
            check_f64(
                &p(name),
                v,
                (-reach, reach),
                &format!("-{0} to {0} (1000 chords of {1})", metres(reach), metres(c)),
                "give the leading-edge position at mean pose in metres, near the other foils",
            )?;
        }
        check_f64(
            &p("pivot"),
            foil.pivot,
            (0.0, 1.0),
            "0 to 1 (fraction of chord from the leading edge)",
            "give the pitch axis as a fraction of chord (0.25 = quarter chord)",
        )?;
        check_f64(
            &p("heave"),
            foil.heave,
            (0.0, HEAVE_MAX_CHORDS * c),
            &format!("0 to {} (10 chords of {})", metres(HEAVE_MAX_CHORDS * c), metres(c)),
            "give the heave amplitude (half the peak-to-peak stroke) in metres, not negative; shift the motion with phase",
        )?;
        check_f64(
            &p("pitch"),
            foil.pitch,
            (0.0, PITCH_MAX),
            "0 to 80 deg",
            "give the pitch amplitude in degrees, not negative and not radians; shift the motion with pitch_lead",
        )?;
        check_f64(
            &p("pitch_mean"),
            foil.pitch_mean,
            (-PITCH_MEAN_MAX, PITCH_MEAN_MAX),
            "-45 to 45 deg",
            "give the mean pitch angle in degrees, nose up positive",
        )?;
        check_f64(
            &p("pitch_lead"),
            foil.pitch_lead,
            (-ANGLE_TURN_MAX, ANGLE_TURN_MAX),
            "-360 to 360 deg",
            "give how far pitch leads heave in degrees (90 = feathering)",
        )?;
        check_f64(
            &p("phase"),
            foil.phase,
            (-ANGLE_TURN_MAX, ANGLE_TURN_MAX),
            "-360 to 360 deg",
            "give how far this foil lags foil 0 in degrees",
        )?;
        if i == 0 && foil.phase != 0.0 {
            return Err(CaseError::new(
                p("phase"),
                foil.phase.to_string(),
                "0 (foil 0 is the phase reference)",
                "set foil 0's phase to 0 and subtract the same angle from every other foil's phase",
            )
            .with_kind(ErrorKind::Inconsistent));
        }
    }

    validate_numerics(case)?;
    validate_rig(case)
}

/// The rig-check keys (`rig` and `foils.*.rig`); they do not change the simulation.
fn validate_rig(case: &Case) -> Result<(), CaseError> {
    if let Some(rig) = &case.rig {
        if let Some(d) = rig.depth {
            check_f64(
                "rig.depth",
                d,
                (0.0, RIG_DEPTH_MAX),
                "0 to 11000 m (depth of y = 0 below the water surface), or null",
                "give the depth below the surface of a foil at y = 0 in metres (e.g. 0.5), or remove it",
            )?;
        }
        if let Some(h) = rig.water_depth {
            if !in_range(h, 0.0, RIG_DEPTH_MAX, true) {
                return Err(range_error(
                    "rig.water_depth",
                    h,
                    "more than 0 and at most 11000 m, or null",
                    "give the tank's water depth, surface to floor, in metres (e.g. 1.5), or remove it",
                ));
            }
            if let Some(d) = rig.depth {
                if h <= d {
                    return Err(CaseError::new(
                        "rig.water_depth",
                        h.to_string(),
                        format!("more than rig.depth = {d} m (the case origin is under water, above the floor)"),
                        "give the water depth from the surface to the floor, or correct rig.depth",
                    )
                    .with_kind(ErrorKind::Inconsistent));
                }
            }
        }
        if let Some(w) = rig.tank_width {
            if !in_range(w, 0.0, TANK_WIDTH_MAX, true) {
                return Err(range_error(
                    "rig.tank_width",
                    w,
                    "more than 0 and at most 10000 m, or null",
                    "give the width of the tank or channel across the stream in metres (e.g. 1.0), or remove it",
                ));
            }
        }
    }
    for (i, foil) in case.foils.iter().enumerate() {
        let Some(rig) = &foil.rig else { continue };
        check_f64(
            &format!("foils.{i}.rig.moving_mass"),
            rig.moving_mass,
            (0.0, RIG_INERTIA_MAX),
            "0 to 10000 kg",
            "give the mass the heave actuator moves with this foil in kg (foil, shaft, carriage), or 0",
        )?;
        check_f64(
            &format!("foils.{i}.rig.pitch_inertia"),
            rig.pitch_inertia,
            (0.0, RIG_INERTIA_MAX),
            "0 to 10000 kg m^2",
            "give the moment of inertia about the pitch axis in kg m^2 of all parts the pitch actuator turns, or 0",
        )?;
    }
    Ok(())
}

fn validate_numerics(case: &Case) -> Result<(), CaseError> {
    let num = &case.numerics;
    let panels_ok =
        (PANELS_RANGE.0..=PANELS_RANGE.1).contains(&num.panels) && num.panels.is_multiple_of(2);
    if !panels_ok {
        return Err(CaseError::new(
            "numerics.panels",
            num.panels.to_string(),
            "an even whole number, 20 to 400",
            "use an even number of panels per foil (80 is a good start)",
        ));
    }
    check_usize(
        "numerics.steps_per_cycle",
        num.steps_per_cycle,
        STEPS_PER_CYCLE_RANGE,
        "20 to 1000",
        "use 100 or more steps per cycle for accurate loads",
    )?;
    check_usize(
        "numerics.cycles",
        num.cycles,
        CYCLES_RANGE,
        "2 to 200",
        "run at least 2 cycles (8 is a good start)",
    )?;
    check_f64(
        "numerics.core_size",
        num.core_size,
        CORE_SIZE_RANGE,
        "0.005 to 0.5 (fraction of the smallest chord)",
        "use a vortex core of about 0.05 of the smallest chord",
    )?;
    check_usize(
        "numerics.max_particles",
        num.max_particles,
        MAX_PARTICLES_RANGE,
        "200 to 200000",
        "use a particle cap of a few thousand (4000 is the default)",
    )?;
    check_f64(
        "numerics.wake_merge",
        num.wake_merge,
        WAKE_MERGE_RANGE,
        "0 to 0.5 (fraction of the distance to the nearest foil)",
        "use 0.1 (the default), or 0 to keep every wake particle",
    )?;
    check_usize(
        "numerics.far_wake_refresh",
        num.far_wake_refresh,
        FAR_WAKE_REFRESH_RANGE,
        "1 to 8 steps",
        "use 8 (the default), or 1 to evaluate every particle at every step",
    )?;
    check_f64(
        "numerics.ramp_cycles",
        num.ramp_cycles,
        (0.0, RAMP_CYCLES_MAX),
        "0 to 10 cycles",
        "use 0 (no smooth start) to a few cycles",
    )?;

    let c0 = case.foils[0].chord;
    let speed = case.flow.speed;
    // s. Time for the stream to move one chord of foil 0.
    let chord_time = STEP_TRAVEL_MAX_CHORDS * c0 / speed;

    if case.frequency == 0.0 {
        // A start from rest holds every foil at its mean pose; amplitudes would be ignored.
        for (i, foil) in case.foils.iter().enumerate() {
            for (name, value) in [("heave", foil.heave), ("pitch", foil.pitch)] {
                if value != 0.0 {
                    return Err(range_error(
                        &format!("foils.{i}.{name}"),
                        value,
                        "0 when frequency is 0 (a start from rest holds the foil at its mean pose)",
                        &format!("set foils.{i}.{name} to 0, or give a flapping frequency above 0"),
                    ));
                }
            }
        }
    }
    if case.frequency > 0.0 {
        for (name, v) in [("time_step", num.time_step), ("duration", num.duration)] {
            if let Some(v) = v {
                return Err(CaseError::new(
                    format!("numerics.{name}"),
                    v.to_string(),
                    "only with frequency 0 (a flapping case is timed by steps_per_cycle and cycles)",
                    format!("remove numerics.{name} (or set it to null), or set frequency to 0"),
                )
                .with_kind(ErrorKind::Inconsistent));
            }
        }
        if num.ramp_cycles >= num.cycles as f64 {
            return Err(CaseError::new(
                "numerics.ramp_cycles",
                num.ramp_cycles.to_string(),
                format!("fewer than numerics.cycles = {}", num.cycles),
                "shorten the smooth start or run more cycles",
            )
            .with_kind(ErrorKind::Inconsistent));
        }
        let step_time = 1.0 / (case.frequency * num.steps_per_cycle as f64);
        if step_time > chord_time {
            let needed = (1.0 / (case.frequency * chord_time)).ceil();
            return Err(CaseError::new(
                "numerics.steps_per_cycle",
                num.steps_per_cycle.to_string(),
                format!(
                    "at least {needed} here: one step may move the stream at most one chord of foil 0 ({} at {} m/s)",
                    metres(c0),
                    round_sig(speed)
                ),
                format!("raise steps_per_cycle to {needed} or more"),
            )
            .with_kind(ErrorKind::Inconsistent));
        }
    } else {
        let dt = num.time_step.unwrap_or(0.02 * c0 / speed);
        if let Some(v) = num.time_step {
            if !in_range(v, 0.0, chord_time, true) {
                return Err(range_error(
                    "numerics.time_step",
                    v,
                    &format!(
                        "more than 0 and at most {} s (one chord of foil 0 at the free-stream speed)",
                        round_sig(chord_time)
                    ),
                    "give the time step in seconds (about 0.02 chord / speed), or remove it for the default",
                ));
            }
        }
        let duration = num.duration.unwrap_or(20.0 * c0 / speed);
        if let Some(v) = num.duration {
            if !in_range(v, dt, f64::MAX, false) {
                return Err(range_error(
                    "numerics.duration",
                    v,
                    &format!("at least one time step ({} s)", round_sig(dt)),
                    "give the run duration in seconds, or remove it for the default (20 chords of travel)",
                ));
            }
        }
        let steps = (duration / dt).ceil();
        if steps > MAX_TOTAL_STEPS as f64 {
            return Err(CaseError::new(
                "numerics.duration",
                duration.to_string(),
                format!(
                    "at most {} s with time step {} s (2000000 steps; this asks for {steps})",
                    round_sig(MAX_TOTAL_STEPS as f64 * dt),
                    round_sig(dt)
                ),
                "shorten the duration or lengthen the time step",
            )
            .with_kind(ErrorKind::Inconsistent));
        }
    }
    // Flapping runs have at most 1000 x 200 = 200000 steps, inside MAX_TOTAL_STEPS by construction.
    debug_assert!(STEPS_PER_CYCLE_RANGE.1 * CYCLES_RANGE.1 <= MAX_TOTAL_STEPS);
    Ok(())
}
