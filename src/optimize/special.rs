//! GDD and colour targets in the merit function: their values, residuals and derivatives.
//!
//! The values are exactly those of the analysis views: GDD from
//! [`crate::analysis::phase::phase_spectrum`] (five-point difference in ω, material dispersion
//! included; for `Pol::Mean` the mean of the s and p GDDs) at each wavelength of the target's
//! span, and the CIE 1976 coordinate from [`crate::analysis::color::colour_of`] over the
//! spectrum at the CIE wavelengths (360–780 nm, 5 nm), R or T of the target's polarisation.
//!
//! # Units in the merit
//!
//! The deviation beyond tolerance e (module doc of [`crate::optimize`]) is taken in the
//! target's own unit and divided by a fixed unit scale before it is weighted, so that a weight
//! means the same for every kind: [`GDD_SCALE_FS2`] fs² of GDD and [`COLOUR_SCALE`] CIELAB
//! units each count as much as a deviation of 0.01 (1 %) in R or T.
//!
//! # Derivatives
//!
//! By central differences on each thickness, step [`STEP_NM`]:
//! ∂v/∂d ≈ (v(d + h) − v(d − h)) / 2h, error O(h²). A layer of zero thickness (a needle trial)
//! is evaluated at −h as well; the characteristic matrix is analytic in d, so this is the
//! one-sided limit's derivative. Rows whose deviation is zero have zero derivative, as for
//! the R/T/A rows. Each column costs two evaluations of every GDD and colour target, so
//! these targets make refinement and needle insertion slower than R/T/A targets.

use crate::analysis::color::{Illuminant, Observer, color_wavelengths_nm, colour_of};
use crate::analysis::phase::phase_spectrum;
use crate::analysis::spectrum;
use crate::design::{
    ColourCoordinate, ColourLight, ColourObserver, Design, Measure, Pol, Quantity, ResolvedDesign,
};
use crate::material::Material;
use crate::optics::Side;

use super::OptimizeError;
use super::evaluate::TargetResult;
use super::problem::{Point, deviation};

/// GDD (fs²) that counts as a deviation of 0.01 in R or T.
pub const GDD_SCALE_FS2: f64 = 100.0;
/// CIELAB units that count as a deviation of 0.01 in R or T.
pub const COLOUR_SCALE: f64 = 1.0;
/// Thickness step of the central differences (nm).
pub const STEP_NM: f64 = 0.01;

/// One GDD or colour target.
#[derive(Clone, Debug)]
struct Special {
    /// 0-based target number.
    target: usize,
    measure: Measure,
    aoi_deg: f64,
    /// Wavelengths read (GDD); empty for colour.
    wavelengths_nm: Vec<f64>,
    /// w / Σw.
    share: f64,
    /// 0.01 / unit scale: what one unit of deviation counts as in the merit.
    factor: f64,
    /// Goal, tolerance and kind, with `scale` = √(w / Σw) · factor.
    point: Point,
}

/// Every GDD and colour target of a design, ready to evaluate for layer lists over the
/// evaluator's palette.
#[derive(Clone, Debug, Default)]
pub(crate) struct Specials {
    items: Vec<Special>,
    /// The design resolved over the palette; its layers are replaced at each evaluation.
    resolved: Option<ResolvedDesign>,
    rows: usize,
}

impl Specials {
    /// Collects `design`'s GDD and colour targets. `palette` is the evaluator's (it starts
    /// with the design's own materials), `total_weight` the merit's Σw.
    pub(crate) fn new(
        design: &Design,
        palette: &[Material],
        total_weight: f64,
        layers: &[(usize, f64)],
    ) -> Result<Self, OptimizeError> {
        let mut items = Vec::new();
        for (ti, t) in design.targets.iter().enumerate() {
            let (wavelengths_nm, unit) = match t.measure {
                Measure::Spectral => continue,
                Measure::Gdd => (t.wavelengths_nm(), GDD_SCALE_FS2),
                Measure::Colour { .. } => (Vec::new(), COLOUR_SCALE),
            };
            items.push(Special {
                target: ti,
                measure: t.measure,
                aoi_deg: t.aoi_deg,
                wavelengths_nm,
                share: t.weight / total_weight,
                factor: 0.01 / unit,
                point: Point {
                    group: 0,
                    target: ti,
                    quantity: t.quantity,
                    pol: t.pol,
                    kind: t.kind,
                    goal: t.goal,
                    tolerance: t.tolerance,
                    scale: (t.weight / total_weight).sqrt() * 0.01 / unit,
                },
            });
        }
        if items.is_empty() {
            return Ok(Self::default());
        }
        let mut resolved = design.resolve()?;
        let media = [&resolved.incident, &resolved.substrate, &resolved.exit];
        for s in &items {
            let (from_nm, to_nm) = match s.measure {
                Measure::Colour { .. } => (
                    crate::analysis::color::FIRST_NM,
                    *color_wavelengths_nm().last().unwrap_or(&0.0),
                ),
                _ => (
                    *s.wavelengths_nm.first().unwrap_or(&0.0),
                    *s.wavelengths_nm.last().unwrap_or(&0.0),
                ),
            };
            for m in palette.iter().chain(media) {
                let (min_nm, max_nm) = m.valid_range_nm();
                if from_nm < min_nm || to_nm > max_nm {
                    return Err(OptimizeError::OutsideData {
                        target: s.target + 1,
                        material: m.name.clone(),
                        from_nm,
                        to_nm,
                        min_nm,
                        max_nm,
                    });
                }
            }
        }
        resolved.materials = palette.to_vec();
        let rows = items.iter().map(Special::rows).sum();
        let out = Self {
            items,
            resolved: Some(resolved),
            rows,
        };
        // One trial evaluation, so a failure is an error now rather than a NaN later (only
        // thicknesses change between evaluations).
        for s in &out.items {
            out.values(s, layers)
                .map_err(|what| OptimizeError::TargetComputation {
                    target: s.target + 1,
                    what,
                })?;
        }
        Ok(out)
    }

    /// Number of residual rows.
    pub(crate) fn rows(&self) -> usize {
        self.rows
    }

    /// The values of one target for `layers` (fs² per wavelength, or one CIELAB coordinate).
    fn values(&self, s: &Special, layers: &[(usize, f64)]) -> Result<Vec<f64>, String> {
        let Some(base) = &self.resolved else {
            return Ok(Vec::new());
        };
        let d = ResolvedDesign {
            layers: layers.to_vec(),
            ..base.clone()
        };
        let reflected = s.point.quantity == Quantity::R;
        match s.measure {
            Measure::Spectral => Ok(Vec::new()),
            Measure::Gdd => {
                let p = phase_spectrum(&d, &s.wavelengths_nm, s.aoi_deg, Side::Front)
                    .map_err(|e| e.to_string())?;
                let (cs, cp) = if reflected {
                    (&p.r_s.gdd_fs2, &p.r_p.gdd_fs2)
                } else {
                    (&p.t_s.gdd_fs2, &p.t_p.gdd_fs2)
                };
                Ok(cs
                    .iter()
                    .zip(cp)
                    .map(|(&a, &b)| pick(s.point.pol, a, b))
                    .collect())
            }
            Measure::Colour {
                coordinate,
                illuminant,
                observer,
            } => {
                let sp = spectrum(&d, &color_wavelengths_nm(), s.aoi_deg, Side::Front)
                    .map_err(|e| e.to_string())?;
                let c = &sp.curves;
                let values = match (reflected, s.point.pol) {
                    (true, Pol::S) => &c.r_s,
                    (true, Pol::P) => &c.r_p,
                    (true, Pol::Mean) => &c.r,
                    (false, Pol::S) => &c.t_s,
                    (false, Pol::P) => &c.t_p,
                    (false, Pol::Mean) => &c.t,
                };
                let lab = colour_of(values, light(illuminant), viewer(observer))
                    .map_err(|e| e.to_string())?
                    .lab;
                Ok(vec![match coordinate {
                    ColourCoordinate::L => lab.l,
                    ColourCoordinate::A => lab.a,
                    ColourCoordinate::B => lab.b,
                }])
            }
        }
    }

    /// Values, or NaN where the computation failed (it did not at construction, and only
    /// thicknesses change since).
    fn values_or_nan(&self, s: &Special, layers: &[(usize, f64)]) -> Vec<f64> {
        self.values(s, layers)
            .unwrap_or_else(|_| vec![f64::NAN; s.rows()])
    }

    /// Scaled residuals of every row for `layers` into `out`; returns their sum of squares.
    pub(crate) fn residuals(&self, layers: &[(usize, f64)], out: &mut [f64]) -> f64 {
        let mut row = 0;
        let mut sum = 0.0;
        for s in &self.items {
            for v in self.values_or_nan(s, layers) {
                let r = s.point.scale * deviation(&s.point, v);
                out[row] = r;
                sum += r * r;
                row += 1;
            }
        }
        sum
    }

    /// Residuals into `out` and their derivatives (central differences) with respect to the
    /// thicknesses of layers `columns` into `d_out[row][c]`; returns the sum of squares.
    pub(crate) fn jacobian(
        &self,
        layers: &[(usize, f64)],
        columns: &[usize],
        out: &mut [f64],
        mut d_out: impl FnMut(usize, usize, f64),
    ) -> f64 {
        let sum = self.residuals(layers, out);
        let mut work = layers.to_vec();
        let mut row0 = 0;
        for s in &self.items {
            let n = s.rows();
            let active: Vec<bool> = out[row0..row0 + n].iter().map(|&r| r != 0.0).collect();
            for (c, &k) in columns.iter().enumerate() {
                if !active.iter().any(|&a| a) {
                    for i in 0..n {
                        d_out(row0 + i, c, 0.0);
                    }
                    continue;
                }
                let d = self.derivative(s, &mut work, k, STEP_NM);
                for i in 0..n {
                    let g = if active[i] { s.point.scale * d[i] } else { 0.0 };
                    d_out(row0 + i, c, g);
                }
            }
            row0 += n;
        }
        sum
    }

    /// ∂v/∂d of one target's values for layer `k`, central difference with step `h_nm`.
    fn derivative(&self, s: &Special, work: &mut [(usize, f64)], k: usize, h_nm: f64) -> Vec<f64> {
        let d0 = work[k].1;
        work[k].1 = d0 + h_nm;
        let plus = self.values_or_nan(s, work);
        work[k].1 = d0 - h_nm;
        let minus = self.values_or_nan(s, work);
        work[k].1 = d0;
        plus.iter()
            .zip(&minus)
            .map(|(p, m)| (p - m) / (2.0 * h_nm))
            .collect()
    }

    /// Adds ∂(Σ r²)/∂d over these rows to `grad` (every layer); returns their Σ r².
    pub(crate) fn add_gradient(&self, layers: &[(usize, f64)], grad: &mut [f64]) -> f64 {
        let mut r = vec![0.0; self.rows];
        let all: Vec<usize> = (0..layers.len()).collect();
        let mut rows: Vec<(usize, usize, f64)> = Vec::new();
        let sum = self.jacobian(layers, &all, &mut r, |i, c, g| {
            if g != 0.0 {
                rows.push((i, c, g));
            }
        });
        for (i, c, g) in rows {
            grad[c] += 2.0 * r[i] * g;
        }
        sum
    }

    /// Per GDD or colour target (0-based target number, its result), and these rows' Σ r²
    /// and Σ (w/Σw)·|e|·(unit factor) for the merit and the mean deviation.
    pub(crate) fn results(
        &self,
        layers: &[(usize, f64)],
    ) -> (Vec<(usize, TargetResult)>, f64, f64) {
        let (mut sum2, mut sum1) = (0.0, 0.0);
        let mut out = Vec::with_capacity(self.items.len());
        for s in &self.items {
            let values = self.values_or_nan(s, layers);
            let deviations: Vec<f64> = values.iter().map(|&v| deviation(&s.point, v)).collect();
            for e in &deviations {
                sum2 += (s.point.scale * e).powi(2);
                sum1 += s.share * s.factor * e.abs();
            }
            out.push((
                s.target,
                TargetResult {
                    wavelength_nm: s.wavelengths_nm.clone(),
                    pass: deviations.iter().all(|&e| e == 0.0),
                    worst: deviations.iter().fold(0.0, |m: f64, e| m.max(e.abs())),
                    values,
                    deviations,
                },
            ));
        }
        (out, sum2, sum1)
    }
}

impl Special {
    fn rows(&self) -> usize {
        match self.measure {
            Measure::Colour { .. } => 1,
            _ => self.wavelengths_nm.len(),
        }
    }
}

fn pick(pol: Pol, s: f64, p: f64) -> f64 {
    match pol {
        Pol::S => s,
        Pol::P => p,
        Pol::Mean => 0.5 * (s + p),
    }
}

fn light(l: ColourLight) -> Illuminant {
    match l {
        ColourLight::D65 => Illuminant::D65,
        ColourLight::A => Illuminant::A,
    }
}

fn viewer(o: ColourObserver) -> Observer {
    match o {
        ColourObserver::TwoDeg => Observer::Cie1931TwoDeg,
        ColourObserver::TenDeg => Observer::Cie1964TenDeg,
    }
}
