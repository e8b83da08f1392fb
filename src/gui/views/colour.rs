//! The colour of reflected and transmitted light ([`crate::analysis::color`]): a table of
//! XYZ, xy and L*a*b* with an sRGB swatch for each, at a chosen angle, observer and
//! illuminant, and the colour's path on the xy chromaticity diagram as the angle of
//! incidence goes from 0 to 80°, inside the spectral locus with the white point marked.

use egui::{Color32, RichText, Sense, Stroke};
use egui_plot::{Legend, Line, MarkerShape, Plot, PlotPoint, PlotPoints, Points, Text};

use crate::analysis::angles_deg;
use crate::analysis::color::{
    Colour, ColourPath, DesignColour, Illuminant, Observer, chromaticity, colour_path,
    design_colour, spectral_locus, white,
};
use crate::design::Design;
use crate::gui::plots::number_ui;
use crate::gui::theme;

use super::cache::{Progress, ViewCache};
use super::{Runner, Stamp, Subject, busy_ui, shown, warnings_ui};

/// Last angle of the colour's path, degrees.
pub const PATH_TO_DEG: f64 = 80.0;
/// Angle step of the colour's path, degrees.
pub const PATH_STEP_DEG: f64 = 5.0;

/// Everything the colour view draws.
#[derive(Clone, Debug)]
pub struct ColourResult {
    /// The colours at the chosen angle.
    pub at: DesignColour,
    /// The colours from 0 to [`PATH_TO_DEG`].
    pub path: ColourPath,
    /// The spectral locus (the diagram's outline), closed.
    pub locus: Vec<[f64; 2]>,
    /// The illuminant's white point (x, y).
    pub white_xy: [f64; 2],
}

/// Computes the colour view of `design`.
///
/// # Errors
/// The design's or the library's message.
pub fn compute(
    design: &Design,
    aoi_deg: f64,
    illuminant: Illuminant,
    observer: Observer,
) -> Result<ColourResult, String> {
    let r = design.resolve().map_err(|e| e.to_string())?;
    let at = design_colour(&r, aoi_deg, illuminant, observer).map_err(|e| e.to_string())?;
    let angles = angles_deg(0.0, PATH_TO_DEG, PATH_STEP_DEG).map_err(|e| e.to_string())?;
    let path = colour_path(&r, &angles, illuminant, observer).map_err(|e| e.to_string())?;
    let locus = spectral_locus(observer)
        .map_err(|e| e.to_string())?
        .into_iter()
        .map(|p| p.1)
        .collect();
    let white_xy = chromaticity(white(illuminant, observer).map_err(|e| e.to_string())?);
    Ok(ColourResult {
        at,
        path,
        locus,
        white_xy,
    })
}

type Key = (Stamp, u64, Illuminant, Observer);

/// The colour view: its settings and its cached result.
pub struct ColourView {
    /// Angle of incidence of the table, degrees.
    pub aoi_deg: f64,
    /// Illuminant.
    pub illuminant: Illuminant,
    /// Observer.
    pub observer: Observer,
    cache: ViewCache<Key, ColourResult>,
}

impl Default for ColourView {
    fn default() -> Self {
        Self {
            aoi_deg: 0.0,
            illuminant: Illuminant::D65,
            observer: Observer::Cie1931TwoDeg,
            cache: ViewCache::new("colour-view"),
        }
    }
}

/// The table's texts for one colour: X, Y, Z, x, y, L*, a*, b*.
#[must_use]
pub fn row_texts(c: &Colour) -> [String; 8] {
    [
        format!("{:.4}", c.xyz.x),
        format!("{:.4}", c.xyz.y),
        format!("{:.4}", c.xyz.z),
        format!("{:.5}", c.xy[0]),
        format!("{:.5}", c.xy[1]),
        format!("{:.3}", c.lab.l),
        format!("{:.3}", c.lab.a),
        format!("{:.3}", c.lab.b),
    ]
}

impl ColourView {
    /// Whether a worker is computing.
    #[must_use]
    pub fn busy(&self) -> bool {
        self.cache.busy()
    }

    /// The result on show.
    #[must_use]
    pub fn result(&self) -> Option<&Result<ColourResult, String>> {
        self.cache.result()
    }

    pub(super) fn ui(&mut self, ui: &mut egui::Ui, subject: Subject<'_>, run: &Runner) {
        ui.horizontal_wrapped(|ui| {
            ui.label("observer");
            ui.selectable_value(&mut self.observer, Observer::Cie1931TwoDeg, "2° (CIE 1931)");
            ui.selectable_value(
                &mut self.observer,
                Observer::Cie1964TenDeg,
                "10° (CIE 1964)",
            );
            ui.separator();
            ui.label("illuminant");
            ui.selectable_value(&mut self.illuminant, Illuminant::D65, "D65 (daylight)");
            ui.selectable_value(&mut self.illuminant, Illuminant::A, "A (tungsten)");
            ui.separator();
            number_ui(
                ui,
                "table at angle",
                &mut self.aoi_deg,
                0.0..=89.9,
                0.5,
                "°",
            );
        });
        let (aoi, ill, obs) = (self.aoi_deg, self.illuminant, self.observer);
        let key = (subject.stamp(), aoi.to_bits(), ill, obs);
        let design = subject.design;
        self.cache.update(&key, false, run, || {
            let d = design.clone();
            move |_: Progress<'_, ()>| compute(&d, aoi, ill, obs)
        });
        busy_ui(ui, self.cache.busy());
        let Some(c) = shown(ui, self.cache.result()) else {
            return;
        };
        warnings_ui(ui, &c.at.warnings);
        egui::ScrollArea::horizontal()
            .id_salt("colour-table-scroll")
            .show(ui, |ui| table_ui(ui, c));
        ui.label(
            RichText::new(format!(
                "unpolarised light (mean of s and p), 360–780 nm in 5 nm steps; L*a*b* against \
                 the perfect white diffuser under the same light; the path runs from 0° \
                 (large dot) to {PATH_TO_DEG}° in {PATH_STEP_DEG}° steps"
            ))
            .weak(),
        );
        diagram_ui(ui, c);
    }
}

fn swatch_ui(ui: &mut egui::Ui, c: &Colour) {
    let [r, g, b] = c.srgb.to_u8();
    let (rect, response) = ui.allocate_exact_size(egui::vec2(48.0, 18.0), Sense::hover());
    ui.painter()
        .rect_filled(rect, 2.0, Color32::from_rgb(r, g, b));
    ui.painter().rect_stroke(
        rect,
        2.0,
        Stroke::new(1.0, Color32::GRAY),
        egui::StrokeKind::Inside,
    );
    let hex = format!("#{r:02x}{g:02x}{b:02x}");
    if c.srgb.in_gamut {
        response.on_hover_text(format!("sRGB {hex}"));
    } else {
        response.on_hover_text(format!("sRGB {hex}, outside sRGB: clipped"));
    }
}

fn table_ui(ui: &mut egui::Ui, c: &ColourResult) {
    egui::Grid::new("colour-table")
        .striped(true)
        .min_col_width(56.0)
        .show(ui, |ui| {
            for h in ["", "X", "Y", "Z", "x", "y", "L*", "a*", "b*", "sRGB"] {
                ui.strong(h);
            }
            ui.end_row();
            let at = format!("{}°", c.at.aoi_deg);
            for (name, colour) in [
                (format!("reflected at {at}"), &c.at.reflected),
                (format!("transmitted at {at}"), &c.at.transmitted),
            ] {
                ui.label(name);
                for t in row_texts(colour) {
                    ui.label(RichText::new(t).monospace());
                }
                ui.horizontal(|ui| {
                    swatch_ui(ui, colour);
                    if !colour.srgb.in_gamut {
                        ui.label(RichText::new("clipped").weak());
                    }
                });
                ui.end_row();
            }
        });
}

fn diagram_ui(ui: &mut egui::Ui, c: &ColourResult) {
    let locus = c.locus.clone();
    let rxy = c.path.reflected_xy();
    let txy = c.path.transmitted_xy();
    let angles = c.path.aoi_deg.clone();
    let white_xy = c.white_xy;
    let outline = ui.visuals().weak_text_color();
    let formatter = |hp: &egui_plot::HoverPosition<'_>| -> Option<String> {
        let pos = match hp {
            egui_plot::HoverPosition::NearDataPoint { position, .. }
            | egui_plot::HoverPosition::Elsewhere { position } => *position,
        };
        Some(format!("x {:.4}, y {:.4}", pos.x, pos.y))
    };
    Plot::new("chromaticity-plot")
        .legend(Legend::default())
        .data_aspect(1.0)
        .x_axis_label("x")
        .y_axis_label("y")
        .include_x(0.0)
        .include_x(0.8)
        .include_y(0.0)
        .include_y(0.9)
        .label_formatter(formatter)
        .show(ui, |plot_ui| {
            plot_ui.line(
                Line::new("spectral locus", PlotPoints::from(locus))
                    .color(outline)
                    .width(1.0),
            );
            for (name, colour, pts) in
                [("reflected", theme::R, rxy), ("transmitted", theme::T, txy)]
            {
                if let Some(&first) = pts.first() {
                    plot_ui.points(
                        Points::new(name, PlotPoints::from(vec![first]))
                            .radius(5.0)
                            .color(colour),
                    );
                    if let (Some(&last), Some(&a)) = (pts.last(), angles.last()) {
                        plot_ui.text(
                            Text::new(name, PlotPoint::new(last[0], last[1]), format!("  {a}°"))
                                .anchor(egui::Align2::LEFT_CENTER)
                                .color(colour),
                        );
                    }
                }
                plot_ui.line(
                    Line::new(name, PlotPoints::from(pts.clone()))
                        .color(colour)
                        .width(1.5),
                );
                plot_ui.points(
                    Points::new(name, PlotPoints::from(pts))
                        .radius(2.0)
                        .color(colour),
                );
            }
            plot_ui.points(
                Points::new("white point", PlotPoints::from(vec![white_xy]))
                    .shape(MarkerShape::Cross)
                    .radius(6.0)
                    .color(outline),
            );
        });
}
