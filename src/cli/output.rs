//! Printing and error reporting shared by the subcommands.

use std::io::Write;

use tether_risk::model::Model;
use tether_risk::scenario::{self, ScenarioError};

/// Print to stdout; a closed pipe (`tether-risk profile x | head`) ends the program quietly.
pub fn print(text: &str) -> anyhow::Result<()> {
    let mut out = std::io::stdout().lock();
    match out.write_all(text.as_bytes()).and_then(|_| out.flush()) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => std::process::exit(0),
        Err(e) => Err(e.into()),
    }
}

/// Load a scenario (a path, `-` for stdin, or `demo` for the built-in one) and build its model.
pub fn load_model(path: &str) -> anyhow::Result<Model> {
    let sc = if path == "demo" && !std::path::Path::new("demo").exists() {
        scenario::demo()
    } else {
        scenario::load(path)?
    };
    Ok(Model::build(sc)?)
}

/// Print the error chain once (no backtrace) and choose the exit code.
pub fn report_error(e: &anyhow::Error) -> i32 {
    let input = e
        .chain()
        .any(|c| c.downcast_ref::<ScenarioError>().is_some())
        || e.chain().any(|c| c.downcast_ref::<InputError>().is_some());
    let mut msg = format!("error: {e}");
    for cause in e.chain().skip(1) {
        // A message that already quotes its cause (most of ours do) says it once.
        let c = cause.to_string();
        if !msg.contains(&c) {
            msg.push_str(&format!("\n  caused by: {c}"));
        }
    }
    eprintln!("{msg}");
    if e.chain().any(|c| {
        c.downcast_ref::<super::interrupt::Interrupted>().is_some()
            || c.downcast_ref::<super::interrupt::Stopped>().is_some()
            || c.downcast_ref::<super::interrupt::SweepInterrupted>()
                .is_some()
    }) {
        return 130;
    }
    if input {
        2
    } else {
        1
    }
}

/// A bad command-line value (exit code 2).
#[derive(Debug, thiserror::Error)]
#[error("{0}")]
pub struct InputError(pub String);

/// Take the exclusive lock of an output folder (creating the folder); a folder in use by
/// another live run is a clear error with exit code 2.
pub fn lock_folder(dir: &std::path::Path) -> anyhow::Result<tether_risk::report::folder::RunLock> {
    std::fs::create_dir_all(dir)
        .map_err(|e| anyhow::anyhow!("cannot create output folder {}: {e}", dir.display()))?;
    tether_risk::report::folder::RunLock::acquire(dir).map_err(|e| match e {
        tether_risk::report::folder::LockError::Held { .. } => InputError(e.to_string()).into(),
        other => anyhow::Error::new(other),
    })
}

/// The command line as recorded in manifests: every argument kept, a non-UTF-8 one converted
/// lossily for display (the paths themselves are used as given).
pub fn command_line() -> Vec<String> {
    std::env::args_os()
        .map(|a| a.to_string_lossy().into_owned())
        .collect()
}

/// A count as typed on the command line: `20000`, `20_000`, `2e4`, `1.5e5`, `20k`, `2M`
/// (k = 1000, M = 10^6, G = 10^9). Anything that is not a whole number of at least 1 is
/// refused with the accepted forms.
pub fn parse_count(s: &str) -> Result<u64, String> {
    let hint = || {
        format!("`{s}` is not a whole number of at least 1: write for example 20000, 20_000, 2e4 or 20k")
    };
    let t: String = s.trim().chars().filter(|&c| c != '_').collect();
    let (num, mult) = match t.chars().last() {
        Some('k' | 'K') => (&t[..t.len() - 1], 1e3),
        Some('M') => (&t[..t.len() - 1], 1e6),
        Some('G') => (&t[..t.len() - 1], 1e9),
        _ => (t.as_str(), 1.0),
    };
    if let Ok(n) = num.parse::<u64>() {
        let v = n as f64 * mult;
        return if n >= 1 && v <= u64::MAX as f64 {
            Ok(n.saturating_mul(mult as u64))
        } else {
            Err(hint())
        };
    }
    let x: f64 = num.parse().map_err(|_| hint())?;
    let v = x * mult;
    if v.is_finite() && v >= 1.0 && v.fract() == 0.0 && v < 1.8e19 {
        Ok(v as u64)
    } else {
        Err(hint())
    }
}
