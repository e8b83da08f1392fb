//! A wavelength × angle map of R, T or A (s, p or their mean): one spectrum per angle.
//!
//! Each row is exactly [`super::spectrum`] at that angle, so the map and the spectrum view
//! agree to the last digit. Large maps take a progress callback that may stop the work;
//! stopping returns the rows finished so far with [`MapStop::Cancelled`].

use std::ops::ControlFlow;

use rayon::prelude::*;

use super::compare::curve;
use super::media::ViewError;
use super::{PARALLEL_MIN_WORK, SweepError, Warning, spectrum};
use crate::design::{Pol, Quantity, ResolvedDesign};
use crate::optics::Side;

/// Estimated single-core cost of one layer·point (s and p), seconds: about 18 ns measured by
/// the solver benchmark (DEVELOPERS.md), rounded up for the per-point overhead.
pub const SECONDS_PER_LAYER_POINT: f64 = 25e-9;

/// The most single-core seconds one map may be estimated to need.
pub const MAX_MAP_SECONDS: u64 = 600;

/// Most points (wavelengths × angles) one map may have, whatever its layer count.
pub const MAX_MAP_POINTS: u64 = 20_000_000;

/// Why a map stopped.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum MapStop {
    /// Every row was computed.
    Done,
    /// The progress callback asked to stop; the rows so far are kept.
    Cancelled,
}

/// Progress of a map: rows (angles) finished out of all.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct MapProgress {
    /// Rows finished.
    pub done: usize,
    /// Rows in all.
    pub total: usize,
}

/// A wavelength × angle map: plain data a heat map borrows directly.
#[derive(Clone, Debug, PartialEq)]
pub struct RtMap {
    /// Wavelengths (columns), nm.
    pub wavelength_nm: Vec<f64>,
    /// Angles of incidence (rows) finished, degrees.
    pub aoi_deg: Vec<f64>,
    /// Which quantity.
    pub quantity: Quantity,
    /// Which polarisation.
    pub pol: Pol,
    /// Values (fractions), row-major: `values[row * wavelength_nm.len() + column]`.
    pub values: Vec<f64>,
    /// Why it ended.
    pub stop: MapStop,
    /// Materials evaluated outside their data.
    pub warnings: Vec<Warning>,
}

impl RtMap {
    /// The row of values at angle number `row`.
    #[must_use]
    pub fn row(&self, row: usize) -> &[f64] {
        let n = self.wavelength_nm.len();
        self.values.get(row * n..(row + 1) * n).unwrap_or(&[])
    }

    /// The value at (angle row, wavelength column), if inside the map.
    #[must_use]
    pub fn value(&self, row: usize, column: usize) -> Option<f64> {
        self.row(row).get(column).copied()
    }
}

/// Checks that a map of this size is reasonable; the error gives the estimate.
pub fn check_map_size(wavelengths: usize, angles: usize, layers: usize) -> Result<(), ViewError> {
    let points = wavelengths as u64 * angles as u64;
    let seconds = points as f64 * layers.max(1) as f64 * SECONDS_PER_LAYER_POINT;
    if points > MAX_MAP_POINTS || seconds > MAX_MAP_SECONDS as f64 {
        return Err(ViewError::TooMuchWork {
            points,
            layers,
            seconds,
            max_seconds: MAX_MAP_SECONDS,
        });
    }
    Ok(())
}

/// The map of `quantity` (`pol`) of `d` over `wavelengths_nm` × `aoi_deg`, light from the
/// front. `on_progress` is called after each row; returning `Break` stops the work, which
/// then returns `Ok` with the rows finished.
///
/// ```
/// use std::ops::ControlFlow;
/// use stackwise::analysis::map::{rt_map, MapStop};
/// use stackwise::design::{Design, Pol, Quantity};
/// use stackwise::material::{Material, Model};
/// let mut d = Design::new_empty("bare");
/// d.substrate = "S".into();
/// d.materials = vec![Material::user("S", Model::Constant { n: 1.5, k: 0.0 })];
/// let m = rt_map(&d.resolve()?, &[500.0, 600.0], &[0.0, 45.0], Quantity::R, Pol::Mean,
///                |_| ControlFlow::Continue(()))?;
/// assert_eq!(m.stop, MapStop::Done);
/// assert!((m.value(0, 1).unwrap() - 0.04).abs() < 1e-12);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn rt_map(
    d: &ResolvedDesign,
    wavelengths_nm: &[f64],
    aoi_deg: &[f64],
    quantity: Quantity,
    pol: Pol,
    mut on_progress: impl FnMut(MapProgress) -> ControlFlow<()>,
) -> Result<RtMap, ViewError> {
    if wavelengths_nm.is_empty() || aoi_deg.is_empty() {
        return Err(SweepError::Inverted { from: 0.0, to: 0.0 }.into());
    }
    check_map_size(wavelengths_nm.len(), aoi_deg.len(), d.layers.len())?;
    let mut map = RtMap {
        wavelength_nm: wavelengths_nm.to_vec(),
        aoi_deg: Vec::with_capacity(aoi_deg.len()),
        quantity,
        pol,
        values: Vec::with_capacity(wavelengths_nm.len() * aoi_deg.len()),
        stop: MapStop::Done,
        warnings: Vec::new(),
    };
    // A large row runs on all cores by itself; small rows are solved a batch of angles at a
    // time in parallel. The progress callback runs between batches.
    let per_row = wavelengths_nm.len() * d.layers.len().max(1);
    let batch = (PARALLEL_MIN_WORK / per_row.max(1)).clamp(1, 64);
    for chunk in aoi_deg.chunks(batch) {
        let rows = chunk
            .par_iter()
            .map(|&a| spectrum(d, wavelengths_nm, a, Side::Front))
            .collect::<Result<Vec<_>, _>>()?;
        for (s, &a) in rows.iter().zip(chunk) {
            map.values.extend_from_slice(curve(s, quantity, pol));
            map.aoi_deg.push(a);
            if map.warnings.is_empty() {
                map.warnings.clone_from(&s.warnings);
            }
        }
        let p = MapProgress {
            done: map.aoi_deg.len(),
            total: aoi_deg.len(),
        };
        if p.done < p.total && on_progress(p).is_break() {
            map.stop = MapStop::Cancelled;
            break;
        }
    }
    Ok(map)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn absurd_maps_are_refused_with_the_estimate() {
        let e = check_map_size(100_000, 9_000, 200).unwrap_err().to_string();
        assert!(e.contains("900000000 points × 200 layers"), "{e}");
        assert!(e.contains("larger wavelength or angle steps"), "{e}");
        check_map_size(301, 81, 40).unwrap();
    }
}
