//! The design: the document the program edits, its RON file, its checks, and the stack
//! notation.
//!
//! A [`Design`] is plain data: the incident medium, the substrate (semi-infinite or with a
//! thickness), the exit medium, the layers in deposition order (layer 1 sits on the substrate
//! and is listed first), a thick substrate's back-face coating (listed the same way, from the
//! substrate outward), the design's own materials, and the optimisation targets. It is
//! loaded and saved by [`file`](mod@file), checked by [`Design::validate`], turned into the engine's view
//! by [`Design::resolve`], and can be written quickly with the [`notation`].
//!
//! ```
//! use stackwise::design::{Design, Layer, Nm};
//! use stackwise::material::{Material, Model};
//! let mut d = Design::new_empty("Single layer");
//! d.substrate = "S".into();
//! d.materials.push(Material::user("S", Model::Constant { n: 1.52, k: 0.0 }));
//! d.materials.push(Material::user("L", Model::Constant { n: 1.38, k: 0.0 }));
//! d.layers.push(Layer::new("L", Nm::new(99.6)?));
//! d.validate()?;
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```

pub mod bounds;
pub mod file;
pub mod notation;
pub mod output;
mod quantity;
mod target;
mod thickness;
mod validate;

use serde::{Deserialize, Serialize};

use crate::material::Material;

pub use file::DesignFileError;
pub use quantity::{Pol, Quantity};
pub use target::{ColourCoordinate, ColourLight, ColourObserver, Measure, Target, TargetKind};
pub use thickness::{nm_from_optical, nm_from_qwot, optical_nm, qwot, reference_index};
pub use validate::{DesignError, ResolvedDesign};

/// The newest design-file format this program writes and reads.
pub const FORMAT: u32 = 1;

/// A length in nanometres: finite and zero or positive.
///
/// A file cannot smuggle in a negative, infinite or NaN thickness: deserialisation goes through
/// [`Nm::new`].
///
/// ```
/// use stackwise::design::Nm;
/// assert_eq!(Nm::new(12.5)?.get(), 12.5);
/// assert!(Nm::new(-1.0).is_err());
/// assert!(Nm::new(f64::NAN).is_err());
/// # Ok::<(), stackwise::design::BadLength>(())
/// ```
#[derive(Clone, Copy, Debug, Default, PartialEq, PartialOrd, Serialize, Deserialize)]
#[serde(try_from = "f64", into = "f64")]
pub struct Nm(f64);

/// A thickness that is not a finite number >= 0.
#[derive(Clone, Copy, Debug, PartialEq, thiserror::Error)]
#[error(
    "thickness {value_nm} nm is not allowed: it must be a finite number of nanometres, 0 or more"
)]
pub struct BadLength {
    /// The rejected value.
    pub value_nm: f64,
}

impl Nm {
    /// Zero thickness.
    pub const ZERO: Nm = Nm(0.0);

    /// A thickness in nanometres; finite and >= 0, else [`BadLength`].
    pub fn new(value_nm: f64) -> Result<Self, BadLength> {
        if value_nm.is_finite() && value_nm >= 0.0 {
            // Normalise −0.0 so that it prints and compares as 0.
            Ok(Self(value_nm.abs()))
        } else {
            Err(BadLength { value_nm })
        }
    }

    /// The value in nanometres.
    #[must_use]
    pub fn get(self) -> f64 {
        self.0
    }
}

impl TryFrom<f64> for Nm {
    type Error = BadLength;

    fn try_from(value_nm: f64) -> Result<Self, Self::Error> {
        Self::new(value_nm)
    }
}

impl From<Nm> for f64 {
    fn from(nm: Nm) -> Self {
        nm.0
    }
}

/// One layer of the stack.
///
/// ```
/// use stackwise::design::{Layer, Nm};
/// let l = Layer::new("H", Nm::new(13.2)?);
/// assert!(!l.locked);
/// # Ok::<(), stackwise::design::BadLength>(())
/// ```
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Layer {
    /// Material name: one of the design's own materials or a built-in.
    pub material: String,
    /// Physical thickness.
    pub nm: Nm,
    /// Whether optimisation must leave this layer's thickness alone.
    #[serde(default, skip_serializing_if = "is_false")]
    pub locked: bool,
}

#[expect(
    clippy::trivially_copy_pass_by_ref,
    reason = "serde's skip_serializing_if signature"
)]
fn is_false(b: &bool) -> bool {
    !*b
}

impl Layer {
    /// An unlocked layer.
    #[must_use]
    pub fn new(material: &str, nm: Nm) -> Self {
        Self {
            material: material.to_owned(),
            nm,
            locked: false,
        }
    }
}

/// A coating design: the document.
///
/// Field names are part of the file format (see [`file`](mod@file)); new fields get serde defaults so
/// older files keep loading.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Design {
    /// File-format version, [`FORMAT`] when written by this program.
    pub format: u32,
    /// The design's name, shown in titles and reports.
    pub name: String,
    /// Reference wavelength (nm) for quarter-wave thicknesses.
    pub reference_nm: f64,
    /// Medium the light arrives from.
    pub incident: String,
    /// Substrate material.
    pub substrate: String,
    /// Substrate thickness in millimetres; `None` = semi-infinite (no back surface).
    pub substrate_mm: Option<f64>,
    /// Medium behind the substrate's back surface.
    pub exit: String,
    /// Layers in deposition order: layer 1 (on the substrate) first.
    pub layers: Vec<Layer>,
    /// The coating on the substrate's back face, listed the same way: layer 1 touches the
    /// substrate, the last one faces the exit medium. Needs a thick substrate
    /// (`substrate_mm`); empty for a bare back face.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub back_layers: Vec<Layer>,
    /// Materials defined in this design; they win over built-ins of the same name.
    #[serde(default)]
    pub materials: Vec<Material>,
    /// Optimisation targets.
    #[serde(default)]
    pub targets: Vec<Target>,
}

impl Design {
    /// An empty design: Air | Fused silica (semi-infinite) | Air, reference 550 nm, no layers.
    ///
    /// ```
    /// let d = stackwise::design::Design::new_empty("New design");
    /// assert_eq!(d.reference_nm, 550.0);
    /// assert!(d.layers.is_empty());
    /// ```
    #[must_use]
    pub fn new_empty(name: &str) -> Self {
        Self {
            format: FORMAT,
            name: name.to_owned(),
            reference_nm: 550.0,
            incident: "Air".into(),
            substrate: "Fused silica".into(),
            substrate_mm: None,
            exit: "Air".into(),
            layers: Vec::new(),
            back_layers: Vec::new(),
            materials: Vec::new(),
            targets: Vec::new(),
        }
    }

    /// Total physical thickness of the layers (nm).
    #[must_use]
    pub fn total_nm(&self) -> f64 {
        self.layers.iter().map(|l| l.nm.get()).sum()
    }

    /// The layers of one face of the substrate.
    #[must_use]
    pub fn face_layers(&self, face: Face) -> &[Layer] {
        match face {
            Face::Front => &self.layers,
            Face::Back => &self.back_layers,
        }
    }

    /// The layers of one face of the substrate, to edit.
    pub fn face_layers_mut(&mut self, face: Face) -> &mut Vec<Layer> {
        match face {
            Face::Front => &mut self.layers,
            Face::Back => &mut self.back_layers,
        }
    }
}

/// One of the substrate's two coated faces.
///
/// ```
/// use stackwise::design::{Design, Face};
/// let d = Design::new_empty("Window");
/// assert!(d.face_layers(Face::Back).is_empty());
/// assert_eq!(Face::Back.layer_word(), "back layer");
/// ```
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum Face {
    /// The coated face towards the incident medium (`layers`).
    #[default]
    Front,
    /// The substrate's back face towards the exit medium (`back_layers`); only with a thick
    /// substrate.
    Back,
}

impl Face {
    /// How one layer of this face is named in messages and tables: `layer` or `back layer`.
    #[must_use]
    pub fn layer_word(self) -> &'static str {
        match self {
            Face::Front => "layer",
            Face::Back => "back layer",
        }
    }

    /// The design-file field holding this face's layers.
    #[must_use]
    pub fn field(self) -> &'static str {
        match self {
            Face::Front => "layers",
            Face::Back => "back_layers",
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nm_rejects_negative_nan_and_infinite() {
        for bad in [-0.1, f64::NAN, f64::INFINITY, f64::NEG_INFINITY] {
            let e = Nm::new(bad).unwrap_err();
            assert!(e.to_string().contains(&format!("{bad}")), "{e}");
        }
        assert_eq!(
            Nm::new(-0.0).unwrap().get().to_bits(),
            0.0f64.to_bits(),
            "−0 normalised"
        );
    }

    #[test]
    fn layer_omits_locked_when_false() {
        let l = Layer::new("H", Nm::new(10.0).unwrap());
        let s = ron::to_string(&l).unwrap();
        assert!(!s.contains("locked"), "{s}");
        let back: Layer = ron::from_str(&s).unwrap();
        assert_eq!(back, l, "round trip");
    }
}
