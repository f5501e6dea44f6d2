//! Finding and installing the outside tools, and running commands.

use std::path::{Path, PathBuf};
use std::process::Command;

use crate::Result;

/// The wasm-bindgen version pinned in crate/Cargo.toml; the command line must match it exactly.
pub const WASM_BINDGEN_VERSION: &str = "0.2.130";

/// The repository root (the folder above xtask/).
pub fn workspace_root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .expect("xtask sits one folder below the workspace root")
        .to_path_buf()
}

/// `${CARGO_TARGET_DIR:-target}`, made absolute against the workspace root.
pub fn target_dir() -> PathBuf {
    let dir = std::env::var_os("CARGO_TARGET_DIR")
        .filter(|v| !v.is_empty())
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from("target"));
    if dir.is_absolute() {
        dir
    } else {
        workspace_root().join(dir)
    }
}

/// A command with the workspace root as its working folder.
pub fn command(program: impl AsRef<std::ffi::OsStr>) -> Command {
    let mut cmd = Command::new(program);
    cmd.current_dir(workspace_root());
    cmd
}

/// Runs a command, inheriting stdout and stderr; an error names the command and its exit status.
pub fn run(cmd: &mut Command) -> Result<()> {
    let shown = format!("{cmd:?}");
    let status = cmd
        .status()
        .map_err(|e| format!("could not start {shown}: {e}"))?;
    if status.success() {
        Ok(())
    } else {
        Err(format!("{shown} exited with {status}"))
    }
}

/// Runs a command and returns its stdout, or None if it cannot start or fails.
pub fn output(cmd: &mut Command) -> Option<String> {
    let out = cmd.output().ok()?;
    out.status
        .success()
        .then(|| String::from_utf8_lossy(&out.stdout).into_owned())
}

/// Runs cargo (the one running this task) in the workspace root.
pub fn cargo(args: &[&str]) -> Result<()> {
    let cargo = std::env::var_os("CARGO").unwrap_or_else(|| "cargo".into());
    run(command(cargo).args(args))
}

/// The crate's integration-test targets (`[[test]]` in crate/Cargo.toml), split into those that
/// run in a debug build and the heavy ones whose source asks for the release profile (their
/// opening docs say `--release`).
pub fn test_targets(root: &Path) -> Result<(Vec<String>, Vec<String>)> {
    let manifest_path = root.join("crate").join("Cargo.toml");
    let manifest = std::fs::read_to_string(&manifest_path)
        .map_err(|e| format!("cannot read {}: {e}", manifest_path.display()))?;
    let (mut light, mut heavy) = (Vec::new(), Vec::new());
    for block in manifest.split("[[test]]").skip(1) {
        let block = block.split("\n[").next().unwrap_or("");
        let value = |key: &str| {
            block.lines().find_map(|l| {
                let (k, v) = l.split_once('=')?;
                (k.trim() == key).then(|| v.trim().trim_matches('"').to_string())
            })
        };
        let Some(name) = value("name") else { continue };
        let path = value("path").unwrap_or_else(|| format!("tests/{name}.rs"));
        let source = std::fs::read_to_string(root.join("crate").join(&path)).unwrap_or_default();
        let opening: String = source
            .lines()
            .take_while(|l| l.starts_with("//"))
            .collect::<Vec<_>>()
            .join("\n");
        if opening.contains("--release") {
            heavy.push(name);
        } else {
            light.push(name);
        }
    }
    Ok((light, heavy))
}

/// Adds the wasm32 standard library with rustup unless it is there already.
pub fn ensure_wasm_target() -> Result<()> {
    let installed =
        output(Command::new("rustup").args(["target", "list", "--installed"])).unwrap_or_default();
    if installed
        .lines()
        .any(|l| l.trim() == "wasm32-unknown-unknown")
    {
        return Ok(());
    }
    println!("xtask: installing the wasm32-unknown-unknown target with rustup");
    run(Command::new("rustup").args(["target", "add", "wasm32-unknown-unknown"]))
}

/// Installs the wasm-bindgen command line of the pinned version unless that version is on PATH.
pub fn ensure_wasm_bindgen() -> Result<()> {
    let found = output(Command::new("wasm-bindgen").arg("--version")).unwrap_or_default();
    if found.split_whitespace().nth(1) == Some(WASM_BINDGEN_VERSION) {
        return Ok(());
    }
    println!(
        "xtask: installing wasm-bindgen-cli {WASM_BINDGEN_VERSION} (found {:?}); this takes a few minutes",
        found.trim()
    );
    // No --locked: its lock file pins a dependency version the registry does not have.
    let cargo = std::env::var_os("CARGO").unwrap_or_else(|| "cargo".into());
    run(Command::new(cargo).args([
        "install",
        "wasm-bindgen-cli",
        "--version",
        WASM_BINDGEN_VERSION,
    ]))?;
    let found = output(Command::new("wasm-bindgen").arg("--version")).unwrap_or_default();
    if found.split_whitespace().nth(1) == Some(WASM_BINDGEN_VERSION) {
        Ok(())
    } else {
        Err(format!(
            "wasm-bindgen on PATH reports {:?} after the install; put cargo's bin folder (~/.cargo/bin) first on PATH",
            found.trim()
        ))
    }
}

/// Runs `npm ci` unless node_modules already matches package-lock.json.
pub fn ensure_npm_packages(root: &Path) -> Result<()> {
    let lock = root.join("package-lock.json");
    let installed = root.join("node_modules").join(".package-lock.json");
    let fresh = match (std::fs::metadata(&lock), std::fs::metadata(&installed)) {
        (Ok(a), Ok(b)) => match (a.modified(), b.modified()) {
            (Ok(lock_time), Ok(installed_time)) => installed_time >= lock_time,
            _ => false,
        },
        _ => false,
    };
    if fresh && wasm_opt_path(root).exists() && root.join("node_modules/playwright-core").exists() {
        return Ok(());
    }
    println!("xtask: installing the npm packages (npm ci)");
    run(command("npm").args(["ci", "--no-audit", "--no-fund"]))
}

/// The npm package's wasm-opt (Debian's older binaryen corrupts wasm-bindgen output).
pub fn wasm_opt_path(root: &Path) -> PathBuf {
    root.join("node_modules").join(".bin").join("wasm-opt")
}

/// The Chromium the browser tests drive: `$FINWAKE_CHROMIUM` or Debian's /usr/bin/chromium,
/// installed with apt-get when missing.
pub fn ensure_chromium() -> Result<PathBuf> {
    if let Some(path) = std::env::var_os("FINWAKE_CHROMIUM").filter(|v| !v.is_empty()) {
        let path = PathBuf::from(path);
        return if path.exists() {
            Ok(path)
        } else {
            Err(format!(
                "FINWAKE_CHROMIUM = {} does not exist",
                path.display()
            ))
        };
    }
    let path = PathBuf::from("/usr/bin/chromium");
    if path.exists() {
        return Ok(path);
    }
    println!("xtask: installing Debian's chromium and chromium-driver with apt-get");
    let sudo: &[&str] = if is_root() { &[] } else { &["sudo"] };
    let apt = |args: &[&str]| {
        let mut all: Vec<&str> = sudo.to_vec();
        all.push("apt-get");
        all.extend_from_slice(args);
        let mut cmd = Command::new(all[0]);
        cmd.args(&all[1..]).env("DEBIAN_FRONTEND", "noninteractive");
        run(&mut cmd)
    };
    apt(&["update"])?;
    apt(&["install", "-y", "chromium", "chromium-driver"])?;
    if path.exists() {
        Ok(path)
    } else {
        Err("apt-get installed chromium but /usr/bin/chromium is missing".into())
    }
}

fn is_root() -> bool {
    output(Command::new("id").arg("-u")).is_some_and(|s| s.trim() == "0")
}
