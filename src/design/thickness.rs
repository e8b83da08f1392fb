//! Thickness conversions at the reference wavelength λref.
//!
//! With n = Re N(λref) of the layer's material and d its physical thickness:
//! optical thickness = n·d (nm), QWOT (number of quarter waves) = 4·n·d/λref, so a QWOT of 1
//! is a quarter-wave layer, d = λref/(4n).

use crate::material::Catalog;

use super::{Design, DesignError, Layer, Nm};

/// n = Re N(λref) of `material`, the index the quarter-wave helpers use. `place` names where
/// the material is used (e.g. `layer 3`) for the error message.
pub fn reference_index(
    catalog: &Catalog<'_>,
    material: &str,
    reference_nm: f64,
    place: &str,
) -> Result<f64, DesignError> {
    if !(reference_nm.is_finite() && reference_nm > 0.0) {
        return Err(DesignError::BadReference {
            value_nm: reference_nm,
        });
    }
    let err = |source| DesignError::Material {
        place: place.to_owned(),
        source,
    };
    let m = catalog.get(material).map_err(err)?;
    Ok(m.index_at(reference_nm).map_err(err)?.re)
}

/// The layer's optical thickness n·d (nm) at the reference wavelength.
///
/// ```
/// use stackwise::design::{optical_nm, Layer, Nm};
/// use stackwise::material::{Catalog, Material, Model};
/// let mats = [Material::user("L", Model::Constant { n: 1.5, k: 0.0 })];
/// let l = Layer::new("L", Nm::new(100.0)?);
/// assert_eq!(optical_nm(&l, &Catalog::new(&mats), 550.0)?, 150.0);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn optical_nm(
    layer: &Layer,
    catalog: &Catalog<'_>,
    reference_nm: f64,
) -> Result<f64, DesignError> {
    let n = reference_index(catalog, &layer.material, reference_nm, &layer.material)?;
    Ok(n * layer.nm.get())
}

/// The layer's thickness in quarter waves at the reference wavelength, 4·n·d/λref.
///
/// ```
/// use stackwise::design::{qwot, Layer, Nm};
/// use stackwise::material::{Catalog, Material, Model};
/// let mats = [Material::user("H", Model::Constant { n: 2.0, k: 0.0 })];
/// let l = Layer::new("H", Nm::new(68.75)?); // 550 / (4 · 2)
/// assert_eq!(qwot(&l, &Catalog::new(&mats), 550.0)?, 1.0);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn qwot(layer: &Layer, catalog: &Catalog<'_>, reference_nm: f64) -> Result<f64, DesignError> {
    Ok(4.0 * optical_nm(layer, catalog, reference_nm)? / reference_nm)
}

/// The physical thickness of `qwot` quarter waves of `material` at the reference wavelength,
/// d = qwot·λref/(4n).
pub fn nm_from_qwot(
    material: &str,
    qwot: f64,
    catalog: &Catalog<'_>,
    reference_nm: f64,
) -> Result<Nm, DesignError> {
    if !(qwot.is_finite() && qwot >= 0.0) {
        return Err(DesignError::BadThickness {
            what: "QWOT",
            value: qwot,
        });
    }
    let n = reference_index(catalog, material, reference_nm, material)?;
    to_nm(qwot * reference_nm / (4.0 * n), "QWOT", qwot)
}

/// The physical thickness giving an optical thickness n·d of `optical_nm` at the reference
/// wavelength, d = optical/n.
pub fn nm_from_optical(
    material: &str,
    optical_nm: f64,
    catalog: &Catalog<'_>,
    reference_nm: f64,
) -> Result<Nm, DesignError> {
    if !(optical_nm.is_finite() && optical_nm >= 0.0) {
        return Err(DesignError::BadThickness {
            what: "optical thickness",
            value: optical_nm,
        });
    }
    let n = reference_index(catalog, material, reference_nm, material)?;
    to_nm(optical_nm / n, "optical thickness", optical_nm)
}

fn to_nm(d: f64, what: &'static str, value: f64) -> Result<Nm, DesignError> {
    // n > 0 is guaranteed by `Material::index_at`, so d is only non-finite on overflow.
    Nm::new(d).map_err(|_| DesignError::BadThickness { what, value })
}

impl Design {
    fn layer(&self, layer_no: usize) -> Result<&Layer, DesignError> {
        layer_no
            .checked_sub(1)
            .and_then(|i| self.layers.get(i))
            .ok_or(DesignError::NoSuchLayer {
                layer: layer_no,
                count: self.layers.len(),
            })
    }

    /// QWOT of layer `layer_no` (1-based, substrate side first) at this design's reference
    /// wavelength.
    pub fn layer_qwot(&self, layer_no: usize) -> Result<f64, DesignError> {
        let layer = self.layer(layer_no)?;
        let n = self.layer_index(layer_no, layer)?;
        Ok(4.0 * n * layer.nm.get() / self.reference_nm)
    }

    /// Optical thickness n·d (nm) of layer `layer_no` (1-based) at the reference wavelength.
    pub fn layer_optical_nm(&self, layer_no: usize) -> Result<f64, DesignError> {
        let layer = self.layer(layer_no)?;
        Ok(self.layer_index(layer_no, layer)? * layer.nm.get())
    }

    /// Sets layer `layer_no` (1-based) to `qwot` quarter waves at the reference wavelength.
    pub fn set_layer_qwot(&mut self, layer_no: usize, qwot: f64) -> Result<(), DesignError> {
        if !(qwot.is_finite() && qwot >= 0.0) {
            return Err(DesignError::BadThickness {
                what: "QWOT",
                value: qwot,
            });
        }
        let layer = self.layer(layer_no)?;
        let n = self.layer_index(layer_no, layer)?;
        let nm = to_nm(qwot * self.reference_nm / (4.0 * n), "QWOT", qwot)?;
        self.layers[layer_no - 1].nm = nm;
        Ok(())
    }

    /// Sets layer `layer_no` (1-based) to an optical thickness n·d of `optical_nm`.
    pub fn set_layer_optical_nm(
        &mut self,
        layer_no: usize,
        optical_nm: f64,
    ) -> Result<(), DesignError> {
        if !(optical_nm.is_finite() && optical_nm >= 0.0) {
            return Err(DesignError::BadThickness {
                what: "optical thickness",
                value: optical_nm,
            });
        }
        let layer = self.layer(layer_no)?;
        let n = self.layer_index(layer_no, layer)?;
        let nm = to_nm(optical_nm / n, "optical thickness", optical_nm)?;
        self.layers[layer_no - 1].nm = nm;
        Ok(())
    }

    fn layer_index(&self, layer_no: usize, layer: &Layer) -> Result<f64, DesignError> {
        reference_index(
            &Catalog::new(&self.materials),
            &layer.material,
            self.reference_nm,
            &format!("layer {layer_no}"),
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::material::{Material, Model};
    use approx::assert_relative_eq;

    fn design() -> Design {
        let mut d = Design::new_empty("t");
        d.materials = vec![
            Material::user("L", Model::Constant { n: 1.38, k: 0.0 }),
            // A Cauchy with b ≠ 0 checks that the index is taken at λref.
            Material::user(
                "C",
                Model::Cauchy {
                    a: 2.0,
                    b: 0.030_25,
                    c: 0.0,
                },
            ),
        ];
        d.layers = vec![Layer::new("L", Nm::ZERO), Layer::new("C", Nm::ZERO)];
        d
    }

    #[test]
    fn quarter_wave_of_mgf2_like_layer() {
        // d = λ0/(4n) = 550/(4·1.38) = 99.637681… nm (quarter-wave condition).
        let mut d = design();
        d.set_layer_qwot(1, 1.0).unwrap();
        assert_relative_eq!(d.layers[0].nm.get(), 99.637_681_159_420_3, epsilon = 1e-9);
        assert_relative_eq!(d.layer_qwot(1).unwrap(), 1.0, epsilon = 1e-12);
        assert_relative_eq!(d.layer_optical_nm(1).unwrap(), 137.5, epsilon = 1e-9);
    }

    #[test]
    fn uses_the_index_at_the_reference_wavelength() {
        // Cauchy n = 2 + 0.03025/0.55² = 2 + 0.1 = 2.1 at 550 nm; half wave: 550/(2·2.1).
        let mut d = design();
        d.set_layer_qwot(2, 2.0).unwrap();
        assert_relative_eq!(d.layers[1].nm.get(), 550.0 / 4.2, epsilon = 1e-9);
        d.set_layer_optical_nm(2, 210.0).unwrap();
        assert_relative_eq!(d.layers[1].nm.get(), 100.0, epsilon = 1e-9);
    }

    #[test]
    fn bad_requests_are_errors() {
        let mut d = design();
        let e = d.set_layer_qwot(3, 1.0).unwrap_err().to_string();
        assert!(e.contains("no layer 3") && e.contains("2 layer"), "{e}");
        assert!(d.layer_qwot(0).is_err(), "layer numbers start at 1");
        let e = d.set_layer_qwot(1, -1.0).unwrap_err().to_string();
        assert!(e.contains("QWOT") && e.contains("-1"), "{e}");
        d.layers[0].material = "Nope".into();
        let e = d.layer_qwot(1).unwrap_err().to_string();
        assert!(e.starts_with("layer 1: unknown material \"Nope\""), "{e}");
        let cat = Catalog::new(&d.materials);
        assert!(
            nm_from_optical("L", f64::NAN, &cat, 550.0).is_err(),
            "NaN rejected"
        );
        assert!(
            nm_from_qwot("L", 1.0, &cat, 0.0).is_err(),
            "bad reference rejected"
        );
        assert!(
            nm_from_qwot("L", 1e308, &cat, 550.0).is_err(),
            "overflow rejected"
        );
    }
}
