//! Solver speed: {10, 100, 250} layers × {1001, 10001} wavelengths × {0°, 45°}, with dispersive
//! and absorbing materials, on one thread and on all cores. Throughput is reported in
//! layer·wavelength elements (s and p together), so ns per element = 1 / throughput. Also the
//! Monte Carlo tolerances and layer sensitivities of a 30-layer design.

use std::hint::black_box;
use std::ops::ControlFlow;
use std::time::Duration;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use stackwise::analysis::sensitivity::sensitivity;
use stackwise::analysis::tolerance::{ToleranceSettings, tolerance};
use stackwise::analysis::{angle_scan, angles_deg, spectrum, wavelengths_nm};
use stackwise::design::{Pol, Quantity, ResolvedDesign};
use stackwise::material::{Material, Model};
use stackwise::optics::Side;

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
                g.bench_function(format!("aoi={aoi}/threads=1"), |b| {
                    b.iter(|| one.install(|| spectrum(black_box(&d), &wl, aoi, Side::Front)));
                });
                if points == 10001 {
                    g.bench_function(
                        format!("aoi={aoi}/threads={}", all.current_num_threads()),
                        |b| {
                            b.iter(|| {
                                all.install(|| spectrum(black_box(&d), &wl, aoi, Side::Front))
                            });
                        },
                    );
                }
            }
            g.finish();
        }
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

criterion_group!(benches, solver, live, production);
criterion_main!(benches);
