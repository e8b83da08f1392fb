//! The benches' shared design.

use stackwise::design::{Design, Layer, Nm, Pol, Quantity, Target, TargetKind};
use stackwise::material::{Material, Model};

/// `layers` alternating layers of 2.35 and 1.46 (lossless) on 1.52, thicknesses seeded, and one
/// target "R ≤ `goal`" over 400–700 nm in 1 nm steps (301 wavelengths) at `aoi_deg`.
pub fn alternating(layers: usize, aoi_deg: f64, goal: f64) -> Design {
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
        goal,
        tolerance: 0.0,
        weight: 1.0,
        measure: stackwise::design::Measure::Spectral,
    }];
    d
}
