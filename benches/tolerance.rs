//! The Monte Carlo tolerance run: 10 000 runs of a 30-layer design over 301 wavelengths, the
//! envelope alone and with the yield against a target judged in every run.

use std::hint::black_box;
use std::ops::ControlFlow;
use std::time::Duration;

use criterion::{Criterion, criterion_group, criterion_main};
use stackwise::analysis::tolerance::{ToleranceSettings, tolerance};
use stackwise::optimize::tolerance_with_yield;

mod common;

fn bench(c: &mut Criterion) {
    // 30 layers; the target "R ≤ 1 %" over the 301 wavelengths.
    let d = common::alternating(30, 0.0, 0.01);
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
