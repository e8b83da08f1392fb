//! The open document and the commands that change it.
//!
//! Panels never mutate the design: they push [`Command`]s, and [`Document::apply`] — the one
//! mutator, testable without egui — checks and carries them out. A refused command leaves the
//! document as it was and says why. Commands are of two kinds: [`Edit`]s change the design and
//! become undo steps; the others move through the history or concern the file.
//!
//! Layer indices in commands are 0-based positions in [`Design::layers`] (layer 1, on the
//! substrate, is index 0); messages name layers by their 1-based number, as the table does.

use std::path::{Path, PathBuf};

use crate::design::{Design, DesignError, DesignFileError, Face, Layer, Nm, file};
use crate::material::{Catalog, Material, MaterialError};

use super::history::History;

mod materials;

/// A change to the design: each becomes (part of) one undo step.
#[derive(Clone, Debug, PartialEq)]
pub enum Edit {
    /// Sets a layer's physical thickness (nm).
    SetThickness {
        /// 0-based layer index.
        layer: usize,
        /// New thickness in nm (must be finite and >= 0).
        nm: f64,
    },
    /// Sets a layer's thickness in quarter waves at the reference wavelength.
    SetQwot {
        /// 0-based layer index.
        layer: usize,
        /// Quarter-wave optical thickness (must be finite and >= 0).
        qwot: f64,
    },
    /// Changes a layer's material (keeps its physical thickness).
    SetMaterial {
        /// 0-based layer index.
        layer: usize,
        /// A design or built-in material name.
        name: String,
    },
    /// Inserts a layer so that it gets index `at` (`at == len` appends on the outside).
    InsertLayer {
        /// 0-based index the new layer will have.
        at: usize,
        /// The layer.
        layer: Layer,
    },
    /// Inserts a copy of a layer just outside it.
    DuplicateLayer(usize),
    /// Removes the layers at these 0-based indices.
    RemoveLayers(Vec<usize>),
    /// Moves a layer from one index to another.
    MoveLayer {
        /// 0-based index of the layer to move.
        from: usize,
        /// 0-based index it will have afterwards.
        to: usize,
    },
    /// Multiplies the thickness of the given layers by `factor` (> 0).
    ScaleLayers {
        /// 0-based indices.
        layers: Vec<usize>,
        /// Scale factor, finite and > 0.
        factor: f64,
    },
    /// Flips a layer's lock.
    ToggleLock(usize),
    /// Changes the incident medium.
    SetIncident(String),
    /// Changes the substrate material.
    SetSubstrate(String),
    /// Sets the substrate thickness in mm; `None` = semi-infinite (no back surface).
    SetSubstrateMm(Option<f64>),
    /// Changes the exit medium.
    SetExit(String),
    /// Changes the reference wavelength (nm) for QWOTs; physical thicknesses stay.
    SetReference(f64),
    /// Replaces all layers (e.g. built from stack notation).
    ReplaceLayers(Vec<Layer>),
    /// A layer edit (any of the above from `SetThickness` to `ReplaceLayers`) carried out on
    /// the substrate's back face, `back_layers`, instead of the front coating; its layer
    /// indices count from the substrate outward the same way. Needs a substrate thickness.
    OnBackFace(Box<Edit>),
    /// Renames the design.
    SetName(String),
    /// Adds a material to the design's own list.
    AddMaterial(Material),
    /// Replaces one of the design's own materials (or overrides a built-in); layers and media
    /// that used `old_name` follow a rename.
    ReplaceMaterial {
        /// The name it had.
        old_name: String,
        /// The new definition.
        material: Material,
    },
    /// Removes one of the design's own materials; refused while anything uses it.
    RemoveMaterial(String),
    /// Replaces the optimisation targets (each is checked; a bad one refuses the whole list).
    SetTargets(Vec<crate::design::Target>),
    /// Takes the result of background work (e.g. an optimised design) in place of the
    /// design; refused when the design changed since the work started from `from_revision`.
    Adopt {
        /// The revision the work read.
        from_revision: u64,
        /// The design it produced.
        design: Box<Design>,
    },
}

/// What can be done to a document: an edit, a step through its history, or a file action.
#[derive(Clone, Debug, PartialEq)]
pub enum Command {
    /// Changes the design (one undo step).
    Edit(Edit),
    /// Undoes the last step.
    Undo,
    /// Redoes the last undone step.
    Redo,
    /// Starts a new, empty design (the caller asks about unsaved changes first).
    New,
    /// Opens a design file (the caller asks about unsaved changes first).
    Open(PathBuf),
    /// Replaces the document with `design`, not yet saved anywhere (e.g. recovered work).
    Recover(Box<Design>),
    /// Saves to the document's file.
    Save,
    /// Saves to a new file, which becomes the document's file.
    SaveAs(PathBuf),
}

impl From<Edit> for Command {
    fn from(e: Edit) -> Self {
        Command::Edit(e)
    }
}

impl Edit {
    /// `edit` for the layers of `face`: as it is for the front, wrapped in
    /// [`Edit::OnBackFace`] for the back.
    #[must_use]
    pub fn on_face(face: Face, edit: Edit) -> Edit {
        match face {
            Face::Front => edit,
            Face::Back => Edit::OnBackFace(Box::new(edit)),
        }
    }

    /// Whether the edit changes layers (and so can be carried out on either face).
    #[must_use]
    pub fn is_layer_edit(&self) -> bool {
        matches!(
            self,
            Edit::SetThickness { .. }
                | Edit::SetQwot { .. }
                | Edit::SetMaterial { .. }
                | Edit::InsertLayer { .. }
                | Edit::DuplicateLayer(_)
                | Edit::RemoveLayers(_)
                | Edit::MoveLayer { .. }
                | Edit::ScaleLayers { .. }
                | Edit::ToggleLock(_)
                | Edit::ReplaceLayers(_)
        )
    }
}

/// Why a command was refused.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum CommandError {
    /// A layer index the design does not have.
    #[error("there is no layer {number}; the design has {count} layer(s)")]
    NoSuchLayer {
        /// The 1-based layer number.
        number: usize,
        /// How many layers there are.
        count: usize,
    },
    /// A number that cannot be used.
    #[error("{what} must be {rule}, got {value}")]
    BadNumber {
        /// Which value.
        what: &'static str,
        /// What it must be.
        rule: &'static str,
        /// The value given.
        value: f64,
    },
    /// A material name that cannot be resolved.
    #[error("{place}: {source}")]
    Material {
        /// Where it was to be used.
        place: String,
        /// Why it cannot.
        source: MaterialError,
    },
    /// A design-level refusal (e.g. a QWOT that cannot be converted).
    #[error(transparent)]
    Design(#[from] DesignError),
    /// A file could not be read or written; the document is unchanged.
    #[error(transparent)]
    File(#[from] DesignFileError),
    /// Save with no file yet.
    #[error("the design has no file yet; use Save As")]
    NoPath,
    /// Undo or redo with nothing to do.
    #[error("nothing to {0}")]
    Nothing(&'static str),
    /// A refused change to the material list.
    #[error("{0}")]
    Materials(String),
    /// The back face has a coating only on a substrate with a thickness.
    #[error(
        "the back face can only be coated on a substrate with a thickness; \
         turn on \"back surface\" first"
    )]
    BackFaceNeedsThickness,
    /// Making the substrate semi-infinite would drop the back face's layers.
    #[error(
        "the back face has {count} layer(s), which need a substrate thickness; \
         delete them before making the substrate semi-infinite"
    )]
    BackLayersNeedThickness {
        /// How many back layers there are.
        count: usize,
    },
    /// Only layer edits can be aimed at the back face.
    #[error("only layer edits can be carried out on the back face")]
    NotALayerEdit,
    /// A layer edit on the back face was refused.
    #[error("back face: {0}")]
    BackFace(Box<CommandError>),
    /// A result of background work for a design that has changed since.
    #[error(
        "the design changed while the work was running (revision {from_revision}, now \
         {now}); the result was not applied"
    )]
    Stale {
        /// The revision the work read.
        from_revision: u64,
        /// The revision now.
        now: u64,
    },
}

/// The design being edited, where it lives, and its history. Only [`Document::apply`] changes
/// it.
#[derive(Clone, Debug)]
pub struct Document {
    /// The design as it is now.
    design: Design,
    /// The file it was opened from or last saved to.
    path: Option<PathBuf>,
    /// The design as last saved or opened, for the unsaved-changes mark.
    saved: Design,
    /// Undo/redo snapshots.
    history: History,
    /// Bumped on every change to `design`; caches key on it.
    revision: u64,
}

impl Document {
    /// A document for `design`, saved at `path` (or never saved when `None`).
    #[must_use]
    pub fn new(design: Design, path: Option<PathBuf>) -> Self {
        Self {
            history: History::new(&design),
            saved: design.clone(),
            design,
            path,
            revision: 0,
        }
    }

    /// The design as it is now.
    #[must_use]
    pub fn design(&self) -> &Design {
        &self.design
    }

    /// The file it was opened from or last saved to.
    #[must_use]
    pub fn path(&self) -> Option<&Path> {
        self.path.as_deref()
    }

    /// A number bumped on every change to the design; caches and background work key on it.
    #[must_use]
    pub fn revision(&self) -> u64 {
        self.revision
    }

    /// Whether there is a step to undo.
    #[must_use]
    pub fn can_undo(&self) -> bool {
        self.history.can_undo(&self.design)
    }

    /// Whether there is an undone step to redo.
    #[must_use]
    pub fn can_redo(&self) -> bool {
        self.history.can_redo(&self.design)
    }

    /// Treats the design as it is as saved: the user chose to discard the changes, so the
    /// next step must not ask about them again.
    pub fn forget_unsaved_changes(&mut self) {
        self.saved = self.design.clone();
    }

    /// Whether the design differs from the last saved or opened copy.
    #[must_use]
    pub fn is_dirty(&self) -> bool {
        self.design != self.saved
    }

    /// The window title: name, an unsaved mark, and the program.
    #[must_use]
    pub fn title(&self) -> String {
        let mark = if self.is_dirty() { " •" } else { "" };
        format!("{}{mark} — Stackwise", self.design.name)
    }

    /// Records the current design as an undo step if it changed since the last one.
    pub fn commit(&mut self) -> bool {
        self.history.commit(&self.design)
    }

    /// Carries out `cmd`. On `Err` the document is unchanged.
    pub fn apply(&mut self, cmd: impl Into<Command>) -> Result<(), CommandError> {
        let before_revision_design = self.design.clone();
        let result = match cmd.into() {
            Command::Edit(e) => self.apply_edit(e),
            other => self.apply_lifecycle(other),
        };
        if self.design != before_revision_design {
            self.revision += 1;
        }
        result
    }

    fn replace_document(&mut self, design: Design, path: Option<PathBuf>, saved: Design) {
        self.history = History::new(&design);
        self.design = design;
        self.path = path;
        self.saved = saved;
        // A whole new document: make sure every cache sees a new revision.
        self.revision += 1;
    }

    #[expect(clippy::too_many_lines, reason = "one arm per edit reads best")]
    fn apply_edit(&mut self, edit: Edit) -> Result<(), CommandError> {
        match edit {
            Edit::SetThickness { layer, nm } => {
                self.check_layer(layer)?;
                let nm =
                    Nm::new(nm).map_err(|_| bad("thickness (nm)", "finite and 0 or more", nm))?;
                self.design.layers[layer].nm = nm;
            }
            Edit::SetQwot { layer, qwot } => {
                self.check_layer(layer)?;
                let mut d = self.design.clone();
                d.set_layer_qwot(layer + 1, qwot)?;
                self.design = d;
            }
            Edit::SetMaterial { layer, name } => {
                self.check_layer(layer)?;
                self.check_material(&name, &format!("layer {}", layer + 1))?;
                self.design.layers[layer].material = name;
            }
            Edit::InsertLayer { at, layer } => {
                if at > self.design.layers.len() {
                    return Err(self.no_layer(at));
                }
                self.check_material(&layer.material, "new layer")?;
                self.design.layers.insert(at, layer);
            }
            Edit::DuplicateLayer(i) => {
                self.check_layer(i)?;
                let copy = self.design.layers[i].clone();
                self.design.layers.insert(i + 1, copy);
            }
            Edit::RemoveLayers(mut list) => {
                list.sort_unstable();
                list.dedup();
                for &i in &list {
                    self.check_layer(i)?;
                }
                for &i in list.iter().rev() {
                    self.design.layers.remove(i);
                }
            }
            Edit::MoveLayer { from, to } => {
                self.check_layer(from)?;
                self.check_layer(to)?;
                let l = self.design.layers.remove(from);
                self.design.layers.insert(to, l);
            }
            Edit::ScaleLayers { layers, factor } => {
                if !(factor.is_finite() && factor > 0.0) {
                    return Err(bad("scale factor", "a finite number above 0", factor));
                }
                let mut new = self.design.layers.clone();
                for &i in &layers {
                    self.check_layer(i)?;
                    let v = new[i].nm.get() * factor;
                    new[i].nm =
                        Nm::new(v).map_err(|_| bad("scaled thickness (nm)", "finite", v))?;
                }
                self.design.layers = new;
            }
            Edit::ToggleLock(i) => {
                self.check_layer(i)?;
                self.design.layers[i].locked ^= true;
            }
            Edit::SetIncident(name) => {
                self.check_material(&name, "incident medium")?;
                self.design.incident = name;
            }
            Edit::SetSubstrate(name) => {
                self.check_material(&name, "substrate")?;
                self.design.substrate = name;
            }
            Edit::SetExit(name) => {
                self.check_material(&name, "exit medium")?;
                self.design.exit = name;
            }
            Edit::SetSubstrateMm(mm) => {
                if let Some(v) = mm
                    && !(v.is_finite() && v > 0.0)
                {
                    return Err(bad(
                        "substrate thickness (mm)",
                        "a finite number above 0",
                        v,
                    ));
                }
                if mm.is_none() && !self.design.back_layers.is_empty() {
                    return Err(CommandError::BackLayersNeedThickness {
                        count: self.design.back_layers.len(),
                    });
                }
                self.design.substrate_mm = mm;
            }
            Edit::SetReference(nm) => {
                if !(nm.is_finite() && nm > 0.0) {
                    return Err(bad(
                        "reference wavelength (nm)",
                        "a finite number above 0",
                        nm,
                    ));
                }
                self.design.reference_nm = nm;
            }
            Edit::ReplaceLayers(layers) => {
                for (i, l) in layers.iter().enumerate() {
                    self.check_material(&l.material, &format!("layer {}", i + 1))?;
                }
                self.design.layers = layers;
            }
            Edit::OnBackFace(edit) => self.apply_on_back_face(*edit)?,
            Edit::SetName(name) => self.design.name = name,
            Edit::SetTargets(targets) => {
                let mut d = self.design.clone();
                d.targets = targets;
                d.validate()?;
                self.design = d;
            }
            Edit::AddMaterial(m) => self.add_material(m)?,
            Edit::ReplaceMaterial { old_name, material } => {
                self.replace_material(&old_name, material)?;
            }
            Edit::RemoveMaterial(name) => self.remove_material(&name)?,
            Edit::Adopt {
                from_revision,
                design,
            } => {
                if from_revision != self.revision {
                    return Err(CommandError::Stale {
                        from_revision,
                        now: self.revision,
                    });
                }
                self.design = *design;
            }
        }
        Ok(())
    }

    fn apply_lifecycle(&mut self, cmd: Command) -> Result<(), CommandError> {
        match cmd {
            Command::Edit(e) => return self.apply_edit(e),
            Command::Undo => {
                let d = self
                    .history
                    .undo(&self.design)
                    .ok_or(CommandError::Nothing("undo"))?;
                self.design = d;
            }
            Command::Redo => {
                let d = self
                    .history
                    .redo(&self.design)
                    .ok_or(CommandError::Nothing("redo"))?;
                self.design = d;
            }
            Command::New => {
                let d = Design::new_empty("Untitled");
                self.replace_document(d.clone(), None, d);
            }
            Command::Open(path) => {
                let d = file::load(&path)?;
                self.replace_document(d.clone(), Some(path), d);
            }
            Command::Recover(d) => {
                // Recovered work is unsaved: compare against an empty "saved" copy.
                let saved = Design::new_empty("");
                self.replace_document(*d, None, saved);
            }
            Command::Save => {
                let path = self.path.clone().ok_or(CommandError::NoPath)?;
                self.save_to(&path)?;
            }
            Command::SaveAs(path) => {
                self.save_to(&path)?;
                self.path = Some(path);
            }
        }
        Ok(())
    }

    /// A layer edit on `back_layers`: the two faces trade places for the edit, so every layer
    /// edit works on the back face as it does on the front.
    fn apply_on_back_face(&mut self, edit: Edit) -> Result<(), CommandError> {
        if !edit.is_layer_edit() {
            return Err(CommandError::NotALayerEdit);
        }
        if self.design.substrate_mm.is_none() {
            return Err(CommandError::BackFaceNeedsThickness);
        }
        let d = &mut self.design;
        std::mem::swap(&mut d.layers, &mut d.back_layers);
        let result = self.apply_edit(edit);
        let d = &mut self.design;
        std::mem::swap(&mut d.layers, &mut d.back_layers);
        result.map_err(|e| CommandError::BackFace(Box::new(e)))
    }

    fn save_to(&mut self, path: &Path) -> Result<(), CommandError> {
        file::save(path, &self.design)?;
        self.saved = self.design.clone();
        Ok(())
    }

    fn no_layer(&self, i: usize) -> CommandError {
        CommandError::NoSuchLayer {
            number: i + 1,
            count: self.design.layers.len(),
        }
    }

    fn check_layer(&self, i: usize) -> Result<(), CommandError> {
        if i < self.design.layers.len() {
            Ok(())
        } else {
            Err(self.no_layer(i))
        }
    }

    fn check_material(&self, name: &str, place: &str) -> Result<(), CommandError> {
        Catalog::new(&self.design.materials)
            .get(name)
            .map(|_| ())
            .map_err(|source| CommandError::Material {
                place: place.to_owned(),
                source,
            })
    }
}

fn bad(what: &'static str, rule: &'static str, value: f64) -> CommandError {
    CommandError::BadNumber { what, rule, value }
}

#[cfg(test)]
mod tests;
