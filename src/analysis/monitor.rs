//! Optical monitoring: the signal the chamber's monitor sees while the coating grows.
//!
//! The signal is R or T of the coated part itself at one monitor wavelength and angle, as the
//! layers are deposited one after another from the substrate up: after `x` nm of layer j the
//! part carries layers 1 … j−1 complete and `x` nm of layer j, and faces the design's
//! incident medium (for a design used in air, the chamber's vacuum differs by the index of
//! air, 3·10⁻⁴). A substrate with a thickness keeps its back surface, as in every spectrum,
//! with the back face's coating as designed (only the front layers grow here).
//!
//! Turning points are the extrema of the signal over deposited thickness — where the operator
//! sees the signal stop and turn. For a layer growing on a stack whose admittance is real at
//! the monitor wavelength they fall at every quarter-wave optical thickness (Macleod,
//! Thin-Film Optical Filters, ch. on layer-thickness monitoring); a quarter-wave stack
//! monitored at its reference wavelength therefore ends every layer on a turning point.
//!
//! ```
//! use stackwise::analysis::monitor::{monitor, MonitorSettings};
//! use stackwise::design::{Design, Layer, Nm, Quantity};
//! let mut d = Design::new_empty("One layer");
//! d.layers.push(Layer::new("MgF2", Nm::new(99.6)?));
//! let m = monitor(&d.resolve()?, &MonitorSettings { wavelength_nm: 550.0, ..MonitorSettings::default() })?;
//! assert_eq!(m.deposited_nm.first(), Some(&0.0));
//! assert_eq!(m.deposited_nm.last(), Some(&99.6));
//! assert_eq!(m.layers.len(), 1);
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```

use num_complex::Complex64;

use super::SweepError;
use super::grid::pick;
use super::sweep::{all_materials, check_angle, index_table};
use crate::design::{Pol, Quantity, ResolvedDesign};
use crate::optics::{Side, StackAt, Tilted, solve};

/// An extremum that lies within this distance (nm) of a layer's end counts as reached at the
/// end: over so short a distance a flat-topped signal changes by far less than any monitor's
/// noise, and design files round thicknesses to about 0.01 nm.
pub const TURN_AT_END_NM: f64 = 0.05;

/// Most rows one monitoring curve may have.
pub const MAX_POINTS: usize = 1_000_000;

/// Most layer solutions (rows × layers below them) one curve may take.
pub const MAX_WORK: usize = 500_000_000;

/// Thickness step (nm) of the central difference that gives the signal's slope.
const SLOPE_STEP_NM: f64 = 1e-3;

/// What is monitored, and how finely.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MonitorSettings {
    /// Monitor wavelength (nm).
    pub wavelength_nm: f64,
    /// Angle of incidence in the incident medium (degrees).
    pub aoi_deg: f64,
    /// T or R (A is allowed too).
    pub quantity: Quantity,
    /// Polarisation.
    pub pol: Pol,
    /// Spacing of the rows in deposited thickness (nm); each layer's end is a row as well.
    pub step_nm: f64,
}

impl Default for MonitorSettings {
    fn default() -> Self {
        Self {
            wavelength_nm: 550.0,
            aoi_deg: 0.0,
            quantity: Quantity::T,
            pol: Pol::Mean,
            step_nm: 1.0,
        }
    }
}

/// One layer as the operator follows it.
#[derive(Clone, Debug, PartialEq)]
pub struct LayerMonitor {
    /// Layer number (1 = on the substrate).
    pub layer: usize,
    /// Its material.
    pub material: String,
    /// Deposited thickness at its start (nm, counted from the substrate).
    pub start_nm: f64,
    /// Deposited thickness at its end (nm).
    pub end_nm: f64,
    /// Signal when it starts (fraction).
    pub start_signal: f64,
    /// Signal when it ends (fraction).
    pub end_signal: f64,
    /// Deposited thickness (nm) of each turning point passed during this layer, its end
    /// included when the layer ends on one.
    pub turning_points_nm: Vec<f64>,
}

/// The monitoring curve of a whole run (plain data to plot).
#[derive(Clone, Debug, PartialEq)]
pub struct MonitorCurve {
    /// The settings it was computed with.
    pub settings: MonitorSettings,
    /// Deposited thickness of each row (nm, counted from the substrate), rising.
    pub deposited_nm: Vec<f64>,
    /// The layer being deposited at each row (1-based; the bare substrate row counts as
    /// layer 1 at 0 nm).
    pub layer: Vec<usize>,
    /// The signal at each row (fraction).
    pub signal: Vec<f64>,
    /// One entry per layer.
    pub layers: Vec<LayerMonitor>,
}

/// Why a monitoring curve could not be computed.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum MonitorError {
    /// The monitor wavelength is not a positive number.
    #[error("monitor wavelength {wavelength_nm} nm is not allowed: give a positive number of nm")]
    BadWavelength {
        /// The value given.
        wavelength_nm: f64,
    },
    /// The monitor wavelength lies outside a material's data.
    #[error(
        "monitor wavelength {wavelength_nm} nm is outside the data of {material:?} \
         ({min_nm}–{max_nm} nm); choose a monitor wavelength inside it"
    )]
    OutsideData {
        /// The material.
        material: String,
        /// The monitor wavelength.
        wavelength_nm: f64,
        /// Start of its data (nm).
        min_nm: f64,
        /// End of its data (nm).
        max_nm: f64,
    },
    /// The row spacing is not a positive number.
    #[error("row step {step_nm} nm is not allowed: give a positive number of nm")]
    BadStep {
        /// The value given.
        step_nm: f64,
    },
    /// Too many rows or too much work.
    #[error(
        "{rows} rows over {layers} layers is too much work for one curve (at most {MAX_POINTS} \
         rows and {MAX_WORK} layer solutions); use a larger --step-nm"
    )]
    TooLarge {
        /// Rows the step would give.
        rows: usize,
        /// Layers in the design.
        layers: usize,
    },
    /// The angle or a material's index.
    #[error(transparent)]
    Sweep(#[from] SweepError),
}

/// The solver's view of the part at the monitor wavelength.
struct Part<'a> {
    design: &'a ResolvedDesign,
    indices: Vec<Complex64>,
    settings: MonitorSettings,
    aoi_rad: f64,
    scratch: Vec<Tilted>,
    /// Layers 1 … j−1 complete plus the growing layer j last.
    layers: Vec<(usize, f64)>,
}

impl Part<'_> {
    /// Starts layer `j` (0-based) at zero thickness.
    fn start_layer(&mut self, j: usize) {
        self.layers.clear();
        self.layers.extend_from_slice(&self.design.layers[..j]);
        self.layers.push((self.design.layers[j].0, 0.0));
    }

    /// The signal with `x_nm` of the growing layer deposited (no layer at all before the
    /// first `start_layer`).
    fn signal(&mut self, x_nm: f64) -> f64 {
        if let Some(last) = self.layers.last_mut() {
            last.1 = x_nm;
        }
        let nm = self.design.materials.len();
        let stack = StackAt {
            incident: self.indices[nm],
            substrate: self.indices[nm + 1],
            exit: self.indices[nm + 2],
            materials: &self.indices[..nm],
            layers: &self.layers,
            back_layers: &self.design.back_layers,
            substrate_mm: self.design.substrate_mm,
        };
        let r = solve(
            &stack,
            self.settings.wavelength_nm,
            self.aoi_rad,
            Side::Front,
            &mut self.scratch,
        );
        pick(&r, self.settings.quantity, self.settings.pol)
    }

    /// The signal's slope (per nm) at `x_nm` of the growing layer: a central difference,
    /// one-sided at the layer's start.
    fn slope(&mut self, x_nm: f64) -> f64 {
        if x_nm < SLOPE_STEP_NM {
            let h = SLOPE_STEP_NM;
            return (self.signal(x_nm + h) - self.signal(x_nm)) / h;
        }
        (self.signal(x_nm + SLOPE_STEP_NM) - self.signal(x_nm - SLOPE_STEP_NM))
            / (2.0 * SLOPE_STEP_NM)
    }

    /// Turning points (thickness into the growing layer, nm) in (0, thickness]; an extremum
    /// within [`TURN_AT_END_NM`] of the end counts as at the end, one within it of the start
    /// belongs to the layer before.
    fn turning_points(&mut self, thickness_nm: f64) -> Vec<f64> {
        if thickness_nm <= 0.0 {
            return Vec::new();
        }
        let samples = (thickness_nm.ceil() as usize).max(8);
        let xs: Vec<f64> = (0..=samples)
            .map(|i| thickness_nm * i as f64 / samples as f64)
            .collect();
        let slopes: Vec<f64> = xs.iter().map(|&x| self.slope(x)).collect();
        let largest = slopes.iter().fold(0.0_f64, |m, s| m.max(s.abs()));
        let dead = (1e-9 * largest).max(1e-15);
        let sign = |g: f64| {
            if g.abs() <= dead {
                0
            } else if g > 0.0 {
                1
            } else {
                -1
            }
        };
        let mut found = Vec::new();
        let mut last: Option<(f64, i32)> = None; // last sample with a clear sign
        for (&x, &g) in xs.iter().zip(&slopes) {
            let s = sign(g);
            if s == 0 {
                continue;
            }
            if let Some((x0, s0)) = last
                && s0 != s
            {
                found.push(self.root(x0, x, s0));
            }
            last = Some((x, s));
        }
        found.retain(|&x| x > TURN_AT_END_NM && x < thickness_nm - TURN_AT_END_NM);
        // The end: where a straight line through the slope just before it and at it crosses 0.
        let before = (thickness_nm - 0.1_f64.min(0.5 * thickness_nm)).max(0.0);
        let (g1, g0) = (self.slope(thickness_nm), self.slope(before));
        let crossing = thickness_nm - g1 * (thickness_nm - before) / (g1 - g0);
        if sign(g1) == 0 || (crossing - thickness_nm).abs() <= TURN_AT_END_NM {
            found.push(thickness_nm);
        }
        found
    }

    /// Bisection for the slope's zero between `lo` (slope sign `s_lo`) and `hi`.
    fn root(&mut self, mut lo: f64, mut hi: f64, s_lo: i32) -> f64 {
        for _ in 0..60 {
            if hi - lo <= 1e-7 {
                break;
            }
            let mid = 0.5 * (lo + hi);
            let g = self.slope(mid);
            if (g > 0.0) == (s_lo > 0) {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        0.5 * (lo + hi)
    }
}

fn check(design: &ResolvedDesign, s: &MonitorSettings) -> Result<(), MonitorError> {
    let wavelength_nm = s.wavelength_nm;
    if !(wavelength_nm.is_finite() && wavelength_nm > 0.0) {
        return Err(MonitorError::BadWavelength { wavelength_nm });
    }
    if !(s.step_nm.is_finite() && s.step_nm > 0.0) {
        return Err(MonitorError::BadStep { step_nm: s.step_nm });
    }
    check_angle(s.aoi_deg)?;
    for m in all_materials(design) {
        if !m.covers(wavelength_nm) {
            let (min_nm, max_nm) = m.valid_range_nm();
            return Err(MonitorError::OutsideData {
                material: m.name.clone(),
                wavelength_nm,
                min_nm,
                max_nm,
            });
        }
    }
    let total: f64 = design.layers.iter().map(|l| l.1).sum();
    let layers = design.layers.len();
    let rows = total / s.step_nm + layers as f64 + 1.0;
    // Rows, plus the slope samples of the turning-point search (two solutions per nm).
    let solutions = rows + 2.0 * (total + 8.0 * layers as f64);
    if rows > MAX_POINTS as f64 || solutions * (layers as f64 / 2.0 + 1.0) > MAX_WORK as f64 {
        return Err(MonitorError::TooLarge {
            rows: rows.min(usize::MAX as f64) as usize,
            layers,
        });
    }
    Ok(())
}

/// The monitoring curve of `design` under `settings` (see the module documentation).
pub fn monitor(
    design: &ResolvedDesign,
    settings: &MonitorSettings,
) -> Result<MonitorCurve, MonitorError> {
    check(design, settings)?;
    let indices = index_table(&all_materials(design), &[settings.wavelength_nm])?;
    let mut part = Part {
        design,
        indices,
        settings: *settings,
        aoi_rad: settings.aoi_deg.to_radians(),
        scratch: Vec::new(),
        layers: Vec::new(),
    };
    let mut curve = MonitorCurve {
        settings: *settings,
        deposited_nm: vec![0.0],
        layer: vec![1],
        signal: vec![part.signal(0.0)],
        layers: Vec::with_capacity(design.layers.len()),
    };
    let step = settings.step_nm;
    let mut start_nm = 0.0;
    for (j, &(m, thickness)) in design.layers.iter().enumerate() {
        part.start_layer(j);
        let start_signal = curve.signal.last().copied().unwrap_or(f64::NAN);
        let end_nm = start_nm + thickness;
        // Rows on the global grid k·step strictly inside the layer, then its exact end.
        let first = (start_nm / step).floor() as usize + 1;
        let mut k = first;
        loop {
            let at = k as f64 * step;
            if at >= end_nm {
                break;
            }
            curve.deposited_nm.push(at);
            curve.layer.push(j + 1);
            curve.signal.push(part.signal(at - start_nm));
            k += 1;
        }
        let end_signal = part.signal(thickness);
        curve.deposited_nm.push(end_nm);
        curve.layer.push(j + 1);
        curve.signal.push(end_signal);
        let turning_points_nm = part
            .turning_points(thickness)
            .into_iter()
            .map(|x| start_nm + x)
            .collect();
        curve.layers.push(LayerMonitor {
            layer: j + 1,
            material: design.materials[m].name.clone(),
            start_nm,
            end_nm,
            start_signal,
            end_signal,
            turning_points_nm,
        });
        start_nm = end_nm;
    }
    Ok(curve)
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

    const NH: f64 = 2.35;
    const NL: f64 = 1.46;

    fn design(layers: &[(&str, f64)], substrate_mm: Option<f64>) -> Design {
        let mut d = Design::new_empty("Monitor test");
        d.substrate = "G".into();
        d.substrate_mm = substrate_mm;
        d.materials = vec![
            Material::user("H", Model::Constant { n: NH, k: 0.0 }),
            Material::user("L", Model::Constant { n: NL, k: 0.0 }),
            Material::user("A", Model::Constant { n: 2.0, k: 0.05 }),
            Material::user("G", Model::Constant { n: 1.52, k: 0.0 }),
        ];
        d.layers = layers
            .iter()
            .map(|&(m, nm)| Layer::new(m, Nm::new(nm).unwrap()))
            .collect();
        d
    }

    fn qw(n: f64) -> f64 {
        550.0 / (4.0 * n)
    }

    fn settings(quantity: Quantity, step_nm: f64) -> MonitorSettings {
        MonitorSettings {
            wavelength_nm: 550.0,
            quantity,
            step_nm,
            ..MonitorSettings::default()
        }
    }

    #[test]
    fn each_layer_end_equals_the_spectrum_of_the_partial_stack() {
        let layers = [
            ("H", 61.0),
            ("L", 97.3),
            ("A", 33.3),
            ("H", 12.0),
            ("L", 140.0),
        ];
        for mm in [None, Some(1.0)] {
            let d = design(&layers, mm);
            for (quantity, aoi) in [(Quantity::T, 0.0), (Quantity::R, 30.0)] {
                let s = MonitorSettings {
                    aoi_deg: aoi,
                    ..settings(quantity, 7.0)
                };
                let m = monitor(&d.resolve().unwrap(), &s).unwrap();
                for (j, l) in m.layers.iter().enumerate() {
                    let mut partial = d.clone();
                    partial.layers.truncate(j + 1);
                    let spec = super::super::spectrum(
                        &partial.resolve().unwrap(),
                        &[550.0],
                        aoi,
                        Side::Front,
                    )
                    .unwrap();
                    let want = match quantity {
                        Quantity::T => spec.curves.t[0],
                        _ => spec.curves.r[0],
                    };
                    assert!(
                        (l.end_signal - want).abs() < 1e-12,
                        "layer {} ({mm:?}, {quantity:?}): {} vs {want}",
                        j + 1,
                        l.end_signal
                    );
                    let row = m
                        .deposited_nm
                        .iter()
                        .position(|&x| x == l.end_nm)
                        .expect("the exact end is a row");
                    assert_eq!(m.signal[row], l.end_signal, "row value");
                    assert_eq!(m.layer[row], j + 1, "row layer");
                }
                // The bare substrate starts the curve.
                let mut bare = d.clone();
                bare.layers.clear();
                let spec =
                    super::super::spectrum(&bare.resolve().unwrap(), &[550.0], aoi, Side::Front)
                        .unwrap();
                let want = match quantity {
                    Quantity::T => spec.curves.t[0],
                    _ => spec.curves.r[0],
                };
                assert!((m.signal[0] - want).abs() < 1e-12, "bare substrate");
            }
        }
    }

    #[test]
    fn rows_rise_and_follow_the_step() {
        let d = design(&[("H", 10.5), ("L", 4.0)], None);
        let m = monitor(&d.resolve().unwrap(), &settings(Quantity::T, 3.0)).unwrap();
        assert_eq!(
            m.deposited_nm,
            vec![0.0, 3.0, 6.0, 9.0, 10.5, 12.0, 14.5],
            "grid points and exact ends"
        );
        assert_eq!(m.layer, vec![1, 1, 1, 1, 1, 2, 2], "layer of each row");
        assert_eq!(
            m.layers[1].start_signal, m.layers[0].end_signal,
            "continuous"
        );
    }

    #[test]
    fn quarter_wave_layers_turn_at_their_ends() {
        // (HL)^3 H of quarter waves at the monitor wavelength: every layer starts on a real
        // admittance, so its first extremum is at its end (Macleod, ch. on monitoring).
        let layers: Vec<(&str, f64)> = (0..7)
            .map(|i| {
                if i % 2 == 0 {
                    ("H", qw(NH))
                } else {
                    ("L", qw(NL))
                }
            })
            .collect();
        let d = design(&layers, None);
        for quantity in [Quantity::T, Quantity::R] {
            let m = monitor(&d.resolve().unwrap(), &settings(quantity, 1.0)).unwrap();
            for l in &m.layers {
                assert_eq!(l.turning_points_nm.len(), 1, "layer {}: {l:?}", l.layer);
                assert!(
                    (l.turning_points_nm[0] - l.end_nm).abs() < 1e-9,
                    "layer {} turns at its end: {l:?}",
                    l.layer
                );
            }
        }
    }

    #[test]
    fn a_thick_layer_turns_at_every_quarter_wave() {
        // 3 quarter waves of H on glass: extrema at 1, 2 and 3 quarter waves.
        let d = design(&[("H", 3.0 * qw(NH))], Some(2.0));
        let m = monitor(&d.resolve().unwrap(), &settings(Quantity::T, 0.5)).unwrap();
        let tp = &m.layers[0].turning_points_nm;
        assert_eq!(tp.len(), 3, "{tp:?}");
        for (i, &x) in tp.iter().enumerate() {
            let want = (i + 1) as f64 * qw(NH);
            assert!((x - want).abs() < 1e-4, "turning point {i}: {x} vs {want}");
        }
        // Half a quarter wave more: the end is no turning point.
        let d = design(&[("H", 3.5 * qw(NH))], None);
        let m = monitor(&d.resolve().unwrap(), &settings(Quantity::R, 0.5)).unwrap();
        assert_eq!(m.layers[0].turning_points_nm.len(), 3, "{:?}", m.layers[0]);
        // Slightly short of a quarter wave, within the end allowance: counted at the end.
        let d = design(&[("H", qw(NH) - 0.01)], None);
        let m = monitor(&d.resolve().unwrap(), &settings(Quantity::R, 0.5)).unwrap();
        assert_eq!(m.layers[0].turning_points_nm.len(), 1, "{:?}", m.layers[0]);
        // Well short of it: none.
        let d = design(&[("H", qw(NH) - 5.0)], None);
        let m = monitor(&d.resolve().unwrap(), &settings(Quantity::R, 0.5)).unwrap();
        assert!(
            m.layers[0].turning_points_nm.is_empty(),
            "{:?}",
            m.layers[0]
        );
    }

    #[test]
    fn bad_input_names_the_culprit() {
        let d = design(&[("H", 10.0)], None);
        let r = d.resolve().unwrap();
        let e = monitor(&r, &settings(Quantity::T, 0.0)).unwrap_err();
        assert!(e.to_string().contains("row step 0"), "{e}");
        let e = monitor(
            &r,
            &MonitorSettings {
                wavelength_nm: -5.0,
                ..settings(Quantity::T, 1.0)
            },
        )
        .unwrap_err();
        assert!(e.to_string().contains("-5 nm"), "{e}");
        let e = monitor(&r, &settings(Quantity::T, 1e-6)).unwrap_err();
        assert!(e.to_string().contains("--step-nm"), "{e}");
        // A table material covers only its rows.
        let mut t = d.clone();
        t.materials.push(Material::user(
            "M",
            Model::Table {
                rows: vec![(400.0, 2.0, 0.0), (500.0, 2.1, 0.0)],
            },
        ));
        t.layers.push(Layer::new("M", Nm::new(20.0).unwrap()));
        let e = monitor(&t.resolve().unwrap(), &settings(Quantity::T, 1.0)).unwrap_err();
        assert!(
            e.to_string().contains("\"M\"") && e.to_string().contains("400–500 nm"),
            "{e}"
        );
    }
}
