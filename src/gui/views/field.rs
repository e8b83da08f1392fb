//! The electric-field intensity |E|² through the stack at one wavelength, angle and
//! polarisation ([`crate::analysis::field::field_profile`]): depth from the front surface on
//! the x axis, each layer a band in its material's colour behind the curve, and a table of
//! the peak in each layer and at each interface. The caution [`crate::cautions::FIELD`] is
//! always shown.

use egui::{Color32, RichText};
use egui_plot::{Legend, Line, Plot, PlotPoints, Polygon};

use crate::analysis::field::{FieldProfile, field_profile};
use crate::cautions;
use crate::design::Design;
use crate::gui::theme;
use crate::optics::field::Polarisation;

use super::cache::ViewCache;
use super::{Point, PointKey, Runner, Stamp, Subject, warnings_ui};

/// The depth step of the profile: 200 samples per wavelength, as the command line's default.
#[must_use]
pub fn step_nm(wavelength_nm: f64) -> f64 {
    wavelength_nm / 200.0
}

/// A profile with its layers' indices at the wavelength, for the colour bands.
#[derive(Clone, Debug)]
pub struct FieldResult {
    /// The library's profile.
    pub profile: FieldProfile,
    /// (n, k) of each layer, in the order of `profile.layers` (front surface first).
    pub layer_nk: Vec<(f64, f64)>,
    /// (n, k) of the incident medium and of the substrate.
    pub media_nk: [(f64, f64); 2],
}

/// Computes the profile of `design` at (`wavelength_nm`, `aoi_deg`, `pol`).
///
/// # Errors
/// The design's or the library's message.
pub fn compute(
    design: &Design,
    wavelength_nm: f64,
    aoi_deg: f64,
    pol: Polarisation,
) -> Result<FieldResult, String> {
    let r = design.resolve().map_err(|e| e.to_string())?;
    let profile = field_profile(&r, wavelength_nm, aoi_deg, pol, step_nm(wavelength_nm))
        .map_err(|e| e.to_string())?;
    let nk = |m: &crate::material::Material| {
        m.index_at(wavelength_nm)
            .map_or((f64::NAN, 0.0), |n| (n.re, n.im))
    };
    let layer_nk = profile
        .layers
        .iter()
        .map(|l| nk(&r.materials[r.layers[l.layer - 1].0]))
        .collect();
    Ok(FieldResult {
        profile,
        layer_nk,
        media_nk: [nk(&r.incident), nk(&r.substrate)],
    })
}

type Key = (Stamp, PointKey);

/// The field view: its settings and its cached result.
pub struct FieldView {
    /// Wavelength, angle and polarisation.
    pub point: Point,
    cache: ViewCache<Key, FieldResult>,
}

impl FieldView {
    /// At `wavelength_nm`, normal incidence, s.
    #[must_use]
    pub fn new(wavelength_nm: f64) -> Self {
        Self {
            point: Point::new(wavelength_nm),
            cache: ViewCache::new("field-view"),
        }
    }

    /// Whether a worker is computing.
    #[must_use]
    pub fn busy(&self) -> bool {
        self.cache.busy()
    }

    /// The result on show.
    #[must_use]
    pub fn result(&self) -> Option<&Result<FieldResult, String>> {
        self.cache.result()
    }

    pub(super) fn ui(&mut self, ui: &mut egui::Ui, subject: Subject<'_>, run: &Runner) {
        self.point.ui(ui);
        ui.colored_label(ui.visuals().warn_fg_color, cautions::FIELD);
        let Some(f) = self
            .point
            .result(ui, &mut self.cache, subject, run, compute)
        else {
            return;
        };
        warnings_ui(ui, &f.profile.warnings);
        summary_ui(ui, &f.profile);
        let h = ui.available_height();
        ui.allocate_ui(egui::vec2(ui.available_width(), h * 0.62), |ui| {
            plot_ui(ui, f);
        });
        ui.separator();
        egui::ScrollArea::vertical()
            .id_salt("field-table")
            .show(ui, |ui| table_ui(ui, &f.profile));
    }
}

/// |E|² as the view prints it.
#[must_use]
pub fn e2_text(v: f64) -> String {
    format!("{v:.4}")
}

/// The highest peak in a layer and at an interface, in one line.
fn summary_ui(ui: &mut egui::Ui, p: &FieldProfile) {
    let layer = p
        .layers
        .iter()
        .max_by(|a, b| a.peak_e2.total_cmp(&b.peak_e2));
    let face = p
        .interfaces
        .iter()
        .max_by(|a, b| a.peak_e2().total_cmp(&b.peak_e2()));
    if let (Some(l), Some(i)) = (layer, face) {
        ui.label(format!(
            "highest |E|² in a layer: {} (layer {}, {}, at {:.1} nm); at an interface: {} (at \
             {:.1} nm). |E|² is relative to the incident wave's.",
            e2_text(l.peak_e2),
            l.layer,
            l.material,
            l.peak_depth_nm,
            e2_text(i.peak_e2()),
            i.depth_nm
        ));
    }
}

/// A filled band from `x0` to `x1`, 0 to `top`.
fn band(name: &str, x0: f64, x1: f64, top: f64, fill: Color32) -> Polygon<'static> {
    Polygon::new(
        name.to_owned(),
        PlotPoints::from(vec![[x0, 0.0], [x1, 0.0], [x1, top], [x0, top]]),
    )
    .fill_color(fill.gamma_multiply(0.45))
    .stroke(egui::Stroke::NONE)
    .allow_hover(false)
}

fn plot_ui(ui: &mut egui::Ui, f: &FieldResult) {
    let p = &f.profile;
    let top = 1.08
        * p.points
            .iter()
            .map(|q| q[1])
            .fold(0.0_f64, f64::max)
            .max(1e-6);
    let first = p.points.first().map_or(0.0, |q| q[0]);
    let last = p.points.last().map_or(0.0, |q| q[0]);
    let bottom = p.layers.last().map_or(0.0, |l| l.bottom_nm);
    let colour = |(n, k): (f64, f64)| theme::material_colour(n, k);
    let curve: Vec<[f64; 2]> = p.points.clone();
    let line_colour = ui.visuals().strong_text_color();
    let layer_names: Vec<(f64, f64, usize, String)> = p
        .layers
        .iter()
        .map(|l| (l.top_nm, l.bottom_nm, l.layer, l.material.clone()))
        .collect();
    let formatter = move |hp: &egui_plot::HoverPosition<'_>| -> Option<String> {
        let pos = match hp {
            egui_plot::HoverPosition::NearDataPoint { position, .. }
            | egui_plot::HoverPosition::Elsewhere { position } => *position,
        };
        let place = layer_names
            .iter()
            .find(|(t, b, _, _)| pos.x >= *t && pos.x <= *b)
            .map_or_else(
                || {
                    if pos.x < 0.0 {
                        "incident medium".to_owned()
                    } else {
                        "substrate".to_owned()
                    }
                },
                |(_, _, j, m)| format!("layer {j} ({m})"),
            );
        Some(format!("depth {:.1} nm, {place}\n|E|² {:.4}", pos.x, pos.y))
    };
    Plot::new("field-plot")
        .legend(Legend::default())
        .x_axis_label("depth from the front surface (nm)")
        .y_axis_label("|E|² relative to the incident wave")
        .include_y(0.0)
        .label_formatter(formatter)
        .show(ui, |plot_ui| {
            plot_ui.polygon(band(
                "incident medium",
                first,
                0.0,
                top,
                colour(f.media_nk[0]).gamma_multiply(0.5),
            ));
            for (l, &nk) in p.layers.iter().zip(&f.layer_nk) {
                plot_ui.polygon(band(&l.material, l.top_nm, l.bottom_nm, top, colour(nk)));
            }
            plot_ui.polygon(band("substrate", bottom, last, top, colour(f.media_nk[1])));
            plot_ui.line(
                Line::new("|E|²", PlotPoints::from(curve))
                    .color(line_colour)
                    .width(1.8),
            );
        });
}

fn table_ui(ui: &mut egui::Ui, p: &FieldProfile) {
    let n = p.layers.len();
    let medium = |m: usize| match m {
        0 => "substrate".to_owned(),
        m if m == n + 1 => "incident medium".to_owned(),
        m => format!("layer {m}"),
    };
    let layers = |ui: &mut egui::Ui| {
        ui.strong("Peak in each layer (front surface first)");
        egui::Grid::new("field-layer-peaks")
            .striped(true)
            .show(ui, |ui| {
                for h in ["layer", "material", "depth (nm)", "peak |E|²", "at (nm)"] {
                    ui.strong(h);
                }
                ui.end_row();
                for l in &p.layers {
                    ui.label(l.layer.to_string());
                    ui.label(&l.material);
                    ui.label(format!("{:.1}–{:.1}", l.top_nm, l.bottom_nm));
                    ui.label(RichText::new(e2_text(l.peak_e2)).monospace());
                    ui.label(format!("{:.1}", l.peak_depth_nm));
                    ui.end_row();
                }
            });
    };
    let interfaces = |ui: &mut egui::Ui| {
        ui.strong("At each interface (both sides)");
        egui::Grid::new("field-interfaces")
            .striped(true)
            .show(ui, |ui| {
                for h in ["between", "depth (nm)", "|E|² above", "|E|² below"] {
                    ui.strong(h);
                }
                ui.end_row();
                for i in &p.interfaces {
                    ui.label(format!("{} / {}", medium(i.above), medium(i.below)));
                    ui.label(format!("{:.1}", i.depth_nm));
                    ui.label(RichText::new(e2_text(i.e2_above)).monospace());
                    ui.label(RichText::new(e2_text(i.e2_below)).monospace());
                    ui.end_row();
                }
            });
    };
    // Side by side when there is room, else one under the other.
    if ui.available_width() >= 760.0 {
        ui.columns(2, |cols| {
            layers(&mut cols[0]);
            interfaces(&mut cols[1]);
        });
    } else {
        layers(ui);
        ui.add_space(8.0);
        interfaces(ui);
    }
}
