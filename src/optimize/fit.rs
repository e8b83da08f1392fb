//! Fitting a design to a measured run (reverse engineering): which thicknesses (and, on
//! request, which index scale of each material) explain a measured R or T curve.
//!
//! # What is fitted
//!
//! The parameters are the thickness of every unlocked front layer (locked layers, and a
//! coating on the back face of a thick substrate, stay as designed) and, with
//! [`FitSettings::index_scale`], one factor s on n of each layer material (k unchanged, at
//! every wavelength and in every layer of that material, on both faces). The residuals are
//!
//! ```text
//!   r_i = (X(λ_i) − M_i) / √N
//! ```
//!
//! over the N measured points λ_i that lie inside every material's data range (points outside
//! are skipped and counted), X the computed quantity (R or T; s, p or their mean) and M_i the
//! measured value, so the residual norm is the RMS difference. They are minimised by
//! [`super::lsq::minimize`] (bounded Levenberg–Marquardt): thicknesses within 0 to
//! 1 000 000 nm, scales within 1 ± [`MAX_SCALE_CHANGE`].
//!
//! # Derivatives
//!
//! Thickness columns are analytic ([`crate::optics::solve_gradient`]). Index-scale columns
//! are central differences in s with step h = [`SCALE_STEP`] (two extra solves per point and
//! material): truncation O(h²) ≈ 1e-12 of the second derivative, rounding about
//! ε/h ≈ 1e-10 of X — far below any measurement's noise.
//!
//! # The fitted design
//!
//! A copy of the design with the fitted thicknesses. A material whose fitted scale differs
//! from 1 is written as a new design material named `"<name> (fitted)"` whose formula gives
//! exactly s·n (Constant, Cauchy and table n times s; Sellmeier and rational formulas with
//! n² terms times s²), and the layers of that material use it. A Lorentz–Drude metal has no
//! such formula, so its index is never scaled. The input design is never changed.
//!
//! A run that is cancelled through the progress callback still returns `Ok` with the best
//! point so far and [`FitStop::Cancelled`].

use std::ops::ControlFlow;

use nalgebra::DMatrix;
use num_complex::Complex64;

use super::lsq::{self, End, Residuals};
use super::problem::{d_value, value};
use crate::analysis::measured::MeasuredCurve;
use crate::design::{Design, DesignError, Nm, Pol, Quantity, bounds};
use crate::material::{Material, MaterialError, Model};
use crate::optics::{Gradient, GradientScratch, Side, StackAt, Tilted, solve, solve_gradient};

/// Largest change of an index scale a fit may make (±20 %).
pub const MAX_SCALE_CHANGE: f64 = 0.2;

/// Step of the central difference in an index scale.
pub const SCALE_STEP: f64 = 1e-6;

/// What to fit and how.
#[derive(Clone, Debug, PartialEq)]
pub struct FitSettings {
    /// R or T (what was measured).
    pub quantity: Quantity,
    /// s, p or their mean (an unpolarised spectrophotometer measures the mean).
    pub pol: Pol,
    /// Angle of incidence of the measurement, degrees.
    pub aoi_deg: f64,
    /// Whether each layer material's n may be scaled too.
    pub index_scale: bool,
    /// Most iterations (Jacobian evaluations).
    pub max_iterations: usize,
}

impl Default for FitSettings {
    fn default() -> Self {
        Self {
            quantity: Quantity::T,
            pol: Pol::Mean,
            aoi_deg: 0.0,
            index_scale: false,
            max_iterations: 100,
        }
    }
}

/// How far a fit has come (reported once per iteration).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FitProgress {
    /// Iterations so far.
    pub iteration: usize,
    /// The best RMS difference so far (fraction).
    pub rms: f64,
}

/// Why a fit stopped.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum FitStop {
    /// No further progress: a local best fit.
    Converged,
    /// The iteration limit was reached.
    MaxIterations,
    /// The progress callback asked to stop; the result is the best point so far.
    Cancelled,
}

impl std::fmt::Display for FitStop {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            FitStop::Converged => "converged",
            FitStop::MaxIterations => "iteration limit reached",
            FitStop::Cancelled => "cancelled (best so far kept)",
        })
    }
}

/// One layer's fitted change.
#[derive(Clone, Debug, PartialEq)]
pub struct LayerChange {
    /// Layer number (1 = on the substrate).
    pub layer: usize,
    /// Its material (as designed).
    pub material: String,
    /// Designed thickness (nm).
    pub designed_nm: f64,
    /// Fitted thickness (nm).
    pub fitted_nm: f64,
    /// Whether it was locked (and so kept).
    pub locked: bool,
}

impl LayerChange {
    /// Fitted minus designed (nm).
    #[must_use]
    pub fn change_nm(&self) -> f64 {
        self.fitted_nm - self.designed_nm
    }

    /// The change in % of the designed thickness (0 for a layer designed at 0 nm).
    #[must_use]
    pub fn change_pct(&self) -> f64 {
        if self.designed_nm > 0.0 {
            100.0 * self.change_nm() / self.designed_nm
        } else {
            0.0
        }
    }
}

/// One material's fitted index scale.
#[derive(Clone, Debug, PartialEq)]
pub struct IndexScale {
    /// The material (as designed).
    pub material: String,
    /// The factor on n.
    pub scale: f64,
}

/// The result of a fit.
#[derive(Clone, Debug, PartialEq)]
pub struct FitOutcome {
    /// The fitted design (module doc); the input is unchanged.
    pub design: Design,
    /// RMS difference of the design as given (fraction).
    pub rms_before: f64,
    /// RMS difference of the fitted design (fraction).
    pub rms_after: f64,
    /// Measured points used (inside every material's data range).
    pub points_used: usize,
    /// The wavelengths of the points used (nm).
    pub wavelength_nm: Vec<f64>,
    /// The measured values there (fractions).
    pub measured: Vec<f64>,
    /// The design's computed values there, as given.
    pub designed: Vec<f64>,
    /// The fitted design's computed values there.
    pub fitted: Vec<f64>,
    /// Measured points skipped (outside some material's data range).
    pub points_skipped: usize,
    /// Every front layer, layer 1 first.
    pub layers: Vec<LayerChange>,
    /// The index scales (empty unless they were fitted).
    pub scales: Vec<IndexScale>,
    /// Why it stopped.
    pub stop: FitStop,
    /// Iterations (Jacobian evaluations).
    pub iterations: usize,
}

/// Why a fit could not run. The design is untouched in every case.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum FitError {
    /// The design itself is invalid.
    #[error(transparent)]
    Design(#[from] DesignError),
    /// A material gives no usable index at a measured wavelength.
    #[error("{0}")]
    Material(#[from] MaterialError),
    /// Absorptance cannot be measured directly.
    #[error("a fit needs a measured R or T, not {quantity:?}")]
    BadQuantity {
        /// The quantity asked for.
        quantity: Quantity,
    },
    /// Angle not in 0 ≤ θ < 90°.
    #[error("angle of incidence {aoi_deg}° is not allowed: give 0 to below 90 degrees")]
    BadAngle {
        /// The angle given.
        aoi_deg: f64,
    },
    /// Zero iterations allowed.
    #[error("the iteration limit must be at least 1")]
    NoIterations,
    /// The measured curve has no points.
    #[error("the measured curve has no points")]
    EmptyMeasurement,
    /// No measured point lies inside every material's data.
    #[error(
        "the measured curve ({from_nm}–{to_nm} nm) does not overlap the data of material \
         {material:?} ({min_nm}–{max_nm} nm); measure within the materials' range or choose \
         materials with data there"
    )]
    NoOverlap {
        /// The material whose range the measurement misses (the one that leaves fewest points).
        material: String,
        /// Start of its data (nm).
        min_nm: f64,
        /// End of its data (nm).
        max_nm: f64,
        /// First measured wavelength (nm).
        from_nm: f64,
        /// Last measured wavelength (nm).
        to_nm: f64,
    },
    /// Nothing may vary.
    #[error(
        "nothing to fit: every layer is locked{scale}; unlock a layer{hint}",
        scale = if *.index_scale { " and no material's index can be scaled" } else { "" },
        hint = if *.index_scale { "" } else { " or allow index scales" }
    )]
    NothingFree {
        /// Whether index scales were allowed.
        index_scale: bool,
    },
    /// Fewer usable points than free parameters.
    #[error(
        "{points} measured points lie within the materials' range, fewer than the {free} \
         quantities to fit; measure more points or lock layers"
    )]
    TooFewPoints {
        /// Usable points.
        points: usize,
        /// Free parameters.
        free: usize,
    },
}

/// n of `model` times `s` as a model of the same kind (k unchanged); `None` for a
/// Lorentz–Drude metal, which has no such formula.
fn scaled_model(model: &Model, s: f64) -> Option<Model> {
    let s2 = s * s;
    Some(match model {
        Model::Constant { n, k } => Model::Constant { n: n * s, k: *k },
        Model::Cauchy { a, b, c } => Model::Cauchy {
            a: a * s,
            b: b * s,
            c: c * s,
        },
        Model::Sellmeier { a, b, c } => Model::Sellmeier {
            a: s2 * (1.0 + a) - 1.0,
            b: b.iter().map(|v| v * s2).collect(),
            c: c.clone(),
        },
        Model::Rational { a, b, c } => Model::Rational {
            a: a * s2,
            b: b.iter().map(|v| v * s2).collect(),
            c: c.clone(),
        },
        Model::Table { rows } => Model::Table {
            rows: rows.iter().map(|&(w, n, k)| (w, n * s, k)).collect(),
        },
        Model::WithK { n, k } => Model::WithK {
            n: Box::new(scaled_model(n, s)?),
            k: k.clone(),
        },
        Model::LorentzDrude { .. } => return None,
    })
}

/// The least-squares view of the fit.
struct Problem<'a> {
    wavelengths_nm: Vec<f64>,
    measured: Vec<f64>,
    /// Nominal indices, row-major (wavelength, [materials…, incident, substrate, exit]).
    base: Vec<Complex64>,
    /// The indices with the current scales.
    table: Vec<Complex64>,
    width: usize,
    materials: usize,
    layers: Vec<(usize, f64)>,
    back_layers: &'a [(usize, f64)],
    substrate_mm: Option<f64>,
    free_layers: Vec<usize>,
    scaled: Vec<usize>,
    aoi_rad: f64,
    quantity: Quantity,
    pol: Pol,
    tilted: Vec<Tilted>,
    work: (GradientScratch, Gradient),
}

impl Problem<'_> {
    fn set(&mut self, x: &[f64]) {
        let (thick, scales) = x.split_at(self.free_layers.len());
        for (&k, &v) in self.free_layers.iter().zip(thick) {
            self.layers[k].1 = v;
        }
        for (&m, &s) in self.scaled.iter().zip(scales) {
            for row in 0..self.wavelengths_nm.len() {
                let i = row * self.width + m;
                self.table[i] = Complex64::new(self.base[i].re * s, self.base[i].im);
            }
        }
    }

    fn stack(&self, row: usize) -> StackAt<'_> {
        let r = &self.table[row * self.width..(row + 1) * self.width];
        let n = self.materials;
        StackAt {
            incident: r[n],
            substrate: r[n + 1],
            exit: r[n + 2],
            materials: &r[..n],
            layers: &self.layers,
            back_layers: self.back_layers,
            substrate_mm: self.substrate_mm,
        }
    }

    fn value_at(&mut self, row: usize) -> f64 {
        let mut tilted = std::mem::take(&mut self.tilted);
        let r = solve(
            &self.stack(row),
            self.wavelengths_nm[row],
            self.aoi_rad,
            Side::Front,
            &mut tilted,
        );
        self.tilted = tilted;
        value(&r, self.quantity, self.pol)
    }

    fn norm(&self) -> f64 {
        1.0 / (self.wavelengths_nm.len() as f64).sqrt()
    }
}

impl Residuals for Problem<'_> {
    fn residual_count(&self) -> usize {
        self.wavelengths_nm.len()
    }

    fn residuals(&mut self, x: &[f64], out: &mut [f64]) {
        self.set(x);
        let w = self.norm();
        for (row, o) in out.iter_mut().enumerate() {
            *o = w * (self.value_at(row) - self.measured[row]);
        }
    }

    fn jacobian(&mut self, x: &[f64], out: &mut [f64], jac: &mut DMatrix<f64>) {
        self.set(x);
        let w = self.norm();
        let free = self.free_layers.len();
        for row in 0..self.wavelengths_nm.len() {
            let mut work = std::mem::take(&mut self.work);
            solve_gradient(
                &self.stack(row),
                self.wavelengths_nm[row],
                self.aoi_rad,
                &mut work.0,
                &mut work.1,
            );
            out[row] = w * (value(&work.1.response, self.quantity, self.pol) - self.measured[row]);
            for (c, &k) in self.free_layers.iter().enumerate() {
                jac[(row, c)] = w * d_value(&work.1, k, self.quantity, self.pol);
            }
            self.work = work;
            for c in 0..self.scaled.len() {
                let i = row * self.width + self.scaled[c];
                let (base, s) = (self.base[i], x[free + c]);
                let mut at = |scale: f64| {
                    self.table[i] = Complex64::new(base.re * scale, base.im);
                    self.value_at(row)
                };
                let d = (at(s + SCALE_STEP) - at(s - SCALE_STEP)) / (2.0 * SCALE_STEP);
                self.table[i] = Complex64::new(base.re * s, base.im);
                jac[(row, free + c)] = w * d;
            }
        }
    }
}

/// Fits `design` to `measured` (module doc). `on_progress` is called once per iteration;
/// breaking stops the fit, which returns the best point so far with [`FitStop::Cancelled`].
///
/// ```
/// use stackwise::analysis::measured::MeasuredCurve;
/// use stackwise::design::{Design, Layer, Nm, Quantity};
/// use stackwise::optimize::fit::{fit, FitSettings};
/// let mut d = Design::new_empty("one layer");
/// d.layers.push(Layer::new("TiO2", Nm::new(60.0)?));
/// // "Measured": the same design, 2 nm thicker.
/// let mut truth = d.clone();
/// truth.layers[0].nm = Nm::new(62.0)?;
/// let wl: Vec<f64> = (0..=40).map(|i| 450.0 + 10.0 * f64::from(i)).collect();
/// let s = stackwise::analysis::spectrum(&truth.resolve()?, &wl, 0.0, stackwise::optics::Side::Front)?;
/// let measured = MeasuredCurve { wavelength_nm: wl, value: s.curves.r.clone(), ..MeasuredCurve::default() };
/// let settings = FitSettings { quantity: Quantity::R, ..FitSettings::default() };
/// let f = fit(&d, &measured, &settings, |_| std::ops::ControlFlow::Continue(()))?;
/// assert!((f.layers[0].fitted_nm - 62.0).abs() < 1e-3);
/// assert!(f.rms_after < 1e-6 && f.rms_before > 1e-3);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
#[expect(
    clippy::too_many_lines,
    reason = "checks, set-up, the solve and the result in one readable pass"
)]
pub fn fit(
    design: &Design,
    measured: &MeasuredCurve,
    settings: &FitSettings,
    mut on_progress: impl FnMut(&FitProgress) -> ControlFlow<()>,
) -> Result<FitOutcome, FitError> {
    let resolved = design.resolve()?;
    if settings.quantity == Quantity::A {
        return Err(FitError::BadQuantity {
            quantity: settings.quantity,
        });
    }
    let aoi_deg = settings.aoi_deg;
    if !(aoi_deg.is_finite() && (0.0..90.0).contains(&aoi_deg)) {
        return Err(FitError::BadAngle { aoi_deg });
    }
    if settings.max_iterations == 0 {
        return Err(FitError::NoIterations);
    }
    let (Some(&from_nm), Some(&to_nm)) = (
        measured.wavelength_nm.first(),
        measured.wavelength_nm.last(),
    ) else {
        return Err(FitError::EmptyMeasurement);
    };
    let all: Vec<&Material> = resolved
        .materials
        .iter()
        .chain([&resolved.incident, &resolved.substrate, &resolved.exit])
        .collect();
    let inside = |m: &Material, w: f64| {
        let (lo, hi) = m.valid_range_nm();
        (lo..=hi).contains(&w)
    };
    let keep: Vec<usize> = (0..measured.wavelength_nm.len())
        .filter(|&i| all.iter().all(|m| inside(m, measured.wavelength_nm[i])))
        .collect();
    if keep.is_empty() {
        let worst = all
            .iter()
            .min_by_key(|m| {
                measured
                    .wavelength_nm
                    .iter()
                    .filter(|&&w| inside(m, w))
                    .count()
            })
            .copied()
            .unwrap_or(&resolved.substrate);
        let (min_nm, max_nm) = worst.valid_range_nm();
        return Err(FitError::NoOverlap {
            material: worst.name.clone(),
            min_nm,
            max_nm,
            from_nm,
            to_nm,
        });
    }
    let free_layers: Vec<usize> = design
        .layers
        .iter()
        .enumerate()
        .filter(|(_, l)| !l.locked)
        .map(|(i, _)| i)
        .collect();
    let used = |m: usize| {
        resolved
            .layers
            .iter()
            .chain(&resolved.back_layers)
            .any(|&(lm, _)| lm == m)
    };
    let scaled: Vec<usize> = if settings.index_scale {
        (0..resolved.materials.len())
            .filter(|&m| used(m) && scaled_model(&resolved.materials[m].model, 1.0).is_some())
            .collect()
    } else {
        Vec::new()
    };
    let free = free_layers.len() + scaled.len();
    if free == 0 {
        return Err(FitError::NothingFree {
            index_scale: settings.index_scale,
        });
    }
    if keep.len() < free {
        return Err(FitError::TooFewPoints {
            points: keep.len(),
            free,
        });
    }
    let wavelengths_nm: Vec<f64> = keep.iter().map(|&i| measured.wavelength_nm[i]).collect();
    let mut base = Vec::with_capacity(all.len() * wavelengths_nm.len());
    for &w in &wavelengths_nm {
        for m in &all {
            base.push(m.index_at(w)?);
        }
    }
    let mut problem = Problem {
        measured: keep.iter().map(|&i| measured.value[i]).collect(),
        table: base.clone(),
        base,
        width: all.len(),
        materials: resolved.materials.len(),
        layers: resolved.layers.clone(),
        back_layers: &resolved.back_layers,
        substrate_mm: resolved.substrate_mm,
        free_layers,
        scaled,
        aoi_rad: aoi_deg.to_radians(),
        quantity: settings.quantity,
        pol: settings.pol,
        tilted: Vec::new(),
        work: (GradientScratch::default(), Gradient::default()),
        wavelengths_nm,
    };
    let mut x0: Vec<f64> = problem
        .free_layers
        .iter()
        .map(|&k| resolved.layers[k].1)
        .collect();
    let (mut lower, mut upper) = (vec![0.0; x0.len()], vec![bounds::MAX_LAYER_NM; x0.len()]);
    for _ in &problem.scaled {
        x0.push(1.0);
        lower.push(1.0 - MAX_SCALE_CHANGE);
        upper.push(1.0 + MAX_SCALE_CHANGE);
    }
    let mut r0 = vec![0.0; problem.residual_count()];
    problem.residuals(&x0, &mut r0);
    let rms_before = r0.iter().map(|r| r * r).sum::<f64>().sqrt();
    let lsq_settings = lsq::Settings {
        max_iterations: settings.max_iterations,
        ..lsq::Settings::default()
    };
    let mut on_step = |s: &lsq::Step<'_>| {
        on_progress(&FitProgress {
            iteration: s.iteration,
            rms: s.norm,
        })
    };
    let solution = lsq::minimize(
        &mut problem,
        &x0,
        &lower,
        &upper,
        &lsq_settings,
        &mut on_step,
    );
    // The best point is never worse than the start (the start is evaluated first).
    let (x, rms_after) = if solution.norm <= rms_before {
        (solution.x, solution.norm)
    } else {
        (x0, rms_before)
    };
    let stop = match solution.end {
        End::Cancelled => FitStop::Cancelled,
        End::MaxIterations => FitStop::MaxIterations,
        End::Zero | End::Converged => FitStop::Converged,
    };
    let mut r1 = vec![0.0; problem.residual_count()];
    problem.residuals(&x, &mut r1);
    let root_n = (r1.len() as f64).sqrt();
    let curve = |r: &[f64]| -> Vec<f64> {
        r.iter()
            .zip(&problem.measured)
            .map(|(r, m)| r * root_n + m)
            .collect()
    };
    let (designed, fitted_curve) = (curve(&r0), curve(&r1));
    let (thick, scale_values) = x.split_at(problem.free_layers.len());
    let mut fitted = design.clone();
    let mut layers: Vec<LayerChange> = design
        .layers
        .iter()
        .enumerate()
        .map(|(i, l)| LayerChange {
            layer: i + 1,
            material: l.material.clone(),
            designed_nm: l.nm.get(),
            fitted_nm: l.nm.get(),
            locked: l.locked,
        })
        .collect();
    for (&k, &v) in problem.free_layers.iter().zip(thick) {
        fitted.layers[k].nm = Nm::new(v).unwrap_or(Nm::ZERO);
        layers[k].fitted_nm = fitted.layers[k].nm.get();
    }
    let mut scales = Vec::new();
    for (&m, &s) in problem.scaled.iter().zip(scale_values) {
        let material = &resolved.materials[m];
        scales.push(IndexScale {
            material: material.name.clone(),
            scale: s,
        });
        if (s - 1.0).abs() < 1e-12 {
            continue;
        }
        let Some(model) = scaled_model(&material.model, s) else {
            continue;
        };
        let name = fresh_name(&fitted, &format!("{} (fitted)", material.name));
        let source = if material.source.is_empty() {
            format!("n × {s} fitted to a measured run")
        } else {
            format!("{}; n × {s} fitted to a measured run", material.source)
        };
        fitted.materials.push(Material {
            name: name.clone(),
            model,
            range_nm: material.range_nm,
            source,
        });
        for l in fitted.layers.iter_mut().chain(&mut fitted.back_layers) {
            if l.material == material.name {
                l.material.clone_from(&name);
            }
        }
    }
    Ok(FitOutcome {
        design: fitted,
        rms_before,
        rms_after,
        points_used: keep.len(),
        wavelength_nm: problem.wavelengths_nm.clone(),
        measured: problem.measured.clone(),
        designed,
        fitted: fitted_curve,
        points_skipped: measured.wavelength_nm.len() - keep.len(),
        layers,
        scales,
        stop,
        iterations: solution.iterations,
    })
}

/// `want`, or `want 2`, `want 3`… if a material of that name exists already.
fn fresh_name(d: &Design, want: &str) -> String {
    let taken = |n: &str| d.materials.iter().any(|m| m.name == n);
    if !taken(want) {
        return want.to_owned();
    }
    (2..=1000)
        .map(|i| format!("{want} {i}"))
        .find(|n| !taken(n))
        .unwrap_or_else(|| want.to_owned())
}
