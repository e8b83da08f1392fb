//! One merit-plus-gradient evaluation, the optimiser's inner loop: 12 layers × 301
//! wavelengths at normal incidence, and 60 layers × 301 wavelengths at 45° (s and p).

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use stackwise::design::{Design, Layer, Nm, Pol, Quantity, Target, TargetKind};
use stackwise::material::{Material, Model};
use stackwise::optimize::Evaluator;

/// `layers` alternating layers of 2.35 and 1.46 (lossless) on 1.52, thicknesses seeded, and one
/// target over 400–700 nm in 1 nm steps (301 wavelengths) at `aoi_deg`.
fn problem(layers: usize, aoi_deg: f64) -> (Evaluator, Vec<(usize, f64)>) {
    let mut d = Design::new_empty("bench");
    d.substrate = "G".into();
    d.materials = vec![
        Material::user("G", Model::Constant { n: 1.52, k: 0.0 }),
        Material::user("H", Model::Constant { n: 2.35, k: 0.0 }),
        Material::user("L", Model::Constant { n: 1.46, k: 0.0 }),
    ];
    let mut seed = 0x2545_f491_4f6c_dd1d_u64;
    d.layers = (0..layers)
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
        aoi_deg,
        from_nm: 400.0,
        to_nm: 700.0,
        step_nm: 1.0,
        kind: TargetKind::AtMost,
        goal: 0.0,
        tolerance: 0.0,
        weight: 1.0,
        measure: stackwise::design::Measure::Spectral,
    }];
    let ev = Evaluator::new(&d, &[]).expect("valid bench design");
    let layers = ev.layers_of(&d);
    (ev, layers)
}

fn bench(c: &mut Criterion) {
    let mut g = c.benchmark_group("merit+gradient");
    for (layers, aoi) in [(12, 0.0), (60, 45.0)] {
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
