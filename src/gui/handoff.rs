//! The export window: the spectrum or angle table as CSV, a plot image (PNG or SVG) and the
//! layer report (CSV, Markdown, HTML), written through [`crate::export`].
//!
//! Nothing here computes optics or formats files: the numbers come from
//! [`crate::analysis::spectrum`] and [`crate::analysis::angle_scan`] with the view's settings
//! (the same calls the window's plots and the command line make), and the bytes from the
//! export functions. Files are written with [`crate::export::write_atomic`].

use std::path::{Path, PathBuf};

use egui::{DragValue, RichText};

use super::plots::{ViewSettings, YAxis};
use crate::analysis::{self, AngleScan, Spectrum};
use crate::design::{Design, Pol, Quantity};
use crate::export::{self, plot, report::LayerReport};
use crate::optics::Side;

/// First angle of the exported angle table (degrees), as in the angle view.
const ANGLE_FROM_DEG: f64 = 0.0;
/// Last angle of the exported angle table (degrees), as in the angle view.
const ANGLE_TO_DEG: f64 = 89.0;

/// An image format.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ImageFormat {
    /// A PNG bitmap.
    Png,
    /// An SVG drawing.
    Svg,
}

impl ImageFormat {
    /// The file name extension, without the dot.
    #[must_use]
    pub fn extension(self) -> &'static str {
        match self {
            ImageFormat::Png => "png",
            ImageFormat::Svg => "svg",
        }
    }

    /// The format a file name's extension names (case does not matter), if any.
    #[must_use]
    pub fn from_path(path: &Path) -> Option<Self> {
        let ext = path.extension()?.to_str()?.to_ascii_lowercase();
        match ext.as_str() {
            "png" => Some(ImageFormat::Png),
            "svg" => Some(ImageFormat::Svg),
            _ => None,
        }
    }
}

/// A layer report format.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ReportFormat {
    /// Comma-separated values.
    Csv,
    /// Markdown tables.
    Markdown,
    /// A self-contained HTML page.
    Html,
}

/// What the export window writes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ExportKind {
    /// The spectrum view's sweep as CSV.
    SpectrumCsv,
    /// The angle view's sweep as CSV.
    AngleCsv,
    /// A plot image of the spectrum.
    Image(ImageFormat),
    /// The layer report.
    Report(ReportFormat),
}

impl ExportKind {
    /// The usual file name extension, without the dot.
    #[must_use]
    pub fn extension(self) -> &'static str {
        match self {
            ExportKind::SpectrumCsv
            | ExportKind::AngleCsv
            | ExportKind::Report(ReportFormat::Csv) => "csv",
            ExportKind::Image(f) => f.extension(),
            ExportKind::Report(ReportFormat::Markdown) => "md",
            ExportKind::Report(ReportFormat::Html) => "html",
        }
    }

    /// The name of the file type, for the file dialog's filter.
    #[must_use]
    pub fn file_type(self) -> &'static str {
        match self {
            ExportKind::SpectrumCsv
            | ExportKind::AngleCsv
            | ExportKind::Report(ReportFormat::Csv) => "CSV table",
            ExportKind::Image(ImageFormat::Png) => "PNG image",
            ExportKind::Image(ImageFormat::Svg) => "SVG image",
            ExportKind::Report(ReportFormat::Markdown) => "Markdown text",
            ExportKind::Report(ReportFormat::Html) => "HTML page",
        }
    }

    /// What goes after the design's name in the suggested file name.
    fn suffix(self) -> &'static str {
        match self {
            ExportKind::SpectrumCsv => "spectrum",
            ExportKind::AngleCsv => "angles",
            ExportKind::Image(_) => "plot",
            ExportKind::Report(_) => "layers",
        }
    }
}

/// A file dialog to show on the window's dialog thread.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FileRequest {
    /// Ask for a file to write (else pick an existing one).
    pub save: bool,
    /// The filter's name, e.g. "CSV table".
    pub filter_name: String,
    /// The filter's extensions, without dots.
    pub extensions: Vec<String>,
    /// The folder to start in.
    pub directory: Option<PathBuf>,
    /// The suggested file name (save dialogs).
    pub file_name: Option<String>,
}

/// What the window around the export panel must do.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum HandoffAction {
    /// Ask for the file to write; the answer goes to [`HandoffState::export_to`].
    ChooseFile(FileRequest),
}

/// What an export reads: the open design and the view settings.
#[derive(Clone, Copy, Debug)]
pub struct ExportInputs<'a> {
    /// The design.
    pub design: &'a Design,
    /// Its file, if saved (the dialog starts in its folder).
    pub design_path: Option<&'a Path>,
    /// The plots' settings (range, step, angle, curves on show).
    pub view: &'a ViewSettings,
}

/// The export window's state.
#[derive(Clone, Debug, PartialEq)]
pub struct HandoffState {
    /// Whether the window is open.
    pub open: bool,
    /// What to write.
    pub kind: ExportKind,
    /// Image width (px).
    pub width_px: u32,
    /// Image height (px).
    pub height_px: u32,
    /// The outcome of the last export: the file written, or the error.
    pub last: Option<Result<PathBuf, String>>,
}

impl Default for HandoffState {
    fn default() -> Self {
        Self {
            open: false,
            kind: ExportKind::SpectrumCsv,
            width_px: 1200,
            height_px: 800,
            last: None,
        }
    }
}

impl HandoffState {
    /// Writes the chosen export to `path` (a missing extension is added) and remembers the
    /// outcome for the window. Returns the file written, or the error as shown.
    pub fn export_to(&mut self, inputs: &ExportInputs<'_>, path: &Path) -> Result<PathBuf, String> {
        let path = if path.extension().is_none() {
            path.with_extension(self.kind.extension())
        } else {
            path.to_path_buf()
        };
        let outcome = export_bytes(self.kind, self.width_px, self.height_px, inputs, &path)
            .and_then(|bytes| {
                let inputs: Vec<&Path> = inputs.design_path.into_iter().collect();
                export::refuse_input(&path, &inputs)
                    .and_then(|()| export::write_atomic(&path, &bytes))
                    .map_err(|e| format!("cannot write {}: {e}", path.display()))
            })
            .map(|()| path);
        self.last = Some(outcome.clone());
        outcome
    }

    /// The file dialog for the chosen export, in the design's folder.
    #[must_use]
    pub fn file_request(&self, inputs: &ExportInputs<'_>) -> FileRequest {
        let stem = inputs
            .design_path
            .and_then(|p| p.file_stem())
            .and_then(|s| s.to_str())
            .map_or_else(|| inputs.design.name.clone(), str::to_owned);
        FileRequest {
            save: true,
            filter_name: self.kind.file_type().to_owned(),
            extensions: vec![self.kind.extension().to_owned()],
            directory: inputs
                .design_path
                .and_then(Path::parent)
                .map(Path::to_path_buf),
            file_name: Some(format!(
                "{stem}-{}.{}",
                self.kind.suffix(),
                self.kind.extension()
            )),
        }
    }
}

/// The quantity and polarisation the spectrum view shows first: R, else T, else A (T in the
/// optical density view); the mean, else s, else p.
#[must_use]
pub fn shown_curve(view: &ViewSettings) -> (Quantity, Pol) {
    let c = view.spectrum_curves;
    let q = if view.y_axis == YAxis::OpticalDensity || (!c.r && c.t) {
        Quantity::T
    } else if !c.r && c.a {
        Quantity::A
    } else {
        Quantity::R
    };
    let p = if c.mean || !(c.s || c.p) {
        Pol::Mean
    } else if c.s {
        Pol::S
    } else {
        Pol::P
    };
    (q, p)
}

/// The spectrum with the view's range, step and angle, as the spectrum view computes it.
pub fn view_spectrum(design: &Design, view: &ViewSettings) -> Result<Spectrum, String> {
    let resolved = design.resolve().map_err(|e| e.to_string())?;
    let wl = analysis::wavelengths_nm(view.from_nm, view.to_nm, view.step_nm)
        .map_err(|e| format!("wavelength range: {e}"))?;
    analysis::spectrum(&resolved, &wl, view.aoi_deg, Side::Front).map_err(|e| e.to_string())
}

/// The angle scan with the view's wavelength and step, as the angle view computes it.
pub fn view_angles(design: &Design, view: &ViewSettings) -> Result<AngleScan, String> {
    let resolved = design.resolve().map_err(|e| e.to_string())?;
    let a = analysis::angles_deg(ANGLE_FROM_DEG, ANGLE_TO_DEG, view.angle_step_deg)
        .map_err(|e| format!("angle range: {e}"))?;
    analysis::angle_scan(&resolved, view.angle_wavelength_nm, &a, Side::Front)
        .map_err(|e| e.to_string())
}

/// The plot image of the spectrum view's curve, with the safety caution when the design's name
/// or the spectrum calls for it.
pub fn view_plot(design: &Design, view: &ViewSettings) -> Result<plot::PlotSpec, String> {
    let s = view_spectrum(design, view)?;
    let (q, p) = shown_curve(view);
    let mut spec = plot::spectrum_plot(&[(design.name.as_str(), &s)], q, p);
    if export::needs_caution(&design.name) || export::shows_blocking(&s) {
        spec.caution = Some(export::SAFETY_CAUTION.to_owned());
    }
    Ok(spec)
}

/// The bytes of an export of `kind` for the file `path`.
fn export_bytes(
    kind: ExportKind,
    width_px: u32,
    height_px: u32,
    inputs: &ExportInputs<'_>,
    path: &Path,
) -> Result<Vec<u8>, String> {
    let (d, view) = (inputs.design, inputs.view);
    let csv_err = |e: std::io::Error| format!("cannot format the table: {e}");
    match kind {
        ExportKind::SpectrumCsv => {
            let mut out = Vec::new();
            export::csv::write_spectrum(&mut out, &view_spectrum(d, view)?).map_err(csv_err)?;
            Ok(out)
        }
        ExportKind::AngleCsv => {
            let mut out = Vec::new();
            export::csv::write_angles(&mut out, &view_angles(d, view)?).map_err(csv_err)?;
            Ok(out)
        }
        ExportKind::Image(_) => {
            let Some(format) = ImageFormat::from_path(path) else {
                return Err(format!(
                    "cannot tell the image format of {}: name the file .png or .svg",
                    path.display()
                ));
            };
            let spec = view_plot(d, view)?;
            match format {
                ImageFormat::Png => plot::render_png(&spec, width_px, height_px),
                ImageFormat::Svg => {
                    plot::render_svg(&spec, width_px, height_px).map(String::into_bytes)
                }
            }
            .map_err(|e| e.to_string())
        }
        ExportKind::Report(f) => {
            let r = LayerReport::new(d).map_err(|e| e.to_string())?;
            Ok(match f {
                ReportFormat::Csv => r.to_csv(),
                ReportFormat::Markdown => r.to_markdown(),
                ReportFormat::Html => r.to_html(),
            }
            .into_bytes())
        }
    }
}

fn quantity_text(q: Quantity) -> &'static str {
    match q {
        Quantity::R => "reflectance R",
        Quantity::T => "transmittance T",
        Quantity::A => "absorptance A",
    }
}

fn pol_text(p: Pol) -> &'static str {
    match p {
        Pol::S => "s-polarised",
        Pol::P => "p-polarised",
        Pol::Mean => "mean of s and p",
    }
}

/// The export panel's contents. Returns the file dialog to show when Save… is pressed.
pub fn handoff_ui(
    ui: &mut egui::Ui,
    state: &mut HandoffState,
    inputs: &ExportInputs<'_>,
) -> Option<HandoffAction> {
    let view = inputs.view;
    let k = &mut state.kind;
    ui.label("What to export:");
    ui.radio_value(k, ExportKind::SpectrumCsv, "Spectrum table (CSV)");
    ui.radio_value(k, ExportKind::AngleCsv, "Angle table (CSV)");
    let is_image = matches!(k, ExportKind::Image(_));
    if ui.radio(is_image, "Plot image").clicked() && !is_image {
        *k = ExportKind::Image(ImageFormat::Png);
    }
    let is_report = matches!(k, ExportKind::Report(_));
    if ui.radio(is_report, "Layer report").clicked() && !is_report {
        *k = ExportKind::Report(ReportFormat::Markdown);
    }
    ui.separator();
    match &mut state.kind {
        ExportKind::SpectrumCsv => {
            ui.label(format!(
                "R, T, A (s, p and mean) from {} to {} nm in steps of {} nm at {}° incidence, \
                 as in the spectrum view.",
                view.from_nm, view.to_nm, view.step_nm, view.aoi_deg
            ));
        }
        ExportKind::AngleCsv => {
            ui.label(format!(
                "R, T, A (s, p and mean) from {ANGLE_FROM_DEG}° to {ANGLE_TO_DEG}° in steps of \
                 {}° at {} nm, as in the angle view.",
                view.angle_step_deg, view.angle_wavelength_nm
            ));
        }
        ExportKind::Image(f) => {
            ui.horizontal(|ui| {
                ui.radio_value(f, ImageFormat::Png, "PNG");
                ui.radio_value(f, ImageFormat::Svg, "SVG");
            });
            ui.horizontal(|ui| {
                let l = ui.label("width");
                ui.add(
                    DragValue::new(&mut state.width_px)
                        .range(plot::MIN_SIDE_PX..=plot::MAX_SIDE_PX)
                        .suffix(" px"),
                )
                .labelled_by(l.id);
                let l = ui.label("height");
                ui.add(
                    DragValue::new(&mut state.height_px)
                        .range(plot::MIN_SIDE_PX..=plot::MAX_SIDE_PX)
                        .suffix(" px"),
                )
                .labelled_by(l.id);
            });
            let (q, p) = shown_curve(view);
            ui.label(format!(
                "Plots {}, {}, {} to {} nm at {}° incidence, as in the spectrum view.",
                quantity_text(q),
                pol_text(p),
                view.from_nm,
                view.to_nm,
                view.aoi_deg
            ));
            if view.y_axis == YAxis::OpticalDensity {
                ui.label(
                    RichText::new("The image shows T in percent, not optical density.").weak(),
                );
            }
        }
        ExportKind::Report(f) => {
            ui.horizontal(|ui| {
                ui.radio_value(f, ReportFormat::Csv, "CSV");
                ui.radio_value(f, ReportFormat::Markdown, "Markdown");
                ui.radio_value(f, ReportFormat::Html, "HTML");
            });
            ui.label(format!(
                "Every layer of \"{}\" ({} layers): thickness, QWOT, optical and cumulative \
                 thickness, with totals per material.",
                inputs.design.name,
                inputs.design.layers.len()
            ));
        }
    }
    ui.separator();
    let mut action = None;
    if ui.button("Save…").clicked() {
        action = Some(HandoffAction::ChooseFile(state.file_request(inputs)));
    }
    match &state.last {
        Some(Ok(p)) => {
            ui.label(format!("Wrote {}", p.display()));
        }
        Some(Err(e)) => {
            ui.colored_label(ui.visuals().error_fg_color, format!("Not written: {e}"));
        }
        None => {}
    }
    action
}

/// The export window, when open.
pub fn handoff_window(
    ctx: &egui::Context,
    state: &mut HandoffState,
    inputs: &ExportInputs<'_>,
) -> Option<HandoffAction> {
    if !state.open {
        return None;
    }
    let mut open = true;
    let mut action = None;
    egui::Window::new("Export")
        .open(&mut open)
        .default_width(460.0)
        .show(ctx, |ui| action = handoff_ui(ui, state, inputs));
    state.open = open;
    action
}
