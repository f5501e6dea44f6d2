//! The static site: the wasm package (cargo, wasm-bindgen, wasm-opt), www/, and the example cases.

use std::fs;
use std::path::{Path, PathBuf};

use crate::tools::{self, command, run};
use crate::Result;

/// Cargo profile of the browser build (defined in .cargo/config.toml: release with fat LTO and one
/// codegen unit, kept apart so native release builds stay fast).
const WASM_PROFILE: &str = "wasm-release";

/// The preset the page opens with (listed first in cases/index.json).
const DEFAULT_CASE: &str = "tandem-two-chords.json";

/// Installs what the build needs, builds the wasm package and writes the complete site into `dir`.
pub fn build_site(dir: &Path) -> Result<()> {
    let root = tools::workspace_root();
    tools::ensure_wasm_target()?;
    tools::ensure_wasm_bindgen()?;
    tools::ensure_npm_packages(&root)?;
    let pkg = tools::target_dir().join("xtask").join("pkg");
    let size = build_wasm_pkg(&pkg)?;
    assemble_site(dir, &pkg)?;
    println!(
        "xtask: site written to {} (finwake_bg.wasm {size} bytes, {:.0} KiB)",
        dir.display(),
        size as f64 / 1024.0
    );
    Ok(())
}

/// Builds the wasm package (`finwake.js`, `finwake_bg.wasm`, typings) into `pkg` and returns the
/// size in bytes of the optimised wasm.
pub fn build_wasm_pkg(pkg: &Path) -> Result<u64> {
    let root = tools::workspace_root();
    tools::cargo(&[
        "build",
        "-p",
        "finwake",
        "--lib",
        "--features",
        "wasm",
        "--target",
        "wasm32-unknown-unknown",
        "--profile",
        WASM_PROFILE,
    ])?;
    let wasm = tools::target_dir()
        .join("wasm32-unknown-unknown")
        .join(WASM_PROFILE)
        .join("finwake.wasm");
    if pkg.exists() {
        fs::remove_dir_all(pkg).map_err(|e| format!("cannot clear {}: {e}", pkg.display()))?;
    }
    run(command("wasm-bindgen")
        .args(["--target", "web", "--out-dir"])
        .arg(pkg)
        .arg(&wasm))?;
    let out = pkg.join("finwake_bg.wasm");
    // The features Rust enables by default on wasm32-unknown-unknown, plus simd128 from
    // .cargo/config.toml; wasm-opt must accept them all and may use no others.
    // -O1, not -O3: measured under node (V8) on the default tandem case, 10 cycles, fastest of
    // 3, twice: no wasm-opt 0.470 / 0.480 s, -O1 0.470 / 0.475 s, -O2 0.556 / 0.576 s, -O3
    // 0.548 / 0.565 s, -Os 0.568 / 0.580 s; at 4,358 particles -O1 165 and -O3 148 to 152
    // steps/s. -O1 keeps the speed of the unoptimised module and still shrinks it (566 KB
    // against 634 KB; -O3 551 KB).
    run(command(tools::wasm_opt_path(&root))
        .args([
            "-O1",
            "--enable-simd",
            "--enable-bulk-memory",
            "--enable-mutable-globals",
            "--enable-nontrapping-float-to-int",
            "--enable-sign-ext",
            "--enable-reference-types",
            "--enable-multivalue",
        ])
        .arg(&out)
        .arg("-o")
        .arg(&out))?;
    fs::metadata(&out)
        .map(|m| m.len())
        .map_err(|e| format!("no {} after wasm-opt: {e}", out.display()))
}

/// Writes www/, the wasm package and the example cases into `dir`, with `cases/index.json`
/// (the preset list) and `site-files.json` (every file and a content version, for the offline
/// cache of the service worker).
pub fn assemble_site(dir: &Path, pkg: &Path) -> Result<()> {
    let root = tools::workspace_root();
    for sub in ["pkg", "cases"] {
        let stale = dir.join(sub);
        if stale.exists() {
            fs::remove_dir_all(&stale)
                .map_err(|e| format!("cannot clear {}: {e}", stale.display()))?;
        }
    }
    copy_tree(&root.join("www"), dir, &|p| {
        p.file_name().is_some_and(|n| n == "pkg")
    })?;
    copy_tree(pkg, &dir.join("pkg"), &|p| {
        p.extension().is_some_and(|e| e == "ts") || p.file_name().is_some_and(|n| n == ".gitignore")
    })?;

    let mut cases: Vec<PathBuf> = fs::read_dir(root.join("cases"))
        .map_err(|e| format!("cannot list cases/: {e}"))?
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|e| e == "json"))
        .collect();
    cases.sort_by_key(|p| (p.file_name().is_none_or(|n| n != DEFAULT_CASE), p.clone()));
    let cases_dir = dir.join("cases");
    mkdir(&cases_dir)?;
    let mut index = Vec::new();
    for case in &cases {
        let name = case.file_name().expect("listed files have names");
        fs::copy(case, cases_dir.join(name))
            .map_err(|e| format!("cannot copy {}: {e}", case.display()))?;
        let file = name.to_string_lossy().into_owned();
        let title = file.trim_end_matches(".json").replace('-', " ");
        index.push(serde_json::json!({ "file": file, "title": title }));
    }
    write(
        &cases_dir.join("index.json"),
        &serde_json::to_string_pretty(&index).expect("json"),
    )?;

    let mut files = Vec::new();
    list_files(dir, dir, &mut files)?;
    files.retain(|f| f != "site-files.json");
    files.sort();
    let mut hash = Fnv::default();
    for f in &files {
        hash.feed(f.as_bytes());
        hash.feed(&fs::read(dir.join(f)).map_err(|e| format!("cannot read {f}: {e}"))?);
    }
    let manifest = serde_json::json!({ "version": format!("{:016x}", hash.0), "files": files });
    write(
        &dir.join("site-files.json"),
        &serde_json::to_string_pretty(&manifest).expect("json"),
    )
}

fn mkdir(dir: &Path) -> Result<()> {
    fs::create_dir_all(dir).map_err(|e| format!("cannot create {}: {e}", dir.display()))
}

fn write(path: &Path, text: &str) -> Result<()> {
    fs::write(path, text).map_err(|e| format!("cannot write {}: {e}", path.display()))
}

fn copy_tree(from: &Path, to: &Path, skip: &dyn Fn(&Path) -> bool) -> Result<()> {
    mkdir(to)?;
    for entry in fs::read_dir(from).map_err(|e| format!("cannot list {}: {e}", from.display()))? {
        let path = entry.map_err(|e| e.to_string())?.path();
        if skip(&path) {
            continue;
        }
        let dest = to.join(path.file_name().expect("listed entries have names"));
        if path.is_dir() {
            copy_tree(&path, &dest, skip)?;
        } else {
            fs::copy(&path, &dest).map_err(|e| format!("cannot copy {}: {e}", path.display()))?;
        }
    }
    Ok(())
}

/// Every file below `dir`, as `/`-separated paths relative to `base`.
fn list_files(base: &Path, dir: &Path, out: &mut Vec<String>) -> Result<()> {
    for entry in fs::read_dir(dir).map_err(|e| format!("cannot list {}: {e}", dir.display()))? {
        let path = entry.map_err(|e| e.to_string())?.path();
        if path.is_dir() {
            list_files(base, &path, out)?;
        } else {
            let rel = path.strip_prefix(base).expect("below base");
            let parts: Vec<String> = rel
                .components()
                .map(|c| c.as_os_str().to_string_lossy().into_owned())
                .collect();
            out.push(parts.join("/"));
        }
    }
    Ok(())
}

/// 64-bit FNV-1a, enough to tell one build's files from another's.
struct Fnv(u64);

impl Default for Fnv {
    fn default() -> Self {
        Fnv(0xcbf2_9ce4_8422_2325)
    }
}

impl Fnv {
    fn feed(&mut self, bytes: &[u8]) {
        for b in bytes {
            self.0 ^= u64::from(*b);
            self.0 = self.0.wrapping_mul(0x0000_0100_0000_01b3);
        }
    }
}
