//! Analyses of a design: spectra over wavelength and scans over the angle of incidence,
//! figures over a band and comparisons ([`compare`]), measured curves ([`measured`]), and
//! from design to production: Monte Carlo [`tolerance`]s, layer [`sensitivity`] and optical
//! [`monitor`]ing. The views for specialty coatings each have a file: phase, group delay and GDD
//! ([`phase`]), the |E|² profile ([`field`]), the admittance locus ([`admittance`]), colour
//! ([`color`]) and the wavelength × angle map ([`map`]); they share [`ViewError`].
//!
//! The engine evaluates every material's index once per wavelength (not once per layer),
//! then solves each wavelength or angle independently — in parallel for large sweeps — and
//! hands back plain arrays ready to plot or write.

pub mod admittance;
pub mod color;
pub mod compare;
pub mod field;
mod front;
mod grid;
mod limits;
pub mod map;
pub mod measured;
mod media;
pub mod monitor;
pub mod phase;
mod plan;
pub mod sensitivity;
mod sweep;
pub mod tolerance;

pub use limits::{MAX_WORK, check_work};
pub use media::ViewError;
pub use plan::{
    DEFAULT_STEPS, FULL_ANGLE_FROM_DEG, FULL_ANGLE_TO_DEG, Sweep, SweepData, run_sweep,
};
pub use sweep::{
    AngleScan, COLUMN_NAMES, Curves, PARALLEL_MIN_WORK, Spectrum, SweepError, Warning, angle_scan,
    angles_deg, spectrum, wavelengths_nm,
};
