//! The status line, the cautions window and the window for file problems.

use egui::RichText;

use super::app::App;

impl App {
    pub(super) fn status_ui(&self, ui: &mut egui::Ui) {
        let active = self.active();
        ui.horizontal_wrapped(|ui| {
            match active.spectrum.result() {
                Some(Ok(r)) => {
                    ui.label(format!(
                        "spectrum: {} points in {:.1} ms",
                        r.x.len(),
                        r.elapsed.as_secs_f64() * 1000.0
                    ));
                }
                Some(Err(_)) => {
                    ui.colored_label(ui.visuals().error_fg_color, "spectrum: not computed");
                }
                None => {
                    ui.label("spectrum: —");
                }
            }
            if let Some(Ok(r)) = active.angles.result() {
                ui.label(format!(
                    "· angles: {} points in {:.1} ms",
                    r.x.len(),
                    r.elapsed.as_secs_f64() * 1000.0
                ));
            }
            if self
                .designs
                .iter()
                .any(|d| d.spectrum.busy() || d.angles.busy() || d.band.busy())
            {
                ui.spinner();
                ui.label("computing…");
            }
            let mut warnings: Vec<&String> = Vec::new();
            for c in [&active.spectrum, &active.angles] {
                if let Some(Ok(r)) = c.result() {
                    for w in &r.warnings {
                        if !warnings.contains(&w) {
                            warnings.push(w);
                        }
                    }
                }
            }
            for w in warnings {
                ui.colored_label(ui.visuals().warn_fg_color, format!("warning: {w}"));
            }
            match &active.targets {
                Some((_, Ok(e))) => {
                    let colour = if e.passed == e.targets.len() {
                        super::theme::PASS
                    } else {
                        super::theme::FAIL
                    };
                    ui.colored_label(
                        colour,
                        format!(
                            "· merit {:.4} %, {} of {} targets met",
                            e.merit * 100.0,
                            e.passed,
                            e.targets.len()
                        ),
                    );
                }
                Some((_, Err(e))) => {
                    ui.colored_label(ui.visuals().warn_fg_color, format!("· targets: {e}"));
                }
                None => {}
            }
            if let Some(s) = &self.status {
                ui.colored_label(ui.visuals().error_fg_color, s);
            }
        });
    }

    pub(super) fn cautions_ui(&mut self, ctx: &egui::Context) {
        if !self.windows.cautions {
            return;
        }
        let mut open = true;
        egui::Window::new("Cautions")
            .open(&mut open)
            .default_width(520.0)
            .show(ctx, |ui| {
                for c in crate::cautions::ALL {
                    ui.label(c);
                    ui.add_space(6.0);
                }
            });
        self.windows.cautions = open;
    }

    /// A file problem, in its own window until dismissed.
    pub(super) fn error_window_ui(&mut self, ctx: &egui::Context) {
        let Some(msg) = self.error_window.clone() else {
            return;
        };
        let mut open = true;
        egui::Window::new("Problem with a design file")
            .collapsible(false)
            .anchor(egui::Align2::CENTER_TOP, [0.0, 120.0])
            .default_width(520.0)
            .open(&mut open)
            .show(ctx, |ui| {
                ui.label(&msg);
                ui.label(RichText::new("The designs in the window are unchanged.").weak());
                if ui.button("OK").clicked() {
                    self.error_window = None;
                }
            });
        if !open {
            self.error_window = None;
        }
    }
}
