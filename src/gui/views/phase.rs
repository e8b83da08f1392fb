//! Phase, group delay and GDD of r or t (s and p) over the spectrum view's wavelengths, at
//! its angle and from its side: [`crate::analysis::phase::phase_spectrum`].

use egui::Color32;
use egui_plot::{Legend, Line, LineStyle, Plot, PlotPoints};

use crate::analysis::phase::{PhaseCurve, PhaseSpectrum, phase_spectrum};
use crate::analysis::{Sweep, wavelengths_nm};
use crate::gui::plots::ViewSettings;
use crate::gui::theme;

use super::cache::{Progress, ViewCache};
use super::{Runner, Stamp, Subject, busy_ui, shown, warnings_ui};

/// Which quantity is drawn.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum PhaseQuantity {
    /// Unwrapped phase, degrees.
    #[default]
    Phase,
    /// Group delay dφ/dω, fs.
    GroupDelay,
    /// Group delay dispersion d²φ/dω², fs².
    Gdd,
}

impl PhaseQuantity {
    /// Axis label with its unit.
    #[must_use]
    pub fn axis(self) -> &'static str {
        match self {
            PhaseQuantity::Phase => "phase, unwrapped (°)",
            PhaseQuantity::GroupDelay => "group delay (fs)",
            PhaseQuantity::Gdd => "GDD (fs²)",
        }
    }

    /// The values of this quantity in `c`.
    #[must_use]
    pub fn of(self, c: &PhaseCurve) -> &[f64] {
        match self {
            PhaseQuantity::Phase => &c.phase_deg,
            PhaseQuantity::GroupDelay => &c.gd_fs,
            PhaseQuantity::Gdd => &c.gdd_fs2,
        }
    }
}

/// Reflected or transmitted amplitude.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum Light {
    /// r.
    #[default]
    Reflected,
    /// t.
    Transmitted,
}

type Key = (Stamp, Sweep);

/// The phase view: its choices and its cached result.
pub struct PhaseView {
    /// Phase, GD or GDD.
    pub quantity: PhaseQuantity,
    /// r or t.
    pub light: Light,
    /// Draw s.
    pub s: bool,
    /// Draw p.
    pub p: bool,
    cache: ViewCache<Key, PhaseSpectrum>,
}

impl Default for PhaseView {
    fn default() -> Self {
        Self {
            quantity: PhaseQuantity::default(),
            light: Light::default(),
            s: true,
            p: true,
            cache: ViewCache::new("phase-view"),
        }
    }
}

/// Computes the phase spectrum of `design` over the wavelength `sweep`.
///
/// # Errors
/// The design's or the library's message.
pub fn compute(design: &crate::design::Design, sweep: &Sweep) -> Result<PhaseSpectrum, String> {
    let Sweep::Wavelength {
        from_nm,
        to_nm,
        step_nm,
        aoi_deg,
        side,
    } = *sweep
    else {
        return Err("the phase view needs a wavelength range".into());
    };
    let r = design.resolve().map_err(|e| e.to_string())?;
    let wl =
        wavelengths_nm(from_nm, to_nm, step_nm).map_err(|e| format!("wavelength range: {e}"))?;
    phase_spectrum(&r, &wl, aoi_deg, side).map_err(|e| e.to_string())
}

impl PhaseView {
    /// Whether a worker is computing.
    #[must_use]
    pub fn busy(&self) -> bool {
        self.cache.busy()
    }

    /// The result on show.
    #[must_use]
    pub fn result(&self) -> Option<&Result<PhaseSpectrum, String>> {
        self.cache.result()
    }

    pub(super) fn ui(
        &mut self,
        ui: &mut egui::Ui,
        subject: Subject<'_>,
        view: &ViewSettings,
        run: &Runner,
    ) {
        let sweep = view.spectrum_sweep();
        let key = (subject.stamp(), sweep);
        let design = subject.design;
        self.cache.update(&key, false, run, || {
            let d = design.clone();
            move |_: Progress<'_, ()>| compute(&d, &sweep)
        });
        ui.horizontal_wrapped(|ui| {
            ui.selectable_value(&mut self.quantity, PhaseQuantity::Phase, "phase");
            ui.selectable_value(&mut self.quantity, PhaseQuantity::GroupDelay, "group delay");
            ui.selectable_value(&mut self.quantity, PhaseQuantity::Gdd, "GDD");
            ui.separator();
            ui.selectable_value(&mut self.light, Light::Reflected, "reflected (r)");
            ui.selectable_value(&mut self.light, Light::Transmitted, "transmitted (t)");
            ui.separator();
            ui.checkbox(&mut self.s, "s");
            ui.checkbox(&mut self.p, "p");
        });
        ui.label(
            egui::RichText::new(format!(
                "over the spectrum view's range ({} to {} nm, step {} nm) at {}°, light from \
                 the {}; change them there",
                view.from_nm,
                view.to_nm,
                view.step_nm,
                view.aoi_deg,
                match view.side {
                    crate::optics::Side::Front => "front",
                    crate::optics::Side::Back => "back",
                }
            ))
            .weak(),
        );
        busy_ui(ui, self.cache.busy());
        let Some(p) = shown(ui, self.cache.result()) else {
            return;
        };
        warnings_ui(ui, &p.warnings);
        let (cs, cp) = match self.light {
            Light::Reflected => (&p.r_s, &p.r_p),
            Light::Transmitted => (&p.t_s, &p.t_p),
        };
        let letter = match self.light {
            Light::Reflected => "r",
            Light::Transmitted => "t",
        };
        let base = match self.light {
            Light::Reflected => theme::R,
            Light::Transmitted => theme::T,
        };
        let q = self.quantity;
        let series = |c: &PhaseCurve| -> Vec<[f64; 2]> {
            p.wavelength_nm
                .iter()
                .zip(q.of(c))
                .filter(|(_, v)| v.is_finite())
                .map(|(&x, &y)| [x, y])
                .collect()
        };
        let lines: Vec<(String, Color32, LineStyle, Vec<[f64; 2]>)> = [
            (self.s, "s", cs, LineStyle::Solid),
            (self.p, "p", cp, LineStyle::dashed_dense()),
        ]
        .into_iter()
        .filter(|l| l.0)
        .map(|(_, pol, c, style)| {
            (
                format!("{letter}_{pol}"),
                theme::pol_shade(base, pol),
                style,
                series(c),
            )
        })
        .collect();
        Plot::new("phase-plot")
            .legend(Legend::default())
            .x_axis_label("wavelength (nm)")
            .y_axis_label(q.axis())
            .show(ui, |plot_ui| {
                for (name, colour, style, pts) in lines {
                    plot_ui.line(
                        Line::new(name, PlotPoints::from(pts))
                            .color(colour)
                            .style(style)
                            .width(1.5),
                    );
                }
            });
    }
}
