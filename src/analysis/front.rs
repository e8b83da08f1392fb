//! The common sweep — light from the front onto a coating on a semi-infinite substrate — in
//! blocks of wavelengths solved straight into the result columns ([`solve_front_run`]).
//! Same numbers and same errors, in the same order, as the general path of
//! [`super::spectrum`].

use num_complex::Complex64;
use rayon::prelude::*;

use crate::design::ResolvedDesign;
use crate::material::MaterialError;
use crate::optics::{ColumnsMut, FrontRun, Scratch4, Side, solve_front_run};

use super::limits::check_finite_at;
use super::sweep::{all_materials, layer_count, warnings_with};
use super::{Curves, PARALLEL_MIN_WORK, Spectrum, SweepError};

/// Wavelengths per block of [`front_spectrum`]: a block's indices and results stay in cache.
const FRONT_BLOCK: usize = 256;

/// Why a block of [`front_spectrum`] stopped.
enum BlockFailure {
    /// A material has no usable index (the block's first such wavelength).
    Index(MaterialError),
    /// A result is not a finite number (the block's first such point).
    NotANumber(SweepError),
}

/// [`spectrum`] in the common case, light from the front onto a semi-infinite substrate, in
/// blocks of wavelengths: each block's indices are evaluated material by material, solved
/// straight into the result columns ([`solve_front_run`]) and checked, on all cores when the
/// work is large. The same numbers and the same errors, in the same order, as the general path.
pub(super) fn front_spectrum(
    d: &ResolvedDesign,
    wavelengths_nm: &[f64],
    aoi_deg: f64,
) -> Result<Spectrum, SweepError> {
    if let Some(&w) = wavelengths_nm
        .iter()
        .find(|w| !(w.is_finite() && **w > 0.0))
    {
        return Err(SweepError::BadWavelength { wavelength_nm: w });
    }
    let points = wavelengths_nm.len();
    let mats = all_materials(d);
    let aoi_rad = aoi_deg.to_radians();
    let mut curves = Curves::zeroed(points);
    let mut blocks = Vec::with_capacity(points.div_ceil(FRONT_BLOCK));
    let mut rest = curves.columns_mut();
    while !rest.is_empty() {
        let mid = FRONT_BLOCK.min(rest.len());
        let (head, tail) = rest.split_at(mid);
        blocks.push(head);
        rest = tail;
    }
    // One block: its indices column by column (the first failure in row order, and at it the
    // first material), its results, and the largest k of the incident medium.
    let solve = |(scratch, indices): &mut (Scratch4, Vec<Complex64>),
                 (b, mut out): (usize, ColumnsMut<'_>)|
     -> Result<f64, BlockFailure> {
        let wl = &wavelengths_nm[b * FRONT_BLOCK..][..out.len()];
        let n = wl.len();
        indices.resize(mats.len() * n, Complex64::ZERO);
        let mut first_bad: Option<(usize, MaterialError)> = None;
        for (m, mat) in mats.iter().enumerate() {
            if let Err((row, e)) = mat.indices_at(wl, &mut indices[m * n..(m + 1) * n])
                && first_bad.as_ref().is_none_or(|bad| row < bad.0)
            {
                first_bad = Some((row, e));
            }
        }
        if let Some((_, e)) = first_bad {
            return Err(BlockFailure::Index(e));
        }
        let (layer_columns, ends) = indices.split_at(d.materials.len() * n);
        let run = FrontRun {
            wavelength_nm: wl,
            aoi_rad,
            incident: &ends[..n],
            substrate: &ends[n..2 * n],
            materials: layer_columns,
            layers: &d.layers,
        };
        solve_front_run(&run, &mut out, scratch);
        check_finite_at(n, |i| out.response(i), |i| wl[i], |_| aoi_deg)
            .map_err(BlockFailure::NotANumber)?;
        Ok(ends[..n].iter().map(|z| z.im).fold(0.0, f64::max))
    };
    let fresh = || (Scratch4::default(), Vec::new());
    let ends: Vec<Result<f64, BlockFailure>> =
        if points * layer_count(d).max(1) >= PARALLEL_MIN_WORK {
            blocks
                .into_par_iter()
                .enumerate()
                .map_init(fresh, solve)
                .collect()
        } else {
            let mut state = fresh();
            blocks
                .into_iter()
                .enumerate()
                .map(|block| solve(&mut state, block))
                .collect()
        };
    // As the general path finds them: an index failure anywhere before a result that is
    // not a number, each at its first wavelength.
    let mut k_incident = 0.0_f64;
    let mut not_a_number = None;
    for end in ends {
        match end {
            Ok(k) => k_incident = k_incident.max(k),
            Err(BlockFailure::Index(e)) => return Err(e.into()),
            Err(BlockFailure::NotANumber(e)) => {
                not_a_number.get_or_insert(e);
            }
        }
    }
    if let Some(e) = not_a_number {
        return Err(e);
    }
    Ok(Spectrum {
        wavelength_nm: wavelengths_nm.to_vec(),
        aoi_deg,
        side: Side::Front,
        curves,
        warnings: warnings_with(d, wavelengths_nm, k_incident),
    })
}

#[cfg(test)]
mod tests {
    use super::super::sweep::{index_table, run, stack_at, warnings};
    use super::super::{Warning, spectrum};
    use super::*;
    use crate::material::Material;
    use crate::optics::solve4;

    /// A coating of `layers` layers: an absorbing, dispersive table (demo values) and a
    /// Sellmeier low index on a Sellmeier glass, thicknesses varied per layer.
    fn coating(layers: usize, incident: Material) -> ResolvedDesign {
        use crate::material::Model;
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
        // Fused silica and N-BK7 (Malitson 1965; Schott catalogue), first two terms.
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
        ResolvedDesign {
            incident,
            substrate: glass,
            exit: Material::user("Air", Model::Constant { n: 1.0, k: 0.0 }),
            substrate_mm: None,
            materials: vec![high, low],
            layers: (0..layers)
                .map(|i| (i % 2, 30.0 + 17.0 * (i % 7) as f64))
                .collect(),
            back_layers: Vec::new(),
        }
    }

    /// The general path: the whole index table, then four points at a time through `solve4`.
    fn general(d: &ResolvedDesign, wl: &[f64], aoi_deg: f64) -> (Curves, Vec<Warning>) {
        let mats = all_materials(d);
        let table = index_table(&mats, wl).expect("indices");
        let width = mats.len();
        let responses = run(wl.len(), layer_count(d), |lanes, scratch| {
            let stacks = lanes.map(|i| stack_at(d, &table[i * width..(i + 1) * width]));
            let aoi = [aoi_deg.to_radians(); 4];
            solve4(
                stacks.each_ref(),
                lanes.map(|i| wl[i]),
                aoi,
                Side::Front,
                scratch,
            )
        });
        (Curves::from_responses(&responses), warnings(d, wl, &table))
    }

    /// The blocked front path gives the general path's numbers exactly, and the one-point
    /// solver's to rounding: for runs shorter than a lane group, with a part-filled last group,
    /// across blocks, and large enough to run on all cores.
    #[test]
    fn the_front_path_gives_the_general_numbers() {
        use crate::material::Model;
        let air = || Material::user("Air", Model::Constant { n: 1.0, k: 0.0 });
        for (layers, points) in [(3, 1), (3, 3), (10, 5), (10, 257), (7, 1030), (30, 2003)] {
            let d = coating(layers, air());
            let wl: Vec<f64> = (0..points)
                .map(|i| 350.0 + 650.0 * f64::from(i) / f64::from(points))
                .collect();
            for aoi_deg in [0.0, 45.0, 70.0] {
                let fast = spectrum(&d, &wl, aoi_deg, Side::Front).expect("a spectrum");
                let (curves, warnings) = general(&d, &wl, aoi_deg);
                assert_eq!(
                    fast.curves, curves,
                    "{layers} layers, {points} points, {aoi_deg}°"
                );
                assert_eq!(fast.warnings, warnings);
                let mats = all_materials(&d);
                let table = index_table(&mats, &wl).expect("indices");
                let mut scratch = Vec::new();
                for (i, &w) in wl.iter().enumerate().step_by(97) {
                    let stack = stack_at(&d, &table[i * mats.len()..(i + 1) * mats.len()]);
                    let one = crate::optics::solve(
                        &stack,
                        w,
                        aoi_deg.to_radians(),
                        Side::Front,
                        &mut scratch,
                    );
                    let close = |a: f64, b: f64| (a - b).abs() <= 1e-12;
                    assert!(
                        close(fast.curves.r_p[i], one.r_p),
                        "R_p at {w} nm, {aoi_deg}°"
                    );
                    assert!(
                        close(fast.curves.t_s[i], one.t_s),
                        "T_s at {w} nm, {aoi_deg}°"
                    );
                    assert!(close(fast.curves.a[i], one.a()), "A at {w} nm, {aoi_deg}°");
                    assert!(
                        (fast.curves.amp_t_p[i] - one.amp_t_p).norm() <= 1e-12,
                        "t_p at {w} nm, {aoi_deg}°"
                    );
                }
            }
        }
    }

    /// The blocked front path reports what the general path does: the first wavelength in the
    /// sweep's order without a usable index, even when a later block fails too; and an
    /// absorbing incident medium's largest k over every block.
    #[test]
    fn the_front_path_reports_in_the_sweeps_order() {
        use crate::material::Model;
        // An incident medium whose k grows with the wavelength (demo values), largest at the
        // end of the sweep, in the last block.
        let lossy = Material::user(
            "Lossy",
            Model::Table {
                rows: vec![(300.0, 1.0, 0.0), (1500.0, 1.0, 3e-3)],
            },
        );
        let d = coating(8, lossy);
        let wl: Vec<f64> = (0..3000).map(|i| 400.0 + 0.3 * f64::from(i)).collect();
        let fast = spectrum(&d, &wl, 10.0, Side::Front).expect("a spectrum");
        assert_eq!(fast.warnings, general(&d, &wl, 10.0).1);
        assert!(
            fast.warnings
                .iter()
                .any(|w| matches!(w, Warning::AbsorbingIncident { k, .. } if *k > 2e-3)),
            "{:?}",
            fast.warnings
        );
        // n = 1.5 + 2000/λ² (λ in µm) passes the largest accepted n (1000) below about
        // 1.415 µm: falling wavelengths put the first failure in a late block.
        let mut d = coating(8, Material::user("Air", Model::Constant { n: 1.0, k: 0.0 }));
        d.materials[1] = Material::user(
            "Steep",
            Model::Cauchy {
                a: 1.5,
                b: 2000.0,
                c: 0.0,
            },
        );
        let wl: Vec<f64> = (0..3000).map(|i| 3000.0 - 0.6 * f64::from(i)).collect();
        let first_bad = *wl
            .iter()
            .find(|&&w| d.materials[1].index_at(w).is_err())
            .expect("some wavelength fails");
        match spectrum(&d, &wl, 0.0, Side::Front) {
            Err(SweepError::Material(MaterialError::NoIndex {
                wavelength_nm,
                name,
                ..
            })) => {
                assert_eq!((wavelength_nm, name.as_str()), (first_bad, "Steep"));
            }
            other => panic!("expected the first bad wavelength, got {other:?}"),
        }
    }
}
