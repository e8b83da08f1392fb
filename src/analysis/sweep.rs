//! Wavelength and angle sweeps over a resolved design.

use std::fmt;

use num_complex::Complex64;
use rayon::prelude::*;

use crate::design::ResolvedDesign;
use crate::material::{Material, MaterialError, RangeWarning};
use crate::optics::{ColumnsMut, Response, Scratch4, Side, StackAt, solve4};

use super::limits::{check_finite, check_work};

/// Sweeps with at least this many layer·point products run on all cores.
pub const PARALLEL_MIN_WORK: usize = 50_000;

/// Most points one sweep may have (a guard against a typo such as a 1e-6 nm step).
const MAX_POINTS: usize = 2_000_000;

/// What can go wrong when setting up or running a sweep.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum SweepError {
    /// A range bound or step is not a finite number.
    #[error("{what} must be a finite number, got {value}")]
    NotFinite {
        /// Which value.
        what: &'static str,
        /// The value given.
        value: f64,
    },
    /// The range runs backwards or is empty.
    #[error("the range {from} to {to} is empty or runs backwards; give a start below the end")]
    Inverted {
        /// Start.
        from: f64,
        /// End.
        to: f64,
    },
    /// The step is zero or negative.
    #[error("the step must be positive, got {step}")]
    BadStep {
        /// The step given.
        step: f64,
    },
    /// Wavelengths must be positive.
    #[error("wavelengths must be positive, got {wavelength_nm} nm")]
    BadWavelength {
        /// The wavelength given.
        wavelength_nm: f64,
    },
    /// The angle of incidence is outside 0 ≤ θ < 90°.
    #[error("angle of incidence {aoi_deg}° is outside 0° to below 90°")]
    BadAngle {
        /// The angle given.
        aoi_deg: f64,
    },
    /// Too many points.
    #[error("{points} points is more than the {MAX_POINTS} one sweep allows; use a larger step")]
    TooManyPoints {
        /// How many the range and step would give.
        points: usize,
    },
    /// The sweep would take too long; refused before it starts.
    #[error(
        "this sweep is about {work:.2e} layer·points ({layers} layers × {points} wavelengths × \
         {angles} angles), more than the {:.0e} one sweep may take (it would need about \
         {seconds:.0} s); use a larger step (at most {fit} wavelengths or angles for this \
         design) or fewer layers",
        super::limits::MAX_WORK
    )]
    TooMuchWork {
        /// Estimated layer·points.
        work: f64,
        /// Layers in the design.
        layers: usize,
        /// Wavelengths.
        points: usize,
        /// Angles.
        angles: usize,
        /// Rough time on this machine's cores.
        seconds: f64,
        /// How many points along the longer axis would fit.
        fit: usize,
    },
    /// A computed value is not a finite number (the last guard; it is never written as data).
    #[error(
        "{quantity} came out as {value} at {wavelength_nm} nm, {aoi_deg}°; the result is not \
         a number, so nothing was written; check the design's indices and thicknesses"
    )]
    NotANumber {
        /// Which quantity, e.g. `T_s`.
        quantity: &'static str,
        /// The value, as text.
        value: String,
        /// Wavelength of the point.
        wavelength_nm: f64,
        /// Angle of incidence of the point (degrees).
        aoi_deg: f64,
    },
    /// A material has no usable index somewhere in the sweep.
    #[error(transparent)]
    Material(#[from] MaterialError),
}

/// Something the user should know about a result that is still computed.
#[derive(Clone, Debug, PartialEq)]
#[non_exhaustive]
pub enum Warning {
    /// A material was evaluated outside its data.
    Extrapolated(RangeWarning),
    /// The incident medium absorbs; its k is ignored.
    AbsorbingIncident {
        /// Material name.
        material: String,
        /// Largest k met.
        k: f64,
    },
}

impl fmt::Display for Warning {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Warning::Extrapolated(w) => w.fmt(f),
            Warning::AbsorbingIncident { material, k } => write!(
                f,
                "incident medium {material}: absorption (k up to {k:.3e}) is ignored; \
                 the incident medium is treated as transparent"
            ),
        }
    }
}

/// R, T, A for s, p and their mean, plus the coating's complex amplitudes, one entry per point.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Curves {
    /// Reflectance, s.
    pub r_s: Vec<f64>,
    /// Reflectance, p.
    pub r_p: Vec<f64>,
    /// Reflectance, mean of s and p.
    pub r: Vec<f64>,
    /// Transmittance, s.
    pub t_s: Vec<f64>,
    /// Transmittance, p.
    pub t_p: Vec<f64>,
    /// Transmittance, mean.
    pub t: Vec<f64>,
    /// Absorptance, s.
    pub a_s: Vec<f64>,
    /// Absorptance, p.
    pub a_p: Vec<f64>,
    /// Absorptance, mean.
    pub a: Vec<f64>,
    /// Complex reflection amplitude, s.
    pub amp_r_s: Vec<Complex64>,
    /// Complex reflection amplitude, p.
    pub amp_r_p: Vec<Complex64>,
    /// Complex transmission amplitude, s.
    pub amp_t_s: Vec<Complex64>,
    /// Complex transmission amplitude, p.
    pub amp_t_p: Vec<Complex64>,
}

impl Curves {
    pub(super) fn from_responses(rs: &[Response]) -> Self {
        let col = |f: fn(&Response) -> f64| rs.iter().map(f).collect::<Vec<_>>();
        let cplx = |f: fn(&Response) -> Complex64| rs.iter().map(f).collect::<Vec<_>>();
        Self {
            r_s: col(|r| r.r_s),
            r_p: col(|r| r.r_p),
            r: col(Response::r),
            t_s: col(|r| r.t_s),
            t_p: col(|r| r.t_p),
            t: col(Response::t),
            a_s: col(|r| r.a_s),
            a_p: col(|r| r.a_p),
            a: col(Response::a),
            amp_r_s: cplx(|r| r.amp_r_s),
            amp_r_p: cplx(|r| r.amp_r_p),
            amp_t_s: cplx(|r| r.amp_t_s),
            amp_t_p: cplx(|r| r.amp_t_p),
        }
    }

    /// `points` points, every value zero.
    pub(super) fn zeroed(points: usize) -> Self {
        let (real, complex) = (vec![0.0; points], vec![Complex64::ZERO; points]);
        Self {
            r_s: real.clone(),
            r_p: real.clone(),
            r: real.clone(),
            t_s: real.clone(),
            t_p: real.clone(),
            t: real.clone(),
            a_s: real.clone(),
            a_p: real.clone(),
            a: real,
            amp_r_s: complex.clone(),
            amp_r_p: complex.clone(),
            amp_t_s: complex.clone(),
            amp_t_p: complex,
        }
    }

    /// Every column, to write into.
    pub(super) fn columns_mut(&mut self) -> ColumnsMut<'_> {
        ColumnsMut {
            r_s: &mut self.r_s,
            r_p: &mut self.r_p,
            r: &mut self.r,
            t_s: &mut self.t_s,
            t_p: &mut self.t_p,
            t: &mut self.t,
            a_s: &mut self.a_s,
            a_p: &mut self.a_p,
            a: &mut self.a,
            amp_r_s: &mut self.amp_r_s,
            amp_r_p: &mut self.amp_r_p,
            amp_t_s: &mut self.amp_t_s,
            amp_t_p: &mut self.amp_t_p,
        }
    }

    /// Number of points.
    #[must_use]
    pub fn len(&self) -> usize {
        self.r.len()
    }

    /// Whether there are no points.
    #[must_use]
    pub fn is_empty(&self) -> bool {
        self.r.is_empty()
    }

    /// The nine intensity columns in the order R_s, R_p, R, T_s, T_p, T, A_s, A_p, A.
    #[must_use]
    pub fn columns(&self) -> [&[f64]; 9] {
        [
            &self.r_s, &self.r_p, &self.r, &self.t_s, &self.t_p, &self.t, &self.a_s, &self.a_p,
            &self.a,
        ]
    }
}

/// Names of [`Curves::columns`], as CSV headers.
pub const COLUMN_NAMES: [&str; 9] = ["R_s", "R_p", "R", "T_s", "T_p", "T", "A_s", "A_p", "A"];

/// A design's response over wavelength at one angle.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Spectrum {
    /// Wavelengths (nm).
    pub wavelength_nm: Vec<f64>,
    /// Angle of incidence (degrees, in the medium the light comes from).
    pub aoi_deg: f64,
    /// Side the light comes from.
    pub side: Side,
    /// The responses.
    pub curves: Curves,
    /// Things to tell the user (e.g. extrapolated materials).
    pub warnings: Vec<Warning>,
}

/// A design's response over the angle of incidence at one wavelength.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct AngleScan {
    /// Angles of incidence (degrees).
    pub aoi_deg: Vec<f64>,
    /// Wavelength (nm).
    pub wavelength_nm: f64,
    /// Side the light comes from.
    pub side: Side,
    /// The responses.
    pub curves: Curves,
    /// Things to tell the user.
    pub warnings: Vec<Warning>,
}

/// Evenly spaced points from `from` to `to` inclusive (the last step may be short so `to` is
/// always included), checked for sense.
fn grid(from: f64, to: f64, step: f64) -> Result<Vec<f64>, SweepError> {
    for (what, value) in [("range start", from), ("range end", to), ("step", step)] {
        if !value.is_finite() {
            return Err(SweepError::NotFinite { what, value });
        }
    }
    if to < from {
        return Err(SweepError::Inverted { from, to });
    }
    if step <= 0.0 {
        return Err(SweepError::BadStep { step });
    }
    let span = to - from;
    let n = (span / step * (1.0 + 1e-12)).floor();
    if n >= MAX_POINTS as f64 {
        return Err(SweepError::TooManyPoints {
            points: n as usize + 1,
        });
    }
    let n = n as usize;
    let mut v: Vec<f64> = (0..=n).map(|i| from + step * i as f64).collect();
    if let Some(last) = v.last_mut()
        && (to - *last).abs() <= step * 1e-9
    {
        *last = to;
    } else if (to - from) > 0.0 {
        v.push(to);
    }
    Ok(v)
}

/// Wavelengths (nm) from `from_nm` to `to_nm` inclusive in steps of `step_nm`.
///
/// ```
/// let w = stackwise::analysis::wavelengths_nm(400.0, 700.0, 100.0).unwrap();
/// assert_eq!(w, vec![400.0, 500.0, 600.0, 700.0]);
/// assert!(stackwise::analysis::wavelengths_nm(700.0, 400.0, 1.0).is_err());
/// ```
pub fn wavelengths_nm(from_nm: f64, to_nm: f64, step_nm: f64) -> Result<Vec<f64>, SweepError> {
    let w = grid(from_nm, to_nm, step_nm)?;
    if from_nm <= 0.0 {
        return Err(SweepError::BadWavelength {
            wavelength_nm: from_nm,
        });
    }
    Ok(w)
}

/// Angles (degrees) from `from_deg` to `to_deg` inclusive, each in 0 ≤ θ < 90.
pub fn angles_deg(from_deg: f64, to_deg: f64, step_deg: f64) -> Result<Vec<f64>, SweepError> {
    let a = grid(from_deg, to_deg, step_deg)?;
    for x in [from_deg, to_deg] {
        check_angle(x)?;
    }
    Ok(a)
}

pub(super) fn check_angle(aoi_deg: f64) -> Result<(), SweepError> {
    if aoi_deg.is_finite() && (0.0..90.0).contains(&aoi_deg) {
        Ok(())
    } else {
        Err(SweepError::BadAngle { aoi_deg })
    }
}

/// Every material the solver needs: layer materials first, then incident, substrate, exit.
pub(super) fn all_materials(d: &ResolvedDesign) -> Vec<&Material> {
    d.materials
        .iter()
        .chain([&d.incident, &d.substrate, &d.exit])
        .collect()
}

/// Indices of `mats` at each wavelength, row-major (wavelength, material). Each material is
/// evaluated over a block of wavelengths at once; a failure is reported for the first
/// wavelength, and at it the first material, without a usable index.
pub(super) fn index_table(
    mats: &[&Material],
    wavelengths_nm: &[f64],
) -> Result<Vec<Complex64>, SweepError> {
    /// Wavelengths per block.
    const BLOCK: usize = 256;
    if let Some(&w) = wavelengths_nm
        .iter()
        .find(|w| !(w.is_finite() && **w > 0.0))
    {
        return Err(SweepError::BadWavelength { wavelength_nm: w });
    }
    let width = mats.len();
    let mut out = vec![Complex64::ZERO; wavelengths_nm.len() * width];
    // One block of rows: its indices, or the first failure in row-major order (the lowest
    // row, and at it the first material).
    let fill = |wl: &[f64], rows: &mut [Complex64]| -> Result<(), MaterialError> {
        let mut column = [Complex64::ZERO; BLOCK];
        let column = &mut column[..wl.len()];
        let mut first_bad: Option<(usize, MaterialError)> = None;
        for (m, mat) in mats.iter().enumerate() {
            if let Err((row, e)) = mat.indices_at(wl, column)
                && first_bad.as_ref().is_none_or(|b| row < b.0)
            {
                first_bad = Some((row, e));
            }
            for (r, n) in column.iter().enumerate() {
                rows[r * width + m] = *n;
            }
        }
        first_bad.map_or(Ok(()), |(_, e)| Err(e))
    };
    let failure = wavelengths_nm
        .chunks(BLOCK)
        .zip(out.chunks_mut(BLOCK * width))
        .find_map(|(wl, rows)| fill(wl, rows).err());
    match failure {
        Some(e) => Err(e.into()),
        None => Ok(out),
    }
}

pub(super) fn warnings(
    d: &ResolvedDesign,
    wavelengths_nm: &[f64],
    indices: &[Complex64],
) -> Vec<Warning> {
    let width = d.materials.len() + 3;
    let k = indices
        .chunks(width)
        .map(|row| row[d.materials.len()].im)
        .fold(0.0, f64::max);
    warnings_with(d, wavelengths_nm, k)
}

/// [`warnings`] given the largest k of the incident medium over the sweep.
pub(super) fn warnings_with(
    d: &ResolvedDesign,
    wavelengths_nm: &[f64],
    k_incident: f64,
) -> Vec<Warning> {
    let mut out: Vec<Warning> = Vec::new();
    let mut seen: Vec<&str> = Vec::new();
    // The sweep's span, once: a material whose range holds it needs no closer look.
    let (lo, hi) = wavelengths_nm
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &w| {
            (a.min(w), b.max(w))
        });
    for m in all_materials(d) {
        if seen.contains(&m.name.as_str()) {
            continue;
        }
        seen.push(&m.name);
        let (min_nm, max_nm) = m.valid_range_nm();
        if min_nm <= lo && hi <= max_nm {
            continue;
        }
        if let Some(w) = m.range_warning(wavelengths_nm) {
            out.push(Warning::Extrapolated(w));
        }
    }
    let k = k_incident;
    if k > 0.0 {
        out.push(Warning::AbsorbingIncident {
            material: d.incident.name.clone(),
            k,
        });
    }
    out
}

/// Runs `solve_four(first, scratch)` for every group of four points (points past the end
/// repeat the last one and are dropped), on all cores when the work is large.
pub(super) fn run(
    points: usize,
    layers: usize,
    solve_four: impl Fn([usize; 4], &mut Scratch4) -> [Response; 4] + Sync,
) -> Vec<Response> {
    let mut out = vec![Response::default(); points];
    let lanes = |first: usize| std::array::from_fn(|k| (first + k).min(points - 1));
    let fill = |chunk: &mut [Response], first: usize, scratch: &mut Scratch4| {
        let four = solve_four(lanes(first), scratch);
        chunk.copy_from_slice(&four[..chunk.len()]);
    };
    if points * layers.max(1) >= PARALLEL_MIN_WORK {
        out.par_chunks_mut(4)
            .enumerate()
            .with_min_len(16)
            .for_each_init(Scratch4::default, |scratch, (c, chunk)| {
                fill(chunk, 4 * c, scratch);
            });
    } else {
        let mut scratch = Scratch4::default();
        for (c, chunk) in out.chunks_mut(4).enumerate() {
            fill(chunk, 4 * c, &mut scratch);
        }
    }
    out
}

/// Layers of both faces, the work per point.
pub(super) fn layer_count(d: &ResolvedDesign) -> usize {
    d.layers.len() + d.back_layers.len()
}

pub(super) fn stack_at<'a>(d: &'a ResolvedDesign, row: &'a [Complex64]) -> StackAt<'a> {
    let nm = d.materials.len();
    StackAt {
        incident: row[nm],
        substrate: row[nm + 1],
        exit: row[nm + 2],
        materials: &row[..nm],
        layers: &d.layers,
        back_layers: &d.back_layers,
        substrate_mm: d.substrate_mm,
    }
}

/// The design's response at each wavelength (nm), at `aoi_deg` in the medium the light comes
/// from.
pub fn spectrum(
    d: &ResolvedDesign,
    wavelengths_nm: &[f64],
    aoi_deg: f64,
    side: Side,
) -> Result<Spectrum, SweepError> {
    check_angle(aoi_deg)?;
    check_work(d.layers.len(), wavelengths_nm.len(), 1)?;
    if side == Side::Front && d.substrate_mm.is_none() {
        return super::front::front_spectrum(d, wavelengths_nm, aoi_deg);
    }
    let mats = all_materials(d);
    let table = index_table(&mats, wavelengths_nm)?;
    let width = mats.len();
    let aoi = aoi_deg.to_radians();
    let responses = run(wavelengths_nm.len(), layer_count(d), |lanes, scratch| {
        let stacks = lanes.map(|i| stack_at(d, &table[i * width..(i + 1) * width]));
        let wl = lanes.map(|i| wavelengths_nm[i]);
        solve4(stacks.each_ref(), wl, [aoi; 4], side, scratch)
    });
    check_finite(&responses, |i| wavelengths_nm[i], |_| aoi_deg)?;
    Ok(Spectrum {
        wavelength_nm: wavelengths_nm.to_vec(),
        aoi_deg,
        side,
        curves: Curves::from_responses(&responses),
        warnings: warnings(d, wavelengths_nm, &table),
    })
}

/// The design's response at one wavelength over angles of incidence (degrees).
pub fn angle_scan(
    d: &ResolvedDesign,
    wavelength_nm: f64,
    aoi_deg: &[f64],
    side: Side,
) -> Result<AngleScan, SweepError> {
    for &a in aoi_deg {
        check_angle(a)?;
    }
    check_work(d.layers.len(), 1, aoi_deg.len())?;
    let mats = all_materials(d);
    let table = index_table(&mats, &[wavelength_nm])?;
    let stack = stack_at(d, &table);
    let responses = run(aoi_deg.len(), layer_count(d), |lanes, scratch| {
        let aoi = lanes.map(|i| aoi_deg[i].to_radians());
        solve4([&stack; 4], [wavelength_nm; 4], aoi, side, scratch)
    });
    check_finite(&responses, |_| wavelength_nm, |i| aoi_deg[i])?;
    Ok(AngleScan {
        aoi_deg: aoi_deg.to_vec(),
        wavelength_nm,
        side,
        curves: Curves::from_responses(&responses),
        warnings: warnings(d, &[wavelength_nm], &table),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A long sweep (evaluated in blocks) reports the first wavelength in its order without a
    /// usable index, and otherwise the same numbers as one at a time.
    #[test]
    fn the_index_table_names_the_first_bad_wavelength_in_order() {
        use crate::material::Model;
        // n = 1.5 + 2000/λ² (λ in µm) passes the largest accepted n (1000) below about 1.415 µm.
        let steep = Material::user(
            "Steep",
            Model::Cauchy {
                a: 1.5,
                b: 2000.0,
                c: 0.0,
            },
        );
        let glass = Material::user("Glass", Model::Constant { n: 1.5, k: 0.0 });
        // Falling wavelengths, 6000 of them: the failures sit in the last blocks.
        let wl: Vec<f64> = (0..6000).map(|i| 3000.0 - 0.4 * f64::from(i)).collect();
        let first_bad = *wl
            .iter()
            .find(|&&w| steep.index_at(w).is_err())
            .expect("some wavelength fails");
        match index_table(&[&glass, &steep], &wl) {
            Err(SweepError::Material(MaterialError::NoIndex { wavelength_nm, .. })) => {
                assert_eq!(wavelength_nm.to_bits(), first_bad.to_bits());
            }
            other => panic!("expected the first bad wavelength, got {other:?}"),
        }
        let good: Vec<f64> = wl.iter().copied().filter(|&w| w > 1500.0).collect();
        let table = index_table(&[&glass, &steep], &good).expect("all good");
        for (row, &w) in good.iter().enumerate() {
            assert_eq!(table[2 * row + 1], steep.index_at(w).unwrap());
        }
    }

    #[test]
    fn grid_includes_the_end_even_when_the_step_does_not_divide() {
        assert_eq!(grid(0.0, 10.0, 4.0).unwrap(), vec![0.0, 4.0, 8.0, 10.0]);
        assert_eq!(grid(5.0, 5.0, 1.0).unwrap(), vec![5.0]);
        assert_eq!(grid(400.0, 700.0, 0.1).unwrap().len(), 3001);
    }

    #[test]
    fn bad_ranges_name_the_problem() {
        assert!(matches!(
            grid(1.0, 0.0, 1.0),
            Err(SweepError::Inverted { .. })
        ));
        assert!(matches!(
            grid(0.0, 1.0, 0.0),
            Err(SweepError::BadStep { .. })
        ));
        assert!(matches!(
            grid(0.0, f64::NAN, 1.0),
            Err(SweepError::NotFinite { .. })
        ));
        assert!(matches!(
            grid(0.0, 1e9, 1e-3),
            Err(SweepError::TooManyPoints { .. })
        ));
        assert!(matches!(
            angles_deg(0.0, 90.0, 1.0),
            Err(SweepError::BadAngle { .. })
        ));
        assert!(matches!(
            wavelengths_nm(0.0, 10.0, 1.0),
            Err(SweepError::BadWavelength { .. })
        ));
    }
}
