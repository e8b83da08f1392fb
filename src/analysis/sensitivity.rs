//! Sensitivity of a design to each layer's thickness: which layers the chamber must hit most
//! precisely.
//!
//! For layer j the sensitivity is the root-mean-square, over the sweep's wavelengths, of the
//! change of the chosen quantity per 1 % change of that layer's thickness, taken as the
//! central difference `(X(1.01 d_j) − X(0.99 d_j)) / 2` (fractions per %). A layer of zero
//! thickness has sensitivity 0. The layers are the front ones; a coating on the back face of a
//! thick substrate stays as designed.
//!
//! ```
//! use stackwise::analysis::sensitivity::sensitivity;
//! use stackwise::design::{Design, Layer, Nm, Pol, Quantity};
//! let mut d = Design::new_empty("Two layers");
//! d.layers = vec![Layer::new("TiO2", Nm::new(60.0)?), Layer::new("MgF2", Nm::new(0.0)?)];
//! let wl = [450.0, 550.0, 650.0];
//! let s = sensitivity(&d.resolve()?, &wl, 0.0, Quantity::R, Pol::Mean)?;
//! assert_eq!(s.ranked()[0].layer, 1);
//! assert_eq!(s.layers[1].sensitivity, 0.0);
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```

use rayon::prelude::*;

use super::grid::IndexGrid;
use super::{SweepError, Warning};
use crate::design::{Pol, Quantity, ResolvedDesign};
use crate::optics::Side;

/// Relative thickness step of the central difference (1 %).
const STEP: f64 = 0.01;

/// One layer's sensitivity.
#[derive(Clone, Debug, PartialEq)]
pub struct LayerSensitivity {
    /// Layer number (1 = on the substrate).
    pub layer: usize,
    /// The layer's material.
    pub material: String,
    /// Its thickness (nm).
    pub nm: f64,
    /// RMS change of the quantity over the wavelengths per 1 % thickness change (fraction).
    pub sensitivity: f64,
}

/// The sensitivities of all layers, in layer order.
#[derive(Clone, Debug, PartialEq)]
pub struct Sensitivity {
    /// One entry per layer, layer 1 first.
    pub layers: Vec<LayerSensitivity>,
    /// The quantity whose change is measured.
    pub quantity: Quantity,
    /// Its polarisation.
    pub pol: Pol,
    /// Angle of incidence (degrees).
    pub aoi_deg: f64,
    /// The wavelengths the RMS runs over (nm).
    pub wavelength_nm: Vec<f64>,
    /// Things to tell the user (e.g. extrapolated materials).
    pub warnings: Vec<Warning>,
}

impl Sensitivity {
    /// The layers, most sensitive first (equal values keep layer order).
    #[must_use]
    pub fn ranked(&self) -> Vec<&LayerSensitivity> {
        rank(&self.layers)
    }
}

/// `layers`, most sensitive first (equal values keep layer order).
#[must_use]
pub fn rank(layers: &[LayerSensitivity]) -> Vec<&LayerSensitivity> {
    let mut v: Vec<&LayerSensitivity> = layers.iter().collect();
    v.sort_by(|a, b| b.sensitivity.total_cmp(&a.sensitivity));
    v
}

/// The sensitivity of every layer of `design` (see the module documentation).
pub fn sensitivity(
    design: &ResolvedDesign,
    wavelengths_nm: &[f64],
    aoi_deg: f64,
    quantity: Quantity,
    pol: Pol,
) -> Result<Sensitivity, SweepError> {
    let grid = IndexGrid::new(design, wavelengths_nm, aoi_deg, Side::Front)?;
    let nominal = grid.layers();
    let values: Vec<f64> = (0..nominal.len())
        .into_par_iter()
        .map(|j| {
            let (m, nm) = nominal[j];
            if nm == 0.0 {
                return 0.0;
            }
            let mut layers = nominal.to_vec();
            let mut at = |factor: f64| {
                layers[j] = (m, nm * factor);
                grid.curve_with(grid.table(), &layers, quantity, pol)
            };
            let (up, down) = (at(1.0 + STEP), at(1.0 - STEP));
            let sum: f64 = up
                .iter()
                .zip(&down)
                .map(|(u, d)| {
                    let change = 0.5 * (u - d);
                    change * change
                })
                .sum();
            (sum / up.len().max(1) as f64).sqrt()
        })
        .collect();
    let layers = nominal
        .iter()
        .zip(values)
        .enumerate()
        .map(|(i, (&(m, nm), sensitivity))| LayerSensitivity {
            layer: i + 1,
            material: design.materials[m].name.clone(),
            nm,
            sensitivity,
        })
        .collect();
    Ok(Sensitivity {
        layers,
        quantity,
        pol,
        aoi_deg,
        wavelength_nm: grid.wavelengths_nm().to_vec(),
        warnings: grid.warnings().to_vec(),
    })
}

#[cfg(test)]
#[allow(
    clippy::float_cmp,
    reason = "these results must be exact, not merely close"
)]
mod tests {
    use super::*;
    use crate::design::{Design, Layer, Nm};
    use crate::material::{Material, Model};
    use num_complex::Complex64;

    /// Reflectance of one layer (index n1, thickness d) between n0 and n2 at normal
    /// incidence, by the Airy sum r = (r01 + r12 e^{2iδ}) / (1 + r01 r12 e^{2iδ}),
    /// δ = 2π n1 d / λ (Born & Wolf, Principles of Optics, §1.6.4; Macleod, Thin-Film Optical
    /// Filters, ch. 2).
    fn airy_r(n0: f64, n1: f64, n2: f64, d: f64, wl: f64) -> f64 {
        let r01 = (n0 - n1) / (n0 + n1);
        let r12 = (n1 - n2) / (n1 + n2);
        let e = Complex64::from_polar(1.0, 4.0 * std::f64::consts::PI * n1 * d / wl);
        let r = (r01 + r12 * e) / (1.0 + r01 * r12 * e);
        r.norm_sqr()
    }

    fn design(layers: &[(&str, f64)]) -> Design {
        let mut d = Design::new_empty("Test");
        d.substrate = "G".into();
        d.materials = vec![
            Material::user("H", Model::Constant { n: 2.35, k: 0.0 }),
            Material::user("L", Model::Constant { n: 1.38, k: 0.0 }),
            Material::user("G", Model::Constant { n: 1.52, k: 0.0 }),
        ];
        d.layers = layers
            .iter()
            .map(|&(m, nm)| Layer::new(m, Nm::new(nm).unwrap()))
            .collect();
        d
    }

    #[test]
    fn a_single_layer_matches_the_airy_formula() {
        let d = design(&[("L", 123.4)]);
        let wl: Vec<f64> = (0..=30).map(|i| 400.0 + 10.0 * f64::from(i)).collect();
        let s = sensitivity(&d.resolve().unwrap(), &wl, 0.0, Quantity::R, Pol::Mean).unwrap();
        let want = (wl
            .iter()
            .map(|&w| {
                let c = 0.5
                    * (airy_r(1.0, 1.38, 1.52, 123.4 * 1.01, w)
                        - airy_r(1.0, 1.38, 1.52, 123.4 * 0.99, w));
                c * c
            })
            .sum::<f64>()
            / wl.len() as f64)
            .sqrt();
        assert!(
            (s.layers[0].sensitivity - want).abs() < 1e-12,
            "{} vs Airy {want}",
            s.layers[0].sensitivity
        );
        assert!(want > 1e-4, "a real change: {want}");
        // Lossless: the change of T mirrors that of R.
        let t = sensitivity(&d.resolve().unwrap(), &wl, 0.0, Quantity::T, Pol::Mean).unwrap();
        assert!(
            (t.layers[0].sensitivity - want).abs() < 1e-12,
            "T mirrors R"
        );
    }

    #[test]
    fn ranking_puts_the_most_sensitive_first() {
        // A thick high-index layer moves the spectrum more than a thin low-index one.
        let d = design(&[("L", 10.0), ("H", 200.0), ("L", 0.0)]);
        let wl: Vec<f64> = (0..=40).map(|i| 400.0 + 10.0 * f64::from(i)).collect();
        let s = sensitivity(&d.resolve().unwrap(), &wl, 0.0, Quantity::R, Pol::Mean).unwrap();
        let order: Vec<usize> = s.ranked().iter().map(|l| l.layer).collect();
        assert_eq!(order, vec![2, 1, 3], "{:?}", s.layers);
        assert_eq!(
            s.layers[2].sensitivity, 0.0,
            "zero thickness, zero sensitivity"
        );
        assert_eq!(
            (s.layers[1].material.as_str(), s.layers[1].nm),
            ("H", 200.0),
            "layer data"
        );
    }

    #[test]
    fn a_bad_angle_is_refused() {
        let d = design(&[("L", 10.0)]);
        let e = sensitivity(&d.resolve().unwrap(), &[500.0], 90.0, Quantity::R, Pol::S);
        assert!(matches!(e, Err(SweepError::BadAngle { .. })), "{e:?}");
    }
}
