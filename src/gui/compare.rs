//! The compare view: two or more open designs on shared axes of R or T (mean of s and p), the
//! difference of two of them in percentage points, and a table of figures over a band at one
//! angle.
//!
//! The curves are the designs' cached sweeps ([`super::compute`]); the figures and the
//! difference come from [`crate::analysis::compare`], the same functions the command line
//! uses. Nothing here computes optics.

use egui::{Color32, RichText};
use egui_plot::{Legend, Line, Plot, PlotPoint, PlotPoints};

use crate::analysis::Spectrum;
use crate::analysis::compare::{Figures, band_figures, difference};

use crate::analysis::Sweep;

use super::compute::{SweepCache, SweepResult};
use super::designs::{DesignId, WindowCommand};
use super::plots::number_ui;

/// A cached sweep over wavelength as the engine's [`Spectrum`] (copies the arrays).
fn spectrum_of(r: &SweepResult) -> Spectrum {
    Spectrum {
        wavelength_nm: r.x.clone(),
        curves: r.curves.clone(),
        ..Spectrum::default()
    }
}

/// A percentage (fraction in) with three decimals, e.g. `4.125 %`.
#[must_use]
pub fn fmt_percent(fraction: f64) -> String {
    format!("{:.3} %", 100.0 * fraction)
}

/// A wavelength in nm without trailing zeros (at most three decimals), e.g. `552.5 nm`.
#[must_use]
pub fn fmt_nm(nm: f64) -> String {
    let s = format!("{nm:.3}");
    let s = if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.')
    } else {
        &s
    };
    format!("{s} nm")
}

pub use crate::design::Quantity;

fn curve(r: &SweepResult, q: Quantity) -> &[f64] {
    match q {
        Quantity::R => &r.curves.r,
        Quantity::T => &r.curves.t,
        Quantity::A => &r.curves.a,
    }
}

fn curve_name(q: Quantity) -> &'static str {
    q.symbol()
}

/// The compare view's settings (window state, not part of any design).
#[derive(Clone, Debug, PartialEq)]
pub struct CompareSettings {
    /// The designs being compared, in the order picked.
    pub picked: Vec<DesignId>,
    /// Quantity on the shared axes (mean of s and p).
    pub quantity: Quantity,
    /// Design A of the difference (defaults to the first picked).
    pub a: Option<DesignId>,
    /// Design B of the difference (defaults to the second picked).
    pub b: Option<DesignId>,
    /// Band start for the table (nm).
    pub band_from_nm: f64,
    /// Band end for the table (nm).
    pub band_to_nm: f64,
    /// Wavelength step inside the band (nm).
    pub band_step_nm: f64,
    /// Angle of incidence for the table (degrees).
    pub band_aoi_deg: f64,
}

impl Default for CompareSettings {
    fn default() -> Self {
        Self {
            picked: Vec::new(),
            quantity: Quantity::R,
            a: None,
            b: None,
            band_from_nm: 450.0,
            band_to_nm: 650.0,
            band_step_nm: 1.0,
            band_aoi_deg: 0.0,
        }
    }
}

impl CompareSettings {
    /// The sweep behind the table: the band at the chosen angle.
    #[must_use]
    pub fn band_sweep(&self) -> Sweep {
        Sweep::Wavelength {
            from_nm: self.band_from_nm,
            to_nm: self.band_to_nm,
            step_nm: self.band_step_nm,
            aoi_deg: self.band_aoi_deg,
            side: crate::optics::Side::Front,
        }
    }

    /// The two designs of the difference curve, A then B: the chosen ones while both are still
    /// picked and differ, else the first two picked; `None` with fewer than two picked.
    #[must_use]
    pub fn pair(&self) -> Option<(DesignId, DesignId)> {
        let ok = |x: Option<DesignId>| x.filter(|id| self.picked.contains(id));
        let first = *self.picked.first()?;
        let a = ok(self.a).unwrap_or(first);
        let b = ok(self.b)
            .filter(|&b| b != a)
            .or_else(|| self.picked.iter().copied().find(|&x| x != a))?;
        Some((a, b))
    }
}

/// One open design as the compare view sees it.
pub struct Entry<'a> {
    /// Which design.
    pub id: DesignId,
    /// Its name.
    pub name: &'a str,
    /// Its colour.
    pub colour: Color32,
    /// Its spectrum over the spectrum view's sweep.
    pub spectrum: &'a SweepCache,
    /// Its spectrum over the band of the table.
    pub band: &'a SweepCache,
}

/// The figures the table shows for one picked design (from
/// [`crate::analysis::compare::band_figures`] on its band sweep), or why there are none.
pub fn figures_for(band: &SweepCache, s: &CompareSettings) -> Result<Figures, String> {
    match band.result() {
        Some(Ok(r)) => {
            band_figures(&spectrum_of(r), s.band_from_nm, s.band_to_nm).map_err(|e| e.to_string())
        }
        Some(Err(e)) => Err(e.clone()),
        None => Err("not computed yet".to_owned()),
    }
}

struct Series {
    name: String,
    colour: Color32,
    points: Vec<PlotPoint>,
}

/// Plot-ready points of the compare view, rebuilt only when a result or a choice changes.
#[derive(Default)]
pub struct CompareCache {
    key: Option<CacheKey>,
    curves: Vec<Series>,
    difference: Option<Result<Series, String>>,
    table_key: Option<TableKey>,
    table: Vec<Result<Figures, String>>,
}

type CacheKey = (
    Vec<(DesignId, u64, String)>,
    Quantity,
    Option<(DesignId, DesignId)>,
);

/// Each picked design's band generation, and the band's ends as bits.
type TableKey = (Vec<(DesignId, u64)>, u64, u64);

fn ok_result(c: &SweepCache) -> Option<&SweepResult> {
    match c.result() {
        Some(Ok(r)) => Some(r),
        _ => None,
    }
}

fn refresh(cache: &mut CompareCache, s: &CompareSettings, picked: &[&Entry<'_>]) {
    let key: CacheKey = (
        picked
            .iter()
            .map(|e| (e.id, e.spectrum.generation(), e.name.to_owned()))
            .collect(),
        s.quantity,
        s.pair(),
    );
    if cache.key.as_ref() == Some(&key) {
        return;
    }
    cache.curves = picked
        .iter()
        .filter_map(|e| {
            let r = ok_result(e.spectrum)?;
            let ys = curve(r, s.quantity);
            Some(Series {
                name: format!("{}: {}", e.name, curve_name(s.quantity)),
                colour: e.colour,
                points: r
                    .x
                    .iter()
                    .zip(ys)
                    .filter(|(x, y)| x.is_finite() && y.is_finite())
                    .map(|(&x, &y)| PlotPoint::new(x, 100.0 * y))
                    .collect(),
            })
        })
        .collect();
    cache.difference = s.pair().map(|(a, b)| {
        let find = |id| picked.iter().find(|e| e.id == id);
        let (Some(ea), Some(eb)) = (find(a), find(b)) else {
            return Err("a design of the pair is no longer open".to_owned());
        };
        let (Some(ra), Some(rb)) = (ok_result(ea.spectrum), ok_result(eb.spectrum)) else {
            return Err("waiting for both spectra".to_owned());
        };
        let d = difference(&spectrum_of(ra), &spectrum_of(rb));
        if d.wavelength_nm.is_empty() {
            return Err("the two spectra do not overlap".to_owned());
        }
        let ys = match s.quantity {
            Quantity::R => &d.r,
            Quantity::T => &d.t,
            Quantity::A => &d.a,
        };
        Ok(Series {
            name: format!("{} − {}", ea.name, eb.name),
            colour: ea.colour,
            points: d
                .wavelength_nm
                .iter()
                .zip(ys)
                .map(|(&x, &y)| PlotPoint::new(x, 100.0 * y))
                .collect(),
        })
    });
    cache.key = Some(key);
}

fn design_combo(
    ui: &mut egui::Ui,
    label: &str,
    current: DesignId,
    picked: &[&Entry<'_>],
) -> Option<DesignId> {
    let name = picked
        .iter()
        .find(|e| e.id == current)
        .map_or("", |e| e.name);
    let mut chosen = None;
    egui::ComboBox::from_label(label)
        .selected_text(name)
        .show_ui(ui, |ui| {
            for e in picked {
                if ui.selectable_label(e.id == current, e.name).clicked() {
                    chosen = Some(e.id);
                }
            }
        });
    chosen
}

/// The compare view: pick designs (pushes [`WindowCommand::SetCompared`]), shared plot,
/// difference of two, and the band table.
pub fn compare_ui(
    ui: &mut egui::Ui,
    s: &mut CompareSettings,
    all: &[Entry<'_>],
    cache: &mut CompareCache,
    out: &mut Vec<WindowCommand>,
) {
    ui.horizontal_wrapped(|ui| {
        ui.strong("Compare");
        for e in all {
            let mut on = s.picked.contains(&e.id);
            if ui
                .checkbox(&mut on, RichText::new(e.name).color(e.colour))
                .changed()
            {
                out.push(WindowCommand::SetCompared { id: e.id, on });
            }
        }
        ui.separator();
        ui.selectable_value(&mut s.quantity, Quantity::R, "R");
        ui.selectable_value(&mut s.quantity, Quantity::T, "T");
        ui.label(RichText::new("(mean of s and p)").weak());
    });
    let picked: Vec<&Entry<'_>> = s
        .picked
        .iter()
        .filter_map(|id| all.iter().find(|e| e.id == *id))
        .collect();
    if picked.len() < 2 {
        ui.label(
            RichText::new("Tick two or more designs to compare them (the spectrum view sets the span and angle).")
                .weak(),
        );
    }
    for e in &picked {
        if let Some(Err(err)) = e.spectrum.result() {
            ui.colored_label(
                ui.visuals().error_fg_color,
                format!("{}: cannot compute: {err}", e.name),
            );
        }
    }
    refresh(cache, s, &picked);
    let h = ui.available_height();
    let unit = format!("{} (%)", s.quantity.symbol());
    ui.allocate_ui(egui::vec2(ui.available_width(), h * 0.4), |ui| {
        Plot::new("compare-plot")
            .legend(Legend::default())
            .x_axis_label("wavelength (nm)")
            .y_axis_label(unit)
            .show(ui, |p| {
                for c in &cache.curves {
                    p.line(
                        Line::new(c.name.clone(), PlotPoints::Borrowed(&c.points))
                            .color(c.colour)
                            .width(1.5),
                    );
                }
            });
    });
    if let Some((a, b)) = s.pair() {
        ui.horizontal(|ui| {
            ui.label("difference");
            if let Some(x) = design_combo(ui, "A", a, &picked) {
                s.a = Some(x);
            }
            ui.label("−");
            if let Some(x) = design_combo(ui, "B", b, &picked) {
                s.b = Some(x);
            }
            ui.label("(percentage points)");
        });
        match &cache.difference {
            Some(Ok(d)) => {
                ui.allocate_ui(egui::vec2(ui.available_width(), h * 0.22), |ui| {
                    Plot::new("difference-plot")
                        .legend(Legend::default())
                        .x_axis_label("wavelength (nm)")
                        .y_axis_label("A − B (percentage points)")
                        .show(ui, |p| {
                            p.line(
                                Line::new(d.name.clone(), PlotPoints::Borrowed(&d.points))
                                    .color(d.colour)
                                    .width(1.5),
                            );
                        });
                });
            }
            Some(Err(e)) => {
                ui.colored_label(ui.visuals().warn_fg_color, format!("difference: {e}"));
            }
            None => {}
        }
    }
    ui.separator();
    band_table_ui(ui, s, &picked, cache);
}

fn band_table_ui(
    ui: &mut egui::Ui,
    s: &mut CompareSettings,
    picked: &[&Entry<'_>],
    cache: &mut CompareCache,
) {
    ui.horizontal_wrapped(|ui| {
        ui.strong("Figures over a band");
        number_ui(
            ui,
            "band from",
            &mut s.band_from_nm,
            1.0..=100_000.0,
            1.0,
            " nm",
        );
        number_ui(
            ui,
            "band to",
            &mut s.band_to_nm,
            1.0..=100_000.0,
            1.0,
            " nm",
        );
        number_ui(
            ui,
            "band step",
            &mut s.band_step_nm,
            0.01..=1000.0,
            0.01,
            " nm",
        );
        let l = ui.label("band angle");
        ui.add(egui::Slider::new(&mut s.band_aoi_deg, 0.0..=89.0).suffix("°"))
            .labelled_by(l.id);
    });
    let key: TableKey = (
        picked.iter().map(|e| (e.id, e.band.generation())).collect(),
        s.band_from_nm.to_bits(),
        s.band_to_nm.to_bits(),
    );
    if cache.table_key.as_ref() != Some(&key) {
        cache.table = picked.iter().map(|e| figures_for(e.band, s)).collect();
        cache.table_key = Some(key);
    }
    egui::ScrollArea::both().show(ui, |ui| {
        egui::Grid::new("band-figures")
            .striped(true)
            .num_columns(11)
            .show(ui, |ui| {
                for h in [
                    "design", "R mean", "R min", "at", "R max", "at", "T mean", "T min", "at",
                    "T max", "at",
                ] {
                    ui.strong(h);
                }
                ui.end_row();
                for (e, figures) in picked.iter().zip(&cache.table) {
                    ui.colored_label(e.colour, e.name);
                    match figures {
                        Ok(f) => {
                            for st in [f.r, f.t] {
                                ui.label(fmt_percent(st.mean));
                                ui.label(fmt_percent(st.min));
                                ui.label(fmt_nm(st.min_at_nm));
                                ui.label(fmt_percent(st.max));
                                ui.label(fmt_nm(st.max_at_nm));
                            }
                        }
                        Err(err) => {
                            ui.colored_label(ui.visuals().error_fg_color, err);
                        }
                    }
                    ui.end_row();
                }
            });
    });
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_read_well() {
        assert_eq!(fmt_percent(0.041_254), "4.125 %");
        assert_eq!(fmt_nm(552.5), "552.5 nm");
        assert_eq!(fmt_nm(550.0), "550 nm");
        assert_eq!(fmt_nm(412.345_67), "412.346 nm");
    }

    #[test]
    fn the_pair_follows_the_picks() {
        let [a, b, c] = [DesignId(1), DesignId(2), DesignId(3)];
        let mut s = CompareSettings {
            picked: vec![a],
            ..CompareSettings::default()
        };
        assert_eq!(s.pair(), None, "one design is no pair");
        s.picked = vec![b, a, c];
        assert_eq!(s.pair(), Some((b, a)), "first two picked");
        s.a = Some(c);
        assert_eq!(s.pair(), Some((c, b)), "chosen A, B the first other");
        s.b = Some(c);
        assert_eq!(s.pair(), Some((c, b)), "B never equals A");
        s.picked = vec![a, b];
        assert_eq!(s.pair(), Some((a, b)), "unpicked choice falls back");
    }
}
