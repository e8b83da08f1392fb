//! Straight-line interpolation between points sorted by rising x — the one interpolation the
//! program uses for dispersion tables, measured curves and differences of spectra.
//!
//! ```
//! use stackwise::table::interp::{held, within};
//! assert_eq!(within(&[1.0, 3.0], &[10.0, 30.0], 2.0), Some(20.0));
//! assert_eq!(within(&[1.0, 3.0], &[10.0, 30.0], 3.5), None);
//! let rows = [(1.0, 10.0), (3.0, 30.0)];
//! assert_eq!(held(&rows, 3.5, |r| r.0, |r| r.1), 30.0);
//! ```

/// Where a value of x falls among the rows.
enum Spot {
    /// Below the first row (or x is NaN).
    Before,
    /// Exactly on row `i`.
    At(usize),
    /// Strictly between rows `lo` and `lo + 1`, a fraction `t` of the way.
    Between { lo: usize, t: f64 },
    /// Above the last row.
    After,
}

fn locate<R>(rows: &[R], x: f64, at: &impl Fn(&R) -> f64) -> Spot {
    spot(rows, x, at, rows.partition_point(|r| at(r) <= x))
}

/// The spot of `x` given `hi`, the number of rows with `at(row) <= x`.
fn spot<R>(rows: &[R], x: f64, at: &impl Fn(&R) -> f64, hi: usize) -> Spot {
    if hi == 0 {
        return Spot::Before;
    }
    let lo = hi - 1;
    let x_lo = at(&rows[lo]);
    #[expect(
        clippy::float_cmp,
        reason = "a row's own x gives its own value exactly"
    )]
    if x_lo == x {
        return Spot::At(lo);
    }
    match rows.get(hi) {
        None => Spot::After,
        Some(next) => Spot::Between {
            lo,
            t: (x - x_lo) / (at(next) - x_lo),
        },
    }
}

impl Spot {
    /// The `N` values of `rows` here: the end rows' (`ends`) outside them, a row's own on it,
    /// interpolated between two.
    fn values<R, const N: usize>(
        self,
        rows: &[R],
        (first, last): (&R, &R),
        vals: &impl Fn(&R) -> [f64; N],
    ) -> [f64; N] {
        match self {
            Spot::Before => vals(first),
            Spot::After => vals(last),
            Spot::At(i) => vals(&rows[i]),
            Spot::Between { lo, t } => {
                let (a, b) = (vals(&rows[lo]), vals(&rows[lo + 1]));
                std::array::from_fn(|i| blend(a[i], b[i], t))
            }
        }
    }
}

fn blend(a: f64, b: f64, t: f64) -> f64 {
    a + t * (b - a)
}

/// The value at `x` of rows sorted by rising `at(row)`, interpolated linearly in `at`; the
/// first and last values are held outside the rows. A row's own x gives its own value
/// exactly. NaN when there are no rows.
#[must_use]
pub fn held<R>(rows: &[R], x: f64, at: impl Fn(&R) -> f64, val: impl Fn(&R) -> f64) -> f64 {
    let [v] = held_each(rows, x, at, |r| [val(r)]);
    v
}

/// [`held`] for `N` values per row at once (one search of the rows for all of them).
#[must_use]
pub fn held_each<R, const N: usize>(
    rows: &[R],
    x: f64,
    at: impl Fn(&R) -> f64,
    vals: impl Fn(&R) -> [f64; N],
) -> [f64; N] {
    let (Some(first), Some(last)) = (rows.first(), rows.last()) else {
        return [f64::NAN; N];
    };
    locate(rows, x, &at).values(rows, (first, last), &vals)
}

/// [`held_each`] at each of `xs`, handing `out(i, values)` the values at `xs[i]`: the same
/// numbers, but rising `xs` (a spectrum's wavelengths) walk the rows from where the previous
/// one was found instead of searching them all again.
pub fn held_each_at<R, const N: usize>(
    rows: &[R],
    xs: &[f64],
    at: impl Fn(&R) -> f64,
    vals: impl Fn(&R) -> [f64; N],
    mut out: impl FnMut(usize, [f64; N]),
) {
    let (Some(first), Some(last)) = (rows.first(), rows.last()) else {
        for i in 0..xs.len() {
            out(i, [f64::NAN; N]);
        }
        return;
    };
    // The number of rows with at(row) <= the previous x.
    let mut hi = 0;
    for (i, &x) in xs.iter().enumerate() {
        let step_on = |hi: usize| rows.get(hi).is_some_and(|r| at(r) <= x);
        let behind = hi > 0 && at(&rows[hi - 1]) > x;
        if behind || x.is_nan() {
            hi = rows.partition_point(|r| at(r) <= x);
        } else {
            // A few steps forward, then a search if x has jumped further.
            let mut steps = 0;
            while step_on(hi) && steps < 4 {
                hi += 1;
                steps += 1;
            }
            if step_on(hi) {
                hi += rows[hi..].partition_point(|r| at(r) <= x);
            }
        }
        out(i, spot(rows, x, &at, hi).values(rows, (first, last), &vals));
    }
}

/// The value of the curve `ys` over rising `xs` at `x` by straight-line interpolation, or
/// `None` outside `xs[0]..=xs[last]` (and for NaN). A point of `xs` gives its own `ys` value
/// exactly. Extra entries of the longer slice are ignored.
#[must_use]
pub fn within(xs: &[f64], ys: &[f64], x: f64) -> Option<f64> {
    let n = xs.len().min(ys.len());
    let (xs, ys) = (&xs[..n], &ys[..n]);
    match locate(xs, x, &|&v| v) {
        Spot::Before | Spot::After => None,
        Spot::At(i) => ys.get(i).copied(),
        Spot::Between { lo, t } => Some(blend(ys[lo], ys[lo + 1], t)),
    }
}

#[cfg(test)]
#[allow(
    clippy::float_cmp,
    reason = "these results must be exact, not merely close"
)]
mod tests {
    use super::*;

    #[test]
    fn within_interpolates_inside_and_refuses_outside() {
        let xs = [400.0, 500.0, 700.0];
        let ys = [1.0, 2.0, 0.0];
        assert_eq!(within(&xs, &ys, 450.0), Some(1.5), "midpoint");
        assert_eq!(within(&xs, &ys, 600.0), Some(1.0), "midpoint");
        assert_eq!(within(&xs, &ys, 500.0), Some(2.0), "node");
        assert_eq!(within(&xs, &ys, 400.0), Some(1.0), "first node");
        assert_eq!(within(&xs, &ys, 700.0), Some(0.0), "last node");
        assert_eq!(within(&xs, &ys, 399.9), None, "below");
        assert_eq!(within(&xs, &ys, 700.1), None, "above");
        assert_eq!(within(&xs, &ys, f64::NAN), None, "NaN");
        assert_eq!(within(&[], &[], 1.0), None, "empty");
        assert_eq!(
            within(&xs, &ys[..2], 600.0),
            None,
            "shorter ys limit the span"
        );
    }

    /// Walking rising, falling, repeated and jumping xs (and NaN) gives exactly what one
    /// search per x gives.
    #[test]
    fn walking_the_rows_equals_searching_them() {
        let rows: Vec<(f64, f64, f64)> = (0..50)
            .map(|i| {
                (
                    400.0 + 10.0 * f64::from(i),
                    f64::from(i).sin(),
                    f64::from(i) * 0.1,
                )
            })
            .collect();
        let mut xs: Vec<f64> = (0..300).map(|i| 380.0 + 0.5 * f64::from(i)).collect();
        xs.extend([
            400.0,
            400.0,
            890.0,
            395.0,
            1000.0,
            650.0,
            f64::NAN,
            500.0,
            399.9,
        ]);
        xs.extend((0..40).map(|i| 900.0 - 13.0 * f64::from(i)));
        let (at, vals) = (|r: &(f64, f64, f64)| r.0, |r: &(f64, f64, f64)| [r.1, r.2]);
        let mut seen = 0;
        held_each_at(&rows, &xs, at, vals, |i, v| {
            let one = held_each(&rows, xs[i], at, vals);
            for k in 0..2 {
                assert!(
                    v[k].to_bits() == one[k].to_bits(),
                    "x = {}: {:?} vs {:?}",
                    xs[i],
                    v,
                    one
                );
            }
            seen += 1;
        });
        assert_eq!(seen, xs.len());
    }

    #[test]
    fn held_holds_the_ends() {
        let rows = [(400.0, 2.0), (600.0, 1.0)];
        let at = |r: &(f64, f64)| r.0;
        let val = |r: &(f64, f64)| r.1;
        assert_eq!(held(&rows, 500.0, at, val), 1.5, "midpoint");
        assert_eq!(held(&rows, 300.0, at, val), 2.0, "first value held");
        assert_eq!(held(&rows, 900.0, at, val), 1.0, "last value held");
        assert_eq!(held(&rows, 600.0, at, val), 1.0, "last node");
        assert!(held(&rows[..0], 500.0, at, val).is_nan(), "no rows");
        assert_eq!(held(&rows[..1], 900.0, at, val), 2.0, "a single row");
    }
}
