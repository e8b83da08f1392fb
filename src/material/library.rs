//! The built-in materials library.
//!
//! Closed-form materials carry their published coefficients as decimals. Tabulated data sets
//! live in `assets/materials/*.csv` (written by `tools/extract_materials.py`), are compiled in
//! with `include_str!` and parsed once, on first use.

use std::sync::OnceLock;

use super::{EV_UM, Material, MaterialError, Model, Oscillator};
use crate::table::{Layout, TableError, WavelengthUnit, read_text_table, unit_in_header};

/// Every built-in material, in display order.
///
/// An entry whose shipped data cannot be read is left out (and logged); the library's tests
/// load every entry, so that cannot happen in a released build.
#[must_use]
pub fn builtin() -> &'static [Material] {
    static LIB: OnceLock<Vec<Material>> = OnceLock::new();
    LIB.get_or_init(|| {
        entries()
            .into_iter()
            .filter_map(|m| match m.and_then(|m| m.validate().map(|()| m)) {
                Ok(m) => Some(m),
                Err(e) => {
                    log::error!("built-in material left out: {e}");
                    None
                }
            })
            .collect()
    })
}

/// The built-in material called `name` (exact match).
#[must_use]
pub fn find_builtin(name: &str) -> Option<&'static Material> {
    builtin().iter().find(|m| m.name == name)
}

/// Tabulated data shipped with the program: (file name, contents).
mod data {
    macro_rules! asset {
        ($file:literal) => {
            (
                $file,
                include_str!(concat!(
                    env!("CARGO_MANIFEST_DIR"),
                    "/assets/materials/",
                    $file
                )),
            )
        };
    }
    pub(super) type Asset = (&'static str, &'static str);
    pub(super) const SIO2_FILM: Asset = asset!("sio2_film_gao2013.csv");
    pub(super) const TIO2_FILM: Asset = asset!("tio2_film_franta2015.csv");
    pub(super) const TA2O5_FILM: Asset = asset!("ta2o5_film_gao2012.csv");
    pub(super) const NB2O5_FILM: Asset = asset!("nb2o5_film_lemarchand2013.csv");
    pub(super) const HFO2_FILM: Asset = asset!("hfo2_film_franta2015.csv");
    pub(super) const AL2O3_FILM: Asset = asset!("al2o3_film_franta2015.csv");
    pub(super) const MGF2_FILM: Asset = asset!("mgf2_film_franta2017.csv");
    pub(super) const GE_FILM: Asset = asset!("ge_film_amotchkina2020.csv");
    pub(super) const SI_GREEN: Asset = asset!("si_green2008.csv");
    pub(super) const NBK7_K: Asset = asset!("n-bk7_k_schott.csv");
    pub(super) const ZNS_FILM_K: Asset = asset!("zns_film_k_amotchkina2020.csv");
}

/// Attribution for every tabulated data set (the database they were taken from).
const DATABASE: &str = "Data via the refractiveindex.info database (CC0): M. N. Polyanskiy, \
     Sci. Data 11, 94 (2024), doi:10.1038/s41597-023-02898-2";

/// Squares a published resonance wavelength (µm) into the µm² our formulas take.
const fn sq(x: f64) -> f64 {
    x * x
}

/// Sellmeier with resonance wavelengths `C_i` given in µm (they are squared here).
fn sellmeier_um(b: &[f64], c_um: &[f64]) -> Model {
    Model::Sellmeier {
        a: 0.0,
        b: b.to_vec(),
        c: c_um.iter().map(|&c| sq(c)).collect(),
    }
}

/// Sellmeier with `C_i` already in µm².
fn sellmeier_um2(a: f64, b: &[f64], c: &[f64]) -> Model {
    Model::Sellmeier {
        a,
        b: b.to_vec(),
        c: c.to_vec(),
    }
}

/// Reads the numeric rows of a shipped CSV through the program's table reader: every row
/// must have `columns.len()` numbers, wavelengths rising in the unit the column header names
/// (`wavelength_nm` or `wavelength_um`).
fn parse_rows(
    name: &str,
    (file, text): data::Asset,
    columns: &'static [&'static str],
) -> Result<Vec<Vec<f64>>, MaterialError> {
    let bad = |what: String| MaterialError::BadModel {
        name: name.to_owned(),
        what,
    };
    let layout = Layout {
        columns,
        min_columns: columns.len(),
    };
    let table = read_text_table(text, &layout, |_| Ok::<_, TableError>(()))
        .map_err(|e| bad(format!("{file}: {e}")))?;
    // The column header (the line just above the data) names the unit; the comments above
    // it may name both units in their prose.
    let columns_line = table.header.lines().last().unwrap_or_default();
    let Some(unit) = unit_in_header(columns_line) else {
        return Err(bad(format!(
            "{file}: the column header {columns_line:?} names no wavelength unit; \
             write wavelength_nm or wavelength_um"
        )));
    };
    let scale = if unit == WavelengthUnit::Um {
        1000.0
    } else {
        1.0
    };
    Ok(table
        .rows
        .into_iter()
        .map(|mut r| {
            r.values[0] *= scale;
            r.values
        })
        .collect())
}

/// A (wavelength nm, n, k) table from a shipped CSV.
fn nk_table(name: &str, asset: data::Asset) -> Result<Model, MaterialError> {
    let rows = parse_rows(name, asset, &["wavelength", "n", "k"])?;
    Ok(Model::Table {
        rows: rows.into_iter().map(|r| (r[0], r[1], r[2])).collect(),
    })
}

/// A (wavelength nm, k) table from a shipped CSV.
fn k_table(name: &str, asset: data::Asset) -> Result<Vec<(f64, f64)>, MaterialError> {
    Ok(parse_rows(name, asset, &["wavelength", "k"])?
        .into_iter()
        .map(|r| (r[0], r[1]))
        .collect())
}

/// A material whose valid range is that of its table.
fn tabulated(name: &str, asset: data::Asset, source: &str) -> Result<Material, MaterialError> {
    let model = nk_table(name, asset)?;
    let range_nm = model.table_span_nm();
    Ok(Material {
        name: name.to_owned(),
        model,
        range_nm,
        source: format!("{source}. {DATABASE}"),
    })
}

fn formula(name: &str, model: Model, range_nm: (f64, f64), source: &str) -> Material {
    Material {
        name: name.to_owned(),
        model,
        range_nm: Some(range_nm),
        source: source.to_owned(),
    }
}

/// Lorentz–Drude metal; its valid range is given as photon energies (eV).
fn metal(
    name: &str,
    (plasma_ev, f0, gamma0_ev): (f64, f64, f64),
    osc: &[(f64, f64, f64)],
    (lo_ev, hi_ev): (f64, f64),
) -> Material {
    let oscillators = osc
        .iter()
        .map(|&(f, gamma_ev, omega_ev)| Oscillator {
            f,
            gamma_ev,
            omega_ev,
        })
        .collect();
    Material {
        name: name.to_owned(),
        model: Model::LorentzDrude {
            plasma_ev,
            f0,
            gamma0_ev,
            oscillators,
        },
        range_nm: Some((EV_UM * 1e3 / hi_ev, EV_UM * 1e3 / lo_ev)),
        source: format!(
            "Lorentz-Drude parameters: A. D. Rakić, A. B. Djurišić, J. M. Elazar, \
             M. L. Majewski, Appl. Opt. 37, 5271-5283 (1998), doi:10.1364/AO.37.005271 \
             (range {lo_ev}-{hi_ev} eV as tabulated from these parameters)"
        ),
    }
}

const MALITSON_DODGE_1972: &str = "I. H. Malitson, M. J. Dodge, J. Opt. Soc. Am. 62, 1405 \
     (1972); formula in M. J. Dodge, \"Refractive index\", Handbook of Laser Science and \
     Technology Vol. IV, Part 2, CRC Press (1986), p. 30";
const FRANTA_2015: &str = "D. Franta, D. Nečas, I. Ohlídal, A. Giglia, Proc. SPIE 9628, \
     96281U (2015), doi:10.1117/12.2190104";
const AMOTCHKINA_2020: &str = "T. Amotchkina, M. Trubetskov, D. Hahner, V. Pervak, Appl. Opt. \
     59, A40-A47 (2020), doi:10.1364/AO.59.000A40";

/// Every entry of the library, or the error that kept a shipped data set from loading.
#[expect(
    clippy::too_many_lines,
    reason = "one flat list of data is easiest to review"
)]
fn entries() -> Vec<Result<Material, MaterialError>> {
    vec![
        Ok(Material {
            name: "Air".into(),
            model: Model::Constant { n: 1.0, k: 0.0 },
            range_nm: None,
            source: "n = 1 (vacuum value; air's 1.0003 is neglected, common practice)".into(),
        }),
        // Substrates and crystals.
        Ok(formula(
            "Fused silica",
            sellmeier_um(
                &[0.696_166_3, 0.407_942_6, 0.897_479_4],
                &[0.068_404_3, 0.116_241_4, 9.896_161],
            ),
            (210.0, 6700.0),
            "I. H. Malitson, J. Opt. Soc. Am. 55, 1205 (1965), doi:10.1364/JOSA.55.001205; \
             range beyond 3.71 µm validated by C. Z. Tan, J. Non-Cryst. Solids 223, 158 (1998)",
        )),
        k_table("N-BK7", data::NBK7_K).map(|k| {
            formula(
                "N-BK7",
                Model::WithK {
                    n: Box::new(sellmeier_um2(
                        0.0,
                        &[1.039_612_12, 0.231_792_344, 1.010_469_45],
                        &[0.006_000_698_67, 0.020_017_914_4, 103.560_653],
                    )),
                    k,
                },
                (300.0, 2500.0),
                &format!(
                    "SCHOTT AG, N-BK7 optical glass data sheet / catalogue (2017-01-20); \
                     k from internal transmittance. {DATABASE}"
                ),
            )
        }),
        Ok(formula(
            "Sapphire",
            sellmeier_um(
                &[1.431_349_3, 0.650_547_13, 5.341_402_1],
                &[0.072_663_1, 0.119_324_2, 18.028_251],
            ),
            (200.0, 5000.0),
            &format!("Ordinary ray, 20 °C. {MALITSON_DODGE_1972}"),
        )),
        Ok(formula(
            "Sapphire (e)",
            sellmeier_um(
                &[1.503_975_9, 0.550_691_41, 6.592_737_9],
                &[0.074_028_8, 0.121_652_9, 20.072_248],
            ),
            (200.0, 5000.0),
            &format!("Extraordinary ray, 20 °C. {MALITSON_DODGE_1972}"),
        )),
        Ok(formula(
            "CaF2",
            sellmeier_um(
                &[0.567_588_8, 0.471_091_4, 3.848_472_3],
                &[0.050_263_605, 0.100_390_9, 34.649_040],
            ),
            (230.0, 9700.0),
            "24 °C. I. H. Malitson, Appl. Opt. 2, 1103 (1963), doi:10.1364/AO.2.001103",
        )),
        Ok(formula(
            "MgF2",
            sellmeier_um(
                &[0.487_551_08, 0.398_750_31, 2.312_035_3],
                &[0.043_384_08, 0.094_614_42, 23.793_604],
            ),
            (200.0, 7000.0),
            "Ordinary ray, 19 °C. M. J. Dodge, Appl. Opt. 23, 1980 (1984), \
             doi:10.1364/AO.23.001980",
        )),
        Ok(formula(
            "TiO2 (rutile)",
            Model::Rational {
                a: 5.913,
                b: vec![0.2441],
                c: vec![0.0803],
            },
            (430.0, 1530.0),
            "Rutile crystal, ordinary ray. J. R. Devore, J. Opt. Soc. Am. 41, 416 (1951), \
             doi:10.1364/JOSA.41.000416",
        )),
        Ok(formula(
            "ZnS (bulk)",
            Model::Rational {
                a: 8.393,
                b: vec![0.143_83, 4430.99],
                c: vec![sq(0.2421), sq(36.71)],
            },
            (405.0, 13000.0),
            "Cubic CVD ZnS, 20 °C. Data: M. Debenham, Appl. Opt. 23, 2238 (1984), \
             doi:10.1364/AO.23.002238; equation: C. A. Klein, Appl. Opt. 25, 1873 (1986), \
             doi:10.1364/AO.25.001873",
        )),
        Ok(formula(
            "ZnSe",
            sellmeier_um(
                &[4.458_137_34, 0.467_216_334, 2.895_662_90],
                &[0.200_859_853, 0.391_371_166, 47.136_210_8],
            ),
            (540.0, 18200.0),
            "CVD ZnSe, 23 °C. Data: J. Connolly, B. diBenedetto, R. Donadio, Proc. SPIE 181, \
             141 (1979); fit: B. Tatian, Appl. Opt. 23, 4477 (1984), \
             doi:10.1364/AO.23.004477",
        )),
        Ok(formula(
            "Ge",
            sellmeier_um2(
                0.0,
                &[0.488_633_1, 14.514_253_5, 0.009_122_4],
                &[1.393_959, 0.162_642_7, 752.190],
            ),
            (2000.0, 14000.0),
            "Bulk, 295 K. J. H. Burnett, S. G. Kaplan, E. Stover, A. Phenis, Proc. SPIE 9974, \
             99740X (2016), doi:10.1117/12.2237978",
        )),
        tabulated(
            "Ge (film)",
            data::GE_FILM,
            &format!("E-beam evaporated film (absorbing in the visible). {AMOTCHKINA_2020}"),
        ),
        tabulated(
            "Si",
            data::SI_GREEN,
            "Crystalline, intrinsic, 300 K. M. A. Green, Sol. Energy Mater. Sol. Cells 92, \
             1305-1310 (2008), doi:10.1016/j.solmat.2008.06.009",
        ),
        Ok(formula(
            "Si (IR)",
            sellmeier_um(
                &[10.668_429_3, 0.003_043_474_8, 1.541_334_08],
                &[0.301_516_485, 1.134_751_15, 1104.0],
            ),
            (1357.0, 11040.0),
            "Bulk, 26 °C. Data: C. D. Salzberg, J. J. Villa, J. Opt. Soc. Am. 47, 244 \
             (1957); fit: B. Tatian, Appl. Opt. 23, 4477 \
             (1984), doi:10.1364/AO.23.004477",
        )),
        // Thin films.
        tabulated(
            "SiO2",
            data::SIO2_FILM,
            "Film, ion-assisted e-beam deposition. L. Gao, F. Lemarchand, M. Lequime, J. Eur. \
             Opt. Soc. Rapid Publ. 8, 13010 (2013), doi:10.2971/jeos.2013.13010",
        ),
        tabulated(
            "MgF2 (film)",
            data::MGF2_FILM,
            "E-beam evaporated film (table trimmed to 0.2-20 µm). D. Franta, D. Nečas, \
             A. Giglia, P. Franta, I. Ohlídal, Appl. Surf. Sci. 421, 424-429 (2017), \
             doi:10.1016/j.apsusc.2016.09.149",
        ),
        tabulated(
            "Al2O3",
            data::AL2O3_FILM,
            &format!("E-beam evaporated film. {FRANTA_2015}"),
        ),
        tabulated(
            "TiO2",
            data::TIO2_FILM,
            &format!("E-beam evaporated film. {FRANTA_2015}"),
        ),
        tabulated(
            "Ta2O5",
            data::TA2O5_FILM,
            "Film, ion-assisted e-beam deposition. L. Gao, F. Lemarchand, M. Lequime, Opt. \
             Express 20, 15734-15751 (2012), doi:10.1364/OE.20.015734",
        ),
        tabulated(
            "Nb2O5",
            data::NB2O5_FILM,
            "Sputtered film. F. Lemarchand, private communication (2013); method: L. Gao, \
             F. Lemarchand, M. Lequime, Opt. Express 20, 15734-15751 (2012), \
             doi:10.1364/OE.20.015734",
        ),
        tabulated(
            "HfO2",
            data::HFO2_FILM,
            "E-beam evaporated film (table trimmed to 0.2-20 µm). D. Franta, D. Nečas, \
             I. Ohlídal, Appl. Opt. 54, 9108-9119 (2015), doi:10.1364/AO.54.009108",
        ),
        Ok(formula(
            "HfO2 (Cauchy)",
            Model::Cauchy {
                a: 1.875,
                b: 6.28e-3,
                c: 5.80e-4,
            },
            (200.0, 2000.0),
            "E-beam evaporated film. M. F. Al-Kuhaili, Opt. Mater. 27, 383 (2004), \
             doi:10.1016/j.optmat.2004.04.014",
        )),
        k_table("ZnS", data::ZNS_FILM_K).map(|k| {
            formula(
                "ZnS",
                Model::WithK {
                    n: Box::new(sellmeier_um2(
                        0.010_356,
                        &[3.619_092, 0.508_130, 2.219_955],
                        &[0.023_453_64, 0.099_946, 1148.729],
                    )),
                    k,
                },
                (400.0, 14000.0),
                &format!(
                    "E-beam evaporated film, 120 °C; n formula 0.4-14 µm, k table 0.4-1.0 µm. \
                     {AMOTCHKINA_2020}. {DATABASE}"
                ),
            )
        }),
        // Metals.
        Ok(metal(
            "Ag",
            (9.01, 0.845, 0.048),
            &[
                (0.065, 3.886, 0.816),
                (0.124, 0.452, 4.481),
                (0.011, 0.065, 8.185),
                (0.840, 0.916, 9.083),
                (5.646, 2.419, 20.29),
            ],
            (0.1, 5.0),
        )),
        Ok(metal(
            "Al",
            (14.98, 0.523, 0.047),
            &[
                (0.227, 0.333, 0.162),
                (0.050, 0.312, 1.544),
                (0.166, 1.351, 1.808),
                (0.030, 3.382, 3.473),
            ],
            (0.005, 20.0),
        )),
        Ok(metal(
            "Au",
            (9.03, 0.760, 0.053),
            &[
                (0.024, 0.241, 0.415),
                (0.010, 0.345, 0.830),
                (0.071, 0.870, 2.969),
                (0.601, 2.494, 4.304),
                (4.384, 2.214, 13.32),
            ],
            (0.2, 5.0),
        )),
        Ok(metal(
            "Cr",
            (10.75, 0.168, 0.047),
            &[
                (0.151, 3.175, 0.121),
                (0.150, 1.305, 0.543),
                (1.149, 2.676, 1.970),
                (0.825, 1.335, 8.775),
            ],
            (0.02, 5.0),
        )),
    ]
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::collections::HashSet;

    fn get(name: &str) -> &'static Material {
        find_builtin(name).unwrap_or_else(|| panic!("no built-in {name:?}"))
    }

    /// Asserts n (and k) of `name` at `nm` within `tol` of the published value.
    fn check(name: &str, nm: f64, n: f64, k: f64, tol: f64) {
        let got = get(name).index_at(nm).unwrap();
        assert!(
            (got.re - n).abs() <= tol,
            "{name} at {nm} nm: n = {} expected {n} ± {tol}",
            got.re
        );
        assert!(
            (got.im - k).abs() <= tol,
            "{name} at {nm} nm: k = {} expected {k} ± {tol}",
            got.im
        );
    }

    /// Asserts k of `name` at `nm` within `tol`.
    fn check_k(name: &str, nm: f64, k: f64, tol: f64) {
        let got = get(name).index_at(nm).unwrap().im;
        assert!(
            (got - k).abs() <= tol,
            "{name} at {nm} nm: k = {got} expected {k} ± {tol}"
        );
    }

    /// Asserts n of a model built from published coefficients (entries not shipped).
    fn check_model(what: &str, m: &Model, nm: f64, n: f64) {
        let got = m.index_at(nm).re;
        assert!(
            (got - n).abs() <= 1e-6,
            "{what} at {nm} nm: n = {got} expected {n}"
        );
    }

    #[test]
    fn every_builtin_loads_and_validates() {
        for e in entries() {
            let m = e.expect("shipped data must load");
            m.validate().expect("shipped data must validate");
        }
        assert_eq!(builtin().len(), entries().len(), "no entry may be left out");
    }

    #[test]
    fn names_are_unique() {
        let mut seen = HashSet::new();
        for m in builtin() {
            assert!(seen.insert(m.name.as_str()), "duplicate name {:?}", m.name);
        }
    }

    #[test]
    fn every_builtin_has_source_range_and_evaluates_inside_it() {
        for m in builtin() {
            assert!(!m.source.trim().is_empty(), "{}: empty source", m.name);
            if m.name == "Air" {
                continue;
            }
            let (lo, hi) = m.valid_range_nm();
            assert!(
                m.range_nm.is_some() && lo > 0.0 && hi.is_finite() && lo < hi,
                "{}",
                m.name
            );
            for t in [0.01, 0.5, 0.99] {
                let nm = lo + t * (hi - lo);
                let n = m.index_at(nm).unwrap_or_else(|e| panic!("{e}"));
                assert!(n.re > 0.0 && n.im >= 0.0, "{} at {nm} nm: {n}", m.name);
            }
        }
    }

    #[test]
    fn range_warning_fires_below_the_sio2_film_table() {
        // main/SiO2/Gao starts at 0.252 µm (materials.md §4.3).
        let m = get("SiO2");
        assert!(
            (m.valid_range_nm().0 - 252.0).abs() < 1e-9,
            "{:?}",
            m.valid_range_nm()
        );
        let w = m
            .range_warning(&[240.0, 400.0, 550.0])
            .expect("240 nm is below the data");
        assert!(
            (w.from_nm - 240.0).abs() < 1e-12 && (w.to_nm - 240.0).abs() < 1e-12,
            "{w}"
        );
        assert!(
            m.range_warning(&[400.0, 550.0]).is_none(),
            "inside the data: no warning"
        );
    }

    #[test]
    fn closed_form_check_values() {
        // materials.md §4.1 check values (computed from the published coefficients); the
        // reference prints 6 decimals, so 1e-6.
        let t = 1e-6;
        // Malitson 1965 (main/SiO2/Malitson); 1.458464 = n_d at 587.5618 nm.
        check("Fused silica", 400.0, 1.470_116, 0.0, t);
        check("Fused silica", 550.0, 1.459_911, 0.0, t);
        check("Fused silica", 1000.0, 1.450_417, 0.0, t);
        check("Fused silica", 587.5618, 1.458_464, 0.0, t);
        // SCHOTT N-BK7 (specs/SCHOTT-optical/N-BK7); 1.516800 = catalogue n_d.
        check("N-BK7", 400.0, 1.530_849, 1.023e-8, t);
        check("N-BK7", 550.0, 1.518_522, 7.235e-9, t);
        check("N-BK7", 1000.0, 1.507_502, 9.936e-9, t);
        check("N-BK7", 587.5618, 1.516_800, 0.0, t);
        // N-BK7 k table, printed to 4 digits (§4.1 N-BK7 row): half a unit of the last digit.
        check_k("N-BK7", 400.0, 1.023e-8, 5e-12);
        check_k("N-BK7", 550.0, 7.235e-9, 5e-12);
        check_k("N-BK7", 1000.0, 9.936e-9, 5e-12);
        // Malitson & Dodge 1972 ordinary (main/Al2O3/Malitson-o).
        check("Sapphire", 400.0, 1.786_521, 0.0, t);
        check("Sapphire", 550.0, 1.770_446, 0.0, t);
        check("Sapphire", 1000.0, 1.755_678, 0.0, t);
        // Malitson & Dodge 1972 extraordinary (main/Al2O3/Malitson-e).
        check("Sapphire (e)", 400.0, 1.778_066, 0.0, t);
        check("Sapphire (e)", 550.0, 1.762_325, 0.0, t);
        check("Sapphire (e)", 1000.0, 1.747_805, 0.0, t);
        // Dodge 1984 ordinary (main/MgF2/Dodge-o).
        check("MgF2", 400.0, 1.383_865, 0.0, t);
        check("MgF2", 550.0, 1.378_506, 0.0, t);
        check("MgF2", 1000.0, 1.373_583, 0.0, t);
        // Malitson 1963 (main/CaF2/Malitson).
        check("CaF2", 400.0, 1.441_854, 0.0, t);
        check("CaF2", 550.0, 1.434_826, 0.0, t);
        check("CaF2", 1000.0, 1.428_883, 0.0, t);
        // Devore 1951 ordinary (main/TiO2/Devore-o).
        check("TiO2 (rutile)", 450.0, 2.812_569, 0.0, t);
        check("TiO2 (rutile)", 550.0, 2.647_935, 0.0, t);
        check("TiO2 (rutile)", 1000.0, 2.485_641, 0.0, t);
        // Al-Kuhaili 2004 (main/HfO2/Al-Kuhaili).
        check("HfO2 (Cauchy)", 400.0, 1.936_906, 0.0, t);
        check("HfO2 (Cauchy)", 550.0, 1.902_099, 0.0, t);
        check("HfO2 (Cauchy)", 1000.0, 1.881_860, 0.0, t);
        // Debenham 1984 / Klein 1986 (main/ZnS/Debenham).
        check("ZnS (bulk)", 550.0, 2.386_210, 0.0, t);
        check("ZnS (bulk)", 1000.0, 2.292_453, 0.0, t);
        check("ZnS (bulk)", 10000.0, 2.200_658, 0.0, t);
        // Amotchkina 2020 film (main/ZnS/Amotchkina): n formula; k=6.99e-4 at 550 nm.
        check("ZnS", 550.0, 2.385_771, 6.99e-4, t);
        check_k("ZnS", 550.0, 6.99e-4, 5e-7);
        check("ZnS", 1000.0, 2.297_605, 0.0, t);
        assert!(
            (get("ZnS").model.index_at(10000.0).re - 2.219_742).abs() <= t,
            "ZnS 10 µm"
        );
        // Connolly / Tatian (main/ZnSe/Connolly).
        check("ZnSe", 600.0, 2.614_109, 0.0, t);
        check("ZnSe", 1000.0, 2.489_173, 0.0, t);
        check("ZnSe", 10600.0, 2.402_781, 0.0, t);
        // Burnett 2016 (main/Ge/Burnett).
        check("Ge", 3000.0, 4.044_681, 0.0, t);
        check("Ge", 5000.0, 4.015_778, 0.0, t);
        check("Ge", 10000.0, 4.004_003, 0.0, t);
        // Salzberg & Villa / Tatian (main/Si/Salzberg).
        check("Si (IR)", 1500.0, 3.482_062, 0.0, t);
        check("Si (IR)", 3000.0, 3.432_322, 0.0, t);
        check("Si (IR)", 10000.0, 3.417_762, 0.0, t);
    }

    #[test]
    fn alternate_closed_forms_not_shipped() {
        // materials.md §4.1 rows that are not built-ins: they check the formula conventions
        // (F1 C squared, F2 C in µm², F4 poles) on more published coefficients.
        // Malitson 1962 sapphire o (main/Al2O3/Malitson).
        let m = sellmeier_um(
            &[1.023_798, 1.058_264, 5.280_792],
            &[0.061_448_21, 0.110_699_7, 17.926_56],
        );
        check_model("Sapphire 1962", &m, 400.0, 1.786_603);
        check_model("Sapphire 1962", &m, 550.0, 1.770_511);
        check_model("Sapphire 1962", &m, 1000.0, 1.755_730);
        // Dodge 1984 extraordinary (main/MgF2/Dodge-e).
        let m = sellmeier_um(
            &[0.413_440_23, 0.504_974_99, 2.490_486_2],
            &[0.036_842_62, 0.090_761_62, 23.771_995],
        );
        check_model("MgF2 e", &m, 400.0, 1.395_943);
        check_model("MgF2 e", &m, 550.0, 1.390_353);
        check_model("MgF2 e", &m, 1000.0, 1.385_192);
        // Daimon & Masumura 2002 (main/CaF2/Daimon-20).
        let m = sellmeier_um2(
            0.0,
            &[0.443_749_998, 0.444_930_066, 0.150_133_991, 8.853_199_46],
            &[
                0.001_780_278_54,
                0.007_885_360_61,
                0.012_411_949_1,
                2_752.281_75,
            ],
        );
        check_model("CaF2 Daimon", &m, 400.0, 1.441_868);
        check_model("CaF2 Daimon", &m, 550.0, 1.434_852);
        check_model("CaF2 Daimon", &m, 1000.0, 1.428_919);
        // Devore 1951 extraordinary (main/TiO2/Devore-e).
        let m = Model::Rational {
            a: 7.197,
            b: vec![0.3322],
            c: vec![0.0843],
        };
        check_model("rutile e", &m, 450.0, 3.163_462);
        check_model("rutile e", &m, 550.0, 2.952_873);
        check_model("rutile e", &m, 1000.0, 2.749_506);
        // Marple 1964 ZnSe (main/ZnSe/Marple): n² = 4.00 + 1.90 λ²/(λ² − 0.113).
        let m = sellmeier_um2(3.00, &[1.90], &[0.113]);
        check_model("ZnSe Marple", &m, 550.0, 2.651_977);
        check_model("ZnSe Marple", &m, 1000.0, 2.478_316);
        check_model("ZnSe Marple", &m, 2000.0, 2.440_335);
        // Icenogle / Barnes & Piltch Ge (main/Ge/Icenogle), c1 = 8.28156.
        let m = sellmeier_um2(8.281_56, &[6.728_80, 0.213_07], &[0.441_05, 3870.1]);
        check_model("Ge Icenogle", &m, 3000.0, 4.044_330);
        check_model("Ge Icenogle", &m, 5000.0, 4.016_194);
        check_model("Ge Icenogle", &m, 10000.0, 4.004_312);
        // Chandler-Horowitz & Amirtharaj 2005 Si n (main/Si/Chandler-Horowitz):
        // n² = 11.67316 + 1/λ² + 0.004482633/(λ² − 1.108205²).
        let m = Model::Rational {
            a: 11.673_16,
            b: vec![1.0, 0.004_482_633],
            c: vec![0.0, sq(1.108_205)],
        };
        check_model("Si C-H", &m, 3000.0, 3.432_907);
        check_model("Si C-H", &m, 5000.0, 3.422_477);
        check_model("Si C-H", &m, 10000.0, 3.418_070);
    }

    #[test]
    fn lorentz_drude_check_values() {
        // materials.md §4.2: Rakić et al. 1998 LD formula values, printed to 5 decimals.
        let t = 1e-5;
        check("Ag", 400.0, 0.157_88, 1.827_36, t);
        check("Ag", 550.0, 0.134_23, 3.172_25, t);
        check("Ag", 1000.0, 0.219_60, 6.425_12, t);
        check("Au", 400.0, 1.409_37, 1.745_71, t);
        check("Au", 550.0, 0.497_42, 2.370_40, t);
        check("Au", 1000.0, 0.255_70, 5.986_46, t);
        check("Al", 400.0, 0.453_36, 4.706_19, t);
        check("Al", 550.0, 0.965_63, 6.458_06, t);
        check("Al", 1000.0, 1.478_06, 9.282_49, t);
        check("Cr", 400.0, 1.763_40, 3.557_72, t);
        check("Cr", 550.0, 2.900_74, 4.231_14, t);
        check("Cr", 1000.0, 4.454_73, 4.242_68, t);
        // §4.2 table ranges: Ag 0.248–12.4 µm (0.1–5 eV).
        let (lo, hi) = get("Ag").valid_range_nm();
        assert!(
            (lo - 248.0).abs() < 0.5 && (hi - 12_400.0).abs() < 5.0,
            "Ag range {lo}–{hi}"
        );
    }

    #[test]
    fn tabulated_check_values() {
        // materials.md §4.3: linear interpolation of the database tables; n printed to
        // 5 decimals (tolerance 2e-5), k to 1–4 significant digits (tolerance per value).
        let t = 2e-5;
        // Gao 2013 (main/SiO2/Gao); k omitted in the reference = 0.
        check("SiO2", 400.0, 1.489_71, 1e-6, t);
        check("SiO2", 550.0, 1.479_09, 0.0, t);
        check("SiO2", 1000.0, 1.470_68, 0.0, t);
        // Franta 2015 (main/TiO2/Franta).
        check("TiO2", 400.0, 2.566_42, 7.15e-4, t);
        check_k("TiO2", 400.0, 7.15e-4, 5e-7);
        check("TiO2", 550.0, 2.346_54, 1.4e-7, t);
        check("TiO2", 1000.0, 2.235_88, 0.0, t);
        // Gao 2012 (main/Ta2O5/Gao).
        check("Ta2O5", 400.0, 2.246_90, 3.27e-4, t);
        check_k("Ta2O5", 400.0, 3.27e-4, 5e-7);
        check("Ta2O5", 550.0, 2.157_26, 2.1e-5, t);
        check_k("Ta2O5", 550.0, 2.1e-5, 5e-7);
        check("Ta2O5", 1000.0, 2.098_95, 0.0, t);
        // Lemarchand 2013 (main/Nb2O5/Lemarchand).
        check("Nb2O5", 400.0, 2.544_43, 1.05e-3, t);
        check_k("Nb2O5", 400.0, 1.05e-3, 5e-6);
        check("Nb2O5", 550.0, 2.360_32, 3e-6, t);
        check("Nb2O5", 1000.0, 2.258_27, 0.0, t);
        // Franta 2015 (main/HfO2/Franta).
        check("HfO2", 400.0, 2.149_16, 4.26e-4, t);
        check_k("HfO2", 400.0, 4.26e-4, 5e-7);
        check("HfO2", 550.0, 2.100_15, 0.0, t);
        check("HfO2", 1000.0, 2.064_46, 0.0, t);
        // Franta 2015 (main/Al2O3/Franta).
        check("Al2O3", 400.0, 1.673_22, 0.0, t);
        check("Al2O3", 550.0, 1.656_05, 0.0, t);
        check("Al2O3", 1000.0, 1.641_82, 0.0, t);
        // Franta 2017 (main/MgF2/Franta).
        check("MgF2 (film)", 400.0, 1.389_89, 0.0, t);
        check("MgF2 (film)", 550.0, 1.383_73, 0.0, t);
        check("MgF2 (film)", 1000.0, 1.378_18, 0.0, t);
        // Amotchkina 2020 (main/Ge/Amotchkina-film), k printed to 4 significant digits.
        check("Ge (film)", 550.0, 3.524_18, 2.542, 5e-4);
        check("Ge (film)", 1000.0, 4.861_57, 0.3551, 5e-5);
        check("Ge (film)", 10000.0, 4.164_15, 4.98e-3, 5e-6);
        // Green 2008 (main/Si/Green-2008).
        check("Si", 400.0, 5.613_00, 0.296, 5e-4);
        check("Si", 550.0, 4.077_00, 0.027_97, 5e-6);
        check("Si", 1000.0, 3.572_00, 5.09e-4, 5e-7);
    }
}
