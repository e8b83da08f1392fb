//! A design's indices evaluated once over a set of wavelengths, solved again and again with
//! changed layer thicknesses or layer indices — the shared engine of the tolerance and
//! sensitivity analyses.

use num_complex::Complex64;

use super::sweep::{all_materials, check_angle, index_table, run, warnings};
use super::{SweepError, Warning};
use crate::design::{Pol, Quantity, ResolvedDesign};
use crate::optics::{Response, Side, StackAt, solve4};

/// The value of `quantity` for `pol` in a response (fractions).
#[must_use]
pub(crate) fn pick(r: &Response, quantity: Quantity, pol: Pol) -> f64 {
    match (quantity, pol) {
        (Quantity::R, Pol::S) => r.r_s,
        (Quantity::R, Pol::P) => r.r_p,
        (Quantity::R, Pol::Mean) => r.r(),
        (Quantity::T, Pol::S) => r.t_s,
        (Quantity::T, Pol::P) => r.t_p,
        (Quantity::T, Pol::Mean) => r.t(),
        (Quantity::A, Pol::S) => r.a_s,
        (Quantity::A, Pol::P) => r.a_p,
        (Quantity::A, Pol::Mean) => r.a(),
    }
}

/// Indices of every material of a design at every wavelength of a sweep, row-major
/// (wavelength, material): the layer materials first (as in [`ResolvedDesign::materials`]),
/// then incident, substrate and exit media.
#[derive(Clone, Debug)]
pub(crate) struct IndexGrid<'d> {
    design: &'d ResolvedDesign,
    wavelengths_nm: Vec<f64>,
    aoi_rad: f64,
    side: Side,
    table: Vec<Complex64>,
    warnings: Vec<Warning>,
}

impl<'d> IndexGrid<'d> {
    /// Evaluates every material once per wavelength; checks the angle and the wavelengths.
    pub(crate) fn new(
        design: &'d ResolvedDesign,
        wavelengths_nm: &[f64],
        aoi_deg: f64,
        side: Side,
    ) -> Result<Self, SweepError> {
        check_angle(aoi_deg)?;
        let table = index_table(&all_materials(design), wavelengths_nm)?;
        let warnings = warnings(design, wavelengths_nm, &table);
        Ok(Self {
            design,
            wavelengths_nm: wavelengths_nm.to_vec(),
            aoi_rad: aoi_deg.to_radians(),
            side,
            table,
            warnings,
        })
    }

    /// The sweep's wavelengths (nm).
    pub(crate) fn wavelengths_nm(&self) -> &[f64] {
        &self.wavelengths_nm
    }

    /// Warnings about the materials (extrapolation, absorbing incident medium).
    pub(crate) fn warnings(&self) -> &[Warning] {
        &self.warnings
    }

    /// Entries per wavelength row of [`IndexGrid::table`].
    pub(crate) fn width(&self) -> usize {
        self.design.materials.len() + 3
    }

    /// The nominal index table.
    pub(crate) fn table(&self) -> &[Complex64] {
        &self.table
    }

    /// The design's nominal layers, (material, nm).
    pub(crate) fn layers(&self) -> &'d [(usize, f64)] {
        &self.design.layers
    }

    /// Solves the design with `layers` in place of its own and `table` (shaped like
    /// [`IndexGrid::table`]) in place of its indices, at every wavelength.
    pub(crate) fn solve_with(&self, table: &[Complex64], layers: &[(usize, f64)]) -> Vec<Response> {
        let width = self.width();
        let nm = self.design.materials.len();
        let mm = self.design.substrate_mm;
        let stack = |i: usize| {
            let row = &table[i * width..(i + 1) * width];
            StackAt {
                incident: row[nm],
                substrate: row[nm + 1],
                exit: row[nm + 2],
                materials: &row[..nm],
                layers,
                back_layers: &self.design.back_layers,
                substrate_mm: mm,
            }
        };
        let wl = &self.wavelengths_nm;
        let (aoi, side) = (self.aoi_rad, self.side);
        run(wl.len(), layers.len(), |lanes, scratch| {
            let stacks = lanes.map(&stack);
            solve4(
                stacks.each_ref(),
                lanes.map(|i| wl[i]),
                [aoi; 4],
                side,
                scratch,
            )
        })
    }

    /// `quantity` for `pol` at every wavelength, with these layers and indices.
    pub(crate) fn curve_with(
        &self,
        table: &[Complex64],
        layers: &[(usize, f64)],
        quantity: Quantity,
        pol: Pol,
    ) -> Vec<f64> {
        self.solve_with(table, layers)
            .iter()
            .map(|r| pick(r, quantity, pol))
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::design::{Design, Layer, Nm};
    use crate::material::{Material, Model};

    #[test]
    fn the_grid_reproduces_the_sweep_exactly() {
        let mut d = Design::new_empty("Two layers");
        d.substrate_mm = Some(1.0);
        d.materials
            .push(Material::user("H", Model::Constant { n: 2.35, k: 0.001 }));
        d.layers = vec![
            Layer::new("H", Nm::new(58.5).unwrap()),
            Layer::new("SiO2", Nm::new(94.2).unwrap()),
        ];
        let r = d.resolve().unwrap();
        let wl: Vec<f64> = (0..=30).map(|i| 400.0 + 10.0 * f64::from(i)).collect();
        let s = super::super::spectrum(&r, &wl, 30.0, Side::Front).unwrap();
        let g = IndexGrid::new(&r, &wl, 30.0, Side::Front).unwrap();
        let t = g.curve_with(g.table(), g.layers(), Quantity::T, Pol::P);
        assert_eq!(t, s.curves.t_p, "same engine, same bits");
        assert_eq!(g.warnings(), &s.warnings[..], "same warnings");
    }
}
