//! The design window.

pub mod materials;

use std::path::PathBuf;

use anyhow::Result;

/// Opens the window, with `design` loaded if given.
pub fn run(design: Option<PathBuf>) -> Result<()> {
    drop(design);
    anyhow::bail!("the window is not built yet")
}
