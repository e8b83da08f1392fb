//! The Monte Carlo tolerance run: 10 000 runs of a 30-layer design over 301 wavelengths, the
//! envelope alone and with the yield against a target judged in every run.

use std::hint::black_box;
use std::ops::ControlFlow;
use std::time::Duration;

use criterion::{Criterion, criterion_group, criterion_main};
use stackwise::analysis::tolerance::{ToleranceSettings, tolerance};
use stackwise::design::{Design, Layer, Nm, Pol, Quantity, Target, TargetKind};
use stackwise::material::{Material, Model};
use stackwise::optimize::tolerance_with_yield;

/// 30 alternating layers of 2.35 and 1.46 (lossless) on 1.52, thicknesses seeded; one target
/// "R ≤ 1 %" over 400–700 nm in 1 nm steps (301 wavelengths).
fn design() -> Design {
    let mut d = Design::new_empty("bench");
    d.substrate = "G".into();
    d.materials = vec![
        Material::user("G", Model::Constant { n: 1.52, k: 0.0 }),
        Material::user("H", Model::Constant { n: 2.35, k: 0.0 }),
        Material::user("L", Model::Constant { n: 1.46, k: 0.0 }),
    ];
    let mut seed = 0x2545_f491_4f6c_dd1d_u64;
    d.layers = (0..30)
        .map(|i| {
            seed ^= seed << 13;
            seed ^= seed >> 7;
            seed ^= seed << 17;
            let nm = 20.0 + (seed % 1500) as f64 / 10.0;
            Layer::new(
                if i % 2 == 0 { "H" } else { "L" },
                Nm::new(nm).expect("positive"),
            )
        })
        .collect();
    d.targets = vec![Target {
        quantity: Quantity::R,
        pol: Pol::Mean,
        aoi_deg: 0.0,
        from_nm: 400.0,
        to_nm: 700.0,
        step_nm: 1.0,
        kind: TargetKind::AtMost,
        goal: 0.01,
        tolerance: 0.0,
        weight: 1.0,
    }];
    d
}

fn bench(c: &mut Criterion) {
    let d = design();
    let resolved = d.resolve().expect("resolves");
    let wl: Vec<f64> = (0..=300).map(|i| 400.0 + f64::from(i)).collect();
    let settings = ToleranceSettings {
        runs: 10_000,
        ..ToleranceSettings::default()
    };
    let mut g = c.benchmark_group("tolerance");
    g.sample_size(10).measurement_time(Duration::from_secs(20));
    g.bench_function("layers=30/wl=301/runs=10000", |b| {
        b.iter(|| {
            tolerance(&resolved, black_box(&wl), &settings, |_| {
                ControlFlow::Continue(())
            })
            .expect("runs")
        });
    });
    g.bench_function("layers=30/wl=301/runs=10000/yield", |b| {
        b.iter(|| {
            tolerance_with_yield(&d, black_box(&wl), &settings, |_| ControlFlow::Continue(()))
                .expect("runs")
        });
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
