//! The centre views: spectrum over wavelength and response over angle, each with its own
//! control row. They draw cached results; nothing here computes optics.

use std::fmt::Write as _;

use egui::{Color32, DragValue};
use egui_plot::{HoverPosition, Legend, Line, LineStyle, Plot, PlotPoint, PlotPoints, Points};

use crate::design::Design;
use crate::material::EV_UM;
use crate::optics::Side;

use crate::analysis::Sweep;

use super::compute::{SweepCache, SweepResult};
use super::theme;

/// The caution shown whenever optical density is plotted.
pub const OD_CAUTION: &str = "Computed optical density is a theoretical value for ideal \
layers, not a certification; laser-protective filters and eyewear must be tested and certified \
under the applicable standards (e.g. EN 207 / ISO 19818-1, ANSI Z136) and local codes.";

/// The spectrum's horizontal axis.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum XAxis {
    /// Wavelength in nm.
    Wavelength,
    /// Wavenumber in cm⁻¹.
    Wavenumber,
    /// Photon energy in eV.
    PhotonEnergy,
}

impl XAxis {
    fn label(self) -> &'static str {
        match self {
            XAxis::Wavelength => "wavelength (nm)",
            XAxis::Wavenumber => "wavenumber (cm⁻¹)",
            XAxis::PhotonEnergy => "photon energy (eV)",
        }
    }

    fn value_at_nm(self, nm: f64) -> f64 {
        match self {
            XAxis::Wavelength => nm,
            XAxis::Wavenumber => 1.0e7 / nm,
            XAxis::PhotonEnergy => EV_UM * 1000.0 / nm,
        }
    }
}

/// The vertical axis.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum YAxis {
    /// R, T, A in percent.
    Percent,
    /// Optical density −log10 T (transmittance only).
    OpticalDensity,
}

/// Which curves to draw.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[expect(clippy::struct_excessive_bools, reason = "one check box each")]
pub struct CurvePicks {
    /// Reflectance.
    pub r: bool,
    /// Transmittance.
    pub t: bool,
    /// Absorptance.
    pub a: bool,
    /// s-polarisation.
    pub s: bool,
    /// p-polarisation.
    pub p: bool,
    /// Mean of s and p.
    pub mean: bool,
}

impl Default for CurvePicks {
    fn default() -> Self {
        Self {
            r: true,
            t: false,
            a: false,
            s: false,
            p: false,
            mean: true,
        }
    }
}

/// Settings of both views (window state, not part of the design).
#[derive(Clone, Debug, PartialEq)]
pub struct ViewSettings {
    /// First wavelength (nm).
    pub from_nm: f64,
    /// Last wavelength (nm).
    pub to_nm: f64,
    /// Wavelength step (nm).
    pub step_nm: f64,
    /// Angle of incidence for the spectrum (degrees).
    pub aoi_deg: f64,
    /// Side the light comes from (both views).
    pub side: Side,
    /// Spectrum curves.
    pub spectrum_curves: CurvePicks,
    /// Spectrum horizontal axis.
    pub x_axis: XAxis,
    /// Spectrum vertical axis.
    pub y_axis: YAxis,
    /// Wavelength of the angle view (nm).
    pub angle_wavelength_nm: f64,
    /// Angle step (degrees).
    pub angle_step_deg: f64,
    /// Angle-view curves.
    pub angle_curves: CurvePicks,
}

impl ViewSettings {
    /// The command line's default span for `design`: 0.7 to 1.5 × the reference wavelength in
    /// 400 steps, normal incidence; the angle view at the reference wavelength.
    #[must_use]
    pub fn for_design(design: &Design) -> Self {
        let r = Sweep::centre_nm(design.reference_nm);
        let (from, to) = Sweep::default_span_nm(r);
        Self {
            from_nm: from,
            to_nm: to,
            step_nm: (to - from) / crate::analysis::DEFAULT_STEPS,
            aoi_deg: 0.0,
            side: Side::Front,
            spectrum_curves: CurvePicks::default(),
            x_axis: XAxis::Wavelength,
            y_axis: YAxis::Percent,
            angle_wavelength_nm: r,
            angle_step_deg: 0.5,
            angle_curves: CurvePicks {
                s: true,
                p: true,
                ..CurvePicks::default()
            },
        }
    }

    /// The spectrum sweep these settings ask for.
    #[must_use]
    pub fn spectrum_sweep(&self) -> Sweep {
        Sweep::Wavelength {
            from_nm: self.from_nm,
            to_nm: self.to_nm,
            step_nm: self.step_nm,
            aoi_deg: self.aoi_deg,
            side: self.side,
        }
    }

    /// The angle sweep these settings ask for (0–89°).
    #[must_use]
    pub fn angle_sweep(&self) -> Sweep {
        Sweep::full_angles(self.angle_wavelength_nm, self.angle_step_deg, self.side)
    }
}

/// Another open design drawn over the active one's view: its curves in its colour, named
/// after it in the legend. Its cache must hold the same sweep as the active design's.
pub struct Overlay<'a> {
    /// The design's name (legend prefix).
    pub name: &'a str,
    /// The design's colour.
    pub colour: Color32,
    /// Its cached sweep.
    pub sweeps: &'a SweepCache,
}

// --- measured overlay (see gui::measured) ---
/// A measured curve drawn over the spectrum: wavelengths (nm) and values (fractions).
#[derive(Clone, Copy, Debug)]
pub struct MeasuredOverlay<'a> {
    /// The legend text.
    pub name: &'a str,
    /// Its colour.
    pub colour: Color32,
    /// Wavelengths (nm).
    pub wavelength_nm: &'a [f64],
    /// Values (fractions).
    pub value: &'a [f64],
    /// Whether the values are T (also drawn in the optical density view).
    pub transmittance: bool,
    /// Drawn as points, else as a line.
    pub as_points: bool,
}

/// A measured curve's points on the spectrum's axes; none for R in the optical density view.
fn measured_points(o: &MeasuredOverlay<'_>, x: XAxis, y: YAxis) -> Vec<PlotPoint> {
    if y == YAxis::OpticalDensity && !o.transmittance {
        return Vec::new();
    }
    o.wavelength_nm
        .iter()
        .zip(o.value)
        .filter_map(|(&nm, &v)| {
            let yv = match y {
                YAxis::Percent => 100.0 * v,
                YAxis::OpticalDensity => -v.log10(),
            };
            let xv = x.value_at_nm(nm);
            (yv.is_finite() && xv.is_finite()).then_some(PlotPoint::new(xv, yv))
        })
        .collect()
}
// --- end measured overlay ---

/// A labelled number field (the label is linked so tests and screen readers find it).
pub(super) fn number_ui(
    ui: &mut egui::Ui,
    label: &str,
    value: &mut f64,
    range: std::ops::RangeInclusive<f64>,
    speed: f64,
    suffix: &str,
) -> egui::Response {
    let l = ui.label(label);
    ui.add(
        DragValue::new(value)
            .range(range)
            .speed(speed)
            .suffix(suffix),
    )
    .labelled_by(l.id)
}

/// One drawable curve.
struct Series {
    name: String,
    colour: Color32,
    style: LineStyle,
    points: Vec<PlotPoint>,
}

/// Plot-ready points, rebuilt only when the result or the display choices change.
#[derive(Default)]
pub struct PlotCache {
    key: Option<PlotKey>,
    series: Vec<Series>,
}

/// What the points were built from: the active sweep's generation, the display choices, and
/// each overlay's name, colour and generation.
type PlotKey = (u64, CurvePicks, XAxis, YAxis, Vec<(String, Color32, u64)>);

/// The series of one result; `tint` names and colours an overlaid design's curves.
fn build_series(
    result: &SweepResult,
    curves: CurvePicks,
    x: impl Fn(f64) -> f64,
    y: YAxis,
    tint: Option<(&str, Color32)>,
) -> Vec<Series> {
    let c = &result.curves;
    let quantities: [(&str, bool, Color32, [&Vec<f64>; 3]); 3] = [
        (
            "R",
            curves.r && y == YAxis::Percent,
            theme::R,
            [&c.r_s, &c.r_p, &c.r],
        ),
        (
            "T",
            curves.t || y == YAxis::OpticalDensity,
            theme::T,
            [&c.t_s, &c.t_p, &c.t],
        ),
        (
            "A",
            curves.a && y == YAxis::Percent,
            theme::A,
            [&c.a_s, &c.a_p, &c.a],
        ),
    ];
    let pols = [
        ("s", curves.s, LineStyle::dashed_dense()),
        ("p", curves.p, LineStyle::dotted_dense()),
        ("", curves.mean, LineStyle::Solid),
    ];
    let mut out = Vec::new();
    for (q, on, colour, cols) in quantities {
        if !on {
            continue;
        }
        for ((pol, pol_on, style), col) in pols.iter().zip(cols) {
            if !pol_on {
                continue;
            }
            let name = match (y, *pol) {
                (YAxis::OpticalDensity, "") => "OD".to_owned(),
                (YAxis::OpticalDensity, p) => format!("OD_{p}"),
                (YAxis::Percent, "") => q.to_owned(),
                (YAxis::Percent, p) => format!("{q}_{p}"),
            };
            let points = result
                .x
                .iter()
                .zip(col.iter())
                .filter_map(|(&xv, &v)| {
                    let yv = match y {
                        YAxis::Percent => 100.0 * v,
                        YAxis::OpticalDensity => -v.log10(),
                    };
                    let xv = x(xv);
                    (yv.is_finite() && xv.is_finite()).then_some(PlotPoint::new(xv, yv))
                })
                .collect();
            let (name, colour) = match tint {
                Some((design, c)) => (format!("{design}: {name}"), c),
                None => (name, colour),
            };
            out.push(Series {
                name,
                colour: theme::pol_shade(colour, pol),
                style: *style,
                points,
            });
        }
    }
    out
}

fn curve_toggles_ui(ui: &mut egui::Ui, c: &mut CurvePicks, with_rta: bool) {
    if with_rta {
        ui.checkbox(&mut c.r, "R");
        ui.checkbox(&mut c.t, "T");
        ui.checkbox(&mut c.a, "A");
        ui.separator();
    }
    ui.checkbox(&mut c.s, "s");
    ui.checkbox(&mut c.p, "p");
    ui.checkbox(&mut c.mean, "mean");
}

#[expect(clippy::too_many_arguments, reason = "one plot's labels and data")]
fn draw(
    ui: &mut egui::Ui,
    id: &str,
    cache: &PlotCache,
    measured: &[(&MeasuredOverlay<'_>, Vec<PlotPoint>)],
    x_label: &str,
    y_label: &str,
    x_unit: &'static str,
    y_unit: &'static str,
) {
    let series = &cache.series;
    let formatter = move |hp: &HoverPosition<'_>| -> Option<String> {
        Some(match hp {
            HoverPosition::NearDataPoint {
                plot_name,
                position,
                ..
            } => format!(
                "{plot_name}: {:.4}{y_unit}\nat {:.4} {x_unit}",
                position.y, position.x
            ),
            // Elsewhere: every curve's value at the computed point nearest the pointer's x.
            HoverPosition::Elsewhere { position } => {
                let mut text = String::new();
                for s in series {
                    let nearest = s.points.iter().min_by(|a, b| {
                        (a.x - position.x)
                            .abs()
                            .total_cmp(&(b.x - position.x).abs())
                    });
                    if let Some(p) = nearest {
                        if text.is_empty() {
                            text = format!("at {:.4} {x_unit}", p.x);
                        }
                        // Writing into a String cannot fail.
                        write!(text, "\n{}: {:.4}{y_unit}", s.name, p.y).ok();
                    }
                }
                if text.is_empty() {
                    format!("{:.4} {x_unit}, {:.4}{y_unit}", position.x, position.y)
                } else {
                    text
                }
            }
        })
    };
    Plot::new(id)
        .legend(Legend::default())
        .x_axis_label(x_label.to_owned())
        .y_axis_label(y_label.to_owned())
        .label_formatter(formatter)
        .show(ui, |plot_ui| {
            for s in &cache.series {
                plot_ui.line(
                    Line::new(s.name.clone(), PlotPoints::Borrowed(&s.points))
                        .color(s.colour)
                        .style(s.style)
                        .width(1.5),
                );
            }
            for (o, points) in measured {
                let points = PlotPoints::Borrowed(points);
                if o.as_points {
                    plot_ui.points(Points::new(o.name, points).color(o.colour).radius(2.0));
                } else {
                    plot_ui.line(Line::new(o.name, points).color(o.colour).width(1.5));
                }
            }
        });
}

fn refresh(
    cache: &mut PlotCache,
    sweeps: &SweepCache,
    overlays: &[Overlay<'_>],
    curves: CurvePicks,
    x: XAxis,
    y: YAxis,
    angle: bool,
) {
    let key = (
        sweeps.generation(),
        curves,
        x,
        y,
        overlays
            .iter()
            .map(|o| (o.name.to_owned(), o.colour, o.sweeps.generation()))
            .collect(),
    );
    if cache.key.as_ref() == Some(&key) {
        return;
    }
    let one = |c: &SweepCache, tint: Option<(&str, Color32)>| match c.result() {
        Some(Ok(r)) if angle => build_series(r, curves, |v| v, YAxis::Percent, tint),
        Some(Ok(r)) => build_series(r, curves, |nm| x.value_at_nm(nm), y, tint),
        _ => Vec::new(),
    };
    cache.series = one(sweeps, None);
    for o in overlays {
        cache.series.extend(one(o.sweeps, Some((o.name, o.colour))));
    }
    cache.key = Some(key);
}

/// Why the active design's sweep, or an overlaid design's, could not be computed.
fn errors_ui(ui: &mut egui::Ui, sweeps: &SweepCache, overlays: &[Overlay<'_>]) {
    if let Some(Err(e)) = sweeps.result() {
        ui.colored_label(ui.visuals().error_fg_color, format!("cannot compute: {e}"));
    }
    for o in overlays {
        if let Some(Err(e)) = o.sweeps.result() {
            ui.colored_label(
                ui.visuals().error_fg_color,
                format!("{}: cannot compute: {e}", o.name),
            );
        }
    }
}

/// The spectrum view with its control row; `overlays` (other designs) are drawn over the active
/// design, and `measured` curves over both.
pub fn spectrum_ui(
    ui: &mut egui::Ui,
    s: &mut ViewSettings,
    sweeps: &SweepCache,
    overlays: &[Overlay<'_>],
    plot: &mut PlotCache,
    measured: &[MeasuredOverlay<'_>],
) {
    ui.horizontal_wrapped(|ui| {
        ui.strong("Spectrum");
        curve_toggles_ui(ui, &mut s.spectrum_curves, true);
        ui.separator();
        number_ui(ui, "from", &mut s.from_nm, 1.0..=100_000.0, 1.0, " nm");
        number_ui(ui, "to", &mut s.to_nm, 1.0..=100_000.0, 1.0, " nm");
        number_ui(ui, "step", &mut s.step_nm, 0.001..=10_000.0, 0.01, " nm");
    });
    ui.horizontal_wrapped(|ui| {
        ui.label("x:");
        ui.selectable_value(&mut s.x_axis, XAxis::Wavelength, "wavelength");
        ui.selectable_value(&mut s.x_axis, XAxis::Wavenumber, "wavenumber");
        ui.selectable_value(&mut s.x_axis, XAxis::PhotonEnergy, "photon energy");
        ui.separator();
        ui.label("y:");
        ui.selectable_value(&mut s.y_axis, YAxis::Percent, "linear %");
        ui.selectable_value(&mut s.y_axis, YAxis::OpticalDensity, "optical density");
        ui.separator();
        let l = ui.label("angle of incidence");
        ui.add(egui::Slider::new(&mut s.aoi_deg, 0.0..=89.0).suffix("°"))
            .labelled_by(l.id);
        ui.separator();
        ui.label("light from");
        ui.selectable_value(&mut s.side, Side::Front, "front")
            .on_hover_text("from the incident medium onto the coating");
        ui.selectable_value(&mut s.side, Side::Back, "back")
            .on_hover_text("from the exit medium through the substrate (angle in the exit medium)");
    });
    if s.y_axis == YAxis::OpticalDensity {
        ui.colored_label(ui.visuals().warn_fg_color, OD_CAUTION);
    }
    errors_ui(ui, sweeps, overlays);
    refresh(
        plot,
        sweeps,
        overlays,
        s.spectrum_curves,
        s.x_axis,
        s.y_axis,
        false,
    );
    let (y_label, y_unit) = match s.y_axis {
        YAxis::Percent => ("R, T, A (%)", " %"),
        YAxis::OpticalDensity => ("optical density −log₁₀ T", ""),
    };
    let x_unit = match s.x_axis {
        XAxis::Wavelength => "nm",
        XAxis::Wavenumber => "cm⁻¹",
        XAxis::PhotonEnergy => "eV",
    };
    let measured: Vec<_> = measured
        .iter()
        .map(|o| (o, measured_points(o, s.x_axis, s.y_axis)))
        .collect();
    draw(
        ui,
        "spectrum-plot",
        plot,
        &measured,
        s.x_axis.label(),
        y_label,
        x_unit,
        y_unit,
    );
}

/// The angle view with its control row; `overlays` are drawn over the active design.
pub fn angle_ui(
    ui: &mut egui::Ui,
    s: &mut ViewSettings,
    sweeps: &SweepCache,
    overlays: &[Overlay<'_>],
    plot: &mut PlotCache,
) {
    ui.horizontal_wrapped(|ui| {
        ui.strong("Angle");
        curve_toggles_ui(ui, &mut s.angle_curves, true);
        ui.separator();
        number_ui(
            ui,
            "at wavelength",
            &mut s.angle_wavelength_nm,
            1.0..=100_000.0,
            1.0,
            " nm",
        );
        number_ui(
            ui,
            "angle step",
            &mut s.angle_step_deg,
            0.05..=10.0,
            0.05,
            "°",
        );
    });
    errors_ui(ui, sweeps, overlays);
    refresh(
        plot,
        sweeps,
        overlays,
        s.angle_curves,
        XAxis::Wavelength,
        YAxis::Percent,
        true,
    );
    draw(
        ui,
        "angle-plot",
        plot,
        &[],
        "angle of incidence (°)",
        "R, T, A (%)",
        "°",
        " %",
    );
}
