//! Checks on the command line made before any work starts: an `--out` file must not be one of
//! the command's inputs, and a word that is neither a command nor a file is a mistyped command.
//!
//! Both read the parsed arguments generically (every command's `--out` against every other
//! argument; the command names from the parser itself), so commands added later are covered
//! without being listed here.

use std::path::{Path, PathBuf};

use anyhow::{Result, bail};
use clap::{ArgMatches, CommandFactory as _};

use super::Cli;
use crate::design::output::refuse_input;

/// The argument that names a command's output file.
const OUT: &str = "out";

/// Refuses a command whose `--out` file is also one of its inputs: any other argument value
/// that names the same existing file (canonical paths, so `./d.ron` and links count).
pub fn outputs(matches: &ArgMatches) -> Result<()> {
    let Some((_, sub)) = matches.subcommand() else {
        return Ok(());
    };
    let Ok(Some(outs)) = sub.try_get_raw(OUT) else {
        return Ok(());
    };
    let outs: Vec<&Path> = outs.map(Path::new).collect();
    let mut inputs: Vec<&Path> = Vec::new();
    for id in sub.ids().filter(|id| id.as_str() != OUT) {
        // Groups (flattened argument structs) have no values of their own.
        if let Ok(Some(values)) = sub.try_get_raw(id.as_str()) {
            inputs.extend(values.map(Path::new));
        }
    }
    for out in outs {
        refuse_input(out, &inputs)?;
    }
    Ok(())
}

/// The names of the commands, from the parser.
#[must_use]
pub fn command_names() -> Vec<String> {
    Cli::command()
        .get_subcommands()
        .filter(|c| !c.is_hide_set())
        .map(|c| c.get_name().to_owned())
        .collect()
}

/// Checks the arguments meant for the window: each must be an existing file. A plain word
/// (no extension, no folder) that is not a file is taken as a mistyped command and answered
/// with the list of commands and the nearest one; a missing path is named.
pub fn window_args(paths: &[PathBuf]) -> Result<()> {
    for p in paths {
        if p.exists() {
            continue;
        }
        let word = p.to_string_lossy();
        let plain = p.extension().is_none() && p.components().count() == 1;
        if !plain {
            bail!("cannot open {}: no such file", p.display());
        }
        let names = command_names();
        let near = names
            .iter()
            .map(|n| (strsim::jaro_winkler(&word.to_lowercase(), n), n))
            .filter(|(score, _)| *score >= 0.8)
            .max_by(|a, b| a.0.total_cmp(&b.0))
            .map(|(_, n)| format!(" (did you mean `{n}`?)"))
            .unwrap_or_default();
        bail!(
            "unknown command `{word}`{near}; the commands are: {} \
             (see `stackwise --help`); a design to open must be an existing file",
            names.join(", ")
        );
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_near_miss_is_suggested_and_every_command_listed() {
        let e = window_args(&[PathBuf::from("spectrun"), PathBuf::from("x.ron")])
            .unwrap_err()
            .to_string();
        assert!(e.starts_with("unknown command `spectrun`"), "{e}");
        assert!(e.contains("did you mean `spectrum`"), "{e}");
        for name in command_names() {
            assert!(e.contains(&name), "{name} listed: {e}");
        }
        let e = window_args(&[PathBuf::from("zzzzqqq")])
            .unwrap_err()
            .to_string();
        assert!(!e.contains("did you mean"), "no wild guess: {e}");
        let e = window_args(&[PathBuf::from("missing/d.ron")])
            .unwrap_err()
            .to_string();
        assert!(e.contains("no such file"), "{e}");
        assert!(window_args(&[]).is_ok(), "no arguments: the demo design");
    }
}
