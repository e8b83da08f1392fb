//! One merit-plus-gradient evaluation, the optimiser's inner loop: 12 layers × 301
//! wavelengths at normal incidence, 60 layers × 301 wavelengths at 45° (s and p), and 10 and
//! 30 layers × 301 wavelengths at 0° and 45°.

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use stackwise::optimize::Evaluator;

mod common;

/// The shared bench design with its target "R ≤ 0" at `aoi_deg`, ready to evaluate.
fn problem(layers: usize, aoi_deg: f64) -> (Evaluator, Vec<(usize, f64)>) {
    let d = common::alternating(layers, aoi_deg, 0.0);
    let ev = Evaluator::new(&d, &[]).expect("valid bench design");
    let layers = ev.layers_of(&d);
    (ev, layers)
}

fn bench(c: &mut Criterion) {
    let mut g = c.benchmark_group("merit+gradient");
    for (layers, aoi) in [
        (12, 0.0),
        (60, 45.0),
        (10, 0.0),
        (10, 45.0),
        (30, 0.0),
        (30, 45.0),
    ] {
        let (ev, l) = problem(layers, aoi);
        let mut grad = Vec::new();
        g.bench_function(format!("layers={layers}/wl=301/aoi={aoi}"), |b| {
            b.iter(|| black_box(ev.merit_gradient(black_box(&l), &mut grad)));
        });
        g.bench_function(
            format!("merit-only/layers={layers}/wl=301/aoi={aoi}"),
            |b| {
                b.iter(|| black_box(ev.merit(black_box(&l))));
            },
        );
    }
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
