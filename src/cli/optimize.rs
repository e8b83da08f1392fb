//! `stackwise optimize`: refine a design's thicknesses (and with `--needle`, insert layers) to
//! meet the targets in its file; write the result as a new design file.

use std::io::Write;
use std::ops::ControlFlow;
use std::path::PathBuf;
use std::time::Instant;

use anyhow::{Context as _, Result, bail};
use clap::Args;

use crate::design::file;
use crate::optimize::{self, Options, Progress, Stage, StopReason};

/// Settings of the optimize command.
#[derive(Debug, Args)]
pub struct OptimizeArgs {
    /// The design file (.ron) with its targets.
    pub design: PathBuf,
    /// Where to write the optimised design (.ron); never the input file.
    #[arg(long)]
    pub out: PathBuf,
    /// Also insert new layers (needle optimisation), not only refine thicknesses.
    #[arg(long)]
    pub needle: bool,
    /// Materials needle insertion may use, comma-separated [default: those in the design].
    #[arg(long, value_delimiter = ',')]
    pub materials: Vec<String>,
    /// Most layers needle insertion may reach.
    #[arg(long, default_value_t = 100)]
    pub max_layers: usize,
    /// Thinnest unlocked layer allowed, nm.
    #[arg(long, default_value_t = 5.0)]
    pub min_nm: f64,
}

/// Runs the command: progress on `stderr`, the final figures on `stdout`.
pub fn run(a: &OptimizeArgs, stdout: &mut dyn Write, stderr: &mut dyn Write) -> Result<()> {
    if same_file(&a.design, &a.out) {
        bail!(
            "--out {} is the input design; give a new file name so the original is kept",
            a.out.display()
        );
    }
    if !a.needle && !a.materials.is_empty() {
        bail!("--materials only applies to needle insertion; add --needle or drop --materials");
    }
    let design = super::load_design(&a.design)?;
    let options = Options {
        min_nm: a.min_nm,
        materials: a.materials.iter().map(|m| m.trim().to_owned()).collect(),
        max_layers: a.max_layers,
        ..Options::default()
    };
    let started = Instant::now();
    let mut last_report = Instant::now();
    let mut write_error = None;
    let on_progress = |p: &Progress<'_>| {
        // At most a few lines per second, but every accepted insertion.
        if p.stage == Stage::Needle || last_report.elapsed().as_millis() >= 250 {
            last_report = Instant::now();
            let line = format!(
                "{:>7.2} s  iteration {:>5}  insertions {:>3}  layers {:>3}  merit {:.6}",
                started.elapsed().as_secs_f64(),
                p.iteration,
                p.insertions,
                p.layers,
                p.merit
            );
            if let Err(e) = writeln!(stderr, "{line}") {
                write_error = Some(e);
                return ControlFlow::Break(());
            }
        }
        ControlFlow::Continue(())
    };
    let outcome = if a.needle {
        optimize::needle(&design, &options, on_progress)
    } else {
        optimize::refine(&design, &options, on_progress)
    }
    .with_context(|| format!("cannot optimise {}", a.design.display()))?;
    if let Some(e) = write_error {
        return Err(e).context("cannot write progress to standard error");
    }
    if outcome.reason == StopReason::Cancelled {
        bail!("optimisation was stopped before it finished; nothing written");
    }
    if outcome.merit >= outcome.start_merit && outcome.reason != StopReason::TargetsMet {
        bail!(
            "nothing could be optimised: the merit stays at {:.6} ({}); nothing written",
            outcome.start_merit,
            outcome.reason
        );
    }
    let eval = optimize::evaluate_targets(&outcome.design)?;
    let text = file::to_ron_string(&outcome.design)?;
    super::emit(Some(&a.out), stdout, |w| {
        w.extend_from_slice(text.as_bytes());
        Ok(())
    })?;
    writeln!(stderr, "stopped: {}", outcome.reason)?;
    writeln!(stdout, "merit {:.6}", eval.merit)?;
    writeln!(stdout, "mean deviation {:.6}", eval.mean_deviation)?;
    writeln!(stdout, "layers {}", outcome.design.layers.len())?;
    writeln!(
        stdout,
        "targets passed {} of {}",
        eval.passed,
        eval.targets.len()
    )?;
    for (i, (t, r)) in outcome.design.targets.iter().zip(&eval.targets).enumerate() {
        writeln!(
            stdout,
            "target {}: {} — {} (worst deviation {:.6} {})",
            i + 1,
            t.describe(),
            if r.pass { "met" } else { "not met" },
            r.worst,
            t.measure.unit()
        )?;
    }
    Ok(())
}

/// Whether two paths name the same existing file.
fn same_file(a: &std::path::Path, b: &std::path::Path) -> bool {
    match (a.canonicalize(), b.canonicalize()) {
        (Ok(x), Ok(y)) => x == y,
        _ => a == b,
    }
}
