//! Hand-off outputs: CSV round trip, plot images, the layer report, measured curves, band
//! figures, and the plot/report/measured commands end to end.

mod common;

use common::here;

use std::collections::HashSet;

use stackwise::analysis::compare::{band_figures, compare, difference};
use stackwise::analysis::measured::{
    MeasuredCurve, MeasuredError, ValueScale, parse_measured_csv, rms_difference,
};
use stackwise::analysis::{Spectrum, spectrum, wavelengths_nm};
use stackwise::design::{Design, Pol, Quantity, file};
use stackwise::export::plot::{
    LineStyle, PALETTE, PlotSpec, Series, render_png, render_svg, spectrum_plot,
};
use stackwise::export::report::LayerReport;
use stackwise::export::{ExportError, SAFETY_CAUTION};
use stackwise::material::import::WavelengthUnit;
use stackwise::optics::Side;

fn design(rel: &str) -> Design {
    file::load(&here(rel)).expect("example design loads")
}

fn computed(rel: &str, from: f64, to: f64, step: f64, aoi: f64) -> Spectrum {
    let d = design(rel);
    let wl = wavelengths_nm(from, to, step).expect("valid range");
    spectrum(&d.resolve().expect("resolves"), &wl, aoi, Side::Front).expect("computes")
}

const AR: &str = "designs/camera-window-ar.ron";
const MIRROR: &str = "designs/laser-mirror-1064-45.ron";
const SHORTPASS: &str = "designs/shortpass-550.ron";

// ---------------------------------------------------------------- CSV round trip

#[test]
fn spectrum_csv_reads_back_to_the_same_numbers() {
    let s = computed(AR, 380.0, 800.0, 1.7, 20.0);
    let mut out = Vec::new();
    stackwise::export::csv::write_spectrum(&mut out, &s).expect("writes to memory");
    let text = String::from_utf8(out).expect("UTF-8");
    let mut lines = text.lines();
    assert_eq!(
        lines.next(),
        Some("wavelength_nm,R_s,R_p,R,T_s,T_p,T,A_s,A_p,A"),
        "header"
    );
    let cols = s.curves.columns();
    let mut n = 0;
    for (i, line) in lines.enumerate() {
        let vals: Vec<f64> = line
            .split(',')
            .map(|v| v.parse().expect("a number"))
            .collect();
        assert_eq!(vals.len(), 10, "line {i}");
        assert_eq!(
            vals[0].to_bits(),
            s.wavelength_nm[i].to_bits(),
            "wavelength {i}"
        );
        for (c, col) in cols.iter().enumerate() {
            assert_eq!(
                vals[c + 1].to_bits(),
                col[i].to_bits(),
                "row {i} column {c}"
            );
        }
        n += 1;
    }
    assert_eq!(n, s.wavelength_nm.len(), "one row per wavelength");
}

// ---------------------------------------------------------------- plots

fn two_design_plot() -> PlotSpec {
    let a = computed(AR, 400.0, 800.0, 2.0, 0.0);
    let b = computed(SHORTPASS, 400.0, 800.0, 2.0, 0.0);
    spectrum_plot(
        &[("AR & window <1>", &a), ("Short-pass", &b)],
        Quantity::R,
        Pol::Mean,
    )
}

#[test]
fn png_has_the_requested_size_and_shows_the_curves() {
    let spec = two_design_plot();
    let bytes = render_png(&spec, 640, 420).expect("renders");
    let img = image::load_from_memory(&bytes)
        .expect("decodes as an image")
        .to_rgb8();
    assert_eq!(img.dimensions(), (640, 420), "requested size");
    let colours: HashSet<[u8; 3]> = img.pixels().map(|p| p.0).collect();
    assert!(colours.len() >= 5, "only {} colours", colours.len());
    let white = img.pixels().filter(|p| p.0 == [255, 255, 255]).count();
    let total = (640 * 420) as usize;
    assert!(
        white < total * 98 / 100,
        "almost all white: {white}/{total}"
    );
    assert!(
        white > total / 2,
        "background should be white: {white}/{total}"
    );
    // Both series colours are drawn.
    for (i, (r, g, b)) in PALETTE.iter().take(2).enumerate() {
        let hits = img.pixels().filter(|p| p.0 == [*r, *g, *b]).count();
        assert!(hits > 100, "series {i} colour drawn on {hits} pixels");
    }
}

#[test]
fn svg_is_xml_with_title_and_legend_names() {
    let mut spec = two_design_plot();
    spec.caution = Some(SAFETY_CAUTION.to_owned());
    let svg = render_svg(&spec, 800, 500).expect("renders");
    let doc = roxmltree::Document::parse(&svg).expect("valid XML");
    let text: String = doc
        .descendants()
        .filter_map(|n| n.text())
        .collect::<Vec<_>>()
        .join("\n");
    for want in [
        spec.title.as_str(),
        "AR & window <1>",
        "Short-pass",
        "Wavelength (nm)",
        "Reflectance R (%)",
        "Computed values are theoretical",
    ] {
        assert!(text.contains(want), "missing {want:?}");
    }
}

#[test]
fn sizes_outside_the_limits_are_refused() {
    let spec = two_design_plot();
    for (w, h) in [(99, 400), (400, 0), (8001, 400), (400, 9000)] {
        let e = render_png(&spec, w, h).expect_err("bad size");
        assert!(matches!(e, ExportError::BadSize { .. }), "{w}×{h}: {e}");
        assert!(render_svg(&spec, w, h).is_err(), "svg {w}×{h}");
    }
    let e = render_png(&spec, 8000, 8000).expect_err("too many pixels");
    assert!(e.to_string().contains("pixels"), "{e}");
    // The smallest size with a caution still renders.
    let mut small = spec.clone();
    small.caution = Some(SAFETY_CAUTION.to_owned());
    let png = render_png(&small, 100, 100).expect("smallest size renders");
    assert!(!png.is_empty(), "bytes");
}

#[test]
fn empty_or_broken_data_gives_errors_not_panics() {
    let mut spec = PlotSpec {
        title: "t".into(),
        x_label: "x".into(),
        y_label: "y".into(),
        series: vec![Series {
            name: "nan".into(),
            points: vec![(f64::NAN, 1.0), (2.0, f64::INFINITY)],
            style: LineStyle::Dashed,
            colour: 99,
        }],
        x_range: None,
        y_range: None,
        caution: None,
    };
    assert_eq!(
        render_png(&spec, 300, 200),
        Err(ExportError::NoData),
        "no data"
    );
    spec.series[0].points.push((1.0, 1.0));
    // A single point: the ranges open up around it.
    assert!(render_svg(&spec, 300, 200).is_ok(), "single point");
    spec.x_range = Some((5.0, 1.0));
    let e = render_svg(&spec, 300, 200).expect_err("inverted range");
    assert!(e.to_string().contains("x range 5 to 1"), "{e}");
}

// ---------------------------------------------------------------- layer report

#[test]
fn report_totals_add_up_in_every_format() {
    for rel in [AR, MIRROR, SHORTPASS] {
        let d = design(rel);
        let r = LayerReport::new(&d).expect("report");
        assert_eq!(r.rows.len(), d.layers.len(), "{rel}");
        // Totals computed here from the design's layers by a plain loop.
        let mut per: Vec<(String, usize, f64)> = Vec::new();
        let mut all = 0.0;
        for l in &d.layers {
            all += l.nm.get();
            match per.iter_mut().find(|p| p.0 == l.material) {
                Some(p) => {
                    p.1 += 1;
                    p.2 += l.nm.get();
                }
                None => per.push((l.material.clone(), 1, l.nm.get())),
            }
        }
        let rel_eq = |a: f64, b: f64| (a - b).abs() <= 1e-9 * b.abs().max(1.0);
        assert!(rel_eq(r.total_nm, all), "{rel} total");
        assert!(
            rel_eq(r.rows.last().expect("layers").cumulative_nm, all),
            "{rel} cumulative"
        );

        // CSV: parse the totals block.
        let csv = r.to_csv();
        let totals: Vec<&str> = csv
            .split("\nmaterial,layers,nm\n")
            .nth(1)
            .expect("totals block")
            .lines()
            .collect();
        assert_eq!(
            totals.len(),
            per.len() + 1,
            "{rel}: one row per material plus all"
        );
        for (line, (m, count, nm)) in totals.iter().zip(&per) {
            let cells: Vec<&str> = line.split(',').collect();
            assert_eq!(cells[0], m, "{rel}");
            assert_eq!(
                cells[1].parse::<usize>().expect("count"),
                *count,
                "{rel} {m}"
            );
            assert!(rel_eq(cells[2].parse().expect("nm"), *nm), "{rel} {m}");
        }
        let last: Vec<&str> = totals[per.len()].split(',').collect();
        assert_eq!(last[0], "all", "{rel}");
        assert!(rel_eq(last[2].parse().expect("nm"), all), "{rel} all");
        // The layer rows' nm column sums to the total too.
        let layer_sum: f64 = csv
            .lines()
            .skip_while(|l| !l.starts_with("layer,"))
            .skip(1)
            .take_while(|l| !l.is_empty())
            .map(|l| l.split(',').nth(2).expect("nm").parse::<f64>().expect("nm"))
            .sum();
        assert!(rel_eq(layer_sum, all), "{rel} layer column");

        let md = r.to_markdown();
        let html = r.to_html();
        for (m, count, nm) in &per {
            assert!(
                md.contains(&format!("| {m} | {count} | {nm:.2} |")),
                "{rel} md {m}"
            );
            assert!(
                html.contains(&format!(
                    "<tr><td>{m}</td><td class=\"num\">{count}</td><td class=\"num\">{nm:.2}</td></tr>"
                )),
                "{rel} html {m}"
            );
        }
        let n = d.layers.len();
        assert!(
            md.contains(&format!("| **All** | **{n}** | **{all:.2}** |")),
            "{rel} md all"
        );
        assert!(
            html.contains(&format!(
                "<td>All</td><td class=\"num\">{n}</td><td class=\"num\">{all:.2}</td>"
            )),
            "{rel} html all"
        );
        for text in [&csv, &md, &html] {
            assert!(text.contains(&d.name.replace('&', "&amp;")), "{rel}: name");
            assert!(
                text.contains(&d.reference_nm.to_string()),
                "{rel}: reference"
            );
        }
    }
}

#[test]
fn report_html_escapes_names_and_mirror_gets_the_caution() {
    let mut d = design(MIRROR);
    d.name = "<script>alert(1)</script> & co".into();
    let html = LayerReport::new(&d).expect("report").to_html();
    assert!(!html.contains("<script>"), "script tag escaped");
    assert!(
        html.contains("&lt;script&gt;alert(1)&lt;/script&gt; &amp; co"),
        "escaped"
    );
    let laser = design(MIRROR);
    let mut named = laser.clone();
    named.name = "Laser line mirror".into();
    let r = LayerReport::new(&named).expect("report");
    assert!(
        r.to_markdown().contains("Computed values are theoretical"),
        "md caution"
    );
    assert!(
        r.to_csv().contains("# caution: Computed values"),
        "csv caution"
    );
}

// ---------------------------------------------------------------- measured curves

fn read(text: &str) -> MeasuredCurve {
    match parse_measured_csv(text, WavelengthUnit::Auto, ValueScale::Auto) {
        Ok(m) => m,
        Err(e) => panic!("expected {text:?} to be read: {e}"),
    }
}

fn read_err(text: &str) -> MeasuredError {
    match parse_measured_csv(text, WavelengthUnit::Auto, ValueScale::Auto) {
        Ok(m) => panic!("expected an error for {text:?}, got {m:?}"),
        Err(e) => e,
    }
}

fn close(got: &[f64], want: &[f64]) {
    assert_eq!(got.len(), want.len(), "{got:?} vs {want:?}");
    for (g, w) in got.iter().zip(want) {
        assert!((g - w).abs() < 1e-12, "{got:?} vs {want:?}");
    }
}

#[test]
fn measured_files_in_every_accepted_shape() {
    let want_wl = [400.0, 500.0, 600.0];
    let want_v = [0.452, 0.5, 0.9];
    for (text, unit, scale) in [
        (
            "400,45.2\n500,50\n600,90\n",
            WavelengthUnit::Nm,
            ValueScale::Percent,
        ),
        (
            "400;0.452\n500;0.5\n600;0.9\n",
            WavelengthUnit::Nm,
            ValueScale::Fraction,
        ),
        (
            "400\t0.452\n500\t0.5\n600\t0.9\n",
            WavelengthUnit::Nm,
            ValueScale::Fraction,
        ),
        (
            "0.4;45,2\n0.5;50\n0.6;90\n",
            WavelengthUnit::Um,
            ValueScale::Percent,
        ),
        (
            "wavelength,T\n0.4,0.452\n0.5,0.5\n0.6,0.9\n",
            WavelengthUnit::Um,
            ValueScale::Fraction,
        ),
        (
            "# sample 7\nnm\tT (%)\n600\t90\n500\t50\n400\t45.2\n",
            WavelengthUnit::Nm,
            ValueScale::Percent,
        ),
    ] {
        let m = read(text);
        close(&m.wavelength_nm, &want_wl);
        close(&m.value, &want_v);
        assert_eq!((m.unit_used, m.scale_used), (unit, scale), "{text:?}");
        assert!(
            m.notes.iter().any(|n| n.contains(&scale.to_string())
                || (scale == ValueScale::Fraction && n.contains("fractions"))),
            "scale is reported: {:?}",
            m.notes
        );
    }
    // A percent header wins over small numbers (an AR coating measured in %).
    let m = read("wavelength (nm), R (%)\n500, 0.4\n600, 0.3\n");
    assert_eq!(m.scale_used, ValueScale::Percent, "header says %");
    close(&m.value, &[0.004, 0.003]);
    // The caller can force the units: small wavelengths read as nm, small values as percent
    // (left to themselves they would be µm and fractions).
    let m = parse_measured_csv("20,1\n30,0.5\n", WavelengthUnit::Nm, ValueScale::Percent)
        .expect("reads");
    close(&m.wavelength_nm, &[20.0, 30.0]);
    close(&m.value, &[0.01, 0.005]);
    let m = read("20,1\n30,0.5\n");
    close(&m.wavelength_nm, &[20_000.0, 30_000.0]);
    close(&m.value, &[1.0, 0.5]);
    // Forcing fractions on values above 1.02 is refused: no R or T is above 100 %.
    assert!(
        matches!(
            parse_measured_csv("400,1\n500,2\n", WavelengthUnit::Nm, ValueScale::Fraction),
            Err(MeasuredError::OutOfRange { line: 2, .. })
        ),
        "200 % refused"
    );
}

/// (file text, is it the right error, a fragment the message must hold)
type Case = (&'static str, fn(&MeasuredError) -> bool, &'static str);

#[test]
fn broken_measured_files_name_the_line() {
    let cases: [Case; 7] = [
        (
            "header only\n",
            |e| matches!(e, MeasuredError::NoRows),
            "no rows",
        ),
        (
            "400\n500\n",
            |e| matches!(e, MeasuredError::SingleColumn { line: 1, .. }),
            "line 1",
        ),
        (
            "400,1,2\n",
            |e| matches!(e, MeasuredError::TooManyColumns { line: 1, count: 3 }),
            "3 columns",
        ),
        (
            "x,y\n400,0.1\n500,abc\n",
            |e| {
                matches!(
                    e,
                    MeasuredError::NotANumber {
                        line: 3,
                        column: "value",
                        ..
                    }
                )
            },
            "line 3",
        ),
        (
            "400,0.1\n500,0.2\n450,0.3\n",
            |e| {
                matches!(
                    e,
                    MeasuredError::NotMonotonic {
                        line: 3,
                        prev_line: 2,
                        ..
                    }
                )
            },
            "line 3",
        ),
        (
            "400,0.1\n400,0.2\n",
            |e| matches!(e, MeasuredError::NotMonotonic { line: 2, .. }),
            "line 2",
        ),
        (
            "\n\n400,0.1\n",
            |e| matches!(e, MeasuredError::TooFewRows { line: 3 }),
            "line 3",
        ),
    ];
    for (text, is, fragment) in cases {
        let e = read_err(text);
        assert!(is(&e), "{text:?}: wrong error {e:?}");
        assert!(e.to_string().contains(fragment), "{text:?}: {e}");
    }
    assert!(
        matches!(
            read_err("-5,0.1\n10,0.2\n"),
            MeasuredError::BadWavelength { line: 1, .. }
        ),
        "negative wavelength"
    );
    assert!(
        matches!(
            read_err("400,nan\n500,0.2\n"),
            MeasuredError::NotANumber { line: 1, .. }
        ),
        "NaN value"
    );
}

#[test]
fn rms_difference_against_the_engine() {
    let s = computed(AR, 400.0, 700.0, 5.0, 0.0);
    // Measured exactly at computed wavelengths: interpolation returns the points themselves.
    let mut m = MeasuredCurve {
        wavelength_nm: s.wavelength_nm.clone(),
        value: s.curves.t.clone(),
        ..MeasuredCurve::default()
    };
    let (rms, n) = rms_difference(&m, &s, Quantity::T).expect("overlap");
    assert_eq!((rms, n), (0.0, s.wavelength_nm.len()), "identical curves");
    for v in &mut m.value {
        *v += 0.01;
    }
    let (rms, _) = rms_difference(&m, &s, Quantity::T).expect("overlap");
    assert!((rms - 0.01).abs() < 1e-12, "constant offset: {rms}");
    // Partly outside the computed span: only the overlap counts.
    m.wavelength_nm = vec![300.0, 350.0, 400.0, 402.5];
    m.value = vec![
        0.0,
        0.0,
        s.curves.r[0],
        0.5 * (s.curves.r[0] + s.curves.r[1]),
    ];
    let (rms, n) = rms_difference(&m, &s, Quantity::R).expect("overlap");
    assert_eq!(n, 2, "two points overlap");
    assert!(rms < 1e-15, "midpoint interpolation: {rms}");
    m.wavelength_nm = vec![100.0, 200.0];
    m.value = vec![0.0, 0.0];
    assert_eq!(rms_difference(&m, &s, Quantity::R), None, "no overlap");
}

// ---------------------------------------------------------------- compare

#[test]
fn band_figures_match_a_plain_loop_over_the_engine_arrays() {
    let s = computed(SHORTPASS, 380.0, 900.0, 1.3, 10.0);
    let (from, to) = (450.0, 780.0);
    let f = band_figures(&s, from, to).expect("figures");
    for (got, ys) in [(f.r, &s.curves.r), (f.t, &s.curves.t)] {
        let (mut sum, mut n) = (0.0, 0);
        let (mut min, mut min_at) = (f64::MAX, 0.0);
        let (mut max, mut max_at) = (f64::MIN, 0.0);
        for (i, &wl) in s.wavelength_nm.iter().enumerate() {
            if wl < from || wl > to {
                continue;
            }
            sum += ys[i];
            n += 1;
            if ys[i] < min {
                (min, min_at) = (ys[i], wl);
            }
            if ys[i] > max {
                (max, max_at) = (ys[i], wl);
            }
        }
        assert_eq!(n, f.points, "points in band");
        assert!((got.mean - sum / n as f64).abs() < 1e-14, "mean");
        assert_eq!((got.min, got.min_at_nm), (min, min_at), "min");
        assert_eq!((got.max, got.max_at_nm), (max, max_at), "max");
    }
    assert!(
        band_figures(&s, 10.0, 20.0).is_err(),
        "band outside the spectrum"
    );
    assert!(band_figures(&s, 700.0, 600.0).is_err(), "inverted band");

    let other = computed(AR, 380.0, 900.0, 1.3, 10.0);
    let table = compare(&[("sp", &s), ("ar", &other)], from, to).expect("table");
    assert_eq!(table[0].1, f, "first row is the same figures");
    let mut csv = Vec::new();
    stackwise::export::csv::write_compare(&mut csv, &table).unwrap();
    let csv = String::from_utf8(csv).unwrap();
    assert_eq!(csv.lines().count(), 3, "header + two designs");
    assert!(
        csv.lines().nth(2).expect("row").starts_with("ar,450,780,"),
        "{csv}"
    );
}

#[test]
fn difference_on_equal_grids_is_plain_subtraction() {
    let a = computed(SHORTPASS, 400.0, 800.0, 4.0, 0.0);
    let b = computed(AR, 400.0, 800.0, 4.0, 0.0);
    let d = difference(&a, &b);
    assert_eq!(d.wavelength_nm, a.wavelength_nm, "shared grid");
    for i in 0..d.r.len() {
        // Exactly equal: the same subtraction, no interpolation on a shared grid.
        let exact = |x: f64, y: f64| x.to_bits() == y.to_bits();
        assert!(exact(d.r[i], a.curves.r[i] - b.curves.r[i]), "R at {i}");
        assert!(exact(d.t[i], a.curves.t[i] - b.curves.t[i]), "T at {i}");
    }
    let narrow = computed(AR, 500.0, 600.0, 3.0, 0.0);
    let d = difference(&a, &narrow);
    assert!(
        d.wavelength_nm
            .iter()
            .all(|&w| (500.0..=600.0).contains(&w)),
        "overlap only"
    );
    assert!(!d.wavelength_nm.is_empty(), "some overlap");
}
