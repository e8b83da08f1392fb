//! Solver speed: {10, 100, 250} layers × {1001, 10001} wavelengths × {0°, 45°}, with dispersive
//! and absorbing materials, on one thread and on all cores; 10 and 250 layers on a thick
//! substrate. Throughput is reported in
//! layer·wavelength elements (s and p together), so ns per element = 1 / throughput. Also the
//! Monte Carlo tolerances and layer sensitivities of a 30-layer design. The optimiser's case,
//! small stacks over 301 wavelengths with indices evaluated and media tilted beforehand, with
//! and without the derivatives for every thickness (`small/…`).

use std::hint::black_box;
use std::ops::ControlFlow;
use std::time::Duration;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use num_complex::Complex64;
use stackwise::analysis::sensitivity::sensitivity;
use stackwise::analysis::tolerance::{ToleranceSettings, tolerance};
use stackwise::analysis::{angle_scan, angles_deg, spectrum, wavelengths_nm};
use stackwise::design::{Pol, Quantity, ResolvedDesign};
use stackwise::material::{Material, Model};
use stackwise::optics::{
    Gradient, GradientScratch4, Media4, Side, StackAt, solve_gradient4, solve4_with,
};

/// A design of `layers` alternating layers: a dispersive, weakly absorbing high index (a table
/// with k) and a Sellmeier low index, on a Sellmeier glass. Thicknesses vary per layer
/// (seeded), as in an optimised design.
fn design(layers: usize) -> ResolvedDesign {
    let high = Material::user(
        "H",
        Model::Table {
            rows: (0..=200)
                .map(|i| {
                    let wl = 300.0 + 5.0 * f64::from(i);
                    (wl, 2.2 + 30_000.0 / (wl * wl), 2e-3 * 400.0 / wl)
                })
                .collect(),
        },
    );
    let low = Material::user(
        "L",
        Model::Sellmeier {
            a: 0.0,
            b: vec![0.696_166_3, 0.407_942_6],
            c: vec![0.004_679_15, 0.013_512_06],
        },
    );
    let glass = Material::user(
        "G",
        Model::Sellmeier {
            a: 0.0,
            b: vec![1.039_612_12, 0.231_792_344],
            c: vec![0.006_000_698_67, 0.020_017_914_4],
        },
    );
    let air = Material::user("Air", Model::Constant { n: 1.0, k: 0.0 });
    let mut seed = 0x2545_f491_4f6c_dd1d_u64;
    let layers = (0..layers)
        .map(|i| {
            seed ^= seed << 13;
            seed ^= seed >> 7;
            seed ^= seed << 17;
            (i % 2, 20.0 + (seed % 2000) as f64 / 10.0)
        })
        .collect();
    ResolvedDesign {
        incident: air.clone(),
        substrate: glass,
        exit: air,
        substrate_mm: None,
        materials: vec![high, low],
        layers,
        back_layers: Vec::new(),
    }
}

fn solver(c: &mut Criterion) {
    let one = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .expect("a thread pool");
    let all = rayon::ThreadPoolBuilder::new()
        .build()
        .expect("a thread pool");
    for layers in [10, 100, 250] {
        let d = design(layers);
        for points in [1001, 10001] {
            let wl = wavelengths_nm(400.0, 1400.0, 1000.0 / (points - 1) as f64).expect("grid");
            assert_eq!(wl.len(), points, "grid size");
            let mut g = c.benchmark_group(format!("tmm/layers={layers}/wl={points}"));
            g.throughput(Throughput::Elements((layers * points) as u64));
            g.sample_size(10).warm_up_time(Duration::from_millis(300));
            g.measurement_time(Duration::from_secs(if layers * points > 500_000 {
                3
            } else {
                1
            }));
            for aoi in [0.0, 45.0] {
                // The timing loop runs inside the pool (not one hand-over to it per call).
                g.bench_function(format!("aoi={aoi}/threads=1"), |b| {
                    one.install(|| b.iter(|| spectrum(black_box(&d), &wl, aoi, Side::Front)));
                });
                if points == 10001 {
                    g.bench_function(
                        format!("aoi={aoi}/threads={}", all.current_num_threads()),
                        |b| {
                            all.install(|| {
                                b.iter(|| spectrum(black_box(&d), &wl, aoi, Side::Front));
                            });
                        },
                    );
                }
            }
            g.finish();
        }
    }
}

/// The same designs on a 2 mm substrate (incoherent, so the coating is solved from both
/// sides and the back face added by intensity), one thread.
fn thick(c: &mut Criterion) {
    let one = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .expect("a thread pool");
    let wl = wavelengths_nm(400.0, 1400.0, 0.1).expect("grid");
    for layers in [10, 250] {
        let mut d = design(layers);
        d.substrate_mm = Some(2.0);
        let mut g = c.benchmark_group(format!("thick/layers={layers}/wl={}", wl.len()));
        g.throughput(Throughput::Elements((layers * wl.len()) as u64));
        g.sample_size(10).warm_up_time(Duration::from_millis(300));
        g.measurement_time(Duration::from_secs(2));
        g.bench_function("aoi=45/threads=1", |b| {
            one.install(|| b.iter(|| spectrum(black_box(&d), &wl, 45.0, Side::Front)));
        });
        g.finish();
    }
}

/// One full live recompute of the window: a 100-layer dispersive design over 1001 wavelengths
/// plus a 90-angle scan, as the window runs it after every edit (all cores).
fn live(c: &mut Criterion) {
    let d = design(100);
    let wl = wavelengths_nm(400.0, 1400.0, 1.0).expect("grid");
    let angles = angles_deg(0.0, 89.0, 1.0).expect("angles");
    assert_eq!((wl.len(), angles.len()), (1001, 90), "sizes");
    let mut g = c.benchmark_group("live/layers=100");
    g.sample_size(20).warm_up_time(Duration::from_millis(300));
    g.measurement_time(Duration::from_secs(2));
    g.bench_function("wl=1001+angles=90", |b| {
        b.iter(|| {
            let s = spectrum(black_box(&d), &wl, 0.0, Side::Front);
            let a = angle_scan(black_box(&d), 550.0, &angles, Side::Front);
            (s, a)
        });
    });
    g.finish();
}

/// Monte Carlo tolerances of a 30-layer dispersive design: 10 000 runs over 301 wavelengths
/// (all cores), and the sensitivity of its layers.
fn production(c: &mut Criterion) {
    let d = design(30);
    let wl = wavelengths_nm(400.0, 1000.0, 2.0).expect("grid");
    assert_eq!(wl.len(), 301, "grid size");
    let settings = ToleranceSettings {
        runs: 10_000,
        ..ToleranceSettings::default()
    };
    let mut g = c.benchmark_group("tolerance/layers=30/wl=301");
    g.throughput(Throughput::Elements((30 * 301 * settings.runs) as u64));
    g.sample_size(10).warm_up_time(Duration::from_millis(300));
    g.measurement_time(Duration::from_secs(3));
    g.bench_function("runs=10000", |b| {
        b.iter(|| tolerance(black_box(&d), &wl, &settings, |_| ControlFlow::Continue(())));
    });
    g.finish();
    let mut g = c.benchmark_group("sensitivity/layers=30/wl=301");
    g.sample_size(10).warm_up_time(Duration::from_millis(300));
    g.measurement_time(Duration::from_secs(1));
    g.bench_function("R", |b| {
        b.iter(|| sensitivity(black_box(&d), &wl, 0.0, Quantity::R, Pol::Mean));
    });
    g.finish();
}

/// The optimiser's inner loop at the engine: {10, 30} layers × 301 wavelengths at 0° and 45°,
/// indices evaluated beforehand (a dispersive, absorbing high index and a dispersive low one
/// on glass), the media tilted once as the optimiser does, four wavelengths per pass: R and T
/// alone (`rt`, `solve4_with`) and with the derivatives for every thickness (`derivatives`,
/// `solve_gradient4`).
fn small(c: &mut Criterion) {
    let wl: Vec<f64> = (0..301).map(|i| 400.0 + 2.0 * f64::from(i)).collect();
    // Demo dispersion (Cauchy-like, invented for the benchmark).
    let rows: Vec<[Complex64; 2]> = wl
        .iter()
        .map(|&w| {
            [
                Complex64::new(2.2 + 30_000.0 / (w * w), 2e-3 * 400.0 / w),
                Complex64::new(1.45 + 3_000.0 / (w * w), 0.0),
            ]
        })
        .collect();
    for layers in [10, 30] {
        let list: Vec<(usize, f64)> = (0..layers)
            .map(|i| (i % 2, 40.0 + 7.0 * (i % 11) as f64))
            .collect();
        let stacks: Vec<StackAt<'_>> = rows
            .iter()
            .map(|row| StackAt {
                incident: Complex64::new(1.0, 0.0),
                substrate: Complex64::new(1.52, 0.0),
                exit: Complex64::new(1.0, 0.0),
                materials: row,
                layers: &list,
                back_layers: &[],
                substrate_mm: None,
            })
            .collect();
        let mut g = c.benchmark_group(format!("small/layers={layers}/wl=301"));
        g.throughput(Throughput::Elements((layers * wl.len()) as u64));
        g.sample_size(20).warm_up_time(Duration::from_millis(300));
        g.measurement_time(Duration::from_secs(1));
        for aoi_deg in [0.0_f64, 45.0] {
            let aoi = aoi_deg.to_radians();
            // As the optimiser runs: the media tilted once per optimisation, then every pass
            // for new thicknesses reuses them.
            let quads: Vec<[usize; 4]> = (0..wl.len())
                .step_by(4)
                .map(|first| std::array::from_fn(|k| (first + k).min(wl.len() - 1)))
                .collect();
            let media: Vec<Media4> = quads
                .iter()
                .map(|q| Media4::new(q.map(|i| &stacks[i]), [aoi; 4], Side::Front))
                .collect();
            g.bench_function(format!("aoi={aoi_deg}/rt"), |b| {
                b.iter(|| {
                    let mut sum = 0.0;
                    for (q, m) in quads.iter().zip(&media) {
                        let four = solve4_with(m, q.map(|i| &stacks[i]), q.map(|i| wl[i]));
                        sum += four.iter().map(|r| r.r() + r.t()).sum::<f64>();
                    }
                    black_box(sum)
                });
            });
            let mut grads: [Gradient; 4] = Default::default();
            // As the optimiser asks: the derivatives of R and T.
            let mut scratch = GradientScratch4::intensities_only();
            g.bench_function(format!("aoi={aoi_deg}/derivatives"), |b| {
                b.iter(|| {
                    let mut sum = 0.0;
                    for (q, m) in quads.iter().zip(&media) {
                        solve_gradient4(
                            m,
                            q.map(|i| &stacks[i]),
                            q.map(|i| wl[i]),
                            &mut scratch,
                            &mut grads,
                        );
                        sum += grads.iter().map(|g| g.d_r_s[0] + g.d_t_p[0]).sum::<f64>();
                    }
                    black_box(sum)
                });
            });
        }
        g.finish();
    }
}

criterion_group!(benches, solver, thick, live, production, small);
criterion_main!(benches);
