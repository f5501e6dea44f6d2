//! `finwake link`: the page link of a case file, and a link decoded back into a case.
//!
//! * `finwake link CASE.json [--base URL]` prints the link (`URL#v1;...`, or only `#v1;...`
//!   without `--base`).
//! * `finwake link --decode LINK` prints the case as JSON. A link with fields that had to be
//!   ignored or reset still prints the case with every other field, lists each such field on
//!   stderr and exits with status 2, so that a script never goes on with a changed case
//!   unawares. Text that is not a link at all prints nothing on stdout and one line on stderr.
//!
//! The format is documented in `crate/src/link.rs`.

use std::io::{self, Read, Write};
use std::path::PathBuf;

use clap::{ArgGroup, Args};
use finwake::link;
use finwake::{Case, CaseError};

/// Arguments of `finwake link`.
#[derive(Debug, Args)]
#[command(group(ArgGroup::new("input").required(true).args(["case", "decode"])))]
pub struct LinkArgs {
    /// Case file (JSON) to write as a link.
    #[arg(value_name = "CASE.json")]
    case: Option<PathBuf>,
    /// Address of the page the link opens (e.g. https://example.org/finwake/); the case follows
    /// it after `#`. Without it only the `#v1;...` part is printed.
    #[arg(long, value_name = "URL", conflicts_with = "decode")]
    base: Option<String>,
    /// Decode this link (a whole address or its `#v1;...` part; quote it for the shell) and
    /// print the case as JSON; `-` reads the link from standard input.
    #[arg(long, value_name = "LINK")]
    decode: Option<String>,
}

/// Runs `finwake link`; the error is the one line to print after `finwake: `.
pub fn run(args: &LinkArgs) -> Result<(), String> {
    match (&args.decode, &args.case) {
        (Some(text), _) => decode(text),
        (None, Some(path)) => encode(path, args.base.as_deref()),
        (None, None) => Err("link needs a case file or --decode LINK; usage: finwake link CASE.json [--base URL] | finwake link --decode LINK".to_string()),
    }
}

fn encode(path: &PathBuf, base: Option<&str>) -> Result<(), String> {
    let shown = path.display().to_string();
    let text =
        std::fs::read_to_string(path).map_err(|e| CaseError::io(shown.clone(), &e).to_string())?;
    let case = Case::from_json(&text).map_err(|e| format!("{shown}: {e}"))?;
    let base = match base {
        Some(b) => check_base(b)?,
        None => "",
    };
    let link = link::link(&case, base).map_err(|e| format!("{shown}: {e}"))?;
    print(&format!("{link}\n"))
}

/// The `--base` address, if it can take a fragment.
fn check_base(base: &str) -> Result<&str, String> {
    let shown: String = base
        .chars()
        .take(80)
        .map(|c| if c.is_control() { '?' } else { c })
        .collect();
    if base.is_empty() || base.chars().any(|c| c.is_whitespace() || c.is_control()) {
        Err(format!("--base = {shown:?}: allowed a page address without spaces (e.g. https://example.org/finwake/)"))
    } else if base.contains('#') {
        Err(format!("--base = {shown:?}: allowed an address without #; finwake adds the #v1;... part itself"))
    } else {
        Ok(base)
    }
}

fn decode(text: &str) -> Result<(), String> {
    let owned;
    let text = if text == "-" {
        let mut s = String::new();
        io::stdin()
            .take(link::MAX_LINK_BYTES as u64 + 1)
            .read_to_string(&mut s)
            .map_err(|e| format!("--decode -: cannot read the link from standard input: {e}"))?;
        owned = s;
        owned.as_str()
    } else {
        text
    };
    let decoded = link::decode(text).map_err(|e| format!("--decode: {e}"))?;
    print(&format!("{}\n", decoded.case.to_json()))?;
    let problems = decoded.notices.len() + decoded.more_notices;
    if problems == 0 {
        return Ok(());
    }
    let stderr = io::stderr();
    let mut err = stderr.lock();
    for n in &decoded.notices {
        // Nothing useful can be done if stderr is closed.
        let _ = writeln!(err, "finwake: link: {n}");
    }
    if decoded.more_notices > 0 {
        let _ = writeln!(err, "finwake: link: ... and {} more", decoded.more_notices);
    }
    Err(format!(
        "the link has {problems} field{} that could not be used (listed above); the case printed has every other field of the link and defaults for these",
        if problems == 1 { "" } else { "s" }
    ))
}

fn print(text: &str) -> Result<(), String> {
    let stdout = io::stdout();
    let mut out = stdout.lock();
    match out.write_all(text.as_bytes()).and_then(|()| out.flush()) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == io::ErrorKind::BrokenPipe => Ok(()),
        Err(e) => Err(format!("cannot write the output: {e}")),
    }
}
