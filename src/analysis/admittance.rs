//! The admittance locus at one wavelength: the equivalent admittance Y = H / E of the
//! structure below each plane, traced layer by layer from the substrate (Y = η_sub) to the
//! front surface, where r = (η₀ − Y) / (η₀ + Y).
//!
//! Admittances are tilted (η_s = N cos θ, η_p = N / cos θ) and in units of the free-space
//! admittance, as in the module doc of [`crate::optics`]. Inside a lossless layer the locus
//! is an arc of a circle centred on the real axis, travelled counter-clockwise with this
//! program's N = n + ik convention (diagrams drawn with N = n − ik are its mirror image in
//! the real axis and run clockwise); a quarter wave of index n on a substrate of admittance
//! Y ends at n² / Y.

use num_complex::Complex64;

use super::Warning;
use super::media::{MediaAt, ViewError, check_step, intervals};
use crate::design::ResolvedDesign;
use crate::optics::field::{Polarisation, Tangential, admittance, propagate};

/// Most points one locus may have.
pub const MAX_LOCUS_POINTS: u64 = 2_000_000;

/// The admittance locus: plain data a plot borrows directly.
#[derive(Clone, Debug, PartialEq)]
pub struct AdmittanceLocus {
    /// Vacuum wavelength, nm.
    pub wavelength_nm: f64,
    /// Angle of incidence, degrees.
    pub aoi_deg: f64,
    /// Polarisation.
    pub pol: Polarisation,
    /// (Re Y, Im Y) from the substrate to the front surface; each layer's start and end are
    /// both present.
    pub points: Vec<[f64; 2]>,
    /// The layer each point belongs to (0: the substrate's own admittance, the first point).
    pub point_layer: Vec<usize>,
    /// Y at each boundary: index 0 the substrate, index j the top of layer j.
    pub boundaries: Vec<[f64; 2]>,
    /// The incident medium's tilted admittance η₀ (where the locus should end for no
    /// reflection).
    pub incident: [f64; 2],
    /// Materials evaluated outside their data.
    pub warnings: Vec<Warning>,
}

impl AdmittanceLocus {
    /// The amplitude reflection coefficient at the front surface, (η₀ − Y) / (η₀ + Y).
    #[must_use]
    pub fn reflection(&self) -> Complex64 {
        let y = self
            .boundaries
            .last()
            .map_or(Complex64::new(0.0, 0.0), |b| Complex64::new(b[0], b[1]));
        let eta0 = Complex64::new(self.incident[0], self.incident[1]);
        (eta0 - y) / (eta0 + y)
    }
}

/// The locus of `d` at `wavelength_nm`, `aoi_deg` and `pol`, sampled at most `step_nm` of
/// physical thickness apart (every layer gets at least 16 intervals).
///
/// ```
/// use stackwise::analysis::admittance::admittance_locus;
/// use stackwise::design::{Design, Layer, Nm};
/// use stackwise::material::{Material, Model};
/// use stackwise::optics::field::Polarisation;
/// let mut d = Design::new_empty("QW");
/// d.substrate = "S".into();
/// d.materials = vec![Material::user("S", Model::Constant { n: 1.52, k: 0.0 }),
///                    Material::user("L", Model::Constant { n: 1.38, k: 0.0 })];
/// d.layers = vec![Layer::new("L", Nm::new(550.0 / (4.0 * 1.38))?)];
/// let y = admittance_locus(&d.resolve()?, 550.0, 0.0, Polarisation::S, 1.0)?;
/// // A quarter wave ends at n² / ns (Macleod, "Thin-Film Optical Filters", ch. 2).
/// let end = y.boundaries[1];
/// assert!((end[0] - 1.38 * 1.38 / 1.52).abs() < 1e-12 && end[1].abs() < 1e-12);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn admittance_locus(
    d: &ResolvedDesign,
    wavelength_nm: f64,
    aoi_deg: f64,
    pol: Polarisation,
    step_nm: f64,
) -> Result<AdmittanceLocus, ViewError> {
    let media = MediaAt::new(d, wavelength_nm, aoi_deg)?;
    check_step(
        "the admittance locus",
        media.total_nm(),
        step_nm,
        MAX_LOCUS_POINTS,
    )?;
    let to_xy = |y: Complex64| [y.re, y.im];
    let eta_sub = admittance(&media.substrate, pol);
    let mut points = vec![to_xy(eta_sub)];
    let mut point_layer = vec![0];
    let mut boundaries = vec![to_xy(eta_sub)];
    // [E; H] with E kept at 1 at each layer's bottom, so nothing overflows.
    let mut bottom = Tangential {
        e: Complex64::new(1.0, 0.0),
        h: eta_sub,
    };
    for (j, (m, d_nm)) in media.layers.iter().enumerate() {
        let k = intervals(*d_nm, step_nm, 16);
        for i in 0..=k {
            let z = d_nm * i as f64 / k as f64;
            let here = propagate(m, pol, bottom, z, wavelength_nm);
            points.push(to_xy(here.h / here.e));
            point_layer.push(j + 1);
        }
        let top = propagate(m, pol, bottom, *d_nm, wavelength_nm);
        let y = top.h / top.e;
        boundaries.push(to_xy(y));
        bottom = Tangential {
            e: Complex64::new(1.0, 0.0),
            h: y,
        };
    }
    Ok(AdmittanceLocus {
        wavelength_nm,
        aoi_deg,
        pol,
        points,
        point_layer,
        boundaries,
        incident: to_xy(admittance(&media.incident, pol)),
        warnings: media.warnings,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::design::{Design, Layer, Nm};
    use crate::material::{Material, Model};
    use crate::optics::coherent;

    #[test]
    fn locus_ends_where_the_solver_puts_the_reflection() {
        let mut d = Design::new_empty("t");
        d.substrate = "S".into();
        d.materials = vec![
            Material::user("S", Model::Constant { n: 1.52, k: 0.0 }),
            Material::user("H", Model::Constant { n: 2.35, k: 0.0 }),
            Material::user("M", Model::Constant { n: 0.06, k: 4.152 }),
        ];
        d.layers = vec![
            Layer::new("H", Nm::new(60.0).unwrap()),
            Layer::new("M", Nm::new(20.0).unwrap()),
            Layer::new("H", Nm::new(37.0).unwrap()),
        ];
        let r = d.resolve().unwrap();
        for pol in [Polarisation::S, Polarisation::P] {
            let y = admittance_locus(&r, 616.8, 30.0, pol, 2.0).unwrap();
            let media = MediaAt::new(&r, 616.8, 30.0).unwrap();
            let c = coherent(
                &media.incident,
                media.layers.iter().map(|(m, nm)| (m, *nm)),
                &media.substrate,
                616.8,
            );
            let want = if pol == Polarisation::S { c.s.r } else { c.p.r };
            assert!((y.reflection() - want).norm() < 1e-12, "{pol:?}");
            assert_eq!(y.boundaries.len(), 4, "substrate and three layers");
            assert_eq!(y.points.len(), y.point_layer.len(), "one layer per point");
        }
    }
}
