//! Case links (crate/src/link.rs): the round trip case -> link -> case on random valid cases, the
//! links of earlier versions, every case key covered by the key table, partly bad and hostile
//! links, a seeded fuzz run of the decoder, and `finwake link` as a process.
//!
//! Run in the release profile (`cargo test --release --test link -- --nocapture`, as
//! `cargo xtask test` does; it prints the figures): the fuzz run decodes `FINWAKE_FUZZ_CASES`
//! inputs (default 100,000, a few seconds) and the round trip checks `FINWAKE_LINK_CASES` random
//! cases (default 3,000). A debug build runs a tenth of each by default (the decoder's serde
//! work is about ten times slower there); the output says how many.

mod schema;

use std::collections::BTreeSet;
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

use finwake::case::{FoilRig, RigSetup};
use finwake::link::{self, NoticeAction, KEYS};
use finwake::{Case, Water};

const SINGLE: &str = include_str!("../../cases/single-efficient.json");
const TANDEM: &str = include_str!("../../cases/tandem-two-chords.json");
const V1_LINKS: &str = include_str!("v1-links.txt");

// ---------------------------------------------------------------------------------------------
// A small seeded generator (SplitMix64, Steele, Lea & Flood 2014), so every run checks the same
// inputs and a failure names the seed that reproduces it.

struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }
    fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n as u64) as usize
    }
    fn chance(&mut self, p: f64) -> bool {
        self.unit() < p
    }
    fn pick<'a, T>(&mut self, items: &'a [T]) -> &'a T {
        &items[self.below(items.len())]
    }
    /// A number in `lo..=hi`: a typical value, a uniform one, one with few decimals, a bound, or
    /// a value one ulp inside a bound, so that defaults, round values and full 17-digit values
    /// all occur.
    fn value(&mut self, lo: f64, hi: f64, typical: f64) -> f64 {
        let v = match self.below(10) {
            0..=2 => typical,
            3..=5 => lo + (hi - lo) * self.unit(),
            6 | 7 => {
                let scale = 10f64.powi(self.below(4) as i32);
                ((lo + (hi - lo) * self.unit()) * scale).round() / scale
            }
            8 => *self.pick(&[lo, hi]),
            _ => {
                if self.chance(0.5) {
                    lo.next_up()
                } else {
                    hi.next_down()
                }
            }
        };
        let v = v.clamp(lo, hi);
        if v == 0.0 && self.chance(0.3) {
            -0.0
        } else {
            v
        }
    }
    fn whole(&mut self, lo: usize, hi: usize, typical: usize) -> usize {
        match self.below(4) {
            0 => typical,
            1 => *self.pick(&[lo, hi]),
            _ => lo + self.below(hi - lo + 1),
        }
    }
}

/// `release` in a release build, a tenth of it in a debug build.
fn default_count(release: u64) -> u64 {
    if cfg!(debug_assertions) {
        release / 10
    } else {
        release
    }
}

fn seed_from_env(name: &str, default: u64) -> u64 {
    std::env::var(name)
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(default)
}

/// A random case that passes the case-file rules (ranges from crate/src/validate.rs), or `None`
/// when the draw breaks a rule that ties several values together (the caller draws again).
fn random_case(rng: &mut Rng) -> Option<Case> {
    let mut case = Case::from_json(SINGLE).unwrap();
    let oscillating = !rng.chance(0.12);
    case.frequency = if oscillating {
        rng.value(0.001, 100.0, 1.0)
    } else {
        0.0
    };
    case.flow.speed = rng.value(0.001, 50.0, 0.5);
    case.flow.temperature = rng.value(0.0, 40.0, 20.0);
    case.flow.water = if rng.chance(0.5) {
        Water::Fresh
    } else {
        Water::Sea
    };
    let n = match rng.below(10) {
        0..=4 => 1,
        5..=7 => 2,
        _ => 3 + rng.below(6),
    };
    let first = case.foils[0].clone();
    case.foils.clear();
    for i in 0..n {
        let mut f = first.clone();
        let copy = i > 0 && rng.chance(0.5);
        let base = if i > 0 {
            case.foils[0].clone()
        } else {
            first.clone()
        };
        let field = |rng: &mut Rng, v0: f64, lo: f64, hi: f64, typical: f64| {
            if copy && rng.chance(0.7) {
                v0
            } else {
                rng.value(lo, hi, typical)
            }
        };
        f.chord = field(rng, base.chord, 0.001, 10.0, 0.1);
        f.thickness = field(rng, base.thickness, 0.01, 0.30, 0.12);
        f.span = field(rng, base.span, 0.001, 100.0, 0.4);
        let reach = 1000.0 * f.chord;
        f.x = field(rng, 3.0 * f.chord * i as f64, -reach, reach, 0.0);
        f.y = field(rng, base.y, -reach, reach, 0.0);
        f.pivot = field(rng, base.pivot, 0.0, 1.0, 0.25);
        f.heave = field(
            rng,
            base.heave.min(10.0 * f.chord),
            0.0,
            10.0 * f.chord,
            0.05,
        );
        f.pitch = field(rng, base.pitch, 0.0, 80.0, 15.0);
        f.pitch_mean = field(rng, base.pitch_mean, -45.0, 45.0, 0.0);
        f.pitch_lead = field(rng, base.pitch_lead, -360.0, 360.0, 90.0);
        f.phase = if i == 0 {
            *rng.pick(&[0.0, -0.0])
        } else {
            field(rng, 0.0, -360.0, 360.0, 90.0)
        };
        if !oscillating {
            f.heave = *rng.pick(&[0.0, -0.0]);
            f.pitch = *rng.pick(&[0.0, -0.0]);
        }
        // The rig check's moving parts (crate/src/validate.rs: 0 to 10000 kg and kg m^2).
        f.rig = if copy && rng.chance(0.7) {
            base.rig
        } else if rng.chance(0.3) {
            Some(FoilRig {
                moving_mass: rng.value(0.0, 10_000.0, 0.0),
                pitch_inertia: rng.value(0.0, 10_000.0, 0.0),
            })
        } else {
            None
        };
        case.foils.push(f);
    }
    // The tank (crate/src/validate.rs: depth 0 to 11000 m, water depth above it up to 11000 m,
    // width above 0 up to 10000 m; each optional).
    if rng.chance(0.3) {
        let depth = rng.chance(0.6).then(|| rng.value(0.0, 10_000.0, 0.5));
        let water_depth = rng
            .chance(0.6)
            .then(|| rng.value(depth.unwrap_or(0.0).next_up(), 11_000.0, 1.5));
        let tank_width = rng.chance(0.6).then(|| rng.value(1e-3, 10_000.0, 1.0));
        case.rig = Some(RigSetup {
            depth,
            water_depth,
            tank_width,
        });
    }
    let num = &mut case.numerics;
    num.panels = 2 * rng.whole(10, 200, 40);
    num.cycles = rng.whole(2, 200, 8);
    num.ramp_cycles = rng.value(0.0, 10.0f64.min(num.cycles as f64).next_down(), 1.0);
    num.core_size = rng.value(0.005, 0.5, 0.05);
    num.max_particles = rng.whole(200, 200_000, 4000);
    num.wake_merge = rng.value(0.0, 0.5, 0.1);
    num.far_wake_refresh = rng.whole(1, 8, 8);
    let c0 = case.foils[0].chord;
    let chord_time = c0 / case.flow.speed;
    if oscillating {
        // One step may move the stream at most one chord of foil 0.
        let need = (1.0 / (case.frequency * chord_time)).ceil().max(20.0);
        if need > 1000.0 {
            return None;
        }
        num.steps_per_cycle = rng.whole(need as usize, 1000, (need as usize).max(100));
    } else {
        num.steps_per_cycle = rng.whole(20, 1000, 100);
        let dt = if rng.chance(0.6) {
            let dt = rng.value(chord_time * 1e-6, chord_time, 0.02 * chord_time);
            num.time_step = Some(dt);
            dt
        } else {
            0.02 * chord_time
        };
        if rng.chance(0.6) {
            num.duration = Some(rng.value(dt, dt * 1e6, 20.0 * chord_time));
        }
    }
    case.validate().ok().map(|()| case)
}

// ---------------------------------------------------------------------------------------------
// Round trip.

#[test]
fn random_valid_cases_round_trip_exactly() {
    let seed = seed_from_env("FINWAKE_LINK_SEED", 20_261_201);
    let want = seed_from_env("FINWAKE_LINK_CASES", default_count(3000)) as usize;
    let mut rng = Rng(seed);
    let (mut done, mut drawn, mut longest, mut total_len) = (0, 0, 0, 0);
    let mut seen_keys = BTreeSet::new();
    while done < want {
        drawn += 1;
        assert!(drawn < 20 * want, "the generator rarely makes valid cases");
        let Some(case) = random_case(&mut rng) else {
            continue;
        };
        let fragment = link::encode(&case).unwrap();
        let address = format!("https://example.org/finwake/#{fragment}");
        let d = link::decode(&address)
            .unwrap_or_else(|e| panic!("seed {seed}, case {done}: {e}\n{fragment}"));
        assert!(
            d.notices.is_empty(),
            "seed {seed}, case {done}: a link we wrote decodes with notices {:?}\n{fragment}",
            d.notices
        );
        // Exact: every f64 bit for bit (the JSON text shows -0.0 and all 17 digits).
        assert_eq!(d.case, case, "seed {seed}, case {done}: {fragment}");
        assert_eq!(d.case.to_json(), case.to_json(), "{fragment}");
        assert_eq!(
            link::encode(&d.case).unwrap(),
            fragment,
            "the link is not canonical"
        );
        // The same link with every byte but `;` and `=` %-escaped means the same.
        let escaped: String = fragment
            .bytes()
            .map(|b| match b {
                b';' | b'=' => char::from(b).to_string(),
                _ => format!("%{b:02X}"),
            })
            .collect();
        assert_eq!(link::decode(&format!("#{escaped}")).unwrap().case, case);
        for item in fragment.split(';').skip(1) {
            let key = item.split('=').next().unwrap();
            seen_keys.insert(key.split('.').next_back().unwrap().to_string());
        }
        longest = longest.max(address.len());
        total_len += address.len();
        done += 1;
    }
    // The generator reached every key of the table.
    for k in KEYS.iter().filter(|k| k.kind != link::Kind::Present) {
        assert!(
            seen_keys.contains(k.key),
            "no random case used key {}",
            k.key
        );
    }
    eprintln!(
        "round trip: {done} random valid cases (seed {seed}, {drawn} drawn) decode to themselves bit for bit; links {} bytes on average, {longest} at most",
        total_len / done
    );
}

#[test]
fn presets_have_short_readable_links() {
    let tandem = Case::from_json(TANDEM).unwrap();
    assert_eq!(
        link::encode(&tandem).unwrap(),
        "v1;foils=2;1.x=0.3;1.phase=90"
    );
    let single = Case::from_json(SINGLE).unwrap();
    assert_eq!(link::encode(&single).unwrap(), "v1");
    for entry in std::fs::read_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/../cases")).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_none_or(|e| e != "json") {
            continue;
        }
        let case = Case::from_json(&std::fs::read_to_string(&path).unwrap()).unwrap();
        let fragment = link::encode(&case).unwrap();
        let d = link::decode(&fragment).unwrap();
        assert_eq!(d.case, case, "{}", path.display());
        assert!(d.notices.is_empty());
        eprintln!(
            "{}: #{fragment}",
            path.file_name().unwrap().to_string_lossy()
        );
    }
}

/// One entry of tests/link/v1-links.txt: the link, the case JSON, the expected notices.
type Entry = (String, String, Vec<(String, NoticeAction)>);

fn v1_entries() -> Vec<Entry> {
    let mut out = Vec::new();
    let mut link_text: Option<String> = None;
    for line in V1_LINKS.lines() {
        if let Some(l) = line.strip_prefix("link:") {
            link_text = Some(l.to_string());
        } else if let Some(c) = line.strip_prefix("case: ") {
            out.push((
                link_text.take().expect("case: after link:"),
                c.to_string(),
                Vec::new(),
            ));
        } else if let Some(n) = line.strip_prefix("notices: ") {
            let last: &mut Entry = out.last_mut().unwrap();
            for item in n.split(", ") {
                let (key, action) = item.split_once(' ').unwrap();
                let action = match action {
                    "reset" => NoticeAction::Reset,
                    "ignored" => NoticeAction::Ignored,
                    other => panic!("unknown action {other}"),
                };
                last.2.push((key.to_string(), action));
            }
        }
    }
    out
}

#[test]
fn links_of_version_1_keep_their_meaning() {
    let entries = v1_entries();
    assert!(entries.len() >= 6);
    for (text, json, notices) in &entries {
        let d = link::decode(text).unwrap_or_else(|e| panic!("{text}: {e}"));
        let want = Case::from_json(json).unwrap();
        assert_eq!(d.case, want, "{text}");
        assert_eq!(d.case.to_json(), want.to_json(), "{text}");
        let got: Vec<(String, NoticeAction)> = d
            .notices
            .iter()
            .map(|n| (n.key.clone(), n.action))
            .collect();
        assert_eq!(&got, notices, "{text}: {:?}", d.notices);
    }
}

// ---------------------------------------------------------------------------------------------
// Coverage of the key table.

#[test]
fn every_case_key_has_a_link_row_and_every_row_a_case_key() {
    let full = schema::every_path();
    let rows: BTreeSet<String> = KEYS.iter().map(|k| k.path.to_string()).collect();
    let missing: Vec<&String> = full
        .iter()
        .filter(|p| *p != "version" && !rows.contains(*p))
        .collect();
    assert!(
        missing.is_empty(),
        "case keys with no row in KEYS (crate/src/link.rs): {missing:?}"
    );
    // A group row (`rig`) names an object of the case, the parent of its keys.
    let stale: Vec<&String> = rows
        .iter()
        .filter(|r| !full.contains(*r) && !full.iter().any(|p| p.starts_with(&format!("{r}."))))
        .collect();
    assert!(
        stale.is_empty(),
        "rows of KEYS that are no case key: {stale:?}"
    );
    for k in KEYS {
        if k.path.starts_with("foils.*.") && k.kind != link::Kind::Present {
            // A per-foil key left out of foil i takes foil 0's value, so "absent" could not be
            // written for a later foil.
            assert_ne!(k.default, link::LinkDefault::Absent, "{}", k.path);
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Partly bad and hostile links.

#[test]
fn partly_bad_links_keep_the_good_fields_and_say_why_for_the_rest() {
    let d = link::decode(
        "#v1;U=-3;foils=2;1.x=0.3;1.phase=abc;0.chord=0.12;9.x=1;1.bogus=2;noequals;f=0;2.x=1",
    )
    .unwrap();
    let by_key = |k: &str| {
        d.notices
            .iter()
            .find(|n| n.key == k)
            .unwrap_or_else(|| panic!("no notice for {k}: {:?}", d.notices))
    };
    assert_eq!(d.case.foils.len(), 2);
    assert_eq!(d.case.foils[1].x, 0.3, "a good field was lost");
    assert_eq!(d.case.foils[0].chord, 0.12, "a good field was lost");
    assert_eq!(d.case.foils[1].chord, 0.12, "foil 1 takes foil 0's chord");
    let u = by_key("U");
    assert_eq!(u.action, NoticeAction::Reset);
    assert_eq!(u.path, "flow.speed");
    assert!(u.reason.contains("0.001 to 50 m/s"), "{}", u.reason);
    assert_eq!(u.used, "0.5");
    assert_eq!(by_key("1.phase").action, NoticeAction::Reset);
    assert!(by_key("1.phase").reason.contains("not a number"));
    assert_eq!(by_key("9.x").action, NoticeAction::Ignored);
    assert!(by_key("9.x").reason.contains("beyond the 8 foils"));
    assert!(by_key("1.bogus").reason.contains("unknown per-foil key"));
    assert!(by_key("2.x").reason.contains("foils=2"));
    let eq = d.notices.iter().find(|n| n.value == "noequals").unwrap();
    assert_eq!(eq.action, NoticeAction::Ignored);
    // frequency 0 with the default heave breaks a rule: the frequency is the value reset.
    let f = by_key("f");
    assert_eq!(f.action, NoticeAction::Reset);
    assert!(f.reason.contains("foils.0.heave"), "{}", f.reason);
    assert_eq!(d.case.frequency, 1.0);
    assert_eq!(d.notices.len(), 7, "{:?}", d.notices);
    d.case.validate().unwrap();
}

#[test]
fn what_is_not_a_link_is_a_clear_error() {
    for (text, needle) in [
        ("", "holds no case"),
        ("https://example.org/finwake/", "not a finwake case link"),
        ("https://example.org/finwake/#", "holds no case"),
        ("#v2;U=1", "version 2"),
        ("#v0;U=1", "not a finwake case link"),
        ("#U=0.5;v1", "not a finwake case link"),
        ("{\"version\": 1}", "not a finwake case link"),
    ] {
        let e = link::decode(text).unwrap_err();
        assert!(
            e.message.contains(needle),
            "{text:?}: {} (wanted {needle})",
            e.message
        );
        assert!(!e.message.contains('\n'));
    }
    let huge = format!("#v1;{}", "U=1;".repeat(5000));
    assert!(link::decode(&huge)
        .unwrap_err()
        .message
        .contains("at most 16384"));
}

/// Strings that try to become markup, script, terminal control or a lie about direction.
const HOSTILE: &[&str] = &[
    "<script>alert(1)</script>",
    "\"><img src=x onerror=alert(1)>",
    "javascript:alert(document.cookie)",
    "%3Cscript%3Ealert(1)%3C%2Fscript%3E",
    "';alert(1);//",
    "${alert(1)}",
    "\u{1b}[2J\u{1b}[31mred",
    "%1B%5B2J",
    "\u{202e}gnp.exe",
    "\u{0}\u{7}\u{8}",
    "__proto__",
    "constructor",
    "1e999999",
    "NaN",
    "-Infinity",
    "0x1p3",
    "%",
    "%E2%80%AE",
    "%C0%AF",
];

#[test]
fn hostile_keys_and_values_are_named_harmlessly() {
    for h in HOSTILE {
        for text in [
            format!("#v1;U={h}"),
            format!("#v1;{h}=1"),
            format!("#v1;1.{h}=1"),
            format!("#v1;{h}"),
        ] {
            let d = link::decode(&text).unwrap_or_else(|e| panic!("{text:?}: {e}"));
            assert!(!d.notices.is_empty(), "{text:?} gave no notice");
            for n in &d.notices {
                for s in [&n.key, &n.path, &n.value, &n.reason, &n.used] {
                    assert!(
                        !s.chars()
                            .any(|c| c.is_control() || ('\u{202a}'..='\u{202e}').contains(&c)),
                        "{text:?}: control or override character in {s:?}"
                    );
                }
                let shown = n.to_string();
                assert!(!shown.contains('\n') && !shown.contains('\u{1b}'));
            }
            assert_eq!(d.case, Case::from_json(SINGLE).unwrap(), "{text:?}");
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Fuzzing.

/// Pieces the structured fuzz inputs are made of.
const FUZZ_KEYS: &[&str] = &[
    "U",
    "water",
    "T",
    "f",
    "foils",
    "panels",
    "steps",
    "cycles",
    "dt",
    "duration",
    "core",
    "cap",
    "ramp",
    "0.chord",
    "1.chord",
    "0.thick",
    "1.x",
    "2.x",
    "7.x",
    "8.x",
    "1.y",
    "0.pivot",
    "0.heave",
    "1.heave",
    "0.pitch",
    "0.mean",
    "1.lead",
    "0.phase",
    "1.phase",
    "3.phase",
    "01.x",
    "1.",
    ".x",
    "1..x",
    "v1",
    "",
    "u",
    "x",
    "99999999999999999999.x",
];
const FUZZ_VALUES: &[&str] = &[
    "0",
    "-0",
    "1",
    "2",
    "8",
    "9",
    "0.5",
    "0.1",
    "-1",
    "1e-7",
    "1e300",
    "1E5",
    ".5",
    "5.",
    "+3",
    "fresh",
    "sea",
    "SEA",
    "",
    " ",
    "abc",
    "0.30000000000000004",
    "20",
    "200000",
    "200001",
    "18446744073709551616",
    "4294967296",
    "1000",
    "360",
    "-360.0000001",
    "80",
    "45.5",
    "%41",
    "%zz",
    "=",
    "==",
    "1;2",
];

fn fuzz_input(rng: &mut Rng, valid: &[String]) -> String {
    match rng.below(4) {
        // Random bytes (mostly not UTF-8 text; lossily decoded as a browser would show them).
        0 => {
            let n = rng.below(120);
            let bytes: Vec<u8> = (0..n).map(|_| rng.next() as u8).collect();
            let mut s = String::from_utf8_lossy(&bytes).into_owned();
            if rng.chance(0.5) {
                s.insert_str(0, "#v1;");
            }
            s
        }
        // Items from the vocabulary of keys, values and hostile strings.
        1 => {
            let mut s = String::from(*rng.pick(&["#v1;", "v1;", "https://h/#v1;", "#v1", "#v"]));
            for _ in 0..rng.below(40) {
                let key = if rng.chance(0.1) {
                    *rng.pick(HOSTILE)
                } else {
                    *rng.pick(FUZZ_KEYS)
                };
                let value = if rng.chance(0.1) {
                    *rng.pick(HOSTILE)
                } else {
                    *rng.pick(FUZZ_VALUES)
                };
                s.push_str(key);
                if !rng.chance(0.05) {
                    s.push('=');
                }
                s.push_str(value);
                s.push(';');
            }
            s
        }
        // Mutations of links written by the encoder.
        _ => {
            let mut chars: Vec<char> = rng.pick(valid).chars().collect();
            for _ in 0..1 + rng.below(6) {
                let at = rng.below(chars.len() + 1);
                match rng.below(5) {
                    0 if at < chars.len() => {
                        chars.remove(at);
                    }
                    1 => chars.insert(
                        at,
                        *rng.pick(&[';', '=', '.', '-', '%', 'e', '0', '9', '#']),
                    ),
                    2 if at < chars.len() => {
                        chars[at] = char::from(b'!' + (rng.next() % 94) as u8);
                    }
                    3 => {
                        // Duplicate a stretch.
                        let len = rng.below(12).min(chars.len() - at.min(chars.len()));
                        let piece: Vec<char> = chars[at..at + len].to_vec();
                        chars.splice(at..at, piece);
                    }
                    _ => chars.insert(
                        at,
                        char::from_u32(rng.next() as u32 % 0x11_0000).unwrap_or('\u{fffd}'),
                    ),
                }
            }
            chars.into_iter().collect()
        }
    }
}

#[test]
fn fuzzed_links_never_panic_or_hang_and_always_give_a_valid_case_or_a_clear_error() {
    let seed = seed_from_env("FINWAKE_FUZZ_SEED", 4_242);
    let cases = seed_from_env("FINWAKE_FUZZ_CASES", default_count(100_000));
    let mut rng = Rng(seed);
    // Links written by the encoder, as material for mutations.
    let mut valid = Vec::new();
    while valid.len() < 200 {
        if let Some(c) = random_case(&mut rng) {
            valid.push(format!("#{}", link::encode(&c).unwrap()));
        }
    }
    let start = Instant::now();
    let (mut errors, mut clean, mut with_notices, mut most_notices) = (0u64, 0u64, 0u64, 0usize);
    let mut slowest = (Duration::ZERO, String::new());
    for i in 0..cases {
        let input = fuzz_input(&mut rng, &valid);
        let t = Instant::now();
        let result = std::panic::catch_unwind(|| link::decode(&input));
        let took = t.elapsed();
        if took > slowest.0 {
            slowest = (took, input.clone());
        }
        let result =
            result.unwrap_or_else(|_| panic!("seed {seed}, input {i} panicked: {input:?}"));
        match result {
            Err(e) => {
                errors += 1;
                assert!(
                    !e.message.is_empty() && !e.message.contains('\n'),
                    "{input:?}"
                );
                assert!(!e.message.chars().any(char::is_control), "{input:?}: {e}");
            }
            Ok(d) => {
                if d.notices.is_empty() {
                    clean += 1;
                } else {
                    with_notices += 1;
                }
                most_notices = most_notices.max(d.notices.len() + d.more_notices);
                d.case
                    .validate()
                    .unwrap_or_else(|e| panic!("{input:?} decoded to a bad case: {e}"));
                for n in &d.notices {
                    assert!(!n.reason.is_empty(), "{input:?}");
                    for s in [&n.key, &n.path, &n.value, &n.reason, &n.used] {
                        assert!(!s.chars().any(char::is_control), "{input:?}: {s:?}");
                        assert!(s.chars().count() <= 400, "{input:?}: {s:?}");
                    }
                }
                // What the decoder made is a case like any other: its link reopens it cleanly.
                if i % 8 == 0 {
                    let again = link::decode(&link::encode(&d.case).unwrap()).unwrap();
                    assert!(again.notices.is_empty(), "{input:?}");
                    assert_eq!(again.case, d.case, "{input:?}");
                }
            }
        }
    }
    let elapsed = start.elapsed().as_secs_f64();
    eprintln!(
        "fuzz: {cases} inputs (seed {seed}, {} build) in {elapsed:.2} s ({:.1} us each; slowest {:.0} us): {errors} not links (clear error), {with_notices} decoded with notices (at most {most_notices}), {clean} decoded clean; no panic",
        if cfg!(debug_assertions) { "debug" } else { "release" },
        1e6 * elapsed / cases as f64,
        slowest.0.as_secs_f64() * 1e6
    );
}

// ---------------------------------------------------------------------------------------------
// The command line.

fn finwake(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_finwake"))
        .args(args)
        .output()
        .expect("the finwake binary runs")
}

fn cases_dir(name: &str) -> String {
    format!("{}/../cases/{name}", env!("CARGO_MANIFEST_DIR"))
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

#[test]
fn cli_prints_the_link_of_a_case_file() {
    let out = finwake(&["link", &cases_dir("tandem-two-chords.json")]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert_eq!(text(&out.stdout), "#v1;foils=2;1.x=0.3;1.phase=90\n");
    let out = finwake(&[
        "link",
        &cases_dir("tandem-two-chords.json"),
        "--base",
        "https://example.org/finwake/",
    ]);
    assert_eq!(
        text(&out.stdout),
        "https://example.org/finwake/#v1;foils=2;1.x=0.3;1.phase=90\n"
    );
}

#[test]
fn cli_decodes_a_link_to_the_same_case() {
    let out = finwake(&[
        "link",
        "--decode",
        "https://h/#v1;foils=2;1.x=0.3;1.phase=90",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert!(out.stderr.is_empty());
    let case = Case::from_json(&text(&out.stdout)).unwrap();
    assert_eq!(case, Case::from_json(TANDEM).unwrap());
    // From standard input too.
    let mut child = Command::new(env!("CARGO_BIN_EXE_finwake"))
        .args(["link", "--decode", "-"])
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    use std::io::Write;
    child
        .stdin
        .take()
        .unwrap()
        .write_all(b"#v1;foils=2;1.x=0.3;1.phase=90\n")
        .unwrap();
    let out = child.wait_with_output().unwrap();
    assert_eq!(out.status.code(), Some(0));
    assert_eq!(
        Case::from_json(&text(&out.stdout)).unwrap(),
        Case::from_json(TANDEM).unwrap()
    );
}

/// Status 2, nothing on stdout, one line on stderr, no panic.
fn assert_bad_input(out: &Output) -> String {
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(!err.contains("panicked"), "{err}");
    assert_eq!(err.trim_end().lines().count(), 1, "{err:?}");
    assert!(out.stdout.is_empty(), "{}", text(&out.stdout));
    err
}

#[test]
fn cli_garbage_is_exit_2_with_one_message() {
    for garbage in ["garbage", "#v9;U=1", "", "\u{1b}[2J#x"] {
        let err = assert_bad_input(&finwake(&["link", "--decode", garbage]));
        assert!(err.starts_with("finwake: --decode: "), "{err}");
        assert!(!err.contains('\u{1b}'), "{err:?}");
    }
    let err = assert_bad_input(&finwake(&["link", "/no/such/case.json"]));
    assert!(err.contains("/no/such/case.json"), "{err}");
    let err = assert_bad_input(&finwake(&[
        "link",
        &cases_dir("single-efficient.json"),
        "--base",
        "https://h/#x",
    ]));
    assert!(err.contains("--base"), "{err}");
    assert_bad_input(&finwake(&["link"]));
    assert_bad_input(&finwake(&[
        "link",
        &cases_dir("single-efficient.json"),
        "--decode",
        "#v1",
    ]));
}

#[test]
fn cli_bad_case_file_gets_the_same_message_as_simulate() {
    let dir = std::path::PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("link-cli");
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("bad.json");
    std::fs::write(&path, TANDEM.replace("\"chord\": 0.1", "\"chord\": -0.1")).unwrap();
    let p = path.to_str().unwrap();
    let link_err = assert_bad_input(&finwake(&["link", p]));
    let simulate_err = assert_bad_input(&finwake(&["simulate", p]));
    assert_eq!(link_err, simulate_err);
    assert!(link_err.contains("foils.0.chord = -0.1"), "{link_err}");
}

#[test]
fn cli_partly_bad_link_prints_the_rest_and_lists_each_field() {
    let out = finwake(&[
        "link",
        "--decode",
        "#v1;U=fast;foils=2;1.x=0.3;zz=\u{1b}[31m<b>",
    ]);
    assert_eq!(out.status.code(), Some(2));
    let err = text(&out.stderr);
    let lines: Vec<&str> = err.lines().collect();
    assert_eq!(lines.len(), 3, "{err}");
    assert!(
        lines[0].contains("`U=fast` (flow.speed) reset to 0.5"),
        "{err}"
    );
    assert!(
        lines[1].contains("`zz=?[31m<b>` ignored: unknown key"),
        "{err}"
    );
    assert!(lines[2].contains("2 fields"), "{err}");
    assert!(!err.contains('\u{1b}'));
    let case = Case::from_json(&text(&out.stdout)).unwrap();
    assert_eq!(case.foils.len(), 2);
    assert_eq!(case.foils[1].x, 0.3);
}
