//! The `finwake` command line.
//!
//! `finwake simulate CASE.json [--json] [--history FILE.csv]` runs one case and prints a summary
//! table (or the summary as JSON) and optionally writes the load history as CSV.
//!
//! Exit status: 0 on success, 2 on bad input (one line on stderr naming the field, its value,
//! the allowed range and the fix).

use std::fs::File;
use std::io::{self, BufWriter, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clap::{Args, Parser, Subcommand};
use finwake::{Case, CaseError, FoilSummary, Simulation, Summary, Water};

// Kept beside this file, not in src/bin/, where cargo would take it for a binary of its own.
#[path = "finwake/link.rs"]
mod link;
#[path = "finwake/sweep.rs"]
mod sweep;

/// Exit status for bad input (arguments, case file, output paths).
const EXIT_BAD_INPUT: u8 = 2;

/// 2D unsteady panel method with a free vortex-particle wake for heaving and pitching foils.
#[derive(Debug, Parser)]
#[command(name = "finwake", version, about, propagate_version = true)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Run one case file and print its cycle statistics.
    Simulate(SimulateArgs),
    // Later subcommands (sweep, check, link) are added here, one variant each.
    /// Check a case before a tank test: Re, St, k, angle of attack, leading-edge suction,
    /// cavitation, tank clearances, actuator loads and power, with cautions.
    Check(CheckArgs),
    /// Print the page link that opens a case file, or decode a link back into a case file.
    Link(link::LinkArgs),
    /// Run a grid over one or two case keys on all cores; each foil's thrust and efficiency
    /// are also given relative to an isolated foil with the same motion.
    Sweep(sweep::SweepArgs),
}

#[derive(Debug, Args)]
struct SimulateArgs {
    /// Case file (JSON, version 1).
    #[arg(value_name = "CASE.json")]
    case: PathBuf,
    /// Print the summary as JSON instead of the table.
    #[arg(long)]
    json: bool,
    /// Also write the load history of every step and foil to this CSV file.
    #[arg(long, value_name = "FILE.csv")]
    history: Option<PathBuf>,
}

/// A problem that ends the run, printed as one line.
struct Failure {
    message: String,
    code: u8,
}

impl Failure {
    fn bad_input(message: impl Into<String>) -> Self {
        Failure {
            message: message.into(),
            code: EXIT_BAD_INPUT,
        }
    }
}

fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(err) => return usage_error(err),
    };
    let result = match cli.command {
        Command::Simulate(args) => simulate(&args),
        Command::Check(args) => check(&args),
        Command::Link(args) => link::run(&args).map_err(Failure::bad_input),
        Command::Sweep(args) => sweep::run(&args).map_err(Failure::bad_input),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(failure) => {
            eprintln!("finwake: {}", failure.message);
            ExitCode::from(failure.code)
        }
    }
}

/// Help and version go to stdout with status 0; argument errors become one line with status 2.
fn usage_error(err: clap::Error) -> ExitCode {
    use clap::error::ErrorKind;
    match err.kind() {
        ErrorKind::DisplayHelp | ErrorKind::DisplayVersion => {
            // Printing help can only fail if stdout is closed; nothing more to say then.
            let _ = err.print();
            ExitCode::SUCCESS
        }
        ErrorKind::DisplayHelpOnMissingArgumentOrSubcommand | ErrorKind::MissingSubcommand => {
            eprintln!("finwake: a subcommand is required; usage: finwake simulate CASE.json [--json] [--history FILE.csv] (see finwake --help)");
            ExitCode::from(EXIT_BAD_INPUT)
        }
        _ => {
            eprintln!("finwake: {}", one_line_usage(&err.to_string()));
            ExitCode::from(EXIT_BAD_INPUT)
        }
    }
}

/// Folds clap's multi-line message (error, tips, usage) into one line.
fn one_line_usage(text: &str) -> String {
    let mut message = String::new();
    let mut usage = None;
    for line in text.lines().map(str::trim).filter(|l| !l.is_empty()) {
        if let Some(u) = line.strip_prefix("Usage: ") {
            usage = Some(u.to_string());
            break;
        }
        let line = line.strip_prefix("error: ").unwrap_or(line);
        if !message.is_empty() {
            message.push_str(if message.ends_with(':') { " " } else { "; " });
        }
        message.push_str(line);
    }
    let usage = usage
        .unwrap_or_else(|| "finwake simulate CASE.json [--json] [--history FILE.csv]".to_string());
    format!("{message}; usage: {usage} (see finwake --help)")
}

fn simulate(args: &SimulateArgs) -> Result<(), Failure> {
    let shown = args.case.display().to_string();
    let text = std::fs::read_to_string(&args.case)
        .map_err(|e| Failure::bad_input(CaseError::io(shown.clone(), &e).to_string()))?;
    let case = Case::from_json(&text).map_err(|e| Failure::bad_input(format!("{shown}: {e}")))?;
    let mut sim =
        Simulation::new(&case).map_err(|e| Failure::bad_input(format!("{shown}: {e}")))?;

    // Open the history file before the run, so a bad path fails at once and not after the run.
    let history = match &args.history {
        Some(path) => Some((path, create(path)?)),
        None => None,
    };

    let summary = sim.run_to_end();

    if let Some((path, file)) = history {
        write_history(&sim, file).map_err(|e| write_failure(path, &e))?;
    }

    let stdout = io::stdout();
    let mut out = stdout.lock();
    let printed = if args.json {
        serde_json::to_writer_pretty(&mut out, &summary)
            .map_err(io::Error::other)
            .and_then(|()| writeln!(out))
    } else {
        write_table(&mut out, &shown, &case, &summary)
    };
    match printed.and_then(|()| out.flush()) {
        Ok(()) => Ok(()),
        // A closed pipe (`finwake simulate ... | head`) is not an error of the run.
        Err(e) if e.kind() == io::ErrorKind::BrokenPipe => Ok(()),
        Err(e) => Err(Failure {
            message: format!("cannot write the summary: {e}"),
            code: 1,
        }),
    }
}

fn create(path: &Path) -> Result<BufWriter<File>, Failure> {
    File::create(path)
        .map(BufWriter::new)
        .map_err(|e| write_failure(path, &e))
}

fn write_failure(path: &Path, err: &io::Error) -> Failure {
    Failure::bad_input(format!(
        "history file {}: cannot write it: {err}; check that the folder exists and is writable",
        path.display()
    ))
}

/// Header of the history CSV (design section 4). Units: s, index, m, deg, then coefficients.
const HISTORY_HEADER: &str =
    "time,foil,heave,pitch,lift_coefficient,thrust_coefficient,moment_coefficient,power_coefficient";

/// One row per foil per step, times `step * time_step`.
fn write_history(sim: &Simulation, mut out: impl Write) -> io::Result<()> {
    writeln!(out, "{HISTORY_HEADER}")?;
    let dt = sim.time_step();
    for (step, loads) in sim.history().iter().enumerate() {
        let time = csv(step as f64 * dt);
        for (foil, l) in loads.iter().enumerate() {
            writeln!(
                out,
                "{time},{foil},{},{},{},{},{},{}",
                csv(l.heave),
                csv(l.pitch),
                csv(l.lift_coefficient),
                csv(l.thrust_coefficient),
                csv(l.moment_coefficient),
                csv(l.power_coefficient)
            )?;
        }
    }
    out.flush()
}

/// `v` in full precision (shortest text that reads back to the same number), plain for
/// ordinary magnitudes and in exponent form for very small or very large ones.
fn csv(v: f64) -> String {
    let a = v.abs();
    if a == 0.0 || (1e-4..1e15).contains(&a) || !v.is_finite() {
        format!("{v}")
    } else {
        format!("{v:e}")
    }
}

/// `v` with about four significant digits, in plain notation where that stays short.
fn num(v: f64) -> String {
    if !v.is_finite() {
        return v.to_string();
    }
    let a = v.abs();
    if a == 0.0 {
        "0".to_string()
    } else if (1e-3..1e7).contains(&a) {
        let decimals = (3 - a.log10().floor() as i32).max(0) as usize;
        format!("{v:.decimals$}")
    } else {
        format!("{v:.3e}")
    }
}

fn percent(v: Option<f64>) -> String {
    match v {
        Some(e) => format!("{:.1}", 100.0 * e),
        None => "n/a".to_string(),
    }
}

/// The summary table: one row per quantity, one column per foil and a total column.
fn write_table(out: &mut impl Write, shown: &str, case: &Case, s: &Summary) -> io::Result<()> {
    let water = match case.flow.water {
        Water::Fresh => "fresh water",
        Water::Sea => "sea water",
    };
    let n = s.foils.len();
    writeln!(out, "finwake simulate {shown}")?;
    writeln!(
        out,
        "{n} foil{}, U = {} m/s, f = {} Hz, {water} at {} deg C: density {} kg/m^3, kinematic viscosity {} m^2/s",
        if n == 1 { "" } else { "s" },
        case.flow.speed,
        case.frequency,
        case.flow.temperature,
        num(s.density),
        num(s.kinematic_viscosity)
    )?;
    writeln!(out, "time step {} s, {} steps", num(s.time_step), s.steps)?;
    if case.frequency > 0.0 {
        let first = s.first_cycle_averaged + 1;
        let last = s.first_cycle_averaged + s.cycles_averaged;
        let ramp = match s.ramp_cycles[1].saturating_sub(s.ramp_cycles[0]) {
            0 => "no smooth start".to_string(),
            1 => format!("smooth start in cycle {}", s.ramp_cycles[1]),
            _ => format!(
                "smooth start in cycles {} to {}",
                s.ramp_cycles[0] + 1,
                s.ramp_cycles[1]
            ),
        };
        writeln!(
            out,
            "averaged over cycles {first} to {last} of {} (counting from 1; earlier cycles are the start-up transient; {ramp})",
            case.numerics.cycles
        )?;
    } else {
        writeln!(
            out,
            "start from rest: values are those at the end of the run (no cycle averaging)"
        )?;
    }
    writeln!(
        out,
        "converged: {}   wake particles: {} of cap {} ({})",
        if s.converged {
            "yes"
        } else {
            "no (run more cycles)"
        },
        s.particles,
        s.particle_cap,
        if case.numerics.wake_merge > 0.0 {
            format!(
                "far wake merged, numerics.wake_merge = {}",
                case.numerics.wake_merge
            )
        } else {
            "far-wake merging off".to_string()
        }
    )?;
    writeln!(out)?;

    let mut header = vec!["quantity".to_string(), "unit".to_string()];
    header.extend((0..n).map(|i| format!("foil {i}")));
    header.push("total".to_string());

    // For a start from rest the values are those at the end of the run, not cycle means.
    let m = if case.frequency > 0.0 {
        "mean"
    } else {
        "final"
    };
    let t = &s.total;
    type Cell = fn(&FoilSummary) -> String;
    let table: Vec<(String, &str, Cell, Option<String>)> = vec![
        (
            format!("{m} thrust"),
            "N",
            |f| num(f.thrust),
            Some(num(t.thrust)),
        ),
        (
            format!("{m} thrust coefficient C_T"),
            "-",
            |f| num(f.thrust_coefficient),
            Some(num(t.thrust_coefficient)),
        ),
        (
            format!("{m} lift coefficient C_L"),
            "-",
            |f| num(f.lift_coefficient),
            None,
        ),
        (
            "lift coefficient amplitude".into(),
            "-",
            |f| num(f.lift_amplitude),
            None,
        ),
        (
            format!("{m} moment coefficient C_M (pivot)"),
            "-",
            |f| num(f.moment_coefficient),
            None,
        ),
        (
            format!("{m} input power"),
            "W",
            |f| num(f.power),
            Some(num(t.power)),
        ),
        (
            format!("{m} power coefficient C_P"),
            "-",
            |f| num(f.power_coefficient),
            Some(num(t.power_coefficient)),
        ),
        (
            "propulsive efficiency".into(),
            "%",
            |f| percent(f.efficiency),
            Some(percent(t.efficiency)),
        ),
        ("peak lift".into(), "N", |f| num(f.peak_lift), None),
        (
            "peak torque (about pivot)".into(),
            "N m",
            |f| num(f.peak_torque),
            None,
        ),
        (
            "max angle of attack (pivot)".into(),
            "deg",
            |f| num(f.max_angle_of_attack),
            None,
        ),
        (
            "Strouhal f A / U (TE peak-to-peak)".into(),
            "-",
            |f| num(f.strouhal),
            None,
        ),
        (
            "Strouhal 2 f h0 / U (heave)".into(),
            "-",
            |f| num(f.strouhal_heave),
            None,
        ),
        (
            "reduced frequency pi f c / U".into(),
            "-",
            |f| num(f.reduced_frequency),
            None,
        ),
        (
            "Reynolds number U c / nu".into(),
            "-",
            |f| num(f.reynolds),
            None,
        ),
    ];
    let rows: Vec<(String, String, Vec<String>, String)> = table
        .into_iter()
        .map(|(name, unit, cell, total)| {
            let cells = s.foils.iter().map(cell).collect();
            (
                name,
                unit.to_string(),
                cells,
                total.unwrap_or_else(|| "-".to_string()),
            )
        })
        .collect();

    let name_w = rows
        .iter()
        .map(|r| r.0.len())
        .max()
        .unwrap_or(0)
        .max(header[0].len());
    let unit_w = rows
        .iter()
        .map(|r| r.1.len())
        .max()
        .unwrap_or(0)
        .max(header[1].len());
    let mut col_w = vec![0usize; n + 1];
    for (j, w) in col_w.iter_mut().enumerate() {
        *w = header[j + 2].len();
        for r in &rows {
            let cell = if j < n { &r.2[j] } else { &r.3 };
            *w = (*w).max(cell.len());
        }
    }
    let mut line = format!("{:<name_w$}  {:<unit_w$}", header[0], header[1]);
    for (j, w) in col_w.iter().enumerate() {
        line.push_str(&format!("  {:>w$}", header[j + 2]));
    }
    writeln!(out, "{}", line.trim_end())?;
    for (name, unit, cells, total) in &rows {
        let mut line = format!("{name:<name_w$}  {unit:<unit_w$}");
        for (j, w) in col_w.iter().enumerate() {
            let cell = if j < n { &cells[j] } else { total };
            line.push_str(&format!("  {cell:>w$}"));
        }
        writeln!(out, "{}", line.trim_end())?;
    }
    writeln!(out)?;
    writeln!(
        out,
        "Loads and power are 2D inviscid screening estimates, not design loads (hydrodynamic only: no viscosity, stall, 3D or free-surface effects, no inertia of moving parts); size rigs with margins per lab safety rules and local codes, and confirm by measurement."
    )?;
    writeln!(
        out,
        "Coefficients use 0.5 rho U^2 c s per foil (total: summed c s); efficiency = mean thrust x U / mean input power, n/a unless both are positive."
    )?;
    Ok(())
}

#[derive(Debug, Args)]
struct CheckArgs {
    /// Case file (JSON, version 1; the optional `rig` keys add the tank checks and body inertia).
    #[arg(value_name = "CASE.json")]
    case: PathBuf,
    /// Print the check as JSON instead of text.
    #[arg(long)]
    json: bool,
}

/// `finwake check`: runs the case and prints the rig check of `finwake::rig`.
fn check(args: &CheckArgs) -> Result<(), Failure> {
    let shown = args.case.display().to_string();
    let text = std::fs::read_to_string(&args.case)
        .map_err(|e| Failure::bad_input(CaseError::io(shown.clone(), &e).to_string()))?;
    let bad = |e: CaseError| Failure::bad_input(format!("{shown}: {e}"));
    let case = Case::from_json(&text).map_err(bad)?;
    let report = finwake::rig::check(&case).map_err(bad)?;
    let printed = if args.json {
        serde_json::to_string_pretty(&report).expect("a rig check always serialises") + "\n"
    } else {
        report.to_text(&shown)
    };
    let mut out = io::stdout().lock();
    match out.write_all(printed.as_bytes()).and_then(|()| out.flush()) {
        Ok(()) => Ok(()),
        // A closed pipe (`finwake check ... | head`) is not an error of the check.
        Err(e) if e.kind() == io::ErrorKind::BrokenPipe => Ok(()),
        Err(e) => Err(Failure {
            message: format!("cannot write the check: {e}"),
            code: 1,
        }),
    }
}
