//! Wavelength units: the ones a header names, and the choice between nm and µm.

use std::fmt;

/// Wavelengths at or above this value are taken as nanometres when the unit is guessed; a
/// table whose wavelengths are all below it is taken as micrometres.
pub const GUESS_UM_BELOW: f64 = 50.0;

/// The unit of a wavelength column.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
pub enum WavelengthUnit {
    /// Read it from the header, else guess from the values.
    #[default]
    Auto,
    /// Nanometres.
    Nm,
    /// Micrometres.
    Um,
}

impl fmt::Display for WavelengthUnit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            WavelengthUnit::Auto => "auto",
            WavelengthUnit::Nm => "nm",
            WavelengthUnit::Um => "µm",
        })
    }
}

/// The unit a header or comment names, if it names exactly one ("nm", "µm", "um", "micron",
/// … as whole words).
#[must_use]
pub fn unit_in_header(text: &str) -> Option<WavelengthUnit> {
    let lower = text.to_lowercase();
    let mut nm = false;
    let mut um = false;
    for word in lower.split(|c: char| !c.is_alphanumeric()) {
        match word {
            "nm" | "nanometer" | "nanometers" | "nanometre" | "nanometres" => nm = true,
            "um" | "µm" | "μm" | "micron" | "microns" | "micrometer" | "micrometers"
            | "micrometre" | "micrometres" => um = true,
            _ => {}
        }
    }
    match (nm, um) {
        (true, false) => Some(WavelengthUnit::Nm),
        (false, true) => Some(WavelengthUnit::Um),
        _ => None,
    }
}

/// The wavelength unit to use, and whether it was guessed from the size of the numbers; adds
/// a note on how it was chosen. `unit` chosen by the caller wins (with a note when the values
/// look like the other unit), then a unit the header names, then the values: all below
/// [`GUESS_UM_BELOW`] → µm, else nm.
pub fn choose_unit(
    unit: WavelengthUnit,
    header: &str,
    wavelengths: impl IntoIterator<Item = f64>,
    notes: &mut Vec<String>,
) -> (WavelengthUnit, bool) {
    let all_small = wavelengths.into_iter().all(|w| w < GUESS_UM_BELOW);
    let magnitude_guess = if all_small {
        WavelengthUnit::Um
    } else {
        WavelengthUnit::Nm
    };
    if unit != WavelengthUnit::Auto {
        notes.push(format!("wavelengths in {unit}, as chosen"));
        if unit != magnitude_guess {
            notes.push(format!(
                "the wavelength values look like {magnitude_guess} rather than {unit}; \
                 check the unit"
            ));
        }
        return (unit, false);
    }
    if let Some(u) = unit_in_header(header) {
        notes.push(format!("wavelengths in {u}, as the header says"));
        return (u, false);
    }
    notes.push(if all_small {
        format!(
            "wavelengths read as µm because all are below {GUESS_UM_BELOW}; \
             choose nm if that is wrong"
        )
    } else {
        format!(
            "wavelengths read as nm because some are {GUESS_UM_BELOW} or more; \
             choose µm if that is wrong"
        )
    });
    (magnitude_guess, true)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn choose_unit_in_order_of_authority() {
        let mut notes = Vec::new();
        let (u, guessed) = choose_unit(WavelengthUnit::Um, "nm", [400.0], &mut notes);
        assert_eq!((u, guessed), (WavelengthUnit::Um, false), "the caller wins");
        assert!(
            notes.iter().any(|n| n.contains("check the unit")),
            "{notes:?}"
        );
        let (u, guessed) = choose_unit(WavelengthUnit::Auto, "λ in µm", [400.0], &mut notes);
        assert_eq!((u, guessed), (WavelengthUnit::Um, false), "then the header");
        let (u, guessed) = choose_unit(WavelengthUnit::Auto, "", [0.4, 49.9], &mut notes);
        assert_eq!((u, guessed), (WavelengthUnit::Um, true), "then the values");
        let (u, _) = choose_unit(WavelengthUnit::Auto, "", [0.4, 50.0], &mut notes);
        assert_eq!(u, WavelengthUnit::Nm, "50 or more is nm");
    }
}
