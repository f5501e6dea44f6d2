//! `cargo xtask`: the project's build helper.
//!
//! * `cargo xtask serve [--port N]`: builds the site and serves it on 127.0.0.1 (default port 8000).
//! * `cargo xtask site DIR`: writes the complete static site (html, js, wasm, example cases) to DIR.
//! * `cargo xtask test`: every check, failing fast: fmt, clippy (native and wasm32), native tests
//!   (debug and the release-profile validation tests), the wasm parity test under node, the site
//!   build, and the browser tests in headless Chromium.
//! * `cargo xtask bench`: the speed figures in one run (fast summation against the direct sum,
//!   native and wasm run times, the page's solver steps per second, a 12 x 12 sweep), written to
//!   `${CARGO_TARGET_DIR:-target}/bench/summary.json`.
//! * `cargo xtask parity-native CASE STEPS OUT`: the native half of the wasm parity test.
//!
//! On a fresh clone it installs what it needs: the wasm32 target, the wasm-bindgen command line of
//! the crate's exact version, the npm packages, and (for `test`) Debian's Chromium.
//!
//! Build output goes under `${CARGO_TARGET_DIR:-target}`.

mod bench;
mod parity;
mod serve;
mod site;
mod tools;

use std::path::PathBuf;
use std::process::ExitCode;
use std::time::Instant;

const USAGE: &str = "usage:
  cargo xtask serve [--port N]     build the site and serve it on 127.0.0.1 (default port 8000)
  cargo xtask site DIR             write the complete static site into DIR
  cargo xtask test                 run every check (native, wasm, browser)
  cargo xtask bench                speed figures in one run; writes target/bench/summary.json
  cargo xtask parity-native CASE STEPS OUT
                                   native step record for the wasm parity test";

/// An error that ends the task with a message.
pub type Result<T> = std::result::Result<T, String>;

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let result = match args.first().map(String::as_str) {
        Some("serve") => parse_port(&args[1..]).and_then(serve::serve),
        Some("site") => match args.get(1) {
            Some(dir) if args.len() == 2 => site::build_site(&PathBuf::from(dir)).map(|_| ()),
            _ => Err(format!(
                "`site` takes one argument, the output folder\n{USAGE}"
            )),
        },
        Some("test") if args.len() == 1 => test_all(),
        Some("bench") if args.len() == 1 => bench::bench(),
        Some("parity-native") if args.len() == 4 => {
            let steps = args[2]
                .parse::<usize>()
                .map_err(|_| format!("STEPS = {:?}: expected a whole number of steps", args[2]));
            steps.and_then(|n| {
                parity::write_native(&PathBuf::from(&args[1]), n, &PathBuf::from(&args[3]))
            })
        }
        Some("-h" | "--help" | "help") => {
            println!("{USAGE}");
            Ok(())
        }
        _ => Err(format!("unknown or incomplete command {args:?}\n{USAGE}")),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(msg) => {
            eprintln!("xtask: {msg}");
            ExitCode::FAILURE
        }
    }
}

fn parse_port(args: &[String]) -> Result<u16> {
    match args {
        [] => Ok(8000),
        [flag, value] if flag == "--port" => value
            .parse::<u16>()
            .ok()
            .filter(|p| *p > 0)
            .ok_or_else(|| format!("--port = {value:?}: allowed a port number 1 to 65535")),
        _ => Err(format!("`serve` takes only --port N\n{USAGE}")),
    }
}

/// Runs every check in order, failing fast.
fn test_all() -> Result<()> {
    let start = Instant::now();
    let root = tools::workspace_root();
    let target = tools::target_dir();
    let mut stage = Stage::default();

    stage.run("cargo fmt --check", || {
        tools::cargo(&["fmt", "--all", "--check"])
    })?;
    stage.run("clippy (native, all targets)", || {
        tools::cargo(&[
            "clippy",
            "--workspace",
            "--all-targets",
            "--",
            "-D",
            "warnings",
        ])
    })?;
    tools::ensure_wasm_target()?;
    stage.run("clippy (wasm feature, wasm32)", || {
        tools::cargo(&[
            "clippy",
            "-p",
            "finwake",
            "--lib",
            "--features",
            "wasm",
            "--target",
            "wasm32-unknown-unknown",
            "--",
            "-D",
            "warnings",
        ])
    })?;
    // Unit tests, the command line's own tests and the light integration tests in a debug build
    // (debug assertions on); the heavy validation tests in the release profile they ask for.
    let (light, heavy) = tools::test_targets(&root)?;
    stage.run("native tests (debug)", || {
        let mut args = vec!["test", "--workspace", "--lib", "--bins"];
        for name in &light {
            args.extend(["--test", name.as_str()]);
        }
        tools::cargo(&args)?;
        tools::cargo(&["test", "--workspace", "--doc"])
    })?;
    if !heavy.is_empty() {
        stage.run(
            &format!("native tests (release: {})", heavy.join(", ")),
            || {
                let mut args = vec!["test", "--release", "-p", "finwake"];
                for name in &heavy {
                    args.extend(["--test", name.as_str()]);
                }
                tools::cargo(&args)
            },
        )?;
    }

    // The wasm package once, shared by the parity test and the site.
    tools::ensure_wasm_bindgen()?;
    tools::ensure_npm_packages(&root)?;
    let pkg = target.join("xtask").join("pkg");
    stage.run("wasm build", || {
        site::build_wasm_pkg(&pkg).map(|size| {
            println!(
                "wasm size: {size} bytes ({:.0} KiB) after wasm-opt",
                size as f64 / 1024.0
            );
        })
    })?;
    let parity_case = root.join("tests").join("wasm").join("parity-case.json");
    let native_record = target.join("xtask").join("parity-native.json");
    stage.run("wasm parity (native record)", || {
        tools::cargo(&[
            "run",
            "--quiet",
            "--release",
            "-p",
            "xtask",
            "--",
            "parity-native",
            &parity_case.to_string_lossy(),
            &parity::PARITY_STEPS.to_string(),
            &native_record.to_string_lossy(),
        ])
    })?;
    stage.run("wasm parity (node)", || {
        tools::run(
            tools::command("node")
                .args(["--test", "tests/wasm/"])
                .current_dir(&root)
                .env("FINWAKE_PKG", &pkg)
                .env("FINWAKE_PARITY_NATIVE", &native_record)
                .env("FINWAKE_PARITY_CASE", &parity_case),
        )
    })?;

    let site_dir = target.join("xtask").join("site");
    stage.run("site build", || site::assemble_site(&site_dir, &pkg))?;

    let chromium = tools::ensure_chromium()?;
    stage.run("finwake command line (release)", || {
        tools::cargo(&["build", "--release", "-p", "finwake", "--bin", "finwake"])
    })?;
    let cli = target
        .join("release")
        .join(format!("finwake{}", std::env::consts::EXE_SUFFIX));
    let artifacts = target.join("xtask").join("browser");
    stage.run("browser tests (headless Chromium)", || {
        tools::run(
            tools::command("node")
                .args(["--test", "--test-concurrency=1", "tests/browser/"])
                .current_dir(&root)
                .env("FINWAKE_SITE", &site_dir)
                .env("FINWAKE_CLI", &cli)
                .env("FINWAKE_CHROMIUM", &chromium)
                .env("FINWAKE_ARTIFACTS", &artifacts),
        )
    })?;
    println!(
        "xtask test: all {} stages passed in {:.0} s (screenshots and measurements in {})",
        stage.count,
        start.elapsed().as_secs_f64(),
        artifacts.display()
    );
    Ok(())
}

/// Numbered, timed stages with a banner each.
#[derive(Default)]
struct Stage {
    count: usize,
}

impl Stage {
    fn run(&mut self, name: &str, f: impl FnOnce() -> Result<()>) -> Result<()> {
        self.count += 1;
        println!("\n==> [{}] {name}", self.count);
        let t = Instant::now();
        f().map_err(|e| format!("stage [{}] {name} failed: {e}", self.count))?;
        println!(
            "<== [{}] {name}: ok in {:.1} s",
            self.count,
            t.elapsed().as_secs_f64()
        );
        Ok(())
    }
}
