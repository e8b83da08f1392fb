//! The analysis views for specialty coatings, reached from the "Analysis" choice above the
//! centre views: phase, group delay and GDD ([`phase`]), the field intensity |E|² through the
//! stack ([`field`]), the admittance locus ([`admittance`]), the colour of reflected and
//! transmitted light ([`colour`]) and the wavelength × angle map ([`map`]).
//!
//! Each view draws a cached result of one library call in [`crate::analysis`] — the call the
//! command line makes — keyed by the design, its revision and the view's settings
//! ([`cache::ViewCache`]), so an edit recomputes it and nothing is recomputed per frame. Slow
//! results move to a worker job; the map, when its estimate is large, always does, with
//! progress and Cancel. Errors are the library's own text.

pub mod admittance;
pub mod cache;
pub mod colour;
pub mod field;
pub mod map;
pub mod phase;

use std::sync::Arc;

use crate::analysis::Warning;
use crate::design::Design;
use crate::optics::field::Polarisation;

use self::cache::{Progress, ViewCache};
use super::designs::DesignId;
use super::jobs::Waker;
use super::plots::{ViewSettings, number_ui};

/// Which analysis view is shown.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum AnalysisView {
    /// Phase, group delay and GDD over wavelength.
    #[default]
    Phase,
    /// |E|² through the stack.
    Field,
    /// The admittance locus.
    Admittance,
    /// Colour of reflected and transmitted light.
    Colour,
    /// Wavelength × angle map.
    Map,
}

impl AnalysisView {
    /// Every view, in the order of the choice row.
    pub const ALL: [AnalysisView; 5] = [
        AnalysisView::Phase,
        AnalysisView::Field,
        AnalysisView::Admittance,
        AnalysisView::Colour,
        AnalysisView::Map,
    ];

    /// The text of its choice.
    #[must_use]
    pub fn label(self) -> &'static str {
        match self {
            AnalysisView::Phase => "Phase and GDD",
            AnalysisView::Field => "Field |E|²",
            AnalysisView::Admittance => "Admittance locus",
            AnalysisView::Colour => "Colour",
            AnalysisView::Map => "Wavelength × angle map",
        }
    }
}

/// The design a view shows: which one, its contents and its revision.
#[derive(Clone, Copy)]
pub struct Subject<'a> {
    /// Which open design.
    pub id: DesignId,
    /// Its contents.
    pub design: &'a Design,
    /// Its revision (changes with every edit).
    pub revision: u64,
}

/// What every view's cache key starts with: the design and its revision.
pub type Stamp = (DesignId, u64);

impl Subject<'_> {
    fn stamp(&self) -> Stamp {
        (self.id, self.revision)
    }
}

/// How a view computes: inline always (tests, screenshots) or as it sees fit, and how a
/// job wakes the window.
pub struct Runner {
    /// Compute inline even when slow.
    pub inline: bool,
    /// Called from a job's thread when it has news.
    pub wake: Waker,
}

/// The analysis views' settings and cached results (window state, not part of the design).
pub struct AnalysisState {
    /// The view shown.
    pub view: AnalysisView,
    /// Phase view settings and result.
    pub phase: phase::PhaseView,
    /// Field view settings and result.
    pub field: field::FieldView,
    /// Admittance view settings and result.
    pub admittance: admittance::AdmittanceView,
    /// Colour view settings and result.
    pub colour: colour::ColourView,
    /// Map view settings and result.
    pub map: map::MapView,
}

impl AnalysisState {
    /// Views at `wavelength_nm` (the field and admittance views) and normal incidence.
    #[must_use]
    pub fn new(wavelength_nm: f64) -> Self {
        Self {
            view: AnalysisView::default(),
            phase: phase::PhaseView::default(),
            field: field::FieldView::new(wavelength_nm),
            admittance: admittance::AdmittanceView::new(wavelength_nm),
            colour: colour::ColourView::default(),
            map: map::MapView::default(),
        }
    }

    /// The choice row and the chosen view of `subject`; `view` gives the spectrum view's
    /// range, angle and side, which the phase and map views follow.
    pub fn ui(
        &mut self,
        ui: &mut egui::Ui,
        subject: Subject<'_>,
        view: &ViewSettings,
        inline: bool,
    ) {
        let ctx = ui.ctx().clone();
        let run = Runner {
            inline,
            wake: Arc::new(move || ctx.request_repaint()),
        };
        ui.horizontal_wrapped(|ui| {
            for v in AnalysisView::ALL {
                ui.selectable_value(&mut self.view, v, v.label());
            }
        });
        ui.separator();
        match self.view {
            AnalysisView::Phase => self.phase.ui(ui, subject, view, &run),
            AnalysisView::Field => self.field.ui(ui, subject, &run),
            AnalysisView::Admittance => self.admittance.ui(ui, subject, &run),
            AnalysisView::Colour => self.colour.ui(ui, subject, &run),
            AnalysisView::Map => self.map.ui(ui, subject, view, &run),
        }
        let busy = match self.view {
            AnalysisView::Phase => self.phase.busy(),
            AnalysisView::Field => self.field.busy(),
            AnalysisView::Admittance => self.admittance.busy(),
            AnalysisView::Colour => self.colour.busy(),
            AnalysisView::Map => self.map.busy(),
        };
        if busy {
            ui.ctx()
                .request_repaint_after(std::time::Duration::from_millis(100));
        }
    }
}

/// The library's error, as the view shows it.
fn error_ui(ui: &mut egui::Ui, e: &str) {
    ui.colored_label(ui.visuals().error_fg_color, format!("cannot compute: {e}"));
}

/// Warnings (materials evaluated outside their data), one line each.
fn warnings_ui(ui: &mut egui::Ui, warnings: &[Warning]) {
    for w in warnings {
        ui.colored_label(ui.visuals().warn_fg_color, w.to_string());
    }
}

/// "computing…" while a worker runs (the result on show is then an older one).
fn busy_ui(ui: &mut egui::Ui, busy: bool) {
    if busy {
        ui.horizontal(|ui| {
            ui.spinner();
            ui.label("computing…");
        });
    }
}

/// The result a view draws: `None` (after saying why) while there is none yet or when the
/// compute failed.
fn shown<'a, T>(ui: &mut egui::Ui, result: Option<&'a Result<T, String>>) -> Option<&'a T> {
    match result? {
        Ok(t) => Some(t),
        Err(e) => {
            error_ui(ui, e);
            None
        }
    }
}

/// A wavelength, angle and polarisation (the field and admittance views).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Point {
    /// Wavelength, nm.
    pub wavelength_nm: f64,
    /// Angle of incidence, degrees.
    pub aoi_deg: f64,
    /// Polarisation.
    pub pol: Polarisation,
}

/// [`Point`] as an exact cache key.
type PointKey = (u64, u64, Polarisation);

impl Point {
    /// At `wavelength_nm`, normal incidence, s.
    #[must_use]
    pub fn new(wavelength_nm: f64) -> Self {
        Self {
            wavelength_nm,
            aoi_deg: 0.0,
            pol: Polarisation::S,
        }
    }

    fn key(&self) -> PointKey {
        (
            self.wavelength_nm.to_bits(),
            self.aoi_deg.to_bits(),
            self.pol,
        )
    }

    /// The result at this point of a view that computes one (field, admittance): brings
    /// `cache` up to date with `compute` for `subject`, marks a computation under way, and
    /// returns the result on show (an error is shown in its place).
    fn result<'c, T: Send + 'static>(
        self,
        ui: &mut egui::Ui,
        cache: &'c mut ViewCache<(Stamp, PointKey), T>,
        subject: Subject<'_>,
        run: &Runner,
        compute: fn(&Design, f64, f64, Polarisation) -> Result<T, String>,
    ) -> Option<&'c T> {
        let key = (subject.stamp(), self.key());
        let design = subject.design;
        cache.update(&key, false, run, || {
            let d = design.clone();
            move |_: Progress<'_, ()>| compute(&d, self.wavelength_nm, self.aoi_deg, self.pol)
        });
        busy_ui(ui, cache.busy());
        shown(ui, cache.result())
    }

    /// Its control row.
    fn ui(&mut self, ui: &mut egui::Ui) {
        ui.horizontal_wrapped(|ui| {
            number_ui(
                ui,
                "wavelength",
                &mut self.wavelength_nm,
                1.0..=1_000_000.0,
                1.0,
                " nm",
            );
            number_ui(
                ui,
                "angle of incidence",
                &mut self.aoi_deg,
                0.0..=89.9,
                0.5,
                "°",
            );
            ui.selectable_value(&mut self.pol, Polarisation::S, "s");
            ui.selectable_value(&mut self.pol, Polarisation::P, "p");
        });
    }
}
