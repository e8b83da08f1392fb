//! Analyses of a design: spectra over wavelength and scans over the angle of incidence,
//! figures over a band and comparisons ([`compare`]), and measured curves ([`measured`]).
//!
//! The engine evaluates every material's index once per wavelength (not once per layer),
//! then solves each wavelength or angle independently — in parallel for large sweeps — and
//! hands back plain arrays ready to plot or write.

pub mod compare;
pub mod measured;
mod plan;
mod sweep;

pub use plan::{
    DEFAULT_STEPS, FULL_ANGLE_FROM_DEG, FULL_ANGLE_TO_DEG, Sweep, SweepData, run_sweep,
};
pub use sweep::{
    AngleScan, COLUMN_NAMES, Curves, PARALLEL_MIN_WORK, Spectrum, SweepError, Warning, angle_scan,
    angles_deg, spectrum, wavelengths_nm,
};
