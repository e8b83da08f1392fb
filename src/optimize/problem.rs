//! The precomputed optimisation problem: every material's index at every target wavelength
//! and the media tilted for every (angle, wavelength) (evaluated once per run), the target
//! samples grouped by (angle, wavelength), and the merit, residuals and derivatives of a layer
//! list — four groups per pass in SIMD lanes.

use std::cell::RefCell;

use nalgebra::DMatrix;
use num_complex::Complex64;

use crate::design::{Design, Pol, Quantity, TargetKind};
use crate::material::{Catalog, Material};
use crate::optics::{
    Gradient, GradientScratch4, Media4, Response, Side, StackAt, solve_gradient4, solve4_with,
};

use super::OptimizeError;

/// One sample of one target.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Point {
    /// Which (angle, wavelength) group it reads.
    pub group: usize,
    /// 0-based target number.
    pub target: usize,
    pub quantity: Quantity,
    pub pol: Pol,
    pub kind: TargetKind,
    pub goal: f64,
    pub tolerance: f64,
    /// √(w / Σw).
    pub scale: f64,
}

/// One (angle, wavelength) pair that some target samples.
#[derive(Clone, Copy, Debug)]
struct Group {
    row: usize,
    wavelength_nm: f64,
    aoi_rad: f64,
}

/// A design's targets, precomputed for fast evaluation of many layer lists: indices of every
/// material at every target wavelength, evaluated once. Layer lists are
/// `(palette index, nm)` in deposition order, over [`Evaluator::palette`].
///
/// Build it once per run (or per Monte Carlo study) and call [`Evaluator::evaluate`] or
/// [`Evaluator::merit`] for each variant of the layers.
///
/// ```
/// use stackwise::design::{Design, Layer, Nm, Pol, Quantity, Target, TargetKind};
/// use stackwise::material::{Material, Model};
/// use stackwise::optimize::Evaluator;
/// let mut d = Design::new_empty("AR");
/// d.substrate = "G".into();
/// d.materials = vec![
///     Material::user("G", Model::Constant { n: 1.52, k: 0.0 }),
///     Material::user("L", Model::Constant { n: 1.38, k: 0.0 }),
/// ];
/// d.layers = vec![Layer::new("L", Nm::new(550.0 / 4.0 / 1.38)?)];
/// d.targets = vec![Target {
///     quantity: Quantity::R, pol: Pol::Mean, aoi_deg: 0.0, from_nm: 550.0, to_nm: 550.0,
///     step_nm: 0.0, kind: TargetKind::AtMost, goal: 0.02, tolerance: 0.0, weight: 1.0,
///     measure: stackwise::design::Measure::Spectral,
/// }];
/// let ev = Evaluator::new(&d, &[])?;
/// let e = ev.evaluate(&ev.layers_of(&d));
/// assert_eq!(e.passed, 1); // R = 1.26 % at 550 nm (quarter wave of 1.38 on 1.52)
/// assert_eq!(e.merit, 0.0);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
#[derive(Clone, Debug)]
pub struct Evaluator {
    palette: Vec<Material>,
    width: usize,
    /// Row-major (wavelength, [palette…, incident, substrate, exit]).
    table: Vec<Complex64>,
    groups: Vec<Group>,
    /// Sorted by group.
    pub(crate) points: Vec<Point>,
    /// Per group: range into `points`.
    group_points: Vec<(usize, usize)>,
    substrate_mm: Option<f64>,
    /// The back face's coating (palette indices; the palette starts with the design's own).
    back_layers: Vec<(usize, f64)>,
    /// Per target: its points, in wavelength order (none for GDD and colour targets).
    pub(crate) target_points: Vec<Vec<usize>>,
    /// GDD and colour targets: their rows follow the points' rows.
    pub(crate) special: super::special::Specials,
    /// The media of groups 4q..4q+3 tilted for their angles (the last quad repeats its last
    /// group): what every solve of those groups starts from, whatever the layers.
    media: Vec<Media4>,
}

/// Reusable buffers for the derivative passes ([`Evaluator::jacobian`]): the optimiser reads
/// only R's and T's derivatives.
#[derive(Debug)]
pub(crate) struct GradientWork {
    scratch: GradientScratch4,
    grads: [Gradient; 4],
}

impl Default for GradientWork {
    fn default() -> Self {
        Self {
            scratch: GradientScratch4::intensities_only(),
            grads: Default::default(),
        }
    }
}

thread_local! {
    /// Buffers for [`Evaluator::merit_gradient`] and [`Evaluator::merit`], so the optimiser's
    /// inner loop does not allocate.
    static WORK: RefCell<(GradientWork, Vec<Response>, Vec<f64>)> = RefCell::default();
}

impl Evaluator {
    /// Precomputes `design`'s targets. `extra` names materials beyond those of the layers that
    /// layer lists may use (for needle insertion).
    #[expect(
        clippy::too_many_lines,
        reason = "checks and tables built in one pass over targets"
    )]
    pub fn new(design: &Design, extra: &[String]) -> Result<Self, OptimizeError> {
        let resolved = design.resolve()?;
        if design.targets.is_empty() {
            return Err(OptimizeError::NoTargets);
        }
        let total_weight: f64 = design
            .targets
            .iter()
            .map(|t| t.weight * t.sample_count() as f64)
            .sum();
        if total_weight <= 0.0 {
            return Err(OptimizeError::ZeroWeight);
        }
        let catalog = Catalog::new(&design.materials);
        let mut palette = resolved.materials.clone();
        for name in extra {
            if palette.iter().any(|m| &m.name == name) {
                continue;
            }
            let m = catalog
                .get(name)
                .map_err(|source| crate::design::DesignError::Material {
                    place: "needle materials".into(),
                    source,
                })?;
            palette.push(m.clone());
        }
        let media = [&resolved.incident, &resolved.substrate, &resolved.exit];
        let mut wavelengths: Vec<f64> = Vec::new();
        let mut groups: Vec<Group> = Vec::new();
        let mut points: Vec<Point> = Vec::new();
        for (ti, t) in design
            .targets
            .iter()
            .enumerate()
            .filter(|t| t.1.measure.is_spectral())
        {
            let wls = t.wavelengths_nm();
            let (from_nm, to_nm) = (t.from_nm, *wls.last().unwrap_or(&t.to_nm));
            for m in palette.iter().chain(media) {
                let (min_nm, max_nm) = m.valid_range_nm();
                if from_nm < min_nm || to_nm > max_nm {
                    return Err(OptimizeError::OutsideData {
                        target: ti + 1,
                        material: m.name.clone(),
                        from_nm,
                        to_nm,
                        min_nm,
                        max_nm,
                    });
                }
            }
            let aoi_rad = t.aoi_deg.to_radians();
            let scale = (t.weight / total_weight).sqrt();
            for w in wls {
                let row = wavelengths
                    .iter()
                    .position(|&x| x.to_bits() == w.to_bits())
                    .unwrap_or_else(|| {
                        wavelengths.push(w);
                        wavelengths.len() - 1
                    });
                let group = groups
                    .iter()
                    .position(|g| g.row == row && g.aoi_rad.to_bits() == aoi_rad.to_bits())
                    .unwrap_or_else(|| {
                        groups.push(Group {
                            row,
                            wavelength_nm: w,
                            aoi_rad,
                        });
                        groups.len() - 1
                    });
                points.push(Point {
                    group,
                    target: ti,
                    quantity: t.quantity,
                    pol: t.pol,
                    kind: t.kind,
                    goal: t.goal,
                    tolerance: t.tolerance,
                    scale,
                });
            }
        }
        super::evaluate::check_contradictions(design, &points, &groups_wavelengths(&groups))?;
        points.sort_by_key(|p| p.group);
        let mut group_points = vec![(0, 0); groups.len()];
        let mut start = 0;
        for (g, gp) in group_points.iter_mut().enumerate() {
            let end = start + points[start..].iter().take_while(|p| p.group == g).count();
            *gp = (start, end);
            start = end;
        }
        let mut target_points = vec![Vec::new(); design.targets.len()];
        for (i, p) in points.iter().enumerate() {
            target_points[p.target].push(i);
        }
        let width = palette.len() + 3;
        let mut table = Vec::with_capacity(width * wavelengths.len());
        for &w in &wavelengths {
            for m in palette.iter().chain(media) {
                table.push(m.index_at(w)?);
            }
        }
        let start: Vec<(usize, f64)> = design
            .layers
            .iter()
            .map(|l| {
                (
                    palette
                        .iter()
                        .position(|m| m.name == l.material)
                        .unwrap_or(0),
                    l.nm.get(),
                )
            })
            .collect();
        let special = super::special::Specials::new(design, &palette, total_weight, &start)?;
        let mut ev = Self {
            special,
            palette,
            width,
            table,
            groups,
            points,
            group_points,
            substrate_mm: resolved.substrate_mm,
            back_layers: resolved.back_layers.clone(),
            target_points,
            media: Vec::new(),
        };
        ev.media = ev.tilted_media();
        Ok(ev)
    }

    /// The media of every quad of groups, tilted for their angles from the current table.
    fn tilted_media(&self) -> Vec<Media4> {
        (0..self.groups.len())
            .step_by(4)
            .map(|first| {
                let lanes = self.quad(first);
                let stacks = lanes.map(|g| self.stack(g, &[]));
                Media4::new(
                    stacks.each_ref(),
                    lanes.map(|g| self.groups[g].aoi_rad),
                    Side::Front,
                )
            })
            .collect()
    }

    /// The four groups of the quad starting at `first` (past the end: the last group again).
    fn quad(&self, first: usize) -> [usize; 4] {
        let last = self.groups.len() - 1;
        std::array::from_fn(|k| (first + k).min(last))
    }

    /// A copy whose first `scales.len()` palette materials (the design's layer materials, in
    /// the order of [`crate::design::ResolvedDesign::materials`]) have their n multiplied by
    /// the given factors at every wavelength (k unchanged) — the index errors of a tolerance
    /// run.
    #[must_use]
    pub fn with_index_scales(&self, scales: &[f64]) -> Evaluator {
        let mut e = self.clone();
        for row in e.table.chunks_mut(self.width) {
            for (n, scale) in row.iter_mut().zip(scales) {
                n.re *= scale;
            }
        }
        // The tilted media were made from the unscaled table.
        e.media = e.tilted_media();
        e
    }

    /// The materials layer lists refer to, by position.
    #[must_use]
    pub fn palette(&self) -> &[Material] {
        &self.palette
    }

    /// Position of a material in the palette.
    #[must_use]
    pub fn palette_index(&self, name: &str) -> Option<usize> {
        self.palette.iter().position(|m| m.name == name)
    }

    /// `design`'s layers as a layer list over this palette (materials missing from the
    /// palette map to its first entry; build the evaluator from the same design).
    #[must_use]
    pub fn layers_of(&self, design: &Design) -> Vec<(usize, f64)> {
        design
            .layers
            .iter()
            .map(|l| (self.palette_index(&l.material).unwrap_or(0), l.nm.get()))
            .collect()
    }

    /// The wavelength of a group (nm).
    pub(crate) fn group_wavelength(&self, group: usize) -> f64 {
        self.groups[group].wavelength_nm
    }

    /// The longest wavelength any target samples (nm).
    #[must_use]
    pub fn longest_nm(&self) -> f64 {
        self.groups
            .iter()
            .map(|g| g.wavelength_nm)
            .fold(0.0, f64::max)
    }

    /// Number of residuals (target samples).
    #[must_use]
    pub fn residual_count(&self) -> usize {
        self.points.len() + self.special.rows()
    }

    fn stack<'a>(&'a self, group: usize, layers: &'a [(usize, f64)]) -> StackAt<'a> {
        let row = &self.table[self.groups[group].row * self.width..][..self.width];
        let n = self.palette.len();
        StackAt {
            incident: row[n],
            substrate: row[n + 1],
            exit: row[n + 2],
            materials: &row[..n],
            layers,
            back_layers: &self.back_layers,
            substrate_mm: self.substrate_mm,
        }
    }

    /// The response at every group, four groups per solver pass.
    pub(crate) fn responses(&self, layers: &[(usize, f64)], out: &mut Vec<Response>) {
        let count = self.groups.len();
        out.clear();
        out.resize(count, Response::default());
        for (media, first) in self.media.iter().zip((0..count).step_by(4)) {
            let lanes = self.quad(first);
            let stacks = lanes.map(|g| self.stack(g, layers));
            let four = solve4_with(
                media,
                stacks.each_ref(),
                lanes.map(|g| self.groups[g].wavelength_nm),
            );
            for (k, &g) in lanes.iter().enumerate() {
                out[g] = four[k];
            }
        }
    }

    /// Residuals √(w/Σw)·e for `layers` into `out`; returns the merit (their norm).
    pub(crate) fn residuals(
        &self,
        layers: &[(usize, f64)],
        buf: &mut Vec<Response>,
        out: &mut [f64],
    ) -> f64 {
        self.responses(layers, buf);
        let mut sum = 0.0;
        for (i, p) in self.points.iter().enumerate() {
            let r = p.scale * deviation(p, value(&buf[p.group], p.quantity, p.pol));
            out[i] = r;
            sum += r * r;
        }
        sum += self
            .special
            .residuals(layers, &mut out[self.points.len()..]);
        sum.sqrt()
    }

    /// The merit of a layer list.
    #[must_use]
    pub fn merit(&self, layers: &[(usize, f64)]) -> f64 {
        WORK.with_borrow_mut(|(_, buf, r)| {
            r.clear();
            r.resize(self.residual_count(), 0.0);
            self.residuals(layers, buf, r)
        })
    }

    /// Runs the derivative passes four groups at a time and calls `visit(group, gradient)`
    /// for every group that some target samples.
    fn gradients(
        &self,
        layers: &[(usize, f64)],
        work: &mut GradientWork,
        mut visit: impl FnMut(usize, &Gradient),
    ) {
        let count = self.groups.len();
        for (media, first) in self.media.iter().zip((0..count).step_by(4)) {
            let lanes = self.quad(first);
            if lanes.iter().all(|&g| {
                let (a, b) = self.group_points[g];
                a == b
            }) {
                continue;
            }
            let stacks = lanes.map(|g| self.stack(g, layers));
            solve_gradient4(
                media,
                stacks.each_ref(),
                lanes.map(|g| self.groups[g].wavelength_nm),
                &mut work.scratch,
                &mut work.grads,
            );
            for (k, &g) in lanes.iter().enumerate() {
                if first + k < count {
                    visit(g, &work.grads[k]);
                }
            }
        }
    }

    /// Residuals and their Jacobian with respect to the thicknesses of layers `free` (column
    /// c ↔ layer `free[c]`); returns the merit.
    pub(crate) fn jacobian(
        &self,
        layers: &[(usize, f64)],
        free: &[usize],
        residuals: &mut [f64],
        jac: &mut DMatrix<f64>,
        work: &mut GradientWork,
    ) -> f64 {
        let mut sum = 0.0;
        self.gradients(layers, work, |gi, g| {
            let (a, b) = self.group_points[gi];
            for i in a..b {
                let p = &self.points[i];
                let e = deviation(p, value(&g.response, p.quantity, p.pol));
                residuals[i] = p.scale * e;
                sum += residuals[i] * residuals[i];
                let active = if e == 0.0 { 0.0 } else { p.scale };
                for (c, &k) in free.iter().enumerate() {
                    jac[(i, c)] = active * d_value(g, k, p.quantity, p.pol);
                }
            }
        });
        let n = self.points.len();
        sum += self
            .special
            .jacobian(layers, free, &mut residuals[n..], |i, c, v| {
                jac[(n + i, c)] = v;
            });
        sum.sqrt()
    }

    /// The merit and its gradient ∂MF²/∂d (per nm) for every layer of `layers` (into
    /// `grad`), by the analytic derivatives of [`crate::optics::solve_gradient`]: one pass per
    /// (angle, wavelength) sample, four samples per pass.
    pub fn merit_gradient(&self, layers: &[(usize, f64)], grad: &mut Vec<f64>) -> f64 {
        grad.clear();
        grad.resize(layers.len(), 0.0);
        let mut sum = 0.0;
        WORK.with_borrow_mut(|(work, _, _)| {
            self.gradients(layers, work, |gi, g| {
                let (a, b) = self.group_points[gi];
                for p in &self.points[a..b] {
                    let e = deviation(p, value(&g.response, p.quantity, p.pol));
                    if e == 0.0 {
                        continue;
                    }
                    let r = p.scale * e;
                    sum += r * r;
                    for (k, gk) in grad.iter_mut().enumerate() {
                        *gk += 2.0 * r * p.scale * d_value(g, k, p.quantity, p.pol);
                    }
                }
            });
        });
        sum += self.special.add_gradient(layers, grad);
        sum.sqrt()
    }
}

fn groups_wavelengths(groups: &[Group]) -> Vec<(f64, f64)> {
    groups
        .iter()
        .map(|g| (g.wavelength_nm, g.aoi_rad))
        .collect()
}

/// The value a target reads from a response.
#[must_use]
pub(crate) fn value(r: &Response, q: Quantity, pol: Pol) -> f64 {
    let (s, p) = match q {
        Quantity::R => (r.r_s, r.r_p),
        Quantity::T => (r.t_s, r.t_p),
        Quantity::A => (r.a_s, r.a_p),
    };
    match pol {
        Pol::S => s,
        Pol::P => p,
        Pol::Mean => 0.5 * (s + p),
    }
}

/// Its derivative with respect to layer `k`.
pub(crate) fn d_value(g: &Gradient, k: usize, q: Quantity, pol: Pol) -> f64 {
    let (s, p) = match q {
        Quantity::R => (g.d_r_s[k], g.d_r_p[k]),
        Quantity::T => (g.d_t_s[k], g.d_t_p[k]),
        Quantity::A => (g.d_a_s(k), g.d_a_p(k)),
    };
    match pol {
        Pol::S => s,
        Pol::P => p,
        Pol::Mean => 0.5 * (s + p),
    }
}

/// The deviation beyond tolerance e (module doc of `optimize`).
#[must_use]
pub(crate) fn deviation(p: &Point, v: f64) -> f64 {
    let (hi, lo) = (p.goal + p.tolerance, p.goal - p.tolerance);
    match p.kind {
        TargetKind::Equal | TargetKind::AtMost if v > hi => v - hi,
        TargetKind::Equal | TargetKind::AtLeast if v < lo => v - lo,
        _ => 0.0,
    }
}
