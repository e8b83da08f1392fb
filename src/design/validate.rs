//! Checks on a whole design, and its resolution into the engine's view.

use crate::material::{Catalog, Material, MaterialError};

use super::target::MAX_TARGET_POINTS;
use super::{ColourCoordinate, Design, Face, Measure, Quantity, Target};

/// What can be wrong with a design's content (as opposed to its file's syntax).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum DesignError {
    /// The reference wavelength is not a positive number.
    #[error("reference_nm must be a positive number of nanometres (e.g. 550.0), got {value_nm}")]
    BadReference {
        /// The rejected value.
        value_nm: f64,
    },
    /// The substrate thickness is not a positive number.
    #[error(
        "substrate_mm must be a positive number of millimetres, got {value_mm}; \
         use None for a semi-infinite substrate"
    )]
    BadSubstrateThickness {
        /// The rejected value.
        value_mm: f64,
    },
    /// The design has back-face layers but no substrate thickness.
    #[error(
        "back_layers needs a thick substrate: a coating on the back face only exists when \
         substrate_mm gives the substrate a thickness (e.g. Some(2.0)); set substrate_mm or \
         remove the {count} back layer(s)"
    )]
    BackLayersWithoutThickness {
        /// How many back layers there are.
        count: usize,
    },
    /// A layer or medium names a material that cannot be found, or whose index cannot be
    /// evaluated.
    #[error("{place}: {source}")]
    Material {
        /// Where the material is used, e.g. `layer 3` or `substrate`.
        place: String,
        /// What went wrong with it.
        source: MaterialError,
    },
    /// A material in the design's own list is unusable.
    #[error("materials list, entry {entry}: {source}")]
    BadUserMaterial {
        /// 1-based position in the `materials` list.
        entry: usize,
        /// What is wrong.
        source: MaterialError,
    },
    /// A material in the design's own list has no name.
    #[error("materials list, entry {entry}: the name is empty; give the material a name")]
    EmptyMaterialName {
        /// 1-based position in the `materials` list.
        entry: usize,
    },
    /// Two materials in the design's own list share a name.
    #[error(
        "materials list defines {name:?} twice (entries {first} and {second}); \
         rename or remove one"
    )]
    DuplicateMaterial {
        /// The shared name.
        name: String,
        /// 1-based position of the first definition.
        first: usize,
        /// 1-based position of the second definition.
        second: usize,
    },
    /// A target's numbers do not make sense.
    #[error("target {index}: {what}")]
    BadTarget {
        /// 1-based position in the `targets` list.
        index: usize,
        /// What is wrong and how to fix it.
        what: String,
    },
    /// A number outside its physical range (the ranges are in [`super::bounds`]); the message
    /// names the field.
    #[error("{what}; correct it in the design")]
    OutOfRange {
        /// The field, its value and the allowed range.
        what: String,
    },
    /// A layer number that the design does not have.
    #[error("there is no layer {layer}; the design has {count} layer(s), numbered from 1")]
    NoSuchLayer {
        /// The 1-based layer number asked for.
        layer: usize,
        /// How many layers there are.
        count: usize,
    },
    /// A requested thickness (QWOT or optical thickness) is not a finite number >= 0.
    #[error("{what} must be a finite number, 0 or more, got {value}")]
    BadThickness {
        /// Which kind of thickness, e.g. `QWOT`.
        what: &'static str,
        /// The rejected value.
        value: f64,
    },
}

/// The engine's view of a design: every material resolved, each used material listed once so
/// the solver can evaluate it once per wavelength.
///
/// ```
/// use stackwise::design::{Design, Layer, Nm};
/// use stackwise::material::{Material, Model};
/// let mut d = Design::new_empty("Two layers");
/// d.substrate = "Air".into();
/// d.materials.push(Material::user("H", Model::Constant { n: 2.35, k: 0.0 }));
/// d.layers = vec![Layer::new("H", Nm::new(50.0)?), Layer::new("H", Nm::new(20.0)?)];
/// let r = d.resolve()?;
/// assert_eq!(r.materials.len(), 1);
/// assert_eq!(r.layers, vec![(0, 50.0), (0, 20.0)]);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
#[derive(Clone, Debug)]
pub struct ResolvedDesign {
    /// Medium the light arrives from.
    pub incident: Material,
    /// Substrate.
    pub substrate: Material,
    /// Medium behind the substrate.
    pub exit: Material,
    /// Substrate thickness (mm); `None` = semi-infinite.
    pub substrate_mm: Option<f64>,
    /// The distinct materials the layers use, in order of first use.
    pub materials: Vec<Material>,
    /// Per layer, substrate side first: (index into `materials`, thickness in nm).
    pub layers: Vec<(usize, f64)>,
    /// Per back-face layer, substrate side first, the same way; empty for a bare back face.
    pub back_layers: Vec<(usize, f64)>,
}

fn lookup(catalog: &Catalog<'_>, name: &str, place: &str) -> Result<Material, DesignError> {
    catalog
        .get(name)
        .cloned()
        .map_err(|source| DesignError::Material {
            place: place.to_owned(),
            source,
        })
}

impl Design {
    /// Checks everything that can be checked without computing a spectrum: the reference
    /// wavelength, the substrate thickness, the design's own materials (valid, uniquely
    /// named), that every layer and medium names a known material, the targets, and that every
    /// number lies in its physical range ([`super::bounds`]).
    pub fn validate(&self) -> Result<(), DesignError> {
        if !(self.reference_nm.is_finite() && self.reference_nm > 0.0) {
            return Err(DesignError::BadReference {
                value_nm: self.reference_nm,
            });
        }
        if let Some(mm) = self.substrate_mm
            && !(mm.is_finite() && mm > 0.0)
        {
            return Err(DesignError::BadSubstrateThickness { value_mm: mm });
        }
        if self.substrate_mm.is_none() && !self.back_layers.is_empty() {
            return Err(DesignError::BackLayersWithoutThickness {
                count: self.back_layers.len(),
            });
        }
        for (i, m) in self.materials.iter().enumerate() {
            let entry = i + 1;
            if m.name.trim().is_empty() {
                return Err(DesignError::EmptyMaterialName { entry });
            }
            if let Some(j) = self.materials[..i].iter().position(|p| p.name == m.name) {
                return Err(DesignError::DuplicateMaterial {
                    name: m.name.clone(),
                    first: j + 1,
                    second: entry,
                });
            }
            m.validate()
                .map_err(|source| DesignError::BadUserMaterial { entry, source })?;
        }
        self.resolve_names()?;
        for (i, t) in self.targets.iter().enumerate() {
            check_target(t).map_err(|what| DesignError::BadTarget { index: i + 1, what })?;
        }
        super::bounds::check(self)
    }

    /// Validates the design and resolves every name into the engine's view.
    pub fn resolve(&self) -> Result<ResolvedDesign, DesignError> {
        self.validate()?;
        self.resolve_names()
    }

    fn resolve_names(&self) -> Result<ResolvedDesign, DesignError> {
        let catalog = Catalog::new(&self.materials);
        let incident = lookup(&catalog, &self.incident, "incident medium")?;
        let substrate = lookup(&catalog, &self.substrate, "substrate")?;
        let exit = lookup(&catalog, &self.exit, "exit medium")?;
        let mut materials: Vec<Material> = Vec::new();
        let mut face = |layers: &[super::Layer], word: &str| {
            let mut out = Vec::with_capacity(layers.len());
            for (i, layer) in layers.iter().enumerate() {
                let at = if let Some(at) = materials.iter().position(|m| m.name == layer.material) {
                    at
                } else {
                    materials.push(lookup(
                        &catalog,
                        &layer.material,
                        &format!("{word} {}", i + 1),
                    )?);
                    materials.len() - 1
                };
                out.push((at, layer.nm.get()));
            }
            Ok::<_, DesignError>(out)
        };
        let layers = face(&self.layers, Face::Front.layer_word())?;
        let back_layers = face(&self.back_layers, Face::Back.layer_word())?;
        Ok(ResolvedDesign {
            incident,
            substrate,
            exit,
            substrate_mm: self.substrate_mm,
            materials,
            layers,
            back_layers,
        })
    }
}

fn check_target(t: &Target) -> Result<(), String> {
    let positive = |name: &str, x: f64| {
        if x.is_finite() && x > 0.0 {
            Ok(())
        } else {
            Err(format!(
                "{name} must be a positive number of nanometres, got {x}"
            ))
        }
    };
    if !(t.aoi_deg.is_finite() && (0.0..90.0).contains(&t.aoi_deg)) {
        return Err(format!(
            "aoi_deg must be at least 0 and below 90 degrees, got {}",
            t.aoi_deg
        ));
    }
    if !t.measure.is_spectral() && t.quantity == Quantity::A {
        return Err(format!(
            "a {} target reads reflected (quantity R) or transmitted (quantity T) light, not \
             absorptance A",
            measure_name(t.measure)
        ));
    }
    // A colour target integrates over the CIE range; its span is not read.
    let colour = matches!(t.measure, Measure::Colour { .. });
    if !colour {
        check_span(t, positive)?;
    }
    check_goal(t)?;
    if !(t.tolerance.is_finite() && t.tolerance >= 0.0) {
        return Err(format!(
            "tolerance must be 0 or a positive {}, got {}",
            t.measure.unit(),
            t.tolerance
        ));
    }
    if !(t.weight.is_finite() && t.weight >= 0.0) {
        return Err(format!(
            "weight must be 0 or a positive number, got {}",
            t.weight
        ));
    }
    Ok(())
}

fn measure_name(m: Measure) -> &'static str {
    match m {
        Measure::Spectral => "spectral",
        Measure::Gdd => "GDD",
        Measure::Colour { .. } => "colour",
    }
}

/// Largest |GDD| goal or tolerance a target may ask for (fs²).
const MAX_GDD_FS2: f64 = 1e9;

fn check_goal(t: &Target) -> Result<(), String> {
    match t.measure {
        Measure::Spectral => {
            if !(t.goal.is_finite() && (0.0..=1.0).contains(&t.goal)) {
                return Err(format!(
                    "goal must be a fraction from 0 to 1 (write 0.05 for 5 %), got {}",
                    t.goal
                ));
            }
        }
        Measure::Gdd => {
            if !(t.goal.is_finite() && t.goal.abs() <= MAX_GDD_FS2) {
                return Err(format!(
                    "GDD goal must be a finite number of fs² (at most {MAX_GDD_FS2:e} in size), \
                     got {}",
                    t.goal
                ));
            }
        }
        Measure::Colour { coordinate, .. } => {
            let (lo, hi) = match coordinate {
                ColourCoordinate::L => (0.0, 100.0),
                ColourCoordinate::A | ColourCoordinate::B => (-200.0, 200.0),
            };
            if !(t.goal.is_finite() && (lo..=hi).contains(&t.goal)) {
                return Err(format!(
                    "colour goal for {} must be a number from {lo} to {hi}, got {}",
                    coordinate.symbol(),
                    t.goal
                ));
            }
        }
    }
    Ok(())
}

fn check_span(
    t: &Target,
    positive: impl Fn(&str, f64) -> Result<(), String>,
) -> Result<(), String> {
    positive("from_nm", t.from_nm)?;
    positive("to_nm", t.to_nm)?;
    if t.from_nm > t.to_nm {
        return Err(format!(
            "from_nm ({}) is above to_nm ({}); swap them",
            t.from_nm, t.to_nm
        ));
    }
    if t.from_nm < t.to_nm {
        positive("step_nm", t.step_nm)?;
        let count = (t.to_nm - t.from_nm) / t.step_nm;
        if count > f64::from(MAX_TARGET_POINTS) {
            return Err(format!(
                "step_nm {} gives more than {MAX_TARGET_POINTS} wavelengths; use a larger step",
                t.step_nm
            ));
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::design::{Layer, Nm, Pol, Quantity, TargetKind};
    use crate::material::Model;

    fn sample() -> Design {
        let mut d = Design::new_empty("t");
        d.substrate = "S".into();
        d.materials = vec![
            Material::user("S", Model::Constant { n: 1.52, k: 0.0 }),
            Material::user("H", Model::Constant { n: 2.35, k: 0.0 }),
            Material::user("L", Model::Constant { n: 1.38, k: 0.0 }),
        ];
        d.layers = vec![
            Layer::new("H", Nm::new(10.0).unwrap()),
            Layer::new("L", Nm::new(20.0).unwrap()),
            Layer::new("H", Nm::new(30.0).unwrap()),
        ];
        d
    }

    fn target() -> Target {
        Target {
            quantity: Quantity::T,
            pol: Pol::S,
            aoi_deg: 45.0,
            from_nm: 500.0,
            to_nm: 600.0,
            step_nm: 10.0,
            kind: TargetKind::AtLeast,
            goal: 0.9,
            tolerance: 0.01,
            weight: 2.0,
            measure: crate::design::Measure::Spectral,
        }
    }

    #[test]
    fn resolve_lists_each_material_once_in_order_of_use() {
        let r = sample().resolve().unwrap();
        let names: Vec<_> = r.materials.iter().map(|m| m.name.as_str()).collect();
        assert_eq!(names, ["H", "L"], "distinct materials");
        assert_eq!(
            r.layers,
            vec![(0, 10.0), (1, 20.0), (0, 30.0)],
            "layer table"
        );
        assert_eq!(r.substrate.name, "S", "substrate resolved");
    }

    #[test]
    fn unknown_layer_material_names_the_layer_and_suggests() {
        let mut d = sample();
        d.layers[1].material = "l".into();
        let e = d.validate().unwrap_err().to_string();
        assert!(e.starts_with("layer 2: unknown material \"l\""), "{e}");
        assert!(e.contains("did you mean \"L\""), "{e}");
    }

    #[test]
    fn targets_are_checked() {
        type Edit = fn(&mut Target);
        let mut d = sample();
        d.targets = vec![target()];
        d.validate().unwrap();
        let cases: [(Edit, &str); 7] = [
            (|t| t.aoi_deg = 90.0, "aoi_deg"),
            (|t| t.from_nm = 700.0, "swap"),
            (|t| t.step_nm = 0.0, "step_nm"),
            (|t| t.goal = 5.0, "goal"),
            (|t| t.tolerance = -0.1, "tolerance"),
            (|t| t.weight = f64::NAN, "weight"),
            (|t| t.step_nm = 1e-6, "larger step"),
        ];
        for (edit, fragment) in cases {
            let mut d = sample();
            let mut t = target();
            edit(&mut t);
            d.targets = vec![target(), t];
            let e = d.validate().unwrap_err().to_string();
            assert!(e.starts_with("target 2: ") && e.contains(fragment), "{e}");
        }
        // A single wavelength needs no step.
        let mut t = target();
        t.to_nm = t.from_nm;
        t.step_nm = 0.0;
        assert_eq!(t.wavelengths_nm(), vec![500.0], "single wavelength");
        d.targets = vec![t];
        d.validate().unwrap();
    }

    #[test]
    fn target_wavelengths_include_the_end() {
        let t = target();
        let w = t.wavelengths_nm();
        assert_eq!(w.len(), 11, "500..=600 step 10");
        approx::assert_relative_eq!(w[10], 600.0, epsilon = 1e-9);
    }
}
