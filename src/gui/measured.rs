//! A measured R or T curve read from a file, drawn over the spectrum, with its RMS difference
//! from the design as shown.
//!
//! Reading is [`parse_measured_csv`] (unit and scale detected), the comparison
//! [`rms_difference`]; nothing here parses or computes optics.

use std::path::{Path, PathBuf};

use egui::{Color32, RichText};

use super::chooser::FileRequest;
use super::compute::{SweepCache, SweepResult};
use super::plots::{MeasuredOverlay, ViewSettings};
use crate::analysis::Spectrum;
use crate::analysis::measured::{MeasuredCurve, ValueScale, parse_measured_csv, rms_difference};
use crate::design::Quantity;
use crate::material::import::WavelengthUnit;
use crate::optics::Side;

/// The colour of the measured curve in the spectrum plot (apart from R, T and A).
pub const MEASURED_COLOUR: Color32 = Color32::from_rgb(150, 70, 180);

/// A loaded measured file.
#[derive(Clone, Debug, PartialEq)]
pub struct LoadedCurve {
    /// The file it came from.
    pub path: PathBuf,
    /// The legend text: `measured: <file name>`.
    pub label: String,
    /// The curve (nm, fractions).
    pub curve: MeasuredCurve,
}

/// What the window around the measured panel must do.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum MeasuredAction {
    /// Ask for the file to read; the answer goes to [`MeasuredState::load`].
    ChooseFile(FileRequest),
}

type RmsKey = (u64, Quantity, u64);

/// The measured-curve panel's state.
#[derive(Clone, Debug, PartialEq)]
pub struct MeasuredState {
    /// Whether the panel's window is open.
    pub open: bool,
    /// Which quantity the file holds (R or T, mean of s and p).
    pub quantity: Quantity,
    /// Draw the curve as points (else as a line).
    pub as_points: bool,
    loaded: Option<LoadedCurve>,
    /// Why the last file could not be read (the curve on show, if any, is the earlier one).
    pub error: Option<String>,
    loads: u64,
    rms: Option<(RmsKey, Option<(f64, usize)>)>,
}

impl Default for MeasuredState {
    fn default() -> Self {
        Self {
            open: false,
            quantity: Quantity::T,
            as_points: true,
            loaded: None,
            error: None,
            loads: 0,
            rms: None,
        }
    }
}

impl MeasuredState {
    /// Reads and parses the file at `path`. On success it replaces the curve on show; on
    /// failure the error (naming the file and, for bad content, the line) is kept for the panel
    /// and returned, and the earlier curve stays.
    pub fn load(&mut self, path: &Path) -> Result<(), String> {
        let name = path.file_name().map_or_else(
            || path.display().to_string(),
            |n| n.to_string_lossy().into_owned(),
        );
        let read = std::fs::read_to_string(path)
            .map_err(|e| format!("cannot read {}: {e}", path.display()))
            .and_then(|text| {
                parse_measured_csv(&text, WavelengthUnit::Auto, ValueScale::Auto)
                    .map_err(|e| format!("{name}: {e}"))
            });
        match read {
            Ok(curve) => {
                self.loaded = Some(LoadedCurve {
                    path: path.to_path_buf(),
                    label: format!("measured: {name}"),
                    curve,
                });
                self.error = None;
                self.loads += 1;
                self.rms = None;
                Ok(())
            }
            Err(e) => {
                self.error = Some(e.clone());
                Err(e)
            }
        }
    }

    /// Removes the curve (and any error).
    pub fn clear(&mut self) {
        self.loaded = None;
        self.error = None;
        self.rms = None;
    }

    /// The curve on show.
    #[must_use]
    pub fn loaded(&self) -> Option<&LoadedCurve> {
        self.loaded.as_ref()
    }

    /// The curve as a spectrum-plot overlay.
    #[must_use]
    pub fn overlay(&self) -> Option<MeasuredOverlay<'_>> {
        self.loaded.as_ref().map(|l| MeasuredOverlay {
            name: &l.label,
            colour: MEASURED_COLOUR,
            wavelength_nm: &l.curve.wavelength_nm,
            value: &l.curve.value,
            transmittance: self.quantity == Quantity::T,
            as_points: self.as_points,
        })
    }

    /// The RMS difference (fraction) between the curve and the shown spectrum's
    /// [`Self::quantity`] (mean of s and p), with the number of points compared; `None` when
    /// nothing is loaded, nothing is computed or they do not overlap. Recomputed only when the
    /// spectrum, the quantity or the file changes.
    pub fn rms(&mut self, spectrum: &SweepCache, aoi_deg: f64) -> Option<(f64, usize)> {
        let loaded = self.loaded.as_ref()?;
        let Some(Ok(shown)) = spectrum.result() else {
            return None;
        };
        let key = (spectrum.generation(), self.quantity, self.loads);
        if let Some((k, v)) = self.rms
            && k == key
        {
            return v;
        }
        let v = rms_against(&loaded.curve, shown, aoi_deg, self.quantity);
        self.rms = Some((key, v));
        v
    }
}

/// [`rms_difference`] of `curve` against a shown sweep over wavelength.
#[must_use]
pub fn rms_against(
    curve: &MeasuredCurve,
    shown: &SweepResult,
    aoi_deg: f64,
    quantity: Quantity,
) -> Option<(f64, usize)> {
    let s = Spectrum {
        wavelength_nm: shown.x.clone(),
        aoi_deg,
        side: Side::Front,
        curves: shown.curves.clone(),
        warnings: Vec::new(),
    };
    rms_difference(curve, &s, quantity)
}

/// The file dialog for a measured curve.
#[must_use]
pub fn file_request(folder: Option<&Path>) -> FileRequest {
    FileRequest {
        save: false,
        filter_name: "Measured curve (wavelength, value)".into(),
        extensions: ["csv", "txt", "tsv", "dat"].map(String::from).to_vec(),
        directory: folder.map(Path::to_path_buf),
        file_name: None,
    }
}

/// The measured-curve panel's contents. `spectrum` is the spectrum view's cache and `view` its
/// settings; `folder` is where the dialog starts.
pub fn measured_ui(
    ui: &mut egui::Ui,
    state: &mut MeasuredState,
    spectrum: &SweepCache,
    view: &ViewSettings,
    folder: Option<&Path>,
) -> Option<MeasuredAction> {
    let mut action = None;
    ui.horizontal(|ui| {
        if ui.button("Load file…").clicked() {
            action = Some(MeasuredAction::ChooseFile(file_request(folder)));
        }
        if ui
            .add_enabled(
                state.loaded.is_some() || state.error.is_some(),
                egui::Button::new("Clear"),
            )
            .clicked()
        {
            state.clear();
        }
    });
    ui.horizontal(|ui| {
        ui.label("The file holds:");
        ui.radio_value(&mut state.quantity, Quantity::R, "R");
        ui.radio_value(&mut state.quantity, Quantity::T, "T");
        ui.separator();
        ui.radio_value(&mut state.as_points, true, "points");
        ui.radio_value(&mut state.as_points, false, "line");
    });
    if let Some(e) = &state.error {
        ui.colored_label(ui.visuals().error_fg_color, e);
    }
    let Some(l) = &state.loaded else {
        ui.label(RichText::new("No measured curve loaded.").weak());
        return action;
    };
    let c = &l.curve;
    ui.label(format!("{} ({})", l.label, l.path.display()));
    if let (Some(lo), Some(hi)) = (c.wavelength_nm.first(), c.wavelength_nm.last()) {
        ui.label(format!(
            "{} points, {lo}–{hi} nm; wavelengths read in {}, values in {}",
            c.wavelength_nm.len(),
            c.unit_used,
            c.scale_used
        ));
    }
    for note in &c.notes {
        ui.label(RichText::new(format!("note: {note}")).weak());
    }
    let q = if state.quantity == Quantity::R {
        "R"
    } else {
        "T"
    };
    match state.rms(spectrum, view.aoi_deg) {
        Some((rms, n)) => {
            ui.strong(format!(
                "RMS difference: {:.4} percentage points over {n} points",
                100.0 * rms
            ));
            ui.label(
                RichText::new(format!(
                    "against the design's {q} (mean of s and p) at {}° as plotted, where the \
                     measured and plotted wavelengths overlap",
                    view.aoi_deg
                ))
                .weak(),
            );
        }
        None => {
            ui.colored_label(
                ui.visuals().warn_fg_color,
                "No RMS difference: the measured wavelengths and the plotted range do not \
                 overlap, or the spectrum is not computed.",
            );
        }
    }
    action
}

/// The measured-curve window, when open.
pub fn measured_window(
    ctx: &egui::Context,
    state: &mut MeasuredState,
    spectrum: &SweepCache,
    view: &ViewSettings,
    folder: Option<&Path>,
) -> Option<MeasuredAction> {
    if !state.open {
        return None;
    }
    let mut open = true;
    let mut action = None;
    egui::Window::new("Measured curve")
        .open(&mut open)
        .default_width(460.0)
        .show(ctx, |ui| {
            action = measured_ui(ui, state, spectrum, view, folder);
        });
    state.open = open;
    action
}
