//! Fuzzing through the entry points the window and the command line use: random and mutated
//! design files, stack notation, n,k tables and measured curves. Whatever comes in, nothing
//! panics, nothing hangs (the work cap bounds every sweep), and whatever is accepted computes
//! only finite numbers; everything else is refused with a message.
//!
//! A modest number of cases runs with `cargo test`; set `STACKWISE_FUZZ_CASES` for a long run,
//! e.g. `STACKWISE_FUZZ_CASES=1000000 cargo test --release --test fuzz` (see DEVELOPERS.md).

use std::collections::BTreeMap;
use std::path::Path;

use proptest::prelude::*;
use proptest::test_runner::Config;
use stackwise::analysis::measured::{ValueScale, parse_measured_csv, rms_difference};
use stackwise::analysis::{Spectrum, angle_scan, spectrum};
use stackwise::design::{Design, Layer, Nm, Quantity, file, notation};
use stackwise::export;
use stackwise::material::import::{WavelengthUnit, parse_nk_csv};
use stackwise::material::{Catalog, Material, Model};
use stackwise::optics::Side;

/// Cases per property: `STACKWISE_FUZZ_CASES` or a modest default.
fn config() -> Config {
    let cases = std::env::var("STACKWISE_FUZZ_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(48);
    Config {
        cases,
        failure_persistence: None,
        ..Config::default()
    }
}

/// The design files shipped and tested: the seeds for mutation.
fn seeds() -> Vec<String> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let mut out = Vec::new();
    for dir in ["designs", "tests/good"] {
        let mut paths: Vec<_> = std::fs::read_dir(root.join(dir))
            .expect("seed folder")
            .map(|e| e.expect("entry").path())
            .filter(|p| p.extension().is_some_and(|e| e == "ron"))
            .collect();
        paths.sort();
        for p in paths {
            out.push(std::fs::read_to_string(p).expect("seed file"));
        }
    }
    out
}

/// Numbers an adversary would type, as text.
fn hostile_number() -> impl Strategy<Value = String> {
    prop_oneof![
        Just("0".to_owned()),
        Just("-0.0".to_owned()),
        Just("-1".to_owned()),
        Just("1e-300".to_owned()),
        Just("5e-324".to_owned()),
        Just("1e308".to_owned()),
        Just("1.7976931348623157e308".to_owned()),
        Just("1e200".to_owned()),
        Just("NaN".to_owned()),
        Just("inf".to_owned()),
        Just("-inf".to_owned()),
        Just("99999999999999999999".to_owned()),
        any::<f64>().prop_map(|x| format!("{x:?}")),
        (-3.0f64..3.0).prop_map(|e| format!("{}", 10f64.powf(e))),
        "[0-9.eE+-]{1,8}",
    ]
}

/// One edit of a text: replace the n-th number, cut a span, or insert junk.
#[derive(Clone, Debug)]
enum Edit {
    Number(usize, String),
    Cut(usize, usize),
    Insert(usize, String),
}

fn edit() -> impl Strategy<Value = Edit> {
    prop_oneof![
        4 => (any::<usize>(), hostile_number()).prop_map(|(i, s)| Edit::Number(i, s)),
        1 => (any::<usize>(), 0usize..40).prop_map(|(i, n)| Edit::Cut(i, n)),
        1 => (any::<usize>(), "[(),:\\[\\]a-zA-Z0-9\" .^-]{0,6}").prop_map(|(i, s)| Edit::Insert(i, s)),
    ]
}

/// Byte spans of the numbers in `text` (runs of digits with sign, point and exponent).
fn number_spans(text: &str) -> Vec<(usize, usize)> {
    let b = text.as_bytes();
    let mut spans = Vec::new();
    let mut i = 0;
    while i < b.len() {
        if b[i].is_ascii_digit() {
            let start = if i > 0 && b[i - 1] == b'-' { i - 1 } else { i };
            let mut j = i;
            while j < b.len() && (b[j].is_ascii_digit() || b"._eE+-".contains(&b[j])) {
                j += 1;
            }
            spans.push((start, j));
            i = j;
        } else {
            i += 1;
        }
    }
    spans
}

fn apply(text: &str, e: &Edit) -> String {
    let at = |i: usize| {
        let mut i = i % (text.len() + 1);
        while !text.is_char_boundary(i) {
            i -= 1;
        }
        i
    };
    match e {
        Edit::Number(i, s) => {
            let spans = number_spans(text);
            if spans.is_empty() {
                return text.to_owned();
            }
            let (a, b) = spans[i % spans.len()];
            format!("{}{s}{}", &text[..a], &text[b..])
        }
        Edit::Cut(i, n) => {
            let a = at(*i);
            let b = at(a + n).max(a);
            format!("{}{}", &text[..a], &text[b..])
        }
        Edit::Insert(i, s) => {
            let a = at(*i);
            format!("{}{s}{}", &text[..a], &text[a..])
        }
    }
}

/// Asserts every figure of a sweep is a finite number in 0..1 (rounding aside) and that the
/// CSV the command line writes holds only finite numbers.
fn assert_sound(s: &Spectrum) -> Result<(), TestCaseError> {
    for (col, name) in s
        .curves
        .columns()
        .iter()
        .zip(stackwise::analysis::COLUMN_NAMES)
    {
        for (i, &x) in col.iter().enumerate() {
            prop_assert!(
                x.is_finite() && (-1e-6..=1.0 + 1e-6).contains(&x),
                "{name} = {x} at {} nm",
                s.wavelength_nm[i]
            );
        }
    }
    let mut csv = Vec::new();
    export::csv::write_spectrum(&mut csv, s).expect("writing to memory");
    let csv = String::from_utf8(csv).expect("UTF-8");
    for line in csv.lines().skip(1) {
        for cell in line.split(',') {
            let x: f64 = cell.parse().expect("a number in the CSV");
            prop_assert!(x.is_finite(), "CSV cell {cell}");
        }
    }
    Ok(())
}

/// What the window and the command line do with a loaded design: check it, then compute a
/// spectrum, an angle scan, the layer table and the report. Errors are fine; panics and
/// non-finite numbers are not.
fn exercise(d: &Design, wavelengths_nm: &[f64], aoi_deg: f64) -> Result<(), TestCaseError> {
    let Ok(r) = d.resolve() else {
        return Ok(());
    };
    for no in 1..=d.layers.len() {
        if let Ok(q) = d.layer_qwot(no) {
            prop_assert!(q.is_finite(), "QWOT of layer {no}: {q}");
        }
        if let Ok(o) = d.layer_optical_nm(no) {
            prop_assert!(o.is_finite(), "optical thickness of layer {no}: {o}");
        }
    }
    if let Ok(report) = export::report::LayerReport::new(d) {
        let text = report.to_csv();
        for cell in text
            .lines()
            .filter(|l| !l.starts_with('#'))
            .flat_map(|l| l.split(','))
        {
            if let Ok(x) = cell.parse::<f64>() {
                prop_assert!(x.is_finite(), "report cell {cell}: {text}");
            }
        }
    }
    for side in [Side::Front, Side::Back] {
        if let Ok(s) = spectrum(&r, wavelengths_nm, aoi_deg, side) {
            assert_sound(&s)?;
        }
    }
    if let Some(&wl) = wavelengths_nm.first()
        && let Ok(a) = angle_scan(&r, wl, &[0.0, aoi_deg, 89.0], Side::Front)
    {
        let s = Spectrum {
            wavelength_nm: vec![wl; a.aoi_deg.len()],
            curves: a.curves,
            ..Spectrum::default()
        };
        assert_sound(&s)?;
    }
    Ok(())
}

fn wavelengths() -> impl Strategy<Value = Vec<f64>> {
    prop_oneof![
        prop::collection::vec(200.0f64..2500.0, 1..12),
        prop::collection::vec(1.0f64..1e6, 1..6),
        Just(vec![1.0, 1e6]),
    ]
    .prop_map(|mut v| {
        v.sort_by(f64::total_cmp);
        v
    })
}

fn number() -> impl Strategy<Value = f64> {
    prop_oneof![
        6 => 0.0f64..5.0,
        2 => 0.0f64..2000.0,
        1 => any::<f64>(),
        1 => prop::sample::select(vec![0.0, 1e-300, 1e-3, 100.0, 1000.0, 1e6, 1e300, f64::MAX]),
    ]
}

fn model() -> impl Strategy<Value = Model> {
    prop_oneof![
        (number(), number()).prop_map(|(n, k)| Model::Constant { n, k }),
        (number(), number(), number()).prop_map(|(a, b, c)| Model::Cauchy { a, b: b * 0.01, c }),
        (prop::collection::vec((number(), number()), 0..4)).prop_map(|t| Model::Sellmeier {
            a: 0.0,
            b: t.iter().map(|x| x.0).collect(),
            c: t.iter().map(|x| x.1).collect(),
        }),
        prop::collection::vec((number(), number(), number()), 1..6).prop_map(|mut rows| {
            rows.sort_by(|a, b| a.0.total_cmp(&b.0));
            rows.dedup_by(|a, b| a.0.total_cmp(&b.0).is_eq());
            Model::Table { rows }
        }),
    ]
}

/// Random designs over user materials H, L, M and a few built-in ones.
fn design() -> impl Strategy<Value = Design> {
    let names = prop::sample::select(vec!["H", "L", "M", "SiO2", "Ag", "Cr", "Fused silica"]);
    (
        number(),
        prop::option::of(number()),
        prop::collection::vec((names.clone(), number()), 0..24),
        prop::collection::vec(model(), 3),
        names,
    )
        .prop_map(|(reference_nm, substrate_mm, layers, models, substrate)| {
            let mut d = Design::new_empty("fuzz");
            d.reference_nm = reference_nm;
            d.substrate_mm = substrate_mm;
            substrate.clone_into(&mut d.substrate);
            d.layers = layers
                .into_iter()
                .filter_map(|(m, nm)| Some(Layer::new(m, Nm::new(nm).ok()?)))
                .collect();
            d.materials = ["H", "L", "M"]
                .into_iter()
                .zip(models)
                .map(|(n, m)| Material::user(n, m))
                .collect();
            d
        })
}

proptest! {
    #![proptest_config(config())]

    #[test]
    fn mutated_design_files_never_panic_or_give_nan(
        seed in any::<prop::sample::Index>(),
        edits in prop::collection::vec(edit(), 1..4),
        wl in wavelengths(),
        aoi in 0.0f64..89.0,
    ) {
        let seeds = seeds();
        let mut text = seeds[seed.index(seeds.len())].clone();
        for e in &edits {
            text = apply(&text, e);
        }
        if let Ok(d) = file::from_ron_str(&text) {
            exercise(&d, &wl, aoi)?;
        }
    }

    #[test]
    fn random_designs_round_trip_and_never_give_nan(
        d in design(),
        wl in wavelengths(),
        aoi in 0.0f64..89.0,
    ) {
        // Through the file, as the window saves and opens it.
        let text = file::to_ron_string(&d).expect("any design serialises");
        let back = file::from_ron_str(&text);
        if d.layers.iter().all(|l| l.nm.get().is_finite()) && d.reference_nm.is_finite() {
            prop_assert!(back.is_ok(), "a saved design must open again: {back:?}");
        }
        if let Ok(back) = back {
            exercise(&back, &wl, aoi)?;
        }
    }

    #[test]
    fn stack_notation_never_panics_or_gives_nan(
        text in prop_oneof![
            "[HLM()^0-9.: nm]{0,24}",
            "\\(+[HL]{1,4}\\)\\^[0-9]{1,5}",
            Just("(((HL)^99)^99)^99".to_owned()),
            Just("((((((((((((((((((((((((((((((((((H))))))))))))))))))))))))))))))))))".to_owned()),
        ],
        reference_nm in number(),
        wl in wavelengths(),
    ) {
        let _ = notation::parse(&text);
        let mut d = Design::new_empty("notation");
        d.reference_nm = reference_nm;
        d.materials = vec![
            Material::user("H", Model::Constant { n: 2.35, k: 0.0 }),
            Material::user("L", Model::Cauchy { a: 1.45, b: 0.004, c: 0.0 }),
        ];
        let bindings = BTreeMap::from([('H', "H".to_owned()), ('L', "L".to_owned()), ('M', "Ag".to_owned())]);
        if let Ok(layers) = notation::build_layers(&text, &bindings, &Catalog::new(&d.materials), reference_nm) {
            prop_assert!(layers.len() <= notation::MAX_LAYERS, "{} layers", layers.len());
            for l in &layers {
                prop_assert!(l.nm.get().is_finite(), "layer {l:?}");
            }
            d.layers = layers;
            exercise(&d, &wl, 0.0)?;
        }
    }

    #[test]
    fn nk_tables_never_panic_or_give_nan(
        rows in prop::collection::vec((hostile_number(), hostile_number(), hostile_number()), 0..8),
        sep in prop::sample::select(vec![",", ";", "\t", " "]),
        header in prop::sample::select(vec!["", "wavelength_nm,n,k\n", "um n k\n", "# data\n"]),
        unit in prop::sample::select(vec![WavelengthUnit::Auto, WavelengthUnit::Nm, WavelengthUnit::Um]),
        wl in wavelengths(),
    ) {
        let body: Vec<String> = rows.iter().map(|(a, b, c)| format!("{a}{sep}{b}{sep}{c}")).collect();
        let text = format!("{header}{}", body.join("\n"));
        if let Ok(table) = parse_nk_csv(&text, unit) {
            // The table goes into a design as the window's import does; the design's checks
            // refuse whatever lies outside the physical ranges (a 1e308 µm row becomes an
            // infinite wavelength in nm), and what they accept must compute finite numbers.
            let mut d = Design::new_empty("imported");
            d.materials.push(table.into_material("X"));
            d.layers = vec![Layer::new("X", Nm::new(50.0).expect("thickness"))];
            exercise(&d, &wl, 30.0)?;
        }
    }

    #[test]
    fn measured_curves_never_panic_or_give_nan(
        rows in prop::collection::vec((hostile_number(), hostile_number()), 0..10),
        sep in prop::sample::select(vec![",", ";", "\t"]),
        header in prop::sample::select(vec!["", "nm,%T\n", "wavelength,R\n"]),
    ) {
        let body: Vec<String> = rows.iter().map(|(a, b)| format!("{a}{sep}{b}")).collect();
        let text = format!("{header}{}", body.join("\n"));
        let Ok(m) = parse_measured_csv(&text, WavelengthUnit::Auto, ValueScale::Auto) else {
            return Ok(());
        };
        for (&w, &v) in m.wavelength_nm.iter().zip(&m.value) {
            prop_assert!(w.is_finite() && v.is_finite(), "row {w}, {v}");
        }
        let d = file::load(&Path::new(env!("CARGO_MANIFEST_DIR")).join("designs/camera-window-ar.ron"))
            .expect("example design");
        let Ok(s) = spectrum(&d.resolve().expect("example resolves"), &m.wavelength_nm, 0.0, Side::Front) else {
            return Ok(());
        };
        assert_sound(&s)?;
        if let Some((rms, _)) = rms_difference(&m, &s, Quantity::T) {
            // A finite curve gives a finite difference unless its values are beyond any
            // physical reflectance (their squares overflow); the importer's range check refuses
            // those.
            let absurd = m.value.iter().any(|v| v.abs() > 1e150);
            prop_assert!(rms.is_finite() || absurd, "RMS {rms}");
        }
    }
}
