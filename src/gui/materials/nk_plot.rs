//! The n and k of one material over wavelength, sampled once and drawn from the cache.

use eframe::egui;
use egui_plot::{Legend, Line, Plot, PlotPoint, PlotPoints};

use crate::material::{Material, Model};

/// Wavelengths (nm) plotted for a material with no stated limit.
const DEFAULT_SPAN_NM: (f64, f64) = (300.0, 1100.0);
/// Points sampled along a formula's range.
const SAMPLES: usize = 400;

/// Sampled n and k of one material, kept until the material changes.
pub(super) struct NkCurves {
    material: Material,
    n: Vec<PlotPoint>,
    k: Vec<PlotPoint>,
    failed: usize,
}

impl NkCurves {
    fn sample(material: &Material) -> Self {
        let mut n = Vec::new();
        let mut k = Vec::new();
        let mut failed = 0;
        let wavelengths: Vec<f64> = if let Model::Table { rows } = &material.model {
            rows.iter().map(|r| r.0).collect()
        } else {
            let (lo, hi) = plot_span(material);
            (0..SAMPLES)
                .map(|i| lo + (hi - lo) * i as f64 / (SAMPLES - 1) as f64)
                .collect()
        };
        for w in wavelengths {
            match material.index_at(w) {
                Ok(index) => {
                    n.push(PlotPoint::new(w, index.re));
                    k.push(PlotPoint::new(w, index.im));
                }
                Err(_) => failed += 1,
            }
        }
        Self {
            material: material.clone(),
            n,
            k,
            failed,
        }
    }

    /// The cached curves for `material`, resampled only when it differs from the cached one.
    pub(super) fn for_material<'c>(
        cache: &'c mut Option<NkCurves>,
        material: &Material,
    ) -> &'c NkCurves {
        if cache.as_ref().is_none_or(|c| c.material != *material) {
            *cache = Some(NkCurves::sample(material));
        }
        cache.get_or_insert_with(|| NkCurves::sample(material))
    }

    pub(super) fn show(&self, ui: &mut egui::Ui, id: &str) {
        if self.failed > 0 {
            ui.colored_label(
                ui.visuals().warn_fg_color,
                format!(
                    "the model gives no usable index at {} of the plotted wavelengths \
                     (left out)",
                    self.failed
                ),
            );
        }
        Plot::new(id)
            .height(180.0)
            .legend(Legend::default())
            .x_axis_label("Wavelength (nm)")
            .allow_scroll(false)
            .show(ui, |plot| {
                plot.line(Line::new("n", PlotPoints::Borrowed(&self.n)));
                plot.line(Line::new("k", PlotPoints::Borrowed(&self.k)));
            });
    }
}

/// The wavelengths to plot: the valid range, with 300–1100 nm standing in for open ends.
fn plot_span(material: &Material) -> (f64, f64) {
    let (lo, hi) = material.valid_range_nm();
    let lo = if lo > 0.0 { lo } else { DEFAULT_SPAN_NM.0 };
    let hi = if hi.is_finite() {
        hi
    } else {
        DEFAULT_SPAN_NM.1
    };
    if lo < hi { (lo, hi) } else { DEFAULT_SPAN_NM }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn unbounded_formula_is_plotted_over_the_default_span() {
        let m = Material::user("c", Model::Constant { n: 1.5, k: 0.0 });
        let c = NkCurves::sample(&m);
        assert_eq!(c.n.len(), SAMPLES, "one point per sample");
        assert_eq!(c.n.first().map(|p| p.x), Some(DEFAULT_SPAN_NM.0));
        assert_eq!(c.n.last().map(|p| p.x), Some(DEFAULT_SPAN_NM.1));
    }

    #[test]
    fn a_table_is_plotted_at_its_rows() {
        let m = Material::user(
            "t",
            Model::Table {
                rows: vec![(400.0, 2.0, 0.1), (700.0, 1.9, 0.0)],
            },
        );
        let c = NkCurves::sample(&m);
        let xs: Vec<f64> = c.k.iter().map(|p| p.x).collect();
        assert_eq!(xs, [400.0, 700.0]);
        assert_eq!(c.k.first().map(|p| p.y), Some(0.1));
    }

    #[test]
    fn the_curves_are_resampled_only_when_the_material_changes() {
        let mut cache = None;
        let a = Material::user("a", Model::Constant { n: 1.5, k: 0.0 });
        NkCurves::for_material(&mut cache, &a);
        // Mark the cached entry; a resample would replace the mark.
        if let Some(c) = cache.as_mut() {
            c.failed = 99;
        }
        let again = NkCurves::for_material(&mut cache, &a);
        assert_eq!(
            again.failed, 99,
            "same material: the cached points are reused"
        );
        let b = Material::user("a", Model::Constant { n: 1.6, k: 0.0 });
        let c = NkCurves::for_material(&mut cache, &b);
        assert_eq!(
            c.n.first().map(|p| p.y),
            Some(1.6),
            "a changed material is resampled"
        );
    }
}
