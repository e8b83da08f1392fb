//! The admittance locus at one wavelength ([`crate::analysis::admittance::admittance_locus`]):
//! Y = H / E from the substrate to the front surface, each layer in its material's colour,
//! the boundaries and the incident medium's admittance marked, on equal axes.

use egui_plot::{Legend, Line, MarkerShape, Plot, PlotPoints, Points};

use crate::analysis::admittance::{AdmittanceLocus, admittance_locus};
use crate::design::Design;
use crate::gui::theme;
use crate::optics::field::Polarisation;

use super::cache::ViewCache;
use super::{Point, PointKey, Runner, Stamp, Subject, warnings_ui};

/// The thickness step of the locus: 200 samples per wavelength, as the command line's
/// default.
#[must_use]
pub fn step_nm(wavelength_nm: f64) -> f64 {
    wavelength_nm / 200.0
}

/// A locus with each layer's material and (n, k) at the wavelength.
#[derive(Clone, Debug)]
pub struct LocusResult {
    /// The library's locus.
    pub locus: AdmittanceLocus,
    /// Per layer (layer 1 first): material name and (n, k).
    pub layers: Vec<(String, (f64, f64))>,
}

/// Computes the locus of `design` at (`wavelength_nm`, `aoi_deg`, `pol`).
///
/// # Errors
/// The design's or the library's message.
pub fn compute(
    design: &Design,
    wavelength_nm: f64,
    aoi_deg: f64,
    pol: Polarisation,
) -> Result<LocusResult, String> {
    let r = design.resolve().map_err(|e| e.to_string())?;
    let locus = admittance_locus(&r, wavelength_nm, aoi_deg, pol, step_nm(wavelength_nm))
        .map_err(|e| e.to_string())?;
    let layers = r
        .layers
        .iter()
        .map(|&(m, _)| {
            let mat = &r.materials[m];
            let nk = mat
                .index_at(wavelength_nm)
                .map_or((f64::NAN, 0.0), |n| (n.re, n.im));
            (mat.name.clone(), nk)
        })
        .collect();
    Ok(LocusResult { locus, layers })
}

type Key = (Stamp, PointKey);

/// The admittance view: its settings and its cached result.
pub struct AdmittanceView {
    /// Wavelength, angle and polarisation.
    pub point: Point,
    cache: ViewCache<Key, LocusResult>,
}

impl AdmittanceView {
    /// At `wavelength_nm`, normal incidence, s.
    #[must_use]
    pub fn new(wavelength_nm: f64) -> Self {
        Self {
            point: Point::new(wavelength_nm),
            cache: ViewCache::new("admittance-view"),
        }
    }

    /// Whether a worker is computing.
    #[must_use]
    pub fn busy(&self) -> bool {
        self.cache.busy()
    }

    /// The result on show.
    #[must_use]
    pub fn result(&self) -> Option<&Result<LocusResult, String>> {
        self.cache.result()
    }

    pub(super) fn ui(&mut self, ui: &mut egui::Ui, subject: Subject<'_>, run: &Runner) {
        self.point.ui(ui);
        let Some(l) = self
            .point
            .result(ui, &mut self.cache, subject, run, compute)
        else {
            return;
        };
        warnings_ui(ui, &l.locus.warnings);
        summary_ui(ui, &l.locus);
        plot_ui(ui, l);
    }
}

/// A complex number as the view prints it.
#[must_use]
pub fn complex_text(v: [f64; 2]) -> String {
    let sign = if v[1] < 0.0 { '−' } else { '+' };
    format!("{:.4} {sign} {:.4}i", v[0], v[1].abs())
}

fn summary_ui(ui: &mut egui::Ui, y: &AdmittanceLocus) {
    let end = y.boundaries.last().copied().unwrap_or([f64::NAN; 2]);
    let r = y.reflection();
    ui.label(format!(
        "front surface Y = {}; incident medium η₀ = {}; R = |r|² = {:.4} %. Admittances in \
         units of the free-space admittance, tilted for the angle; the locus runs from the \
         substrate to the front surface and ends on η₀ for no reflection.",
        complex_text(end),
        complex_text(y.incident),
        100.0 * r.norm_sqr()
    ));
}

fn plot_ui(ui: &mut egui::Ui, l: &LocusResult) {
    let y = &l.locus;
    // One line per layer, its start included, in the material's colour; the legend lists
    // each material once (items of one name share an entry).
    let mut lines = Vec::with_capacity(l.layers.len());
    for (j, (name, (n, k))) in l.layers.iter().enumerate() {
        let layer = j + 1;
        let mut pts = vec![y.boundaries[j]];
        pts.extend(
            y.points
                .iter()
                .zip(&y.point_layer)
                .filter(|(_, pl)| **pl == layer)
                .map(|(p, _)| *p),
        );
        lines.push((name.clone(), theme::material_colour(*n, *k), pts));
    }
    let boundaries = y.boundaries.clone();
    let substrate = y.boundaries.first().copied().unwrap_or([f64::NAN; 2]);
    let end = y.boundaries.last().copied().unwrap_or([f64::NAN; 2]);
    let incident = y.incident;
    Plot::new("admittance-plot")
        .legend(Legend::default())
        .data_aspect(1.0)
        .x_axis_label("Re Y")
        .y_axis_label("Im Y")
        .include_y(0.0)
        .include_x(0.0)
        .show(ui, |plot_ui| {
            for (name, colour, pts) in lines {
                plot_ui.line(
                    Line::new(name, PlotPoints::from(pts))
                        .color(colour)
                        .width(2.0),
                );
            }
            plot_ui.points(
                Points::new("boundaries", PlotPoints::from(boundaries))
                    .radius(3.0)
                    .color(egui::Color32::GRAY),
            );
            plot_ui.points(
                Points::new("substrate (start)", PlotPoints::from(vec![substrate]))
                    .shape(MarkerShape::Square)
                    .radius(5.0)
                    .color(theme::T),
            );
            plot_ui.points(
                Points::new("front surface (end)", PlotPoints::from(vec![end]))
                    .shape(MarkerShape::Diamond)
                    .radius(6.0)
                    .color(theme::PREVIEW),
            );
            plot_ui.points(
                Points::new("incident medium η₀", PlotPoints::from(vec![incident]))
                    .shape(MarkerShape::Cross)
                    .radius(7.0)
                    .color(theme::R),
            );
        });
}
