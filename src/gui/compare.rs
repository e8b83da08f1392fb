//! The compare view: two or more open designs on shared axes of R or T, the difference of two
//! of them in percentage points, and a table of figures over a band at one angle.
//!
//! The curves are the designs' cached sweeps ([`super::compute`]); nothing here computes
//! optics. [`band_figures`] and [`difference_pp`] are plain arithmetic over the engine's
//! arrays. `band_figures` stands in for the shared `analysis::compare::band_figures` until that
//! lands on the main branch; it follows the same definitions (mean of s and p, the first
//! wavelength of a repeated extreme) so the two can be folded together.

use egui::{Color32, DragValue, RichText};
use egui_plot::{Legend, Line, Plot, PlotPoint, PlotPoints};

use crate::analysis::Curves;

use super::compute::{Sweep, SweepCache, SweepResult};
use super::designs::{DesignId, WindowCommand};

/// Mean, minimum and maximum of one curve over a band, and where the extremes are.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Stats {
    /// Arithmetic mean over the band's points (fraction).
    pub mean: f64,
    /// Smallest value (fraction).
    pub min: f64,
    /// Wavelength of the smallest value (nm; the first if it repeats).
    pub min_at_nm: f64,
    /// Largest value (fraction).
    pub max: f64,
    /// Wavelength of the largest value (nm; the first if it repeats).
    pub max_at_nm: f64,
}

/// Figures of one spectrum over a band, for the mean of s and p.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Figures {
    /// Computed points inside the band.
    pub points: usize,
    /// Reflectance.
    pub r: Stats,
    /// Transmittance.
    pub t: Stats,
}

fn stats(wl: &[f64], ys: &[f64], inside: &[usize]) -> Stats {
    let mut s = Stats {
        mean: 0.0,
        min: f64::INFINITY,
        min_at_nm: f64::NAN,
        max: f64::NEG_INFINITY,
        max_at_nm: f64::NAN,
    };
    for &i in inside {
        let y = ys[i];
        s.mean += y;
        if y < s.min {
            s.min = y;
            s.min_at_nm = wl[i];
        }
        if y > s.max {
            s.max = y;
            s.max_at_nm = wl[i];
        }
    }
    s.mean /= inside.len() as f64;
    s
}

/// Figures of the mean-polarisation R and T over the points of `wavelength_nm` that lie in
/// `from_nm..=to_nm`. Refuses a band that is not a range or holds no computed point, saying
/// which.
///
/// ```
/// use stackwise::analysis::Curves;
/// use stackwise::gui::compare::band_figures;
/// let c = Curves { r: vec![0.1, 0.3, 0.2], t: vec![0.9, 0.7, 0.8], ..Curves::default() };
/// let f = band_figures(&[400.0, 500.0, 600.0], &c, 450.0, 600.0).unwrap();
/// assert_eq!(f.points, 2);
/// assert_eq!((f.r.max, f.r.max_at_nm), (0.3, 500.0));
/// assert_eq!((f.t.min, f.t.min_at_nm), (0.7, 500.0));
/// ```
pub fn band_figures(
    wavelength_nm: &[f64],
    curves: &Curves,
    from_nm: f64,
    to_nm: f64,
) -> Result<Figures, String> {
    if !(from_nm.is_finite() && to_nm.is_finite() && from_nm <= to_nm) {
        return Err(format!(
            "band {from_nm} to {to_nm} nm is not a range; give finite wavelengths with from ≤ to"
        ));
    }
    let n = wavelength_nm.len().min(curves.r.len()).min(curves.t.len());
    let inside: Vec<usize> = (0..n)
        .filter(|&i| (from_nm..=to_nm).contains(&wavelength_nm[i]))
        .collect();
    if inside.is_empty() {
        return Err(format!(
            "no computed wavelength lies in {from_nm}–{to_nm} nm; widen the band"
        ));
    }
    Ok(Figures {
        points: inside.len(),
        r: stats(wavelength_nm, &curves.r, &inside),
        t: stats(wavelength_nm, &curves.t, &inside),
    })
}

/// `a − b` in percentage points at each x, for two curves (fractions) on the same grid.
/// Refuses grids that differ, naming the first point where they do.
///
/// ```
/// use stackwise::gui::compare::difference_pp;
/// let d = difference_pp(&[1.0, 2.0], &[0.5, 0.25], &[1.0, 2.0], &[0.25, 0.5]).unwrap();
/// assert_eq!(d, vec![(1.0, 25.0), (2.0, -25.0)]);
/// ```
#[expect(
    clippy::float_cmp,
    reason = "both sweeps come from the same grid; the same points are bit-identical"
)]
pub fn difference_pp(
    x_a: &[f64],
    a: &[f64],
    x_b: &[f64],
    b: &[f64],
) -> Result<Vec<(f64, f64)>, String> {
    if x_a.len() != x_b.len() || a.len() != x_a.len() || b.len() != x_b.len() {
        return Err(format!(
            "the two sweeps have different lengths ({} and {} points)",
            x_a.len(),
            x_b.len()
        ));
    }
    if let Some(i) = x_a.iter().zip(x_b).position(|(p, q)| p != q) {
        return Err(format!(
            "the two sweeps differ at point {}: {} and {} nm",
            i + 1,
            x_a[i],
            x_b[i]
        ));
    }
    Ok(x_a
        .iter()
        .zip(a.iter().zip(b))
        .map(|(&x, (&p, &q))| (x, 100.0 * (p - q)))
        .collect())
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

/// Which quantity the compare plot shows.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Quantity {
    /// Reflectance.
    R,
    /// Transmittance.
    T,
}

/// Which polarisation the compare plot shows.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Pol {
    /// s-polarisation.
    S,
    /// p-polarisation.
    P,
    /// Mean of s and p.
    Mean,
}

fn curve(c: &Curves, q: Quantity, p: Pol) -> &[f64] {
    match (q, p) {
        (Quantity::R, Pol::S) => &c.r_s,
        (Quantity::R, Pol::P) => &c.r_p,
        (Quantity::R, Pol::Mean) => &c.r,
        (Quantity::T, Pol::S) => &c.t_s,
        (Quantity::T, Pol::P) => &c.t_p,
        (Quantity::T, Pol::Mean) => &c.t,
    }
}

fn curve_name(q: Quantity, p: Pol) -> &'static str {
    match (q, p) {
        (Quantity::R, Pol::S) => "R_s",
        (Quantity::R, Pol::P) => "R_p",
        (Quantity::R, Pol::Mean) => "R",
        (Quantity::T, Pol::S) => "T_s",
        (Quantity::T, Pol::P) => "T_p",
        (Quantity::T, Pol::Mean) => "T",
    }
}

/// The compare view's settings (window state, not part of any design).
#[derive(Clone, Debug, PartialEq)]
pub struct CompareSettings {
    /// The designs being compared, in the order picked.
    pub picked: Vec<DesignId>,
    /// Quantity on the shared axes.
    pub quantity: Quantity,
    /// Polarisation on the shared axes.
    pub pol: Pol,
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
            pol: Pol::Mean,
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
        Sweep::Spectrum {
            from_nm: self.band_from_nm,
            to_nm: self.band_to_nm,
            step_nm: self.band_step_nm,
            aoi_deg: self.band_aoi_deg,
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

/// The figures the table shows for one picked design, or why there are none.
pub fn figures_for(band: &SweepCache, s: &CompareSettings) -> Result<Figures, String> {
    match band.result() {
        Some(Ok(r)) => band_figures(&r.x, &r.curves, s.band_from_nm, s.band_to_nm),
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
}

type CacheKey = (
    Vec<(DesignId, u64, String)>,
    Quantity,
    Pol,
    Option<(DesignId, DesignId)>,
);

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
        s.pol,
        s.pair(),
    );
    if cache.key.as_ref() == Some(&key) {
        return;
    }
    cache.curves = picked
        .iter()
        .filter_map(|e| {
            let r = ok_result(e.spectrum)?;
            let ys = curve(&r.curves, s.quantity, s.pol);
            Some(Series {
                name: format!("{}: {}", e.name, curve_name(s.quantity, s.pol)),
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
        let q = |r: &'_ SweepResult| curve(&r.curves, s.quantity, s.pol).to_vec();
        let d = difference_pp(&ra.x, &q(ra), &rb.x, &q(rb))?;
        Ok(Series {
            name: format!("{} − {}", ea.name, eb.name),
            colour: ea.colour,
            points: d.into_iter().map(|(x, y)| PlotPoint::new(x, y)).collect(),
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
        ui.separator();
        ui.selectable_value(&mut s.pol, Pol::S, "s");
        ui.selectable_value(&mut s.pol, Pol::P, "p");
        ui.selectable_value(&mut s.pol, Pol::Mean, "mean");
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
    let unit = match s.quantity {
        Quantity::R => "R (%)",
        Quantity::T => "T (%)",
    };
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
    band_table_ui(ui, s, &picked);
}

fn band_table_ui(ui: &mut egui::Ui, s: &mut CompareSettings, picked: &[&Entry<'_>]) {
    ui.horizontal_wrapped(|ui| {
        ui.strong("Figures over a band");
        let l = ui.label("band from");
        ui.add(
            DragValue::new(&mut s.band_from_nm)
                .range(1.0..=100_000.0)
                .suffix(" nm"),
        )
        .labelled_by(l.id);
        let l = ui.label("band to");
        ui.add(
            DragValue::new(&mut s.band_to_nm)
                .range(1.0..=100_000.0)
                .suffix(" nm"),
        )
        .labelled_by(l.id);
        let l = ui.label("band step");
        ui.add(
            DragValue::new(&mut s.band_step_nm)
                .range(0.01..=1000.0)
                .speed(0.01)
                .suffix(" nm"),
        )
        .labelled_by(l.id);
        let l = ui.label("band angle");
        ui.add(egui::Slider::new(&mut s.band_aoi_deg, 0.0..=89.0).suffix("°"))
            .labelled_by(l.id);
    });
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
                for e in picked {
                    ui.colored_label(e.colour, e.name);
                    match figures_for(e.band, s) {
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

    fn curves(r: &[f64], t: &[f64]) -> Curves {
        Curves {
            r: r.to_vec(),
            t: t.to_vec(),
            ..Curves::default()
        }
    }

    #[test]
    fn figures_cover_only_the_band_and_find_the_first_extreme() {
        let wl = [400.0, 450.0, 500.0, 550.0, 600.0];
        let c = curves(&[0.9, 0.2, 0.4, 0.2, 0.1], &[0.1, 0.8, 0.6, 0.8, 0.9]);
        let f = band_figures(&wl, &c, 440.0, 560.0).unwrap();
        assert_eq!(f.points, 3);
        assert!((f.r.mean - (0.2 + 0.4 + 0.2) / 3.0).abs() < 1e-15);
        assert_eq!((f.r.min, f.r.min_at_nm), (0.2, 450.0), "first of a tie");
        assert_eq!(
            (f.r.max, f.r.max_at_nm),
            (0.4, 500.0),
            "outside points ignored"
        );
        assert_eq!((f.t.max, f.t.max_at_nm), (0.8, 450.0));
    }

    #[test]
    fn bad_or_empty_bands_say_why() {
        let c = curves(&[0.1], &[0.9]);
        let e = band_figures(&[500.0], &c, 600.0, 550.0).unwrap_err();
        assert!(e.contains("600") && e.contains("not a range"), "{e}");
        let e = band_figures(&[500.0], &c, 600.0, 700.0).unwrap_err();
        assert!(e.contains("no computed wavelength"), "{e}");
        assert!(band_figures(&[500.0], &c, f64::NAN, 700.0).is_err());
    }

    #[test]
    fn difference_needs_the_same_grid() {
        let e = difference_pp(&[1.0, 2.0], &[0.0, 0.0], &[1.0, 3.0], &[0.0, 0.0]).unwrap_err();
        assert!(e.contains("point 2"), "{e}");
        assert!(difference_pp(&[1.0], &[0.0], &[1.0, 2.0], &[0.0, 0.0]).is_err());
    }

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
