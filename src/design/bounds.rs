//! The physical range of every number in a design. A value outside it cannot be a coating
//! (a 1e308 nm layer, an index of 1e-300) and would only turn into infinities or NaN inside the
//! solver, so [`Design::validate`](super::Design::validate) refuses it with the field's name.
//! The ranges are listed in the file-format section of DEVELOPERS.md.

use crate::material::{MAX_K, MAX_N, MIN_N, Material, Model};
use crate::number::Short;

use super::{Design, DesignError, Target};

/// Shortest wavelength (nm) a design may mention: reference, table rows, ranges, targets.
pub const MIN_WAVELENGTH_NM: f64 = 1.0;
/// Longest wavelength (nm) a design may mention (1 mm, far infrared).
pub const MAX_WAVELENGTH_NM: f64 = 1e6;
/// Thickest layer (nm): 1 mm.
pub const MAX_LAYER_NM: f64 = 1e6;
/// Thickest substrate (mm): 1 m.
pub const MAX_SUBSTRATE_MM: f64 = 1000.0;
/// Largest |b| (µm²) and |c| (µm⁴) of a Cauchy formula.
pub const MAX_CAUCHY_TERM: f64 = 100.0;
/// Largest |a| and |b_i| of a Sellmeier or rational formula.
pub const MAX_STRENGTH: f64 = 1e4;
/// Largest |c_i| (µm²) of a Sellmeier or rational formula: a resonance at 1 mm.
pub const MAX_POLE_UM2: f64 = 1e6;
/// Largest |value| of a Lorentz–Drude parameter (eV or dimensionless).
pub const MAX_DRUDE: f64 = 1000.0;
/// Largest target weight.
pub const MAX_WEIGHT: f64 = 1e6;

/// Checks `value` against `lo..=hi`, naming the field and the range.
fn within(field: &str, value: f64, lo: f64, hi: f64) -> Result<(), String> {
    if value.is_finite() && (lo..=hi).contains(&value) {
        Ok(())
    } else {
        Err(format!(
            "{field} is {}, outside the physical range {} to {}",
            Short(value),
            Short(lo),
            Short(hi)
        ))
    }
}

fn wavelength(field: &str, value: f64) -> Result<(), String> {
    within(field, value, MIN_WAVELENGTH_NM, MAX_WAVELENGTH_NM)
}

fn index(field: &str, n: f64, k: f64) -> Result<(), String> {
    within(&format!("{field} n"), n, MIN_N, MAX_N)?;
    within(&format!("{field} k"), k, 0.0, MAX_K)
}

fn model(m: &Model) -> Result<(), String> {
    match m {
        Model::Constant { n, k } => index("constant", *n, *k),
        Model::Cauchy { a, b, c } => {
            within("Cauchy a", *a, MIN_N, MAX_N)?;
            within("Cauchy b", *b, -MAX_CAUCHY_TERM, MAX_CAUCHY_TERM)?;
            within("Cauchy c", *c, -MAX_CAUCHY_TERM, MAX_CAUCHY_TERM)
        }
        Model::Sellmeier { a, b, c } | Model::Rational { a, b, c } => {
            let kind = m.kind_name();
            within(&format!("{kind} a"), *a, -MAX_STRENGTH, MAX_STRENGTH)?;
            for (i, (b, c)) in b.iter().zip(c).enumerate() {
                let term = i + 1;
                within(&format!("{kind} b{term}"), *b, -MAX_STRENGTH, MAX_STRENGTH)?;
                within(&format!("{kind} c{term}"), *c, -MAX_POLE_UM2, MAX_POLE_UM2)?;
            }
            Ok(())
        }
        Model::Table { rows } => {
            for (i, &(wl, n, k)) in rows.iter().enumerate() {
                let row = format!("table row {}", i + 1);
                wavelength(&format!("{row} wavelength (nm)"), wl)?;
                index(&row, n, k)?;
            }
            Ok(())
        }
        Model::WithK { n, k } => {
            model(n)?;
            for (i, &(wl, k)) in k.iter().enumerate() {
                let row = format!("k table row {}", i + 1);
                wavelength(&format!("{row} wavelength (nm)"), wl)?;
                within(&format!("{row} k"), k, 0.0, MAX_K)?;
            }
            Ok(())
        }
        Model::LorentzDrude {
            plasma_ev,
            f0,
            gamma0_ev,
            oscillators,
        } => {
            let d = |f: &str, x: f64| within(f, x, -MAX_DRUDE, MAX_DRUDE);
            d("Lorentz-Drude plasma_ev", *plasma_ev)?;
            d("Lorentz-Drude f0", *f0)?;
            d("Lorentz-Drude gamma0_ev", *gamma0_ev)?;
            for (i, o) in oscillators.iter().enumerate() {
                let at = i + 1;
                d(&format!("oscillator {at} f"), o.f)?;
                d(&format!("oscillator {at} gamma_ev"), o.gamma_ev)?;
                d(&format!("oscillator {at} omega_ev"), o.omega_ev)?;
            }
            Ok(())
        }
    }
}

fn material(m: &Material) -> Result<(), String> {
    if let Some((lo, hi)) = m.range_nm {
        wavelength("range_nm start", lo)?;
        wavelength("range_nm end", hi)?;
    }
    model(&m.model)
}

fn target(t: &Target) -> Result<(), String> {
    wavelength("from_nm", t.from_nm)?;
    wavelength("to_nm", t.to_nm)?;
    within("weight", t.weight, 0.0, MAX_WEIGHT)
}

/// Refuses any number of `d` outside its physical range, naming the field (and the layer,
/// material or target it belongs to).
pub(super) fn check(d: &Design) -> Result<(), DesignError> {
    let out = |what: String| DesignError::OutOfRange { what };
    wavelength("reference_nm", d.reference_nm).map_err(out)?;
    if let Some(mm) = d.substrate_mm {
        within("substrate_mm", mm, f64::MIN_POSITIVE, MAX_SUBSTRATE_MM).map_err(out)?;
    }
    for face in [super::Face::Front, super::Face::Back] {
        for (i, layer) in d.face_layers(face).iter().enumerate() {
            within(
                &format!("{} {} nm", face.layer_word(), i + 1),
                layer.nm.get(),
                0.0,
                MAX_LAYER_NM,
            )
            .map_err(out)?;
        }
    }
    for (i, m) in d.materials.iter().enumerate() {
        material(m).map_err(|what| DesignError::OutOfRange {
            what: format!("materials list, entry {} ({:?}): {what}", i + 1, m.name),
        })?;
    }
    for (i, t) in d.targets.iter().enumerate() {
        target(t).map_err(|what| DesignError::OutOfRange {
            what: format!("target {}: {what}", i + 1),
        })?;
    }
    Ok(())
}
