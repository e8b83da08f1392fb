//! Dispatch of the analysis-view commands (phase, field, admittance, color, map), with the
//! check that keeps `--out` from overwriting the design it reads (also when called in-process,
//! past the command line's guard).

use std::io::Write;
use std::path::Path;

use anyhow::Result;

use super::{Command, admittance, color, field, map, phase};

/// Refuses an `--out` that names the design file itself (it would be overwritten).
fn refuse_input_as_output(out: Option<&Path>, design: &Path) -> Result<()> {
    if let Some(out) = out {
        crate::export::refuse_input(out, &[design])?;
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
