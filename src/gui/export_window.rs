//! The export window: the spectrum or angle table as CSV, a plot image (PNG or SVG) and the
//! layer report (CSV, Markdown, HTML), written through [`crate::export`].
//!
//! Nothing here computes optics or formats files: the numbers come from
//! [`crate::analysis::run_sweep`] with the views' own [`Sweep`]s (range, step, angle and the
//! side the light comes from — the call the window's plots and the command line make), and the
//! bytes from the export functions. Files are written with [`crate::export::write_atomic`].

use std::path::{Path, PathBuf};

use egui::{DragValue, RichText};

use super::chooser::FileRequest;
use super::plots::{ViewSettings, YAxis};
use crate::analysis::{self, Spectrum, Sweep, SweepData};
use crate::design::{Design, Pol, Quantity};
use crate::export::{self, plot, report::LayerReport};

pub use crate::export::plot::ImageFormat;
pub use crate::export::report::ReportFormat;

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
            ExportKind::SpectrumCsv | ExportKind::AngleCsv => "csv",
            ExportKind::Image(f) => f.extension(),
            ExportKind::Report(f) => f.extension(),
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

/// What the window around the export panel must do.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum ExportAction {
    /// Ask for the file to write; the answer goes to [`ExportState::export_to`].
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
    /// The design's slot in the design palette, so its image has its colour on screen.
    pub colour_slot: usize,
}

/// The export window's state.
#[derive(Clone, Debug, PartialEq)]
pub struct ExportState {
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

impl Default for ExportState {
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

impl ExportState {
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

/// Runs one of the views' sweeps on `design`, as the view computes it.
pub fn run_view_sweep(design: &Design, sweep: &Sweep) -> Result<SweepData, String> {
    let resolved = design.resolve().map_err(|e| e.to_string())?;
    analysis::run_sweep(&resolved, sweep).map_err(|e| format!("{}: {e}", sweep.range_name()))
}

/// The spectrum view's sweep on `design`.
fn view_spectrum(design: &Design, view: &ViewSettings) -> Result<Spectrum, String> {
    match run_view_sweep(design, &view.spectrum_sweep())? {
        SweepData::Spectrum(s) => Ok(s),
        SweepData::Angles(_) => Err("the spectrum view's sweep is not over wavelength".into()),
    }
}

/// The plot image of the spectrum view's curve, with the safety caution when the design's name
/// or the spectrum calls for it.
pub fn view_plot(design: &Design, view: &ViewSettings) -> Result<plot::PlotSpec, String> {
    let s = view_spectrum(design, view)?;
    let (q, p) = shown_curve(view);
    let mut spec = plot::spectrum_plot(&[(design.name.as_str(), &s)], q, p);
    spec.caution = export::caution_for(
        false,
        [design.name.as_str()],
        s.curves.r.iter().copied(),
        s.curves.t.iter().copied(),
    )
    .map(str::to_owned);
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
            match run_view_sweep(d, &view.angle_sweep())? {
                SweepData::Angles(a) => export::csv::write_angles(&mut out, &a),
                SweepData::Spectrum(s) => export::csv::write_spectrum(&mut out, &s),
            }
            .map_err(csv_err)?;
            Ok(out)
        }
        ExportKind::Image(_) => {
            let format = ImageFormat::for_path(path).map_err(|e| e.to_string())?;
            let mut spec = view_plot(d, view)?;
            for series in &mut spec.series {
                series.colour = inputs.colour_slot;
            }
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
            Ok(r.render(f).into_bytes())
        }
    }
}

/// The export panel's contents. Returns the file dialog to show when Save… is pressed.
pub fn export_ui(
    ui: &mut egui::Ui,
    state: &mut ExportState,
    inputs: &ExportInputs<'_>,
) -> Option<ExportAction> {
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
                "R, T, A (s, p and mean), {}, as in the spectrum view.",
                view.spectrum_sweep()
            ));
        }
        ExportKind::AngleCsv => {
            ui.label(format!(
                "R, T, A (s, p and mean), {}, as in the angle view.",
                view.angle_sweep()
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
                "Plots {}, {}, {}, as in the spectrum view.",
                q.describe(),
                p.describe(),
                view.spectrum_sweep()
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
        action = Some(ExportAction::ChooseFile(state.file_request(inputs)));
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
pub fn export_window(
    ctx: &egui::Context,
    state: &mut ExportState,
    inputs: &ExportInputs<'_>,
) -> Option<ExportAction> {
    if !state.open {
        return None;
    }
    let mut open = true;
    let mut action = None;
    egui::Window::new("Export")
        .open(&mut open)
        .default_width(460.0)
        .show(ctx, |ui| action = export_ui(ui, state, inputs));
    state.open = open;
    action
}
