//! Dispatch of the analysis-view commands (phase, field, admittance, color, map), with the
//! guard that keeps `--out` from overwriting the design it reads.

use std::io::Write;
use std::path::Path;

use anyhow::{Result, bail};

use super::{Command, admittance, color, field, map, phase};

/// Refuses an `--out` that names the design file itself (it would be overwritten).
fn refuse_input_as_output(out: Option<&Path>, design: &Path) -> Result<()> {
    if let Some(out) = out
        && let (Ok(a), Ok(b)) = (out.canonicalize(), design.canonicalize())
        && a == b
    {
        bail!(
            "--out {} is the design file itself; choose another name so the design is kept",
            out.display()
        );
    }
    Ok(())
}

/// The analysis views: phase, field, admittance, colour and map.
pub(super) fn run(cmd: &Command, stdout: &mut dyn Write, stderr: &mut dyn Write) -> Result<()> {
    let (design, out) = match cmd {
        Command::Phase(a) => (&a.design, &a.out),
        Command::Field(a) => (&a.design, &a.out),
        Command::Admittance(a) => (&a.design, &a.out),
        Command::Color(a) => (&a.design, &a.out),
        Command::Map(a) => (&a.design, &a.out),
        _ => return Ok(()),
    };
    refuse_input_as_output(out.as_deref(), design)?;
    match cmd {
        Command::Phase(a) => phase::run(a, stdout, stderr),
        Command::Field(a) => field::run(a, stdout, stderr),
        Command::Admittance(a) => admittance::run(a, stdout, stderr),
        Command::Color(a) => color::run(a, stdout, stderr),
        Command::Map(a) => map::run(a, stdout, stderr),
        _ => Ok(()),
    }
}
