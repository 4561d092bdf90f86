//! `tether-risk init FILE`: write the built-in demo scenario for editing.

use std::path::PathBuf;

use tether_risk::report::write_atomic;
use tether_risk::scenario::DEMO_SCENARIO_JSON;

use super::output::{print, InputError};

/// Arguments of `init`.
#[derive(clap::Args, Debug)]
#[command(
    after_help = "Example:\n  tether-risk init my-tether.json && tether-risk check my-tether.json"
)]
pub struct Args {
    /// Where to write the scenario (JSON).
    file: PathBuf,
    /// Overwrite FILE if it exists.
    #[arg(long)]
    force: bool,
}

pub fn run(a: Args) -> anyhow::Result<()> {
    // Only a regular file may be replaced (it keeps its permissions): a device, FIFO, folder
    // or symbolic link is refused even with --force.
    match std::fs::symlink_metadata(&a.file) {
        Ok(m) if !m.is_file() => {
            let what = if m.file_type().is_symlink() {
                "a symbolic link"
            } else if m.is_dir() {
                "a folder"
            } else {
                "not a regular file (a device, FIFO or socket)"
            };
            return Err(InputError(format!(
                "{} is {what}; init writes only a new file or replaces a regular one, even with --force",
                a.file.display()
            ))
            .into());
        }
        _ => {}
    }
    if a.file.exists() && !a.force {
        return Err(InputError(format!(
            "{} already exists; choose another name or pass --force to overwrite it",
            a.file.display()
        ))
        .into());
    }
    // Every section with its defaults written out (damage, lunar ejecta, notch model,
    // dispatch, resupply...), so the options can be found by reading the file: the demo as the
    // program reads it, serialised back. It is the same scenario (same hash) as `demo`.
    let spec = tether_risk::scenario::parse_spec(DEMO_SCENARIO_JSON)?;
    let text = serde_json::to_string_pretty(&spec)? + "\n";
    write_atomic(&a.file, text.as_bytes())
        .map_err(|e| anyhow::anyhow!("cannot write {}: {e}", a.file.display()))?;
    print(&format!(
        "wrote the demo scenario to {}; edit it, then run: tether-risk check {}\n",
        a.file.display(),
        a.file.display()
    ))
}
