//! The characteristic-matrix loop for four independent points at once (four wavelengths, or
//! four angles), in SIMD lanes. Same mathematics as [`super::coherent`]; each layer's matrix is
//! always scaled by e^(−Im δ) (so no division is needed), every few layers the running
//! [B; C] of each lane is brought back near 1 by a power of two (so long stacks in a stop band
//! cannot overflow), and both scales are carried as logarithms to the end.

use num_complex::Complex64;
use wide::f64x4;

use super::tmm::{BIG, Coherent, RENORM_EVERY, SMALL, Tilted, finish, renorm_factor};

/// Four complex numbers, real and imaginary parts in separate lanes.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Cx4 {
    re: f64x4,
    im: f64x4,
}

impl Cx4 {
    fn gather(z: [Complex64; 4]) -> Self {
        Self {
            re: f64x4::from(z.map(|z| z.re)),
            im: f64x4::from(z.map(|z| z.im)),
        }
    }

    fn lane(self, i: usize) -> Complex64 {
        Complex64::new(self.re.to_array()[i], self.im.to_array()[i])
    }

    #[inline]
    fn mul(self, o: Self) -> Self {
        Self {
            re: self.re * o.re - self.im * o.im,
            im: self.re * o.im + self.im * o.re,
        }
    }

    #[inline]
    fn sub(self, o: Self) -> Self {
        Self {
            re: self.re - o.re,
            im: self.im - o.im,
        }
    }
}

/// Rescales each lane's [B; C] by a power of two when it has left [`SMALL`, `BIG`] (rare: a
/// quick test of all lanes first); the natural logarithm taken out is added to `log_norm`.
fn renorm4(b: &mut Cx4, c: &mut Cx4, log_norm: &mut f64x4) {
    let m = b.re.abs().max(b.im.abs()).max(c.re.abs()).max(c.im.abs());
    if !(m.simd_gt(f64x4::splat(BIG)) | m.simd_lt(f64x4::splat(SMALL))).any() {
        return;
    }
    let f = m.to_array().map(|m| renorm_factor(m).unwrap_or(1.0));
    let fv = f64x4::from(f);
    for x in [&mut b.re, &mut b.im, &mut c.re, &mut c.im] {
        *x *= fv;
    }
    *log_norm -= f64x4::from(f.map(f64::ln));
}

/// A medium at four points: q and the admittances per lane.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Tilted4 {
    q: Cx4,
    eta_s: Cx4,
    inv_eta_s: Cx4,
    eta_p: Cx4,
    inv_eta_p: Cx4,
    /// q is real in every lane: the layer neither absorbs nor is evanescent (no exp needed).
    real: bool,
}

impl Tilted4 {
    pub(crate) fn gather(t: [&Tilted; 4]) -> Self {
        Self {
            q: Cx4::gather(t.map(|t| t.q)),
            eta_s: Cx4::gather(t.map(|t| t.eta_s)),
            inv_eta_s: Cx4::gather(t.map(|t| t.inv_eta_s)),
            eta_p: Cx4::gather(t.map(|t| t.eta_p)),
            inv_eta_p: Cx4::gather(t.map(|t| t.inv_eta_p)),
            real: t.iter().all(|t| t.q.im == 0.0),
        }
    }
}

/// [`super::coherent`] for four points: `incident`, `substrate` and each layer's medium are
/// given per lane, the thicknesses are shared.
pub(crate) fn coherent4<'a>(
    incident: [&Tilted; 4],
    layers: impl Iterator<Item = (&'a Tilted4, f64)>,
    substrate: [&Tilted; 4],
    wavelength_nm: [f64; 4],
) -> [Coherent; 4] {
    let k0 = f64x4::from(wavelength_nm.map(|w| std::f64::consts::TAU / w));
    let one = Cx4 {
        re: f64x4::ONE,
        im: f64x4::ZERO,
    };
    let half = f64x4::splat(0.5);
    let (mut bs, mut cs) = (one, Cx4::gather(substrate.map(|t| t.eta_s)));
    let (mut bp, mut cp) = (one, Cx4::gather(substrate.map(|t| t.eta_p)));
    let mut log_scale = f64x4::ZERO;
    let (mut norm_s, mut norm_p) = (f64x4::ZERO, f64x4::ZERO);
    let mut since_renorm = 0;
    for (m, d_nm) in layers {
        since_renorm += 1;
        if since_renorm > RENORM_EVERY {
            since_renorm = 1;
            renorm4(&mut bs, &mut cs, &mut norm_s);
            renorm4(&mut bp, &mut cp, &mut norm_p);
        }
        let kd = k0 * f64x4::splat(d_nm);
        let a = m.q.re * kd;
        let (sin_a, cos_a) = a.sin_cos();
        if m.real {
            // Lossless and propagating: cos δ and the admittances are real, i sin δ is
            // imaginary, so each complex product is two real ones.
            let rotate = |b: Cx4, c: Cx4, eta: f64x4, inv_eta: f64x4| {
                let (u, v) = (sin_a * inv_eta, sin_a * eta);
                let b2 = Cx4 {
                    re: cos_a * b.re + u * c.im,
                    im: cos_a * b.im - u * c.re,
                };
                let c2 = Cx4 {
                    re: cos_a * c.re + v * b.im,
                    im: cos_a * c.im - v * b.re,
                };
                (b2, c2)
            };
            (bs, cs) = rotate(bs, cs, m.eta_s.re, m.inv_eta_s.re);
            (bp, cp) = rotate(bp, cp, m.eta_p.re, m.inv_eta_p.re);
            continue;
        }
        // cosh b · e^(−b) and sinh b · e^(−b), with b = Im δ >= 0 (q is on the decaying branch)
        let b = m.q.im * kd;
        let em = (-b).exp();
        let em2 = em * em;
        log_scale += b;
        let (ch, sh) = ((f64x4::ONE + em2) * half, (f64x4::ONE - em2) * half);
        // cos(a + ib) = cos a cosh b − i sin a sinh b; i sin(a + ib) = −cos a sinh b + i sin a cosh b
        let cos_d = Cx4 {
            re: cos_a * ch,
            im: -(sin_a * sh),
        };
        let i_sin_d = Cx4 {
            re: -(cos_a * sh),
            im: sin_a * ch,
        };
        let (xs, ys) = (i_sin_d.mul(m.inv_eta_s), i_sin_d.mul(m.eta_s));
        (bs, cs) = (cos_d.mul(bs).sub(xs.mul(cs)), cos_d.mul(cs).sub(ys.mul(bs)));
        let (xp, yp) = (i_sin_d.mul(m.inv_eta_p), i_sin_d.mul(m.eta_p));
        (bp, cp) = (cos_d.mul(bp).sub(xp.mul(cp)), cos_d.mul(cp).sub(yp.mul(bp)));
    }
    renorm4(&mut bs, &mut cs, &mut norm_s);
    renorm4(&mut bp, &mut cp, &mut norm_p);
    let (log_s, log_p) = (
        (log_scale + norm_s).to_array(),
        (log_scale + norm_p).to_array(),
    );
    std::array::from_fn(|i| {
        let (inc, sub) = (incident[i], substrate[i]);
        let cos_ratio = (inc.q / inc.n) / (sub.q / sub.n);
        Coherent {
            s: finish(
                inc.eta_s,
                bs.lane(i),
                cs.lane(i),
                sub.eta_s,
                Complex64::ONE,
                log_s[i],
            ),
            p: finish(
                inc.eta_p,
                bp.lane(i),
                cp.lane(i),
                sub.eta_p,
                cos_ratio,
                log_p[i],
            ),
        }
    })
}
