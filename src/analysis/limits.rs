//! Guards around every sweep: the work is estimated and capped before anything is computed,
//! and a result that is not a finite number stops the sweep with an error instead of being
//! handed on as data.

use crate::number::Short;
use crate::optics::Response;

use super::SweepError;

/// Most layer·points one sweep may cost (layers × wavelengths × angles). The solver manages
/// about 50 million layer·points a second on one core (see DEVELOPERS.md, Benchmarks), so this
/// is some ten seconds on a small machine.
pub const MAX_WORK: f64 = 1e9;

/// Layer·points the solver does per second on one core, for the time estimate in messages.
const WORK_PER_CORE_S: f64 = 5e7;

/// Refuses a sweep of `layers` layers over `points` wavelengths and `angles` angles whose cost
/// passes [`MAX_WORK`], with the estimate and how to bring it down.
///
/// ```
/// use stackwise::analysis::check_work;
/// assert!(check_work(250, 10_001, 1).is_ok());
/// let e = check_work(10_000, 1_960_001, 1).unwrap_err().to_string();
/// assert!(e.contains("1.96e10 layer·points"), "{e}");
/// assert!(e.contains("at most 100000 wavelengths"), "{e}");
/// ```
pub fn check_work(layers: usize, points: usize, angles: usize) -> Result<(), SweepError> {
    let per_point = layers.max(1) as f64;
    let work = per_point * points as f64 * angles as f64;
    if work <= MAX_WORK {
        return Ok(());
    }
    let cores = rayon::current_num_threads().max(1) as f64;
    // The most points (of the larger axis) this design allows within the cap.
    let fit = (MAX_WORK / per_point / (points.min(angles).max(1) as f64)).floor();
    Err(SweepError::TooMuchWork {
        work,
        layers,
        points,
        angles,
        seconds: work / (WORK_PER_CORE_S * cores),
        fit: fit as usize,
    })
}

/// The nine result columns of a [`Response`] with their names, for the finiteness check.
fn figures(r: &Response) -> [(&'static str, f64); 6] {
    [
        ("R_s", r.r_s),
        ("R_p", r.r_p),
        ("T_s", r.t_s),
        ("T_p", r.t_p),
        ("A_s", r.a_s),
        ("A_p", r.a_p),
    ]
}

/// The last guard: the first point whose R, T or A (or complex amplitude) is not a finite
/// number stops the sweep with an error naming the wavelength, angle and quantity.
pub(super) fn check_finite(
    responses: &[Response],
    wavelength_nm: impl Fn(usize) -> f64,
    aoi_deg: impl Fn(usize) -> f64,
) -> Result<(), SweepError> {
    check_finite_at(responses.len(), |i| responses[i], wavelength_nm, aoi_deg)
}

/// [`check_finite`] for `points` points given one at a time by `response`.
pub(super) fn check_finite_at(
    points: usize,
    response: impl Fn(usize) -> Response,
    wavelength_nm: impl Fn(usize) -> f64,
    aoi_deg: impl Fn(usize) -> f64,
) -> Result<(), SweepError> {
    // The quick test first: a sum of numbers is finite only if every one is (a NaN or an
    // infinity carries through; a finite overflow only sends us to the careful search).
    let total = |r: &Response| {
        let z = r.amp_r_s + r.amp_r_p + r.amp_t_s + r.amp_t_p;
        r.r_s + r.r_p + r.t_s + r.t_p + r.a_s + r.a_p + z.re + z.im
    };
    if (0..points).all(|i| total(&response(i)).is_finite()) {
        return Ok(());
    }
    for i in 0..points {
        let r = &response(i);
        let amplitudes = [
            ("r_s", r.amp_r_s),
            ("r_p", r.amp_r_p),
            ("t_s", r.amp_t_s),
            ("t_p", r.amp_t_p),
        ];
        let bad = figures(r)
            .into_iter()
            .find(|(_, x)| !x.is_finite())
            .map(|(q, x)| (q, Short(x).to_string()))
            .or_else(|| {
                amplitudes
                    .into_iter()
                    .find(|(_, z)| !(z.re.is_finite() && z.im.is_finite()))
                    .map(|(q, z)| (q, z.to_string()))
            });
        if let Some((quantity, value)) = bad {
            return Err(SweepError::NotANumber {
                quantity,
                value,
                wavelength_nm: wavelength_nm(i),
                aoi_deg: aoi_deg(i),
            });
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_nan_anywhere_is_named_with_its_point() {
        let mut rs = vec![Response::default(); 5];
        check_finite(&rs, |i| 400.0 + i as f64, |_| 30.0).unwrap();
        rs[3].t_p = f64::NAN;
        let e = check_finite(&rs, |i| 400.0 + i as f64, |_| 30.0)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("T_p") && e.contains("403 nm") && e.contains("30°"),
            "{e}"
        );
        rs[3].t_p = 0.0;
        rs[1].amp_r_s.im = f64::INFINITY;
        let e = check_finite(&rs, |_| 550.0, |i| i as f64)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("r_s") && e.contains("550 nm") && e.contains("1°"),
            "{e}"
        );
    }

    #[test]
    fn work_is_layers_times_points_times_angles() {
        assert!(
            check_work(0, 2_000_000, 1).is_ok(),
            "no layers: one unit a point"
        );
        assert!(check_work(1000, 1000, 1000).is_ok(), "exactly the cap");
        let e = check_work(1000, 1001, 1000).unwrap_err().to_string();
        assert!(
            e.contains("1000 layers × 1001 wavelengths × 1000 angles"),
            "{e}"
        );
    }
}
