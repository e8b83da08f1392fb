//! The materials panel: browse the built-in and the design's own materials, see n and k over
//! wavelength, and define, edit or remove the design's materials.
//!
//! The panel never changes the design itself: [`materials_ui`] returns a [`BrowserAction`]
//! for the caller to apply (and, e.g., to refuse removing a material that layers still use).

use std::path::Path;
use std::sync::Arc;
use std::sync::mpsc::{self, Receiver, TryRecvError};
use std::time::Duration;

use eframe::egui;
use egui_plot::{Legend, Line, Plot, PlotPoint, PlotPoints};

use crate::design::Design;
use crate::material::import::{ImportError, NkImport, WavelengthUnit, parse_nk_csv};
use crate::material::{Material, Model, builtin};

/// Wavelengths (nm) plotted for a material with no stated limit.
const DEFAULT_SPAN_NM: (f64, f64) = (300.0, 1100.0);
/// Points sampled along a formula's range.
const SAMPLES: usize = 400;
/// Largest table file the panel reads.
const MAX_FILE_BYTES: u64 = 20 * 1024 * 1024;

/// What the caller should do to the design.
#[derive(Clone, Debug, PartialEq)]
pub enum BrowserAction {
    /// Add this material to the design's own materials.
    AddMaterial(Material),
    /// Replace the design material called `old_name` with `material` (which may be renamed).
    ReplaceMaterial {
        /// Name of the design material to replace.
        old_name: String,
        /// The new definition.
        material: Material,
    },
    /// Remove the design material of this name. The caller decides whether layers using it
    /// allow that.
    RemoveMaterial(String),
}

/// The panel's own state between frames.
#[derive(Default)]
pub struct BrowserState {
    search: String,
    selected: Option<Selection>,
    detail_plot: Option<Curves>,
    form: Form,
}

/// A material in the list: its name and whether it is one of the design's own.
#[derive(Clone, Debug, PartialEq)]
struct Selection {
    name: String,
    in_design: bool,
}

/// Sampled n and k of one material, kept until the material changes.
struct Curves {
    material: Material,
    n: Vec<PlotPoint>,
    k: Vec<PlotPoint>,
    failed: usize,
}

impl Curves {
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
    fn for_material<'c>(cache: &'c mut Option<Curves>, material: &Material) -> &'c Curves {
        if cache.as_ref().is_none_or(|c| c.material != *material) {
            *cache = Some(Curves::sample(material));
        }
        cache.get_or_insert_with(|| Curves::sample(material))
    }

    fn show(&self, ui: &mut egui::Ui, id: &str) {
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

/// The model kinds the form can define.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
enum FormKind {
    #[default]
    Constant,
    Cauchy,
    Sellmeier,
    Table,
}

/// The "New material" form, also used to edit a design material.
#[derive(Default)]
struct Form {
    /// `Some(old name)` while editing a design material.
    editing: Option<String>,
    name: String,
    kind: FormKind,
    n: String,
    k: String,
    cauchy: [String; 3],
    sellmeier_a: String,
    /// (B_i, C_i µm²) pairs.
    terms: Vec<(String, String)>,
    range_from: String,
    range_to: String,
    csv: String,
    unit: WavelengthUnit,
    /// The last parse of `csv` with `unit`, kept until either changes.
    parsed: Option<ParsedCsv>,
    /// Citation carried over from an edited or copied material.
    source: String,
    /// The file a table was loaded from and the text it gave, to cite it while that text
    /// stands.
    loaded: Option<(String, String)>,
    loading: Option<Receiver<Loaded>>,
    load_message: Option<String>,
    preview: Option<Curves>,
}

struct ParsedCsv {
    text: String,
    unit: WavelengthUnit,
    result: Result<NkImport, ImportError>,
}

/// What the file-loading thread sends back.
enum Loaded {
    Cancelled,
    File {
        file_name: String,
        text: String,
        lossy: bool,
    },
    Failed(String),
}

impl Form {
    /// Empties the form (a file dialog still open keeps its answer coming).
    fn clear(&mut self) {
        let loading = self.loading.take();
        *self = Form {
            loading,
            ..Form::default()
        };
    }

    /// Fills the form from an existing material; false if its model kind has no form.
    fn load_material(&mut self, m: &Material, editing: Option<String>) -> bool {
        let fmt = |x: &f64| format!("{x}");
        let kind = match &m.model {
            Model::Constant { n, k } => {
                self.n = fmt(n);
                self.k = fmt(k);
                FormKind::Constant
            }
            Model::Cauchy { a, b, c } => {
                self.cauchy = [fmt(a), fmt(b), fmt(c)];
                FormKind::Cauchy
            }
            Model::Sellmeier { a, b, c } => {
                self.sellmeier_a = if *a == 0.0 { String::new() } else { fmt(a) };
                self.terms = b.iter().zip(c).map(|(b, c)| (fmt(b), fmt(c))).collect();
                FormKind::Sellmeier
            }
            Model::Table { rows } => {
                self.csv = std::iter::once("wavelength (nm), n, k\n".to_owned())
                    .chain(rows.iter().map(|(w, n, k)| format!("{w}, {n}, {k}\n")))
                    .collect();
                self.unit = WavelengthUnit::Auto;
                FormKind::Table
            }
            _ => return false,
        };
        self.kind = kind;
        self.name.clone_from(&m.name);
        self.editing = editing;
        self.source.clone_from(&m.source);
        self.loaded = None;
        let (from, to) = m
            .range_nm
            .map_or((String::new(), String::new()), |(a, b)| (fmt(&a), fmt(&b)));
        self.range_from = from;
        self.range_to = to;
        self.parsed = None;
        self.load_message = None;
        true
    }

    /// Parses the CSV box again if its text or the unit changed since the last parse.
    fn refresh_parse(&mut self) {
        let stale = self
            .parsed
            .as_ref()
            .is_none_or(|p| p.text != self.csv || p.unit != self.unit);
        if stale {
            self.parsed = Some(ParsedCsv {
                text: self.csv.clone(),
                unit: self.unit,
                result: parse_nk_csv(&self.csv, self.unit),
            });
        }
    }

    /// The citation for the material: a loaded file for a table (marked if the text was
    /// changed since), else what the edited or copied material had.
    fn source_for_kind(&self) -> String {
        match &self.loaded {
            Some((file, text)) if self.kind == FormKind::Table => {
                if *text == self.csv {
                    format!("imported from {file}")
                } else {
                    format!("imported from {file}, edited")
                }
            }
            _ => self.source.clone(),
        }
    }

    /// The material the form describes, or what is missing or wrong.
    fn build(&self) -> Result<Material, String> {
        let m = self.build_model()?;
        if self.name.trim().is_empty() {
            return Err("give the material a name".into());
        }
        Ok(m)
    }

    /// The material without the name check, so a preview can show before it is named.
    fn build_model(&self) -> Result<Material, String> {
        let name = match self.name.trim() {
            "" => "new material",
            n => n,
        };
        let model = match self.kind {
            FormKind::Constant => Model::Constant {
                n: number("n", &self.n, None)?,
                k: number("k", &self.k, Some(0.0))?,
            },
            FormKind::Cauchy => Model::Cauchy {
                a: number("A", &self.cauchy[0], None)?,
                b: number("B", &self.cauchy[1], Some(0.0))?,
                c: number("C", &self.cauchy[2], Some(0.0))?,
            },
            FormKind::Sellmeier => {
                let mut b = Vec::new();
                let mut c = Vec::new();
                for (i, (bi, ci)) in self.terms.iter().enumerate() {
                    if bi.trim().is_empty() && ci.trim().is_empty() {
                        continue;
                    }
                    b.push(number(&format!("B{}", i + 1), bi, None)?);
                    c.push(number(&format!("C{}", i + 1), ci, None)?);
                }
                if b.is_empty() {
                    return Err("give at least one Sellmeier term (B and C)".into());
                }
                Model::Sellmeier {
                    a: number("extra constant", &self.sellmeier_a, Some(0.0))?,
                    b,
                    c,
                }
            }
            FormKind::Table => match self.parsed.as_ref().map(|p| &p.result) {
                Some(Ok(t)) => Model::Table {
                    rows: t.rows.clone(),
                },
                Some(Err(e)) => return Err(format!("table: {e}")),
                None => return Err("paste a table or load a file".into()),
            },
        };
        let range_nm = if self.kind == FormKind::Table {
            None
        } else {
            match (self.range_from.trim(), self.range_to.trim()) {
                ("", "") => None,
                ("", _) | (_, "") => {
                    return Err("give both ends of the valid range, or leave both empty".into());
                }
                (a, b) => Some((number("valid from", a, None)?, number("valid to", b, None)?)),
            }
        };
        let material = Material {
            name: name.to_owned(),
            model,
            range_nm,
            source: self.source_for_kind(),
        };
        material.validate().map_err(|e| e.to_string())?;
        Ok(material)
    }
}

/// Reads a number typed in the form; an empty field gives `empty` if that is allowed.
fn number(what: &str, text: &str, empty: Option<f64>) -> Result<f64, String> {
    let t = text.trim();
    if t.is_empty() {
        return empty.ok_or_else(|| format!("{what}: enter a number"));
    }
    let v = t
        .parse::<f64>()
        .or_else(|_| t.replace(',', ".").parse::<f64>())
        .map_err(|_| format!("{what}: {t:?} is not a number; write e.g. 1.45"))?;
    if v.is_finite() {
        Ok(v)
    } else {
        Err(format!("{what}: {t:?} must be a finite number"))
    }
}

/// Runs a future to completion on the current thread (for the file dialog's thread).
fn block_on<F: Future>(fut: F) -> F::Output {
    struct Unpark(std::thread::Thread);
    impl std::task::Wake for Unpark {
        fn wake(self: Arc<Self>) {
            self.0.unpark();
        }
    }
    let waker = std::task::Waker::from(Arc::new(Unpark(std::thread::current())));
    let mut cx = std::task::Context::from_waker(&waker);
    let mut fut = std::pin::pin!(fut);
    loop {
        if let std::task::Poll::Ready(v) = fut.as_mut().poll(&mut cx) {
            return v;
        }
        std::thread::park();
    }
}

/// Reads a table file picked by the user.
fn read_table_file(path: &Path) -> Loaded {
    let file_name = path.file_name().map_or_else(
        || path.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    );
    let fail = |what: String| Loaded::Failed(format!("{}: {what}", path.display()));
    match std::fs::metadata(path) {
        Ok(meta) if meta.len() > MAX_FILE_BYTES => {
            return fail(format!(
                "the file is {} MB; tables larger than {} MB are not read",
                meta.len() / (1024 * 1024),
                MAX_FILE_BYTES / (1024 * 1024)
            ));
        }
        Ok(_) => {}
        Err(e) => return fail(format!("cannot read it ({e})")),
    }
    match std::fs::read(path) {
        Ok(bytes) => match String::from_utf8(bytes) {
            Ok(text) => Loaded::File {
                file_name,
                text,
                lossy: false,
            },
            Err(e) => Loaded::File {
                file_name,
                text: String::from_utf8_lossy(e.as_bytes()).into_owned(),
                lossy: true,
            },
        },
        Err(e) => fail(format!("cannot read it ({e})")),
    }
}

/// Opens the file dialog on its own thread; the answer arrives through `form.loading`.
fn start_loading(form: &mut Form) {
    let (tx, rx) = mpsc::channel();
    let spawned = std::thread::Builder::new()
        .name("material-import".into())
        .spawn(move || {
            let picked = block_on(
                rfd::AsyncFileDialog::new()
                    .set_title("Load an n, k table")
                    .add_filter("Tables (csv, txt, tsv, dat)", &["csv", "txt", "tsv", "dat"])
                    .pick_file(),
            );
            let outcome = picked.map_or(Loaded::Cancelled, |h| read_table_file(h.path()));
            // A closed receiver means the panel went away; the result is simply not needed.
            let _ = tx.send(outcome);
        });
    match spawned {
        Ok(_) => {
            form.loading = Some(rx);
            form.load_message = None;
        }
        Err(e) => form.load_message = Some(format!("could not open the file dialog: {e}")),
    }
}

/// Takes the file thread's answer if it has come; asks for another frame while waiting.
fn poll_loading(ui: &egui::Ui, form: &mut Form) {
    let Some(rx) = &form.loading else { return };
    match rx.try_recv() {
        Err(TryRecvError::Empty) => {
            ui.ctx().request_repaint_after(Duration::from_millis(100));
        }
        Err(TryRecvError::Disconnected) => {
            form.loading = None;
            form.load_message = Some("the file dialog closed without an answer".into());
        }
        Ok(outcome) => {
            form.loading = None;
            match outcome {
                Loaded::Cancelled => {}
                Loaded::File {
                    file_name,
                    text,
                    lossy,
                } => {
                    form.csv.clone_from(&text);
                    form.loaded = Some((file_name.clone(), text));
                    if form.name.trim().is_empty() {
                        form.name = Path::new(&file_name)
                            .file_stem()
                            .map_or(file_name.clone(), |s| s.to_string_lossy().into_owned());
                    }
                    form.load_message = Some(if lossy {
                        format!(
                            "loaded {file_name}; it is not UTF-8 text, so unreadable characters \
                             were replaced — save it as UTF-8 if labels look wrong"
                        )
                    } else {
                        format!("loaded {file_name}")
                    });
                }
                Loaded::Failed(msg) => form.load_message = Some(msg),
            }
        }
    }
}

/// A text field with a label linked to it, so it can be found by that label.
fn labelled_field(ui: &mut egui::Ui, label: &str, text: &mut String, hint: &str) {
    ui.horizontal(|ui| {
        let l = ui.label(label);
        ui.add(
            egui::TextEdit::singleline(text)
                .hint_text(hint)
                .desired_width(120.0),
        )
        .labelled_by(l.id);
    });
}

fn warn(ui: &mut egui::Ui, text: impl Into<String>) {
    ui.colored_label(ui.visuals().warn_fg_color, text.into());
}

fn error(ui: &mut egui::Ui, text: impl Into<String>) {
    ui.colored_label(ui.visuals().error_fg_color, text.into());
}

/// Draws the materials panel and returns what the user asked to do to the design, if anything.
pub fn materials_ui(
    ui: &mut egui::Ui,
    state: &mut BrowserState,
    design: &Design,
) -> Option<BrowserAction> {
    let mut action = None;
    ui.heading("Materials");
    list_ui(ui, state, design);
    ui.separator();
    if let Some(a) = details_ui(ui, state, design) {
        action = Some(a);
    }
    ui.separator();
    egui::CollapsingHeader::new(if state.form.editing.is_some() {
        "Edit material"
    } else {
        "New material"
    })
    .id_salt("material-form")
    .default_open(true)
    .show(ui, |ui| {
        if let Some(a) = form_ui(ui, state, design) {
            action = Some(a);
        }
    });
    action
}

/// The searchable list of design and built-in materials.
fn list_ui(ui: &mut egui::Ui, state: &mut BrowserState, design: &Design) {
    ui.horizontal(|ui| {
        let l = ui.label("Search");
        ui.add(
            egui::TextEdit::singleline(&mut state.search)
                .hint_text("name or source")
                .desired_width(200.0),
        )
        .labelled_by(l.id);
    });
    let needle = state.search.trim().to_lowercase();
    // Name matches first, then materials found only through their citation; the design's own
    // before the built-ins within each group.
    let all = design
        .materials
        .iter()
        .map(|m| (m, true))
        .chain(builtin().iter().map(|m| (m, false)));
    let mut listed: Vec<(&Material, bool, bool)> = all
        .filter_map(|(m, in_design)| {
            if needle.is_empty() || m.name.to_lowercase().contains(&needle) {
                Some((m, in_design, true))
            } else if m.source.to_lowercase().contains(&needle) {
                Some((m, in_design, false))
            } else {
                None
            }
        })
        .collect();
    listed.sort_by_key(|&(_, _, by_name)| !by_name); // stable: keeps the order within groups
    egui::ScrollArea::vertical()
        .id_salt("material-list")
        .max_height(200.0)
        .auto_shrink([false, true])
        .show(ui, |ui| {
            for &(m, in_design, _) in &listed {
                let sel = Selection {
                    name: m.name.clone(),
                    in_design,
                };
                let kind = m.model.kind_name();
                let text = if in_design {
                    format!("{} — {kind} (in this design)", m.name)
                } else if design.materials.iter().any(|d| d.name == m.name) {
                    format!(
                        "{} — {kind} (built-in; this design's own takes precedence)",
                        m.name
                    )
                } else {
                    format!("{} — {kind}", m.name)
                };
                if ui
                    .selectable_label(state.selected.as_ref() == Some(&sel), text)
                    .clicked()
                {
                    state.selected = Some(sel);
                }
            }
            if listed.is_empty() {
                ui.weak("no material matches the search");
            }
        });
}

/// The selected material's plot and facts, with edit/remove for the design's own.
fn details_ui(
    ui: &mut egui::Ui,
    state: &mut BrowserState,
    design: &Design,
) -> Option<BrowserAction> {
    let Some(sel) = state.selected.clone() else {
        ui.weak("select a material to see its n and k");
        return None;
    };
    let found = if sel.in_design {
        design.materials.iter().find(|m| m.name == sel.name)
    } else {
        builtin().iter().find(|m| m.name == sel.name)
    };
    let Some(material) = found else {
        // Removed or renamed since it was selected.
        state.selected = None;
        state.detail_plot = None;
        return None;
    };
    ui.strong(&material.name);
    egui::Grid::new("material-facts")
        .num_columns(2)
        .show(ui, |ui| {
            ui.label("Model");
            ui.label(material.model.kind_name());
            ui.end_row();
            ui.label("Valid range");
            let (lo, hi) = material.valid_range_nm();
            if lo > 0.0 || hi.is_finite() {
                let hi = if hi.is_finite() {
                    format!("{hi}")
                } else {
                    "∞".into()
                };
                ui.label(format!("{lo}–{hi} nm"));
            } else {
                ui.label("no stated limit (plotted over 300–1100 nm)");
            }
            ui.end_row();
            ui.label("Source");
            if material.source.is_empty() {
                ui.weak("none given");
            } else {
                ui.label(&material.source);
            }
            ui.end_row();
        });
    Curves::for_material(&mut state.detail_plot, material).show(ui, "material-detail-plot");

    if !sel.in_design {
        if ui
            .button("Copy to form")
            .on_hover_text("start a design material from this one")
            .clicked()
        {
            let mut m = material.clone();
            m.source = if m.source.is_empty() {
                format!("based on the built-in {}", m.name)
            } else {
                format!("based on the built-in {} ({})", m.name, m.source)
            };
            if !state.form.load_material(&m, None) {
                state.form.load_message = Some(format!(
                    "the {} model has no form here; define it in the design file",
                    m.model.kind_name()
                ));
            }
        }
        return None;
    }
    let users: Vec<String> = design
        .layers
        .iter()
        .enumerate()
        .filter(|(_, l)| l.material == material.name)
        .map(|(i, _)| (i + 1).to_string())
        .collect();
    let mut action = None;
    ui.horizontal(|ui| {
        if ui.button("Edit").clicked() {
            let m = material.clone();
            if !state.form.load_material(&m, Some(m.name.clone())) {
                state.form.load_message = Some(format!(
                    "the {} model has no form here; edit it in the design file",
                    m.model.kind_name()
                ));
            }
        }
        if ui.button("Remove from design").clicked() {
            action = Some(BrowserAction::RemoveMaterial(material.name.clone()));
        }
    });
    if !users.is_empty() {
        warn(
            ui,
            format!(
                "used by layer{} {}; give those layers another material before removing it",
                if users.len() == 1 { "" } else { "s" },
                users.join(", ")
            ),
        );
    }
    action
}

/// The "New material" / "Edit material" form.
fn form_ui(ui: &mut egui::Ui, state: &mut BrowserState, design: &Design) -> Option<BrowserAction> {
    let form = &mut state.form;
    poll_loading(ui, form);
    labelled_field(ui, "Name", &mut form.name, "e.g. my TiO2");
    ui.horizontal(|ui| {
        ui.label("Model");
        ui.radio_value(&mut form.kind, FormKind::Constant, "Constant");
        ui.radio_value(&mut form.kind, FormKind::Cauchy, "Cauchy");
        ui.radio_value(&mut form.kind, FormKind::Sellmeier, "Sellmeier");
        ui.radio_value(&mut form.kind, FormKind::Table, "Table from CSV");
    });
    match form.kind {
        FormKind::Constant => {
            labelled_field(ui, "Index n", &mut form.n, "e.g. 1.46");
            labelled_field(ui, "Extinction k", &mut form.k, "0");
        }
        FormKind::Cauchy => {
            ui.weak("n = A + B/λ² + C/λ⁴, λ in µm");
            labelled_field(ui, "A", &mut form.cauchy[0], "e.g. 1.45");
            labelled_field(ui, "B (µm²)", &mut form.cauchy[1], "0");
            labelled_field(ui, "C (µm⁴)", &mut form.cauchy[2], "0");
        }
        FormKind::Sellmeier => sellmeier_ui(ui, form),
        FormKind::Table => table_ui(ui, form),
    }
    if form.kind != FormKind::Table {
        ui.horizontal(|ui| {
            let l = ui.label("Valid from (nm)");
            ui.add(egui::TextEdit::singleline(&mut form.range_from).desired_width(70.0))
                .labelled_by(l.id);
            let l = ui.label("to (nm)");
            ui.add(egui::TextEdit::singleline(&mut form.range_to).desired_width(70.0))
                .labelled_by(l.id);
            ui.weak("(optional)");
        });
    }
    if let Some(msg) = &form.load_message {
        ui.label(msg.as_str());
    }

    if form.kind != FormKind::Table
        && let Ok(m) = form.build_model()
    {
        ui.label("Preview");
        Curves::for_material(&mut form.preview, &m).show(ui, "material-form-plot");
    }
    let built = form.build();
    if let Err(e) = &built {
        error(ui, e.as_str());
    }
    let action = submit_ui(ui, form, design, built.as_ref().ok());
    let label = if form.editing.is_some() {
        "Cancel edit"
    } else {
        "Clear form"
    };
    if ui.button(label).clicked() {
        form.clear();
    }
    if action.is_some() {
        if let Some(
            BrowserAction::AddMaterial(m) | BrowserAction::ReplaceMaterial { material: m, .. },
        ) = &action
        {
            state.selected = Some(Selection {
                name: m.name.clone(),
                in_design: true,
            });
        }
        state.form.clear();
    }
    action
}

/// The Sellmeier coefficients: an optional constant and a list of (B, C) terms.
fn sellmeier_ui(ui: &mut egui::Ui, form: &mut Form) {
    ui.weak("n² = 1 + a + Σ B·λ²/(λ² − C) over the terms, λ in µm, C in µm²");
    labelled_field(ui, "Extra constant a", &mut form.sellmeier_a, "0");
    if form.terms.is_empty() {
        form.terms.push((String::new(), String::new()));
    }
    let mut remove = None;
    for (i, (b, c)) in form.terms.iter_mut().enumerate() {
        ui.horizontal(|ui| {
            let l = ui.label(format!("B{}", i + 1));
            ui.add(egui::TextEdit::singleline(b).desired_width(90.0))
                .labelled_by(l.id);
            let l = ui.label(format!("C{} (µm²)", i + 1));
            ui.add(egui::TextEdit::singleline(c).desired_width(90.0))
                .labelled_by(l.id);
            if ui
                .small_button("Remove")
                .on_hover_text("remove this term")
                .clicked()
            {
                remove = Some(i);
            }
        });
    }
    if let Some(i) = remove {
        form.terms.remove(i);
    }
    if ui.button("Add term").clicked() {
        form.terms.push((String::new(), String::new()));
    }
}

/// The CSV box, file button, unit choice and the parsed table's preview.
fn table_ui(ui: &mut egui::Ui, form: &mut Form) {
    ui.weak("one row per line: wavelength, n[, k] — separated by commas, semicolons or tabs");
    let l = ui.label("CSV table");
    // A long table scrolls inside the box instead of pushing the rest of the form away.
    egui::ScrollArea::vertical()
        .id_salt("material-csv-box")
        .max_height(160.0)
        .show(ui, |ui| {
            ui.add(
                egui::TextEdit::multiline(&mut form.csv)
                    .code_editor()
                    .desired_rows(6)
                    .desired_width(f32::INFINITY)
                    .hint_text("wavelength (nm), n, k\n400, 2.1, 0.01\n500, 2.0, 0.005"),
            )
            .labelled_by(l.id);
        });
    ui.horizontal(|ui| {
        let loading = form.loading.is_some();
        if ui
            .add_enabled(!loading, egui::Button::new("Load file…"))
            .clicked()
        {
            start_loading(form);
        }
        if loading {
            ui.spinner();
        }
        ui.separator();
        ui.label("Wavelength unit");
        ui.radio_value(&mut form.unit, WavelengthUnit::Auto, "Auto");
        ui.radio_value(&mut form.unit, WavelengthUnit::Nm, "nm");
        ui.radio_value(&mut form.unit, WavelengthUnit::Um, "µm");
    });
    if form.csv.trim().is_empty() {
        form.parsed = None;
        return;
    }
    form.refresh_parse();
    let Some(parsed) = &form.parsed else { return };
    // An error is shown under the form (it names the line); here only a good table.
    if let Ok(t) = &parsed.result {
        let (lo, hi) = t.span_nm().unwrap_or_default();
        ui.label(format!(
            "{} rows, {lo}–{hi} nm, wavelengths read in {}",
            t.rows.len(),
            t.unit_used
        ));
        if t.unit_was_guessed {
            warn(
                ui,
                "the unit was guessed from the values; choose nm or µm above if it is wrong",
            );
        }
        for note in &t.notes {
            ui.weak(format!("• {note}"));
        }
        let m = Material::user(
            "preview",
            Model::Table {
                rows: t.rows.clone(),
            },
        );
        Curves::for_material(&mut form.preview, &m).show(ui, "material-form-plot");
    }
}

/// Name-clash checks and the Add / Replace / Save buttons.
fn submit_ui(
    ui: &mut egui::Ui,
    form: &Form,
    design: &Design,
    built: Option<&Material>,
) -> Option<BrowserAction> {
    let name = form.name.trim();
    let clash = design
        .materials
        .iter()
        .any(|m| m.name == name && form.editing.as_deref() != Some(name));
    if !name.is_empty() && crate::material::find_builtin(name).is_some() {
        warn(
            ui,
            format!(
                "a built-in material is also called {name:?}; in this design, the design's own \
                 material takes precedence"
            ),
        );
    }
    let mut action = None;
    ui.horizontal(|ui| {
        if let Some(old_name) = &form.editing {
            if clash {
                error(
                    ui,
                    format!("the design already has another material called {name:?}"),
                );
            } else if ui
                .add_enabled(built.is_some(), egui::Button::new("Save changes"))
                .clicked()
            {
                action = built
                    .cloned()
                    .map(|material| BrowserAction::ReplaceMaterial {
                        old_name: old_name.clone(),
                        material,
                    });
            }
        } else if clash {
            warn(
                ui,
                format!("the design already has a material called {name:?}"),
            );
            if ui
                .add_enabled(built.is_some(), egui::Button::new("Replace it"))
                .clicked()
            {
                action = built
                    .cloned()
                    .map(|material| BrowserAction::ReplaceMaterial {
                        old_name: name.to_owned(),
                        material,
                    });
            }
        } else if ui
            .add_enabled(built.is_some(), egui::Button::new("Add to design"))
            .clicked()
        {
            action = built.cloned().map(BrowserAction::AddMaterial);
        }
    });
    action
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn unbounded_formula_is_plotted_over_the_default_span() {
        let m = Material::user("c", Model::Constant { n: 1.5, k: 0.0 });
        let c = Curves::sample(&m);
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
        let c = Curves::sample(&m);
        let xs: Vec<f64> = c.k.iter().map(|p| p.x).collect();
        assert_eq!(xs, [400.0, 700.0]);
        assert_eq!(c.k.first().map(|p| p.y), Some(0.1));
    }

    #[test]
    fn the_curves_are_resampled_only_when_the_material_changes() {
        let mut cache = None;
        let a = Material::user("a", Model::Constant { n: 1.5, k: 0.0 });
        Curves::for_material(&mut cache, &a);
        // Mark the cached entry; a resample would replace the mark.
        if let Some(c) = cache.as_mut() {
            c.failed = 99;
        }
        let again = Curves::for_material(&mut cache, &a);
        assert_eq!(
            again.failed, 99,
            "same material: the cached points are reused"
        );
        let b = Material::user("a", Model::Constant { n: 1.6, k: 0.0 });
        let c = Curves::for_material(&mut cache, &b);
        assert_eq!(
            c.n.first().map(|p| p.y),
            Some(1.6),
            "a changed material is resampled"
        );
    }

    #[test]
    fn form_numbers_accept_decimal_commas_and_name_the_field() {
        assert_eq!(number("n", " 1,45 ", None), Ok(1.45));
        assert_eq!(number("k", "", Some(0.0)), Ok(0.0));
        let e = number("n", "abc", None).unwrap_err();
        assert!(e.contains("n:") && e.contains("\"abc\""), "{e}");
        let e = number("n", "", None).unwrap_err();
        assert!(e.contains("enter a number"), "{e}");
        let e = number("n", "inf", None).unwrap_err();
        assert!(e.contains("finite"), "{e}");
    }
}
