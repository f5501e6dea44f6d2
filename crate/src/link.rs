//! Case links: the whole case in the page address, readable, versioned and exact.
//!
//! A link is the page address with a fragment of `;`-separated items. The first item is the
//! link-format version, every other item is `key=value`:
//!
//! ```text
//! https://example.org/finwake/#v1;foils=2;1.x=0.3;1.phase=90
//! ```
//!
//! * **Keys** are the short names of [`KEYS`], the one table of the format. Per-foil keys are
//!   written after the foil's index and a dot (`1.x` is `foils.1.x`).
//! * **Values** are numbers in Rust's shortest round-trip form (`{}` of `f64`, or `{:e}` for very
//!   small and very large magnitudes), whole numbers, or names (`water=sea`). Decoding reads back
//!   the same `f64` bit for bit, so a link reopens the same case and gives the same numbers.
//! * **Defaults are omitted.** A key left out takes its [`KEYS`] default; a per-foil key left out
//!   of foil 1 or later takes foil 0's value (a tandem of equal foils needs only position and
//!   phase). `foils=N` gives the number of foils; without it the link has one more foil than
//!   its highest foil index. These defaults belong to the link format of version 1 and never
//!   change, even if the case file's defaults do: a link keeps meaning what it meant.
//! * **Page parts.** The page may follow the case with `&name=value` parts of its own (the
//!   spacing-phase map's settings, `&map=...`); the case ends at the first `&`, and the case
//!   decoder ignores what follows.
//! * **Versions.** A later finwake keeps reading `v1` links. A change that would give an old link
//!   another meaning needs a new version number and a reader for the old one.
//!
//! Decoding is lenient about single fields and strict about everything else: an unknown key, a
//! malformed item or a value out of range is ignored or reset to its default, the rest of the
//! link is applied, and every such field comes back as a [`LinkNotice`] that says why. Text that
//! is not a link at all (no `v1`, too long, a newer version) is a [`LinkError`]. Nothing is ever
//! evaluated: values are parsed as numbers or matched against fixed names, and text echoed in
//! notices is shortened and stripped of control and direction-override characters.
//!
//! The decoder checks every value with the case-file rules ([`crate::validate`]) but does no
//! physics: foils that overlap during their motion are reported by [`crate::Simulation::new`]
//! when the case runs, as for a case file.
//!
//! # Adding a case key to links
//!
//! 1. Add one [`LinkKey`] row to [`KEYS`]: a short key that no other row uses (never reuse a
//!    retired key), the case path (`foils.*.name` for per-foil keys), the kind, the default the
//!    key takes when a link leaves it out (the case file's default for a key that has one, so
//!    that links written before the key existed keep their meaning), and the unit.
//! 2. Keys of an optional group (an `Option<...>` object in the case, absent by default) also
//!    need one [`Kind::Present`] row for the group itself (e.g. key `rig`, path `rig`): the
//!    group's keys are then written only when the group is in the case, and `rig=1` marks a group
//!    present with all-default values. A group that is always present (like `numerics`) needs no
//!    such row. A later foil takes foil 0's group with the rest of foil 0's values; `1.rig=0`
//!    leaves it out of foil 1. Per-foil keys need a default value (not `Absent`), since a later
//!    foil that leaves a key out takes foil 0's value and could not say "none".
//! 3. Run `cargo test --test link`: the coverage test fails while any case key has no row, and
//!    the round-trip property test then covers the new key. Add a link using the key to
//!    `tests/link/v1-links.txt` (append only: old lines must keep decoding to the same case).

use std::fmt;

use serde::Serialize;
use serde_json::{Map, Value};

use crate::case::{Case, CASE_VERSION, MAX_FOILS};
use crate::error::CaseError;

/// Newest link-format version this build writes; it reads this one and all older ones.
pub const LINK_VERSION: u32 = 1;

/// Longest link text (bytes) the decoder reads; the longest case is about 3,000 bytes.
pub const MAX_LINK_BYTES: usize = 16 * 1024;

/// Longest value (characters, after %-decoding) accepted for one key.
pub const MAX_VALUE_CHARS: usize = 64;

/// Most notices kept for one link; further ones are only counted.
pub const MAX_NOTICES: usize = 100;

/// Longest echo of a key or value in a notice (characters).
const MAX_ECHO_CHARS: usize = 40;

/// The key of the foil count.
pub const FOILS_KEY: &str = "foils";

/// What a link value is.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Kind {
    /// A finite number (`f64`).
    Number,
    /// A whole number (`u64`).
    Whole,
    /// One of these names.
    Name(&'static [&'static str]),
    /// An optional object of the case: `1` present, `0` absent (see the module docs).
    Present,
}

/// The value a key takes when a link leaves it out.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum LinkDefault {
    /// This number.
    Number(f64),
    /// This whole number.
    Whole(u64),
    /// This name.
    Name(&'static str),
    /// Absent from the case (`null`; an optional value or group).
    Absent,
}

/// One key of the link format: a row of [`KEYS`].
#[derive(Debug, Clone, Copy)]
pub struct LinkKey {
    /// The key as written in links (per-foil keys after `index.`).
    pub key: &'static str,
    /// The case path it stands for; per-foil keys are `foils.*.name`.
    pub path: &'static str,
    /// What the value is.
    pub kind: Kind,
    /// The value when the link leaves the key out (version 1; never changes).
    pub default: LinkDefault,
    /// Unit of the value, as shown in exports (`-` for a pure number or a name).
    pub unit: &'static str,
}

const fn row(
    key: &'static str,
    path: &'static str,
    kind: Kind,
    default: LinkDefault,
    unit: &'static str,
) -> LinkKey {
    LinkKey {
        key,
        path,
        kind,
        default,
        unit,
    }
}

use Kind::{Name, Number, Whole};
use LinkDefault as D;

/// The names of `flow.water`.
const WATER_NAMES: &[&str] = &["fresh", "sea"];

/// The link format: every case key with its link key, kind, default and unit. Links are written
/// in this order. This is the extension point for new case keys (see the module docs).
pub const KEYS: &[LinkKey] = &[
    row("U", "flow.speed", Number, D::Number(0.5), "m/s"),
    row(
        "water",
        "flow.water",
        Name(WATER_NAMES),
        D::Name("fresh"),
        "-",
    ),
    row("T", "flow.temperature", Number, D::Number(20.0), "deg C"),
    row("f", "frequency", Number, D::Number(1.0), "Hz"),
    row("chord", "foils.*.chord", Number, D::Number(0.1), "m"),
    row(
        "thick",
        "foils.*.thickness",
        Number,
        D::Number(0.12),
        "fraction of chord",
    ),
    row("span", "foils.*.span", Number, D::Number(0.4), "m"),
    row("x", "foils.*.x", Number, D::Number(0.0), "m"),
    row("y", "foils.*.y", Number, D::Number(0.0), "m"),
    row(
        "pivot",
        "foils.*.pivot",
        Number,
        D::Number(0.25),
        "fraction of chord",
    ),
    row("heave", "foils.*.heave", Number, D::Number(0.05), "m"),
    row("pitch", "foils.*.pitch", Number, D::Number(15.0), "deg"),
    row("mean", "foils.*.pitch_mean", Number, D::Number(0.0), "deg"),
    row("lead", "foils.*.pitch_lead", Number, D::Number(90.0), "deg"),
    row("phase", "foils.*.phase", Number, D::Number(0.0), "deg"),
    row("panels", "numerics.panels", Whole, D::Whole(80), "-"),
    row(
        "steps",
        "numerics.steps_per_cycle",
        Whole,
        D::Whole(100),
        "-",
    ),
    row("cycles", "numerics.cycles", Whole, D::Whole(8), "-"),
    row("dt", "numerics.time_step", Number, D::Absent, "s"),
    row("duration", "numerics.duration", Number, D::Absent, "s"),
    row(
        "core",
        "numerics.core_size",
        Number,
        D::Number(0.05),
        "fraction of the smallest chord",
    ),
    row("cap", "numerics.max_particles", Whole, D::Whole(4000), "-"),
    row(
        "merge",
        "numerics.wake_merge",
        Number,
        D::Number(0.1),
        "fraction of the distance to the nearest foil",
    ),
    row(
        "ramp",
        "numerics.ramp_cycles",
        Number,
        D::Number(1.0),
        "cycles",
    ),
    row(
        "refresh",
        "numerics.far_wake_refresh",
        Whole,
        D::Whole(8),
        "steps",
    ),
    // Rig check (crate/src/rig.rs): tank and submergence, and each foil's moving parts.
    row("rig", "rig", Kind::Present, D::Absent, "-"),
    row("depth", "rig.depth", Number, D::Absent, "m"),
    row("wdepth", "rig.water_depth", Number, D::Absent, "m"),
    row("width", "rig.tank_width", Number, D::Absent, "m"),
    row("rig", "foils.*.rig", Kind::Present, D::Absent, "-"),
    row(
        "mass",
        "foils.*.rig.moving_mass",
        Number,
        D::Number(0.0),
        "kg",
    ),
    row(
        "inertia",
        "foils.*.rig.pitch_inertia",
        Number,
        D::Number(0.0),
        "kg m^2",
    ),
];

/// Prefix of per-foil case paths in [`KEYS`].
const FOIL_PREFIX: &str = "foils.*.";

impl LinkKey {
    /// The field name below `foils.i.` for a per-foil key.
    fn foil_field(&self) -> Option<&'static str> {
        self.path.strip_prefix(FOIL_PREFIX)
    }
}

/// The [`KEYS`] row of the case path `path` (`foils.1.chord` finds `foils.*.chord`).
pub fn key_for_path(path: &str) -> Option<&'static LinkKey> {
    let generic = generic_path(path);
    KEYS.iter().find(|k| k.path == generic)
}

/// `foils.1.chord` -> `foils.*.chord`; other paths unchanged.
fn generic_path(path: &str) -> String {
    let mut parts: Vec<&str> = path.split('.').collect();
    if parts.len() >= 3 && parts[0] == "foils" && parts[1].parse::<usize>().is_ok() {
        parts[1] = "*";
    }
    parts.join(".")
}

// ---------------------------------------------------------------------------------------------
// Errors and notices.

/// Text that is not a case link at all.
#[derive(Debug, Clone, PartialEq)]
pub struct LinkError {
    /// What is wrong and how to fix it, on one line.
    pub message: String,
}

impl LinkError {
    fn new(message: impl Into<String>) -> Self {
        LinkError {
            message: message.into(),
        }
    }
}

impl fmt::Display for LinkError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

impl std::error::Error for LinkError {}

/// What the decoder did with a field it could not use.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum NoticeAction {
    /// The item was left out (unknown key, malformed item, written twice, foil out of range).
    Ignored,
    /// The value could not be used; the field has its default instead.
    Reset,
}

/// One field of a link that was ignored or reset, and why.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LinkNotice {
    /// The key as written (shortened, control characters replaced); empty for an item with no key.
    pub key: String,
    /// The case path the key stands for (`foils.1.chord`); empty for an unknown key.
    pub path: String,
    /// The value as written (shortened, control characters replaced).
    pub value: String,
    /// What the decoder did.
    pub action: NoticeAction,
    /// Why, on one line (for a value out of range, the case-file message with the allowed range).
    pub reason: String,
    /// The value the field has now (for [`NoticeAction::Reset`]); empty otherwise.
    pub used: String,
}

impl fmt::Display for LinkNotice {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let item = if self.key.is_empty() {
            format!("`{}`", self.value)
        } else {
            format!("`{}={}`", self.key, self.value)
        };
        let what = match self.action {
            NoticeAction::Ignored => "ignored".to_string(),
            NoticeAction::Reset if self.used.is_empty() => "left out".to_string(),
            NoticeAction::Reset => format!("reset to {}", self.used),
        };
        if self.path.is_empty() || self.reason.starts_with(&self.path) {
            write!(f, "{item} {what}: {}", self.reason)
        } else {
            write!(f, "{item} ({}) {what}: {}", self.path, self.reason)
        }
    }
}

/// A decoded link: the case with every usable field applied, and what was not used.
#[derive(Debug, Clone, PartialEq)]
pub struct Decoded {
    /// The case (valid by the case-file rules).
    pub case: Case,
    /// Every field that was ignored or reset, in link order (at most [`MAX_NOTICES`]).
    pub notices: Vec<LinkNotice>,
    /// Notices beyond [`MAX_NOTICES`], counted only.
    pub more_notices: usize,
}

/// `text` made safe to echo: at most [`MAX_ECHO_CHARS`] characters, control and bidirectional
/// formatting characters replaced by `?`.
fn echo(text: &str) -> String {
    let bad = |c: char| {
        c.is_control()
            || matches!(c, '\u{200e}' | '\u{200f}' | '\u{202a}'..='\u{202e}' | '\u{2066}'..='\u{2069}')
    };
    let count = text.chars().count();
    let mut out: String = text
        .chars()
        .take(MAX_ECHO_CHARS)
        .map(|c| if bad(c) { '?' } else { c })
        .collect();
    if count > MAX_ECHO_CHARS {
        out.push_str("...");
    }
    out
}

// ---------------------------------------------------------------------------------------------
// Numbers.

/// `v` as link text: shortest round-trip form, plain for ordinary magnitudes, exponent form
/// (`1e-7`) for very small or very large ones. `f64::from_str` reads it back bit for bit.
pub fn format_number(v: f64) -> String {
    let a = v.abs();
    if a == 0.0 || (1e-5..1e16).contains(&a) || !v.is_finite() {
        format!("{v}")
    } else {
        format!("{v:e}")
    }
}

/// A link number: finite, in the forms Rust reads (`0.5`, `-3`, `1e-7`, `.5`).
fn parse_number(text: &str) -> Result<f64, String> {
    let ok_chars = text
        .chars()
        .all(|c| c.is_ascii_digit() || matches!(c, '.' | '-' | '+' | 'e' | 'E'));
    match text.parse::<f64>() {
        Ok(v) if ok_chars && v.is_finite() => Ok(v),
        Ok(_) if ok_chars => Err("not a finite number".to_string()),
        _ => Err("not a number (write digits with a decimal point, e.g. 0.25)".to_string()),
    }
}

/// A link whole number: digits only.
fn parse_whole(text: &str) -> Result<u64, String> {
    if text.is_empty() || !text.bytes().all(|b| b.is_ascii_digit()) {
        return Err("not a whole number (write digits only, e.g. 80)".to_string());
    }
    text.parse::<u64>()
        .map_err(|_| "too large for a whole number".to_string())
}

/// The link text of a default value (empty for [`LinkDefault::Absent`]).
fn default_text(d: LinkDefault) -> String {
    match d {
        LinkDefault::Number(v) => format_number(v),
        LinkDefault::Whole(v) => v.to_string(),
        LinkDefault::Name(s) => s.to_string(),
        LinkDefault::Absent => String::new(),
    }
}

fn default_value(d: LinkDefault) -> Option<Value> {
    match d {
        LinkDefault::Number(v) => Some(Value::from(v)),
        LinkDefault::Whole(v) => Some(Value::from(v)),
        LinkDefault::Name(s) => Some(Value::from(s)),
        LinkDefault::Absent => None,
    }
}

/// The link text of a case value of kind `kind` (`None` for null or absent).
fn value_text(kind: Kind, v: Option<&Value>) -> Option<String> {
    match (kind, v) {
        (_, None | Some(Value::Null)) => None,
        (Kind::Present, Some(_)) => Some("1".to_string()),
        (Kind::Whole, Some(Value::Number(n))) if n.is_u64() => n.as_u64().map(|u| u.to_string()),
        (Kind::Number | Kind::Whole, Some(Value::Number(n))) => n.as_f64().map(format_number),
        (Kind::Name(_), Some(Value::String(s))) => Some(s.clone()),
        (_, Some(other)) => Some(other.to_string()),
    }
}

/// Parses a link value of kind `kind` into a case value.
fn parse_value(kind: Kind, text: &str) -> Result<Value, String> {
    match kind {
        Kind::Number => parse_number(text).map(Value::from),
        Kind::Whole => parse_whole(text).map(Value::from),
        Kind::Name(names) => {
            if names.contains(&text) {
                Ok(Value::from(text))
            } else {
                Err(format!("not one of the names {}", names.join(", ")))
            }
        }
        Kind::Present => match text {
            "1" => Ok(Value::Object(Map::new())),
            "0" => Ok(Value::Null),
            _ => Err("write 1 to include this group or 0 to leave it out".to_string()),
        },
    }
}

// ---------------------------------------------------------------------------------------------
// Case trees.

fn get<'a>(tree: &'a Value, path: &str) -> Option<&'a Value> {
    path.split('.').try_fold(tree, |v, part| match v {
        Value::Object(m) => m.get(part),
        Value::Array(a) => part.parse::<usize>().ok().and_then(|i| a.get(i)),
        _ => None,
    })
}

/// Sets `path` in `tree`, creating objects on the way (never through arrays).
fn set(tree: &mut Value, path: &str, value: Value) {
    let mut node = tree;
    let parts: Vec<&str> = path.split('.').collect();
    for (i, part) in parts.iter().enumerate() {
        if !node.is_object() {
            *node = Value::Object(Map::new());
        }
        let Value::Object(map) = node else {
            unreachable!("made an object above")
        };
        if i + 1 == parts.len() {
            map.insert((*part).to_string(), value);
            return;
        }
        node = map
            .entry((*part).to_string())
            .or_insert_with(|| Value::Object(Map::new()));
    }
}

/// The optional group (a [`Kind::Present`] row) that `path` lies in, if any.
fn group_of(path: &str) -> Option<&'static LinkKey> {
    KEYS.iter().filter(|k| k.kind == Kind::Present).find(|g| {
        path.len() > g.path.len()
            && path.starts_with(g.path)
            && path[g.path.len()..].starts_with('.')
    })
}

/// Every case leaf that [`KEYS`] does not cover (generic paths), for the encoder's check.
fn uncovered(tree: &Value) -> Vec<String> {
    fn walk(v: &Value, path: String, out: &mut Vec<String>) {
        match v {
            Value::Object(m) => {
                let generic = generic_path(&path);
                let group_row = KEYS
                    .iter()
                    .any(|k| k.path == generic && k.kind == Kind::Present);
                if m.is_empty() && !path.is_empty() && !group_row && !out.contains(&generic) {
                    out.push(generic);
                }
                for (k, v) in m {
                    let p = if path.is_empty() {
                        k.clone()
                    } else {
                        format!("{path}.{k}")
                    };
                    walk(v, p, out);
                }
            }
            Value::Array(a) => {
                for (i, v) in a.iter().enumerate() {
                    walk(v, format!("{path}.{i}"), out);
                }
            }
            _ => {
                let generic = generic_path(&path);
                let covered = generic == "version" || KEYS.iter().any(|k| k.path == generic);
                if !covered && !out.contains(&generic) {
                    out.push(generic);
                }
            }
        }
    }
    let mut out = Vec::new();
    walk(tree, String::new(), &mut out);
    out
}

// ---------------------------------------------------------------------------------------------
// Encoding.

/// The link fragment of `case`, without the leading `#` (e.g. `v1;foils=2;1.x=0.3;1.phase=90`).
///
/// Fails only if the case holds a key that [`KEYS`] does not know (a case key added without its
/// link row); the message names it. The case is not range-checked here: encode cases that passed
/// [`Case::validate`], or their link will decode with notices.
pub fn encode(case: &Case) -> Result<String, LinkError> {
    let tree = serde_json::to_value(case).expect("a case always serialises");
    encode_tree(&tree)
}

/// `base#fragment`: the complete link of `case` on the page at `base`.
pub fn link(case: &Case, base: &str) -> Result<String, LinkError> {
    Ok(format!("{base}#{}", encode(case)?))
}

fn encode_tree(tree: &Value) -> Result<String, LinkError> {
    let missing = uncovered(tree);
    if !missing.is_empty() {
        return Err(LinkError::new(format!(
            "the case has {} that links cannot carry yet ({}); add a row for each to KEYS in crate/src/link.rs",
            if missing.len() == 1 { "a key" } else { "keys" },
            missing.join(", ")
        )));
    }
    let foils = tree
        .get("foils")
        .and_then(Value::as_array)
        .map_or(0, Vec::len);
    let mut items = vec![format!("v{LINK_VERSION}")];
    // Order: the case rows before the first per-foil row (flow, frequency), the foil count,
    // every foil's keys, then the remaining case rows (numerics and later groups).
    let split = KEYS
        .iter()
        .position(|k| k.foil_field().is_some())
        .unwrap_or(KEYS.len());
    let case_items = scope_items(tree, Scope::Case);
    let (head, tail): (Vec<_>, Vec<_>) = case_items.into_iter().partition(|(row, _)| *row < split);
    items.extend(head.into_iter().map(|(_, item)| item));
    if foils != 1 {
        items.push(format!("{FOILS_KEY}={foils}"));
    }
    for i in 0..foils {
        items.extend(
            scope_items(tree, Scope::Foil(i))
                .into_iter()
                .map(|(_, item)| item),
        );
    }
    items.extend(tail.into_iter().map(|(_, item)| item));
    Ok(items.join(";"))
}

/// The items of one scope that differ from what the decoder would assume, with their row
/// numbers in [`KEYS`].
fn scope_items(tree: &Value, s: Scope) -> Vec<(usize, String)> {
    let is_object = |p: String| get(tree, &p).is_some_and(Value::is_object);
    let present = |g: &LinkKey| is_object(s.path(g));
    let ref_present = |g: &LinkKey| s.inherits().is_some_and(|r| is_object(r.path(g)));
    let reference = |k: &LinkKey| match (s.inherits(), group_of(k.path)) {
        (Some(_), Some(g)) if !ref_present(g) => default_text(k.default),
        (Some(r), _) => value_text(k.kind, get(tree, &r.path(k))).unwrap_or_default(),
        (None, _) => default_text(k.default),
    };
    let written: Vec<(usize, &LinkKey, String)> = KEYS
        .iter()
        .enumerate()
        .filter(|(_, k)| s.holds(k) && k.kind != Kind::Present)
        .filter_map(|(n, k)| {
            let t = value_text(k.kind, get(tree, &s.path(k)))?;
            (t != reference(k)).then_some((n, k, t))
        })
        .collect();
    let mut items = Vec::new();
    for (n, k) in KEYS.iter().enumerate().filter(|(_, k)| s.holds(k)) {
        if k.kind == Kind::Present {
            let keys_written = written
                .iter()
                .any(|(_, w, _)| group_of(w.path).is_some_and(|g| g.path == k.path));
            let (p, rp) = (present(k), ref_present(k));
            if p && !rp && !keys_written {
                items.push((n, format!("{}=1", s.key(k))));
            } else if !p && rp {
                items.push((n, format!("{}=0", s.key(k))));
            }
        } else if let Some((_, _, t)) = written.iter().find(|(m, _, _)| *m == n) {
            items.push((n, format!("{}={t}", s.key(k))));
        }
    }
    items
}

/// Where a row's value lives: in the case itself or in one foil.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Scope {
    /// Case-level rows (flow, frequency, numerics, case-level groups).
    Case,
    /// The per-foil rows of foil `i`.
    Foil(usize),
}

impl Scope {
    /// True if row `k` belongs to this kind of scope.
    fn holds(self, k: &LinkKey) -> bool {
        k.foil_field().is_some() == matches!(self, Scope::Foil(_))
    }
    /// The concrete case path of row `k` here.
    fn path(self, k: &LinkKey) -> String {
        match self {
            Scope::Case => k.path.to_string(),
            Scope::Foil(i) => format!("foils.{i}.{}", k.foil_field().unwrap_or(k.path)),
        }
    }
    /// The path of row `k` inside this scope's object.
    fn relative(self, k: &LinkKey) -> &'static str {
        match self {
            Scope::Case => k.path,
            Scope::Foil(_) => k.foil_field().unwrap_or(k.path),
        }
    }
    /// The link key of row `k` here.
    fn key(self, k: &LinkKey) -> String {
        match self {
            Scope::Case => k.key.to_string(),
            Scope::Foil(i) => format!("{i}.{}", k.key),
        }
    }
    /// The scope whose values this one takes for keys a link leaves out (foil 0, for later foils).
    fn inherits(self) -> Option<Scope> {
        match self {
            Scope::Foil(i) if i > 0 => Some(Scope::Foil(0)),
            _ => None,
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Decoding.

/// One usable `key=value` item: the case path it sets and its parsed value.
#[derive(Debug, Clone)]
struct Given {
    /// Concrete case path (`foils.1.chord`).
    path: String,
    /// Where it goes: the case or a foil.
    scope: Scope,
    /// Its row in [`KEYS`].
    row: usize,
    /// Parsed value.
    value: Value,
    /// The key as written (for notices).
    key: String,
    /// The value as written (for notices).
    text: String,
}

/// Decodes a link: a whole address (`https://host/page#v1;...`), a fragment (`#v1;...`) or the
/// fragment's text (`v1;...`). Leading and trailing white space is ignored.
pub fn decode(link: &str) -> Result<Decoded, LinkError> {
    if link.len() > MAX_LINK_BYTES {
        return Err(LinkError::new(format!(
            "the link is {} bytes long: allowed at most {MAX_LINK_BYTES}; a finwake case link is a few thousand bytes at most, so this text is not one",
            link.len()
        )));
    }
    let text = link.trim();
    let fragment = match text.find('#') {
        Some(i) => &text[i + 1..],
        None => text,
    };
    // Page parts (`&map=...`) follow the case; they are the page's, not the case's.
    let fragment = fragment.split('&').next().unwrap_or_default();
    if fragment.is_empty() {
        return Err(LinkError::new(
            "the link holds no case: a finwake case link ends in #v1;... (copy it again with the page's Copy link)",
        ));
    }
    let mut items = fragment.split(';');
    let first = items.next().unwrap_or("");
    let version = percent_decode(first).unwrap_or_default();
    let version = version.trim();
    match version.strip_prefix('v').map(str::parse::<u32>) {
        Some(Ok(v)) if v == LINK_VERSION => {}
        Some(Ok(v)) if v > LINK_VERSION => {
            return Err(LinkError::new(format!(
                "the link has version {v}: this finwake reads link version {LINK_VERSION} and older; open it with a newer finwake"
            )))
        }
        _ => {
            return Err(LinkError::new(format!(
                "`{}` is not a finwake case link: it must start with #v{LINK_VERSION}; (copy it again with the page's Copy link)",
                echo(first)
            )))
        }
    }

    let mut notices = Notices::default();
    let mut given: Vec<Given> = Vec::new();
    let mut count: Option<(usize, String)> = None; // foils=N as given, with the text
    let mut count_bad: Option<(String, String)> = None; // (text, reason)
    for raw in items {
        if raw.trim().is_empty() {
            continue;
        }
        let (raw_key, raw_value) = match raw.split_once('=') {
            Some((k, v)) => (k, v),
            None => {
                notices.ignored("", "", raw, "an item must be key=value");
                continue;
            }
        };
        let (key, value) = match (percent_decode(raw_key), percent_decode(raw_value)) {
            (Ok(k), Ok(v)) => (k.trim().to_string(), v.trim().to_string()),
            (Err(e), _) | (_, Err(e)) => {
                notices.ignored(raw_key, "", raw_value, &e);
                continue;
            }
        };
        if value.chars().count() > MAX_VALUE_CHARS {
            let path = resolve(&key).map(|r| r.0).unwrap_or_default();
            notices.reset(
                &key,
                &path,
                &value,
                &format!("longer than {MAX_VALUE_CHARS} characters"),
            );
            continue;
        }
        if key == FOILS_KEY {
            if count.is_some() || count_bad.is_some() {
                notices.ignored(
                    &key,
                    "foils",
                    &value,
                    "written twice; the first value is kept",
                );
            } else {
                match parse_whole(&value) {
                    Ok(n) if (1..=MAX_FOILS as u64).contains(&n) => {
                        count = Some((n as usize, value))
                    }
                    Ok(_) => count_bad = Some((value, format!("allowed 1 to {MAX_FOILS} foils"))),
                    Err(e) => count_bad = Some((value, e)),
                }
            }
            continue;
        }
        let (path, scope, row) = match resolve(&key) {
            Ok(found) => found,
            Err(reason) => {
                notices.ignored(&key, "", &value, &reason);
                continue;
            }
        };
        if given.iter().any(|g| g.path == path) {
            notices.ignored(
                &key,
                &path,
                &value,
                "written twice; the first value is kept",
            );
            continue;
        }
        match parse_value(KEYS[row].kind, &value) {
            Ok(v) => given.push(Given {
                path,
                scope,
                row,
                value: v,
                key,
                text: value,
            }),
            Err(reason) => notices.reset(&key, &path, &value, &reason),
        }
    }

    // The foil count: as given, else one more than the highest foil index named.
    let highest = given
        .iter()
        .filter_map(|g| foil_index(&g.path))
        .max()
        .map_or(1, |i| i + 1);
    let foils = match &count {
        Some((n, _)) => *n,
        None => highest,
    };
    if let Some((text, reason)) = &count_bad {
        notices.reset(FOILS_KEY, "foils", text, reason);
    }
    given.retain(|g| match foil_index(&g.path) {
        Some(i) if i >= foils => {
            notices.ignored(
                &g.key,
                &g.path,
                &g.text,
                &format!(
                    "the link has foils={foils}, so foil indices run 0 to {}",
                    foils - 1
                ),
            );
            false
        }
        _ => true,
    });

    // A group written as absent (`rig=0`) takes none of its keys.
    let absent: Vec<(String, String)> = given
        .iter()
        .filter(|g| g.value.is_null())
        .map(|g| (format!("{}.", g.path), format!("{}=0", g.key)))
        .collect();
    given.retain(
        |g| match absent.iter().find(|(a, _)| g.path.starts_with(a.as_str())) {
            Some((_, marker)) => {
                notices.ignored(
                    &g.key,
                    &g.path,
                    &g.text,
                    &format!("the link also has {marker}, which leaves this group out"),
                );
                false
            }
            None => true,
        },
    );

    let case = settle(&mut given, foils, &mut notices);
    notices.fill_used(&case);
    Ok(Decoded {
        case,
        notices: notices.list,
        more_notices: notices.more,
    })
}

/// The case path and row of a link key (`1.x` -> `foils.1.x`).
/// The case path, scope and [`KEYS`] row of a link key (`1.x` -> `foils.1.x`).
fn resolve(key: &str) -> Result<(String, Scope, usize), String> {
    if key.starts_with(|c: char| c.is_ascii_digit()) {
        let (index, name) = key
            .split_once('.')
            .ok_or_else(|| "a per-foil key is written index.key (e.g. 1.x)".to_string())?;
        let canonical = index.len() == 1 || !index.starts_with('0');
        let i = index
            .parse::<usize>()
            .ok()
            .filter(|_| canonical && index.bytes().all(|b| b.is_ascii_digit()))
            .ok_or_else(|| "a foil index is a whole number 0 to 7".to_string())?;
        if i >= MAX_FOILS {
            return Err(format!(
                "foil index {i} is beyond the {MAX_FOILS} foils a case may have (0 to {})",
                MAX_FOILS - 1
            ));
        }
        let row = KEYS
            .iter()
            .position(|k| k.key == name && k.foil_field().is_some())
            .ok_or_else(|| unknown_key(true))?;
        let s = Scope::Foil(i);
        Ok((s.path(&KEYS[row]), s, row))
    } else {
        let row = KEYS
            .iter()
            .position(|k| k.key == key && k.foil_field().is_none())
            .ok_or_else(|| unknown_key(false))?;
        Ok((KEYS[row].path.to_string(), Scope::Case, row))
    }
}

fn unknown_key(foil: bool) -> String {
    let mut names: Vec<&str> = KEYS
        .iter()
        .filter(|k| k.foil_field().is_some() == foil)
        .map(|k| k.key)
        .collect();
    if !foil {
        names.push(FOILS_KEY);
    }
    format!(
        "unknown {}key; the {}keys are {}",
        if foil { "per-foil " } else { "" },
        if foil { "per-foil " } else { "" },
        names.join(", ")
    )
}

fn foil_index(path: &str) -> Option<usize> {
    path.strip_prefix("foils.")?.split('.').next()?.parse().ok()
}

/// Builds the case tree: `v1` defaults, foil 0's values for later foils, then the given values.
fn build_tree(given: &[Given], foils: usize) -> Value {
    // The given value of every (scope, row): scope 0 is the case, 1 + i is foil i.
    let mut lookup: Vec<Vec<Option<&Value>>> = vec![vec![None; KEYS.len()]; 1 + foils];
    for g in given {
        let at = match g.scope {
            Scope::Case => 0,
            Scope::Foil(i) => 1 + i,
        };
        if let Some(slot) = lookup.get_mut(at) {
            slot[g.row] = Some(&g.value);
        }
    }
    let mut tree = build_scope(&lookup[0], Scope::Case, Map::new());
    set(&mut tree, "version", Value::from(CASE_VERSION));
    let mut list = Vec::with_capacity(foils);
    for i in 0..foils {
        let base = match list.first() {
            Some(Value::Object(foil0)) => foil0.clone(),
            _ => Map::new(),
        };
        list.push(build_scope(&lookup[1 + i], Scope::Foil(i), base));
    }
    set(&mut tree, "foils", Value::Array(list));
    tree
}

/// Row number of the optional group (a [`Kind::Present`] row) each row of [`KEYS`] lies in.
fn groups() -> &'static [Option<usize>] {
    static GROUPS: std::sync::OnceLock<Vec<Option<usize>>> = std::sync::OnceLock::new();
    GROUPS.get_or_init(|| {
        KEYS.iter()
            .map(|k| group_of(k.path).and_then(|g| KEYS.iter().position(|r| r.path == g.path)))
            .collect()
    })
}

/// The object of one scope: `base` (foil 0's object for later foils, else empty), optional
/// groups added or removed, then defaults and the given values (`given[row]`).
fn build_scope(given: &[Option<&Value>], s: Scope, base: Map<String, Value>) -> Value {
    let groups = groups();
    let mut obj = Value::Object(base);
    let rows = || (0..KEYS.len()).filter(|&n| s.holds(&KEYS[n]));
    for g in rows().filter(|&n| KEYS[n].kind == Kind::Present) {
        let gk = &KEYS[g];
        let inherited = get(&obj, s.relative(gk)).is_some_and(Value::is_object);
        let present = match given[g] {
            Some(Value::Null) => false,
            Some(_) => true,
            None => inherited || rows().any(|n| groups[n] == Some(g) && given[n].is_some()),
        };
        if present && !inherited {
            let mut group = Value::Object(Map::new());
            for n in rows().filter(|&n| groups[n] == Some(g)) {
                if let Some(v) = default_value(KEYS[n].default) {
                    let inner = &s.relative(&KEYS[n])[s.relative(gk).len() + 1..];
                    set(&mut group, inner, v);
                }
            }
            set(&mut obj, s.relative(gk), group);
        } else if !present {
            remove(&mut obj, s.relative(gk));
        }
    }
    for n in rows().filter(|&n| KEYS[n].kind != Kind::Present) {
        let k = &KEYS[n];
        if let Some(g) = groups[n] {
            if !get(&obj, s.relative(&KEYS[g])).is_some_and(Value::is_object) {
                continue;
            }
        }
        if let Some(v) = given[n] {
            set(&mut obj, s.relative(k), v.clone());
        } else if s.inherits().is_none() && groups[n].is_none() {
            if let Some(v) = default_value(k.default) {
                set(&mut obj, s.relative(k), v);
            }
        }
    }
    obj
}

/// Removes `path` from `tree` if it is there.
fn remove(tree: &mut Value, path: &str) {
    let (parent, last) = match path.rsplit_once('.') {
        Some((p, l)) => (Some(p), l),
        None => (None, path),
    };
    let node = match parent {
        Some(p) => p.split('.').try_fold(&mut *tree, |v, part| v.get_mut(part)),
        None => Some(tree),
    };
    if let Some(Value::Object(m)) = node {
        m.remove(last);
    }
}

/// The tree as a case, checked by the case-file rules.
fn check(tree: Value) -> Result<Case, CaseError> {
    crate::validate::check_shape(&tree)?;
    let case: Case = serde_json::from_value(tree).map_err(CaseError::from_serde)?;
    case.validate()?;
    Ok(case)
}

/// Applies the given values, resetting those that break a case-file rule until the case is
/// valid. Every round resets at least one given value, so this ends after at most
/// `given.len() + 1` rounds of at most `2 + log2(given.len())` checks each; the `v1` defaults
/// alone make a valid case.
fn settle(given: &mut Vec<Given>, foils: usize, notices: &mut Notices) -> Case {
    loop {
        let err = match check(build_tree(given, foils)) {
            Ok(case) => return case,
            Err(e) => e,
        };
        // The field at fault, if the link gave it.
        if let Some(i) = given.iter().position(|g| g.path == err.path) {
            let g = given.remove(i);
            notices.reset(&g.key, &g.path, &g.text, &err.to_string());
            continue;
        }
        // Otherwise a default or inherited value breaks a rule together with given values. The
        // defaults alone pass and all given values fail at this path: bisect the link order for
        // the first value after which the error appears (log2 of the given values' checks).
        let fails_here = |k: usize| match check(build_tree(&given[..k], foils)) {
            Ok(_) => false,
            Err(e) => e.path == err.path,
        };
        let culprit = if given.is_empty() || fails_here(0) {
            None
        } else {
            let (mut lo, mut hi) = (0, given.len());
            while hi - lo > 1 {
                let mid = (lo + hi) / 2;
                if fails_here(mid) {
                    hi = mid;
                } else {
                    lo = mid;
                }
            }
            Some(hi - 1)
        };
        match culprit {
            Some(i) => {
                let g = given.remove(i);
                notices.reset(
                    &g.key,
                    &g.path,
                    &g.text,
                    &format!("it breaks a rule together with the other values: {err}"),
                );
            }
            None => {
                // No single value is to blame: use the defaults for everything the link gave.
                for g in given.drain(..) {
                    notices.reset(
                        &g.key,
                        &g.path,
                        &g.text,
                        &format!("the values cannot be applied together: {err}"),
                    );
                }
                if let Ok(case) = check(build_tree(&[], foils)) {
                    return case;
                }
                // Even the defaults fail with this many foils (they all overlap at one place,
                // which only the solver checks, so this is a range rule): fall back to one foil.
                return check(build_tree(&[], 1)).expect("the v1 defaults make a valid case");
            }
        }
    }
}

/// Notices collected while decoding.
#[derive(Default)]
struct Notices {
    list: Vec<LinkNotice>,
    more: usize,
}

impl Notices {
    fn push(&mut self, key: &str, path: &str, value: &str, action: NoticeAction, reason: &str) {
        if self.list.len() >= MAX_NOTICES {
            self.more += 1;
            return;
        }
        self.list.push(LinkNotice {
            key: echo(key),
            path: echo(path),
            value: echo(value),
            action,
            reason: echo_long(reason),
            used: String::new(),
        });
    }
    fn ignored(&mut self, key: &str, path: &str, value: &str, reason: &str) {
        self.push(key, path, value, NoticeAction::Ignored, reason);
    }
    fn reset(&mut self, key: &str, path: &str, value: &str, reason: &str) {
        self.push(key, path, value, NoticeAction::Reset, reason);
    }
    /// Fills in the value each reset field has in the final case.
    fn fill_used(&mut self, case: &Case) {
        let tree = serde_json::to_value(case).expect("a case always serialises");
        for n in &mut self.list {
            if n.action != NoticeAction::Reset {
                continue;
            }
            n.used = if n.path == "foils" {
                case.foils.len().to_string()
            } else {
                match key_for_path(&n.path) {
                    Some(k) => value_text(k.kind, get(&tree, &n.path))
                        .unwrap_or_else(|| "nothing (left out)".to_string()),
                    None => String::new(),
                }
            };
        }
    }
}

/// A reason made safe to show: one line, control characters replaced, at most 400 characters.
fn echo_long(text: &str) -> String {
    let flat: String = text
        .chars()
        .map(|c| if c.is_control() { ' ' } else { c })
        .collect();
    if flat.chars().count() > 400 {
        let mut s: String = flat.chars().take(397).collect();
        s.push_str("...");
        s
    } else {
        flat
    }
}

/// Decodes `%XX` escapes (browsers may escape characters of a fragment); the result must be
/// UTF-8.
fn percent_decode(text: &str) -> Result<String, String> {
    if !text.contains('%') {
        return Ok(text.to_string());
    }
    let bytes = text.as_bytes();
    let mut out = Vec::with_capacity(bytes.len());
    let mut i = 0;
    while i < bytes.len() {
        if bytes[i] == b'%' {
            let hex = bytes
                .get(i + 1..i + 3)
                .and_then(|h| std::str::from_utf8(h).ok())
                .and_then(|h| u8::from_str_radix(h, 16).ok())
                .filter(|_| bytes[i + 1].is_ascii_hexdigit() && bytes[i + 2].is_ascii_hexdigit());
            match hex {
                Some(b) => {
                    out.push(b);
                    i += 3;
                }
                None => {
                    return Err("a % must start a two-digit hexadecimal escape (%3B)".to_string())
                }
            }
        } else {
            out.push(bytes[i]);
            i += 1;
        }
    }
    String::from_utf8(out).map_err(|_| "its %-escapes are not UTF-8 text".to_string())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn defaults_make_a_valid_case() {
        let d = decode("#v1").unwrap();
        assert!(d.notices.is_empty());
        assert_eq!(d.case.foils.len(), 1);
        assert_eq!(encode(&d.case).unwrap(), "v1");
    }

    #[test]
    fn every_key_is_unique_and_every_path_is_a_case_path() {
        // With the optional groups present, so that their keys are in the tree too.
        let d = decode("#v1;rig=1;0.rig=1").unwrap();
        let tree = serde_json::to_value(&d.case).unwrap();
        for (i, a) in KEYS.iter().enumerate() {
            for b in &KEYS[i + 1..] {
                let same_scope = a.foil_field().is_some() == b.foil_field().is_some();
                assert!(!(same_scope && a.key == b.key), "key {} twice", a.key);
                assert_ne!(a.path, b.path);
            }
            assert_ne!(a.key, FOILS_KEY);
            let concrete = a.path.replace('*', "0");
            assert!(
                get(&tree, &concrete).is_some(),
                "{} is not in the case",
                a.path
            );
        }
    }

    #[test]
    fn optional_group_marker() {
        // The tree-level logic of optional groups, with a group that the case does not have yet.
        let g = LinkKey {
            key: "grp",
            path: "numerics",
            kind: Kind::Present,
            default: LinkDefault::Absent,
            unit: "-",
        };
        let tree = serde_json::json!({ "numerics": {} });
        assert_eq!(value_text(g.kind, get(&tree, g.path)).as_deref(), Some("1"));
        assert_eq!(value_text(g.kind, get(&tree, "nothing")), None);
        assert_eq!(
            parse_value(Kind::Present, "1").unwrap(),
            serde_json::json!({})
        );
        assert!(parse_value(Kind::Present, "yes").is_err());
    }

    #[test]
    fn numbers_round_trip_exactly() {
        for v in [
            0.1,
            -0.0,
            1e-7,
            1.5e300,
            123456.789,
            f64::MIN_POSITIVE,
            0.30000000000000004,
        ] {
            let t = format_number(v);
            assert_eq!(parse_number(&t).unwrap().to_bits(), v.to_bits(), "{t}");
        }
        assert!(parse_number("inf").is_err());
        assert!(parse_number("NaN").is_err());
        assert!(parse_number("1e999").is_err());
        assert!(parse_number("0x10").is_err());
    }

    #[test]
    fn percent_escapes() {
        assert_eq!(percent_decode("a%3Bb").unwrap(), "a;b");
        assert!(percent_decode("%").is_err());
        assert!(percent_decode("%zz").is_err());
        assert!(percent_decode("%+1").is_err());
        assert!(percent_decode("%ff").is_err());
    }

    #[test]
    fn echo_strips_controls_and_overrides() {
        assert_eq!(echo("a\u{1b}[2Jb\u{202e}c"), "a?[2Jb?c");
        assert!(echo(&"x".repeat(100)).ends_with("..."));
    }
}
