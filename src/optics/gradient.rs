//! Analytic derivatives of R, T (s and p) and of the coating's complex amplitudes with respect
//! to every layer thickness, in one forward and one backward pass over the stack.
//!
//! # Method
//!
//! For one coherent problem, [B; C] = M_L ⋯ M_1 [1; η_sub] (conventions in the module doc of
//! [`crate::optics`]). The forward pass keeps the vector v_j = M_j ⋯ M_1 [1; η_sub] below each
//! layer; the backward pass carries row vectors w^T M_L ⋯ M_(j+1) above it (an adjoint), so
//! that ∂[B; C]/∂d_j contracted with w is w^T M_L ⋯ M_(j+1) · (∂M_j/∂d_j) · v_(j−1), with
//! ∂M_j/∂d = k₀ q_j [[−sin δ, −i cos δ/η], [−i η cos δ, −sin δ]].
//! Two row vectors per polarisation suffice, because with D = η₀B + C
//!
//! * dr = 2η₀ (C dB − B dC) / D²   (w = [C, −B]), so dR = 2 Re(r̄ dr);
//! * dD = η₀ dB + dC               (w = [η₀, 1]), so dT = −2T Re(dD/D) and dt = −t dD/D;
//! * A = 1 − R − T for a coherent stack, so dA = −dR − dT.
//!
//! Absorbing layers are scaled by e^(−|Im δ|) above 30 nepers exactly as the solver does; the
//! formulas above are homogeneous of degree zero in the scale, so it cancels. Long stacks (a
//! stop band of thousands of layers multiplies [B; C] by a factor per layer) are kept finite
//! like the solver's: the running [B; C] below each layer and the adjoint rows are brought
//! back near 1 by powers of two, each scale is remembered as an exponent, and a layer's
//! derivative is multiplied by 2^(rows + below − top) (dD/D) or 2^(rows + below − 2·top) (dr)
//! — the scales of what it is formed from, over those of the final [B; C].
//!
//! A thick substrate adds the coating seen from inside the substrate (layers in reverse order,
//! the substrate's complex index as incident medium; the formulas above hold for a complex η₀)
//! and the incoherent combination of [`super::thick`]: R = R₁ + T₁T₁′τ²R₂′/D′ and
//! T = T₁τT₂′/D′ with D′ = 1 − R₁′R₂′τ², whose partial derivatives with respect to the front
//! face's R₁, T₁, R₁′ and T₁′ carry the layer derivatives through (the back face does not
//! depend on them). The values themselves come from the same assembly as [`super::solve`].
//!
//! Cost per wavelength: about three times one solve; nothing is allocated once the buffers in
//! [`GradientScratch`] and [`Gradient`] have grown to the layer count. The optimiser uses
//! [`super::solve_gradient4`], the same passes for four wavelengths in SIMD lanes.

use num_complex::Complex64;

use super::tmm::{BIG, SMALL, finish};
use super::{Amplitudes, Coherent, Response, Setup, Side, StackAt, Tilted, coherent, thick};

const ONE: Complex64 = Complex64::new(1.0, 0.0);
const I: Complex64 = Complex64::new(0.0, 1.0);

/// Attenuation (nepers) across one layer above which its matrix is scaled by e^(−|Im δ|).
const RESCALE_NEPERS: f64 = 30.0;

/// A stack's response at one wavelength and angle (light from the front) and its derivatives
/// per nanometre of each layer's thickness. Vectors are indexed like [`StackAt::layers`]
/// (deposition order, layer 1 first).
#[derive(Clone, Debug, Default)]
pub struct Gradient {
    /// The response, equal to [`super::solve`] with [`Side::Front`] to rounding.
    pub response: Response,
    /// ∂R_s/∂d (per nm).
    pub d_r_s: Vec<f64>,
    /// ∂R_p/∂d.
    pub d_r_p: Vec<f64>,
    /// ∂T_s/∂d.
    pub d_t_s: Vec<f64>,
    /// ∂T_p/∂d.
    pub d_t_p: Vec<f64>,
    /// ∂r_s/∂d of the coating's complex reflection amplitude seen from the incident medium.
    pub d_amp_r_s: Vec<Complex64>,
    /// ∂r_p/∂d.
    pub d_amp_r_p: Vec<Complex64>,
    /// ∂t_s/∂d of the coating's complex transmission amplitude.
    pub d_amp_t_s: Vec<Complex64>,
    /// ∂t_p/∂d.
    pub d_amp_t_p: Vec<Complex64>,
}

impl Gradient {
    /// Sizes every derivative list to `n` layers (the callers then write every entry, so
    /// old values are not cleared).
    pub(super) fn resize(&mut self, n: usize) {
        self.resize_intensities(n);
        for v in [
            &mut self.d_amp_r_s,
            &mut self.d_amp_r_p,
            &mut self.d_amp_t_s,
            &mut self.d_amp_t_p,
        ] {
            v.resize(n, Complex64::default());
        }
    }

    /// Sizes the derivative lists of R and T to `n` layers and empties the amplitudes' (for a
    /// caller that wants only R and T: emptied once, they cost nothing on the next call).
    pub(super) fn resize_intensities(&mut self, n: usize) {
        for v in [
            &mut self.d_r_s,
            &mut self.d_r_p,
            &mut self.d_t_s,
            &mut self.d_t_p,
        ] {
            v.resize(n, 0.0);
        }
        for v in [
            &mut self.d_amp_r_s,
            &mut self.d_amp_r_p,
            &mut self.d_amp_t_s,
            &mut self.d_amp_t_p,
        ] {
            v.clear();
        }
    }

    /// ∂A_s/∂d of layer `k` (absorptance is what R and T leave).
    #[must_use]
    pub fn d_a_s(&self, k: usize) -> f64 {
        -self.d_r_s[k] - self.d_t_s[k]
    }

    /// ∂A_p/∂d of layer `k`.
    #[must_use]
    pub fn d_a_p(&self, k: usize) -> f64 {
        -self.d_r_p[k] - self.d_t_p[k]
    }
}

/// Reusable buffers for [`solve_gradient`].
#[derive(Clone, Debug, Default)]
pub struct GradientScratch {
    mats: Vec<Tilted>,
    /// Per layer in pass order: cos δ and i sin δ (both scaled), and the layer's k₀ q.
    trig: Vec<(Complex64, Complex64, Complex64)>,
    /// Per layer in pass order: [B; C] below the layer, s then p, and the power of two
    /// taken out of each.
    below: Vec<([[Complex64; 2]; 2], [i32; 2])>,
    front: Pass,
    inside: Pass,
}

/// Derivatives of one coherent problem, indexed by deposition order.
#[derive(Clone, Debug, Default)]
pub(super) struct Pass {
    pub(super) result: Coherent,
    /// Per polarisation (s, p): dr per layer and dD/D per layer.
    pub(super) dr: [Vec<Complex64>; 2],
    pub(super) dd_rel: [Vec<Complex64>; 2],
}

/// Brings `v` back near 1 by a power of two when its largest component has left
/// [`SMALL`, `BIG`]; the exponent taken out is added to `exp2`.
fn renorm(v: &mut [Complex64; 2], exp2: &mut i32) {
    let m = v[0]
        .re
        .abs()
        .max(v[0].im.abs())
        .max(v[1].re.abs())
        .max(v[1].im.abs());
    if m.is_finite() && (m > BIG || (m < SMALL && m > 0.0)) {
        let k = -(m.log2().floor() as i32);
        let f = pow2(k);
        v[0] *= f;
        v[1] *= f;
        *exp2 -= k;
    }
}

/// 2^k for |k| below 1023.
fn pow2(k: i32) -> f64 {
    f64::from_bits(((i64::from(k) + 1023) as u64) << 52)
}

/// z·2^k without overflow of the factor for |k| up to about 2000 (two steps).
fn times_pow2(z: Complex64, k: i32) -> Complex64 {
    if k == 0 {
        return z;
    }
    let k = k.clamp(-2000, 2000);
    let half = k / 2;
    z * pow2(half) * pow2(k - half)
}

/// cos δ and i sin δ of δ = a + i b, scaled by e^(−|b|) when |b| exceeds the limit; returns the
/// log of the scale taken out.
fn trig(delta: Complex64) -> (Complex64, Complex64, f64) {
    let (sin_a, cos_a) = delta.re.sin_cos();
    let b = delta.im;
    if b == 0.0 {
        return (Complex64::new(cos_a, 0.0), Complex64::new(0.0, sin_a), 0.0);
    }
    let (ch, sh, log_scale) = if b.abs() < RESCALE_NEPERS {
        let e = b.exp();
        let ei = 1.0 / e;
        (0.5 * (e + ei), 0.5 * (e - ei), 0.0)
    } else {
        let e2 = (-2.0 * b.abs()).exp();
        (0.5 * (1.0 + e2), 0.5 * (1.0 - e2) * b.signum(), b.abs())
    };
    let cos_d = Complex64::new(cos_a * ch, -sin_a * sh);
    let sin_d = Complex64::new(sin_a * ch, cos_a * sh);
    (cos_d, I * sin_d, log_scale)
}

/// Runs one coherent problem forward and backward. `reversed` walks the layers from the last
/// (for the coating seen from inside the substrate); derivatives land at deposition indices.
#[allow(clippy::too_many_arguments)]
fn pass(
    incident: &Tilted,
    substrate: &Tilted,
    mats: &[Tilted],
    layers: &[(usize, f64)],
    reversed: bool,
    k0: f64,
    trig_buf: &mut Vec<(Complex64, Complex64, Complex64)>,
    below: &mut Vec<([[Complex64; 2]; 2], [i32; 2])>,
    out: &mut Pass,
) {
    let n = layers.len();
    let at = |p: usize| if reversed { n - 1 - p } else { p };
    trig_buf.clear();
    below.clear();
    let mut v = [[ONE, substrate.eta_s], [ONE, substrate.eta_p]];
    // The true [B; C] of each polarisation is v·2^exps (times the absorbing layers' scale).
    let mut exps = [0_i32; 2];
    let mut log_scale = 0.0;
    for p in 0..n {
        let (m, d) = layers[at(p)];
        let m = &mats[m];
        let (c, is, ls) = trig(m.q * (k0 * d));
        log_scale += ls;
        below.push((v, exps));
        trig_buf.push((c, is, m.q * k0));
        for (pol, (eta, inv)) in [(m.eta_s, m.inv_eta_s), (m.eta_p, m.inv_eta_p)]
            .into_iter()
            .enumerate()
        {
            let [b, cc] = v[pol];
            v[pol] = [c * b - is * inv * cc, c * cc - is * eta * b];
            renorm(&mut v[pol], &mut exps[pol]);
        }
    }
    let cos_ratio = (incident.q / incident.n) / (substrate.q / substrate.n);
    let eta0 = [incident.eta_s, incident.eta_p];
    let eta_sub = [substrate.eta_s, substrate.eta_p];
    let t_factor = [ONE, cos_ratio];
    let amps: [Amplitudes; 2] = std::array::from_fn(|pol| {
        finish(
            eta0[pol],
            v[pol][0],
            v[pol][1],
            eta_sub[pol],
            t_factor[pol],
            log_scale + f64::from(exps[pol]) * std::f64::consts::LN_2,
        )
    });
    out.result = Coherent {
        s: amps[0],
        p: amps[1],
    };
    for pol in 0..2 {
        out.dr[pol].clear();
        out.dr[pol].resize(n, Complex64::default());
        out.dd_rel[pol].clear();
        out.dd_rel[pol].resize(n, Complex64::default());
        let [b, c] = v[pol];
        let den = eta0[pol] * b + c;
        let dr_factor = 2.0 * eta0[pol] / (den * den);
        let inv_den = den.inv();
        let top = exps[pol];
        // Row vectors for dr (∝ [C, −B]) and for dD ([η₀, 1]), carried down the stack; the
        // true rows are w·2^f.
        let (mut w1, mut f1) = ([c, -b], top);
        let (mut w2, mut f2) = ([eta0[pol], ONE], 0);
        for p in (0..n).rev() {
            let (cd, is, kq) = trig_buf[p];
            let m = &mats[layers[at(p)].0];
            let (eta, inv) = if pol == 0 {
                (m.eta_s, m.inv_eta_s)
            } else {
                (m.eta_p, m.inv_eta_p)
            };
            let ([bb, cb], below_exp) = (below[p].0[pol], below[p].1[pol]);
            // (∂M/∂d)·v with −sin δ = i·(i sin δ).
            let x0 = kq * (I * is * bb - I * cd * inv * cb);
            let x1 = kq * (-I * eta * cd * bb + I * is * cb);
            let k = at(p);
            out.dr[pol][k] = times_pow2(
                dr_factor * (w1[0] * x0 + w1[1] * x1),
                f1 + below_exp - 2 * top,
            );
            out.dd_rel[pol][k] =
                times_pow2((w2[0] * x0 + w2[1] * x1) * inv_den, f2 + below_exp - top);
            // w ← w·M_p
            let step =
                |w: [Complex64; 2]| [w[0] * cd - w[1] * eta * is, -w[0] * is * inv + w[1] * cd];
            w1 = step(w1);
            w2 = step(w2);
            renorm(&mut w1, &mut f1);
            renorm(&mut w2, &mut f2);
        }
    }
}

/// The response of `stack` at one wavelength and angle of incidence (radians, light from the
/// front) and its derivatives with respect to each layer thickness, written into `out`.
/// `scratch` and `out` are reused between calls so the optimiser's loop does not allocate.
///
/// ```
/// use num_complex::Complex64;
/// use stackwise::optics::{Gradient, GradientScratch, StackAt, solve_gradient};
/// let stack = StackAt {
///     incident: Complex64::new(1.0, 0.0), substrate: Complex64::new(1.52, 0.0),
///     exit: Complex64::new(1.0, 0.0), materials: &[Complex64::new(1.38, 0.0)],
///     layers: &[(0, 550.0 / (4.0 * 1.38))], back_layers: &[], substrate_mm: None,
/// };
/// let (mut g, mut scratch) = (Gradient::default(), GradientScratch::default());
/// solve_gradient(&stack, 550.0, 0.0, &mut scratch, &mut g);
/// // A quarter-wave layer is a turning point of R at its own wavelength.
/// assert!(g.d_r_s[0].abs() < 1e-12);
/// ```
pub fn solve_gradient(
    stack: &StackAt<'_>,
    wavelength_nm: f64,
    aoi_rad: f64,
    scratch: &mut GradientScratch,
    out: &mut Gradient,
) {
    let setup = Setup::new(stack, aoi_rad, Side::Front);
    let k0 = std::f64::consts::TAU / wavelength_nm;
    let GradientScratch {
        mats,
        trig: trig_buf,
        below,
        front,
        inside,
    } = scratch;
    mats.clear();
    mats.extend(stack.materials.iter().map(|&n| Tilted::new(n, setup.snell)));
    let (fi, fs) = &setup.front_out;
    pass(
        fi,
        fs,
        mats,
        stack.layers,
        false,
        k0,
        trig_buf,
        below,
        front,
    );
    let Some(_) = stack.substrate_mm else {
        finish_gradient(stack, &setup, wavelength_nm, front, None, out);
        return;
    };
    let (bi, bs) = &setup.front_in;
    pass(
        bi,
        bs,
        mats,
        stack.layers,
        true,
        k0,
        trig_buf,
        below,
        inside,
    );
    // The back face (its coating or the bare surface) seen from inside the substrate.
    let (ci, cs) = &setup.back_in;
    let back_in = coherent(
        ci,
        stack.back_layers.iter().rev().map(|&(m, d)| (&mats[m], d)),
        cs,
        wavelength_nm,
    );
    finish_gradient(
        stack,
        &setup,
        wavelength_nm,
        front,
        Some((inside, back_in)),
        out,
    );
}

/// The response and the layer derivatives of one point from its passes: `front` (the coating
/// from the incident medium) and, for a thick substrate, `thick` = (the coating seen from
/// inside the substrate, the back face seen from inside), chained through the incoherent
/// combination.
pub(super) fn finish_gradient(
    stack: &StackAt<'_>,
    setup: &Setup,
    wavelength_nm: f64,
    front: &Pass,
    thick: Option<(&Pass, Coherent)>,
    out: &mut Gradient,
) {
    let n = stack.layers.len();
    out.resize(n);
    let (Some(substrate_mm), Some((inside, back_in))) = (stack.substrate_mm, thick) else {
        out.response = setup.assemble(
            stack,
            wavelength_nm,
            Side::Front,
            [Some(&front.result), None, None, None],
        );
        for k in 0..n {
            fill(out, front, k, None);
        }
        return;
    };
    out.response = setup.assemble(
        stack,
        wavelength_nm,
        Side::Front,
        [
            Some(&front.result),
            Some(&inside.result),
            Some(&back_in),
            None,
        ],
    );
    // Partial derivatives of the incoherent combination (formulas in `thick`).
    let tau = thick::internal_transmittance(setup.back_in.0.q, substrate_mm * 1e6, wavelength_nm);
    let lossless = stack.substrate.im == 0.0;
    let tau2 = tau * tau;
    let partials = [
        (front.result.s, inside.result.s, back_in.s),
        (front.result.p, inside.result.p, back_in.p),
    ]
    .map(|(f, b, back)| {
        let (r_in, t_in, t_out) = (b.reflectance, f.transmittance, b.transmittance);
        let t_in_out = if lossless { t_in * t_in } else { t_in * t_out };
        let (r2, t2) = (back.reflectance, back.transmittance);
        let den = 1.0 - r_in * r2 * tau2;
        let r_tio = tau2 * r2 / den;
        Partials {
            // t_in_out = t_in·t_out (t_in² for a lossless substrate, where t_out = t_in).
            r_tin: r_tio * if lossless { 2.0 * t_in } else { t_out },
            r_tout: if lossless { 0.0 } else { r_tio * t_in },
            t_tin: tau * t2 / den,
            r_rin: t_in_out * tau2 * r2 * r2 * tau2 / (den * den),
            t_rin: t_in * tau * t2 * r2 * tau2 / (den * den),
        }
    });
    for k in 0..n {
        fill(out, front, k, Some((inside, partials)));
    }
}

/// Partial derivatives of the thick-substrate R and T with respect to the coating's
/// transmittance inwards (t_in) and outwards (t_out) and its reflectance from inside (r_in);
/// ∂R/∂r_out = 1.
#[derive(Clone, Copy, Debug)]
struct Partials {
    r_tin: f64,
    r_tout: f64,
    t_tin: f64,
    r_rin: f64,
    t_rin: f64,
}

/// Writes layer `k`'s derivatives from the front pass and, for a thick substrate, the inside
/// pass chained through the incoherent combination.
fn fill(out: &mut Gradient, front: &Pass, k: usize, thick: Option<(&Pass, [Partials; 2])>) {
    let amps = [front.result.s, front.result.p];
    let mut d_r = [0.0; 2];
    let mut d_t = [0.0; 2];
    let mut d_amp_t = [Complex64::default(); 2];
    for pol in 0..2 {
        let a = amps[pol];
        let dr_f = 2.0 * (a.r.conj() * front.dr[pol][k]).re;
        let dt_f = -2.0 * a.transmittance * front.dd_rel[pol][k].re;
        d_amp_t[pol] = -a.t * front.dd_rel[pol][k];
        if let Some((ins, partials)) = thick {
            let b = if pol == 0 { ins.result.s } else { ins.result.p };
            let dr_b = 2.0 * (b.r.conj() * ins.dr[pol][k]).re;
            let dt_b = -2.0 * b.transmittance * ins.dd_rel[pol][k].re;
            let q = partials[pol];
            d_r[pol] = dr_f + q.r_tin * dt_f + q.r_tout * dt_b + q.r_rin * dr_b;
            d_t[pol] = q.t_tin * dt_f + q.t_rin * dr_b;
        } else {
            d_r[pol] = dr_f;
            d_t[pol] = dt_f;
        }
    }
    out.d_r_s[k] = d_r[0];
    out.d_r_p[k] = d_r[1];
    out.d_t_s[k] = d_t[0];
    out.d_t_p[k] = d_t[1];
    out.d_amp_r_s[k] = front.dr[0][k];
    out.d_amp_r_p[k] = front.dr[1][k];
    out.d_amp_t_s[k] = d_amp_t[0];
    out.d_amp_t_p[k] = d_amp_t[1];
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::optics::solve;

    use crate::optics::test_rng::Rng;

    /// Central difference of every response quantity with respect to layer `k`.
    fn central(stack: &StackAt<'_>, wl: f64, aoi: f64, k: usize, h: f64) -> [f64; 4] {
        let mut layers = stack.layers.to_vec();
        let mut at = |dd: f64| {
            layers[k].1 = stack.layers[k].1 + dd;
            let s = StackAt {
                layers: &layers,
                ..*stack
            };
            let r = solve(&s, wl, aoi, Side::Front, &mut Vec::new());
            [r.r_s, r.r_p, r.t_s, r.t_p]
        };
        let (plus, minus) = (at(h), at(-h));
        std::array::from_fn(|i| (plus[i] - minus[i]) / (2.0 * h))
    }

    /// Analytic derivatives against central differences on random absorbing stacks at oblique
    /// incidence, with and without a thick absorbing substrate.
    ///
    /// Tolerance: a central difference with step h errs by h²/6·|f‴| (truncation) plus about
    /// ε|f|/h (rounding). Here |f| ≤ 1 and each derivative brings a factor of at most
    /// k₀|q| ≈ 2π·3/400 nm⁻¹ ≈ 0.05/nm, so with h = 1e-3 nm truncation is below 1e-6·(0.05)³/6
    /// ≈ 2e-11 and rounding about 1e-16/1e-3 = 1e-13: an absolute tolerance of 1e-8 per nm
    /// leaves a wide margin while derivatives themselves are of order 1e-3 to 1e-2 per nm.
    #[test]
    fn derivatives_match_central_differences() {
        let mut rng = Rng(0x9e37_79b9_7f4a_7c15);
        let (mut g, mut scratch) = (Gradient::default(), GradientScratch::default());
        let mut checked = 0;
        let mut largest = 0.0_f64;
        for case in 0..24 {
            let materials: Vec<Complex64> = (0..3)
                .map(|_| Complex64::new(rng.range(1.3, 2.6), rng.range(0.0, 0.3)))
                .collect();
            let n = 1 + (rng.next() * 12.0) as usize;
            let layers: Vec<(usize, f64)> = (0..n)
                .map(|_| ((rng.next() * 3.0) as usize % 3, rng.range(5.0, 250.0)))
                .collect();
            let substrate_mm = (case % 2 == 1).then(|| rng.range(0.5, 3.0));
            let back = [(0, rng.range(20.0, 120.0)), (1, rng.range(20.0, 120.0))];
            let stack = StackAt {
                incident: Complex64::new(rng.range(1.0, 1.5), 0.0),
                // Every third case a lossless substrate (its own branch of the combination).
                substrate: Complex64::new(
                    rng.range(1.4, 1.9),
                    if case % 3 == 0 {
                        0.0
                    } else {
                        rng.range(0.0, 2e-6)
                    },
                ),
                exit: Complex64::new(1.0, 0.0),
                materials: &materials,
                layers: &layers,
                // A coated back face on some thick substrates.
                back_layers: if case % 4 == 1 { &back } else { &[] },
                substrate_mm,
            };
            let wl = rng.range(400.0, 900.0);
            let aoi = rng.range(0.0, 70.0).to_radians();
            solve_gradient(&stack, wl, aoi, &mut scratch, &mut g);
            let value = solve(&stack, wl, aoi, Side::Front, &mut Vec::new());
            assert!(
                (g.response.r_s - value.r_s).abs() < 1e-12
                    && (g.response.t_p - value.t_p).abs() < 1e-12,
                "case {case}: values agree with solve"
            );
            for k in 0..n {
                let fd = central(&stack, wl, aoi, k, 1e-3);
                let an = [g.d_r_s[k], g.d_r_p[k], g.d_t_s[k], g.d_t_p[k]];
                for q in 0..4 {
                    assert!(
                        (an[q] - fd[q]).abs() < 1e-8,
                        "case {case} layer {k} quantity {q}: analytic {} vs central {}",
                        an[q],
                        fd[q]
                    );
                    largest = largest.max(an[q].abs());
                    checked += 1;
                }
            }
        }
        assert!(
            checked > 200 && largest > 1e-3,
            "the check saw real derivatives"
        );
    }

    /// The amplitude derivatives against central differences of the complex r and t.
    #[test]
    fn amplitude_derivatives_match_central_differences() {
        let materials = [Complex64::new(2.1, 0.05), Complex64::new(1.46, 0.0)];
        let layers = [(0, 80.0), (1, 120.0), (0, 33.0), (1, 95.0)];
        let stack = StackAt {
            incident: Complex64::new(1.0, 0.0),
            substrate: Complex64::new(1.52, 0.0),
            exit: Complex64::new(1.0, 0.0),
            materials: &materials,
            layers: &layers,
            back_layers: &[],
            substrate_mm: None,
        };
        let (wl, aoi) = (633.0, 50f64.to_radians());
        let (mut g, mut scratch) = (Gradient::default(), GradientScratch::default());
        solve_gradient(&stack, wl, aoi, &mut scratch, &mut g);
        let h = 1e-3;
        for k in 0..layers.len() {
            let at = |dd: f64| {
                let mut l = layers;
                l[k].1 += dd;
                let s = StackAt {
                    layers: &l,
                    ..stack
                };
                solve(&s, wl, aoi, Side::Front, &mut Vec::new())
            };
            let (p, m) = (at(h), at(-h));
            let fd = [
                (p.amp_r_s - m.amp_r_s) / (2.0 * h),
                (p.amp_r_p - m.amp_r_p) / (2.0 * h),
                (p.amp_t_s - m.amp_t_s) / (2.0 * h),
                (p.amp_t_p - m.amp_t_p) / (2.0 * h),
            ];
            let an = [
                g.d_amp_r_s[k],
                g.d_amp_r_p[k],
                g.d_amp_t_s[k],
                g.d_amp_t_p[k],
            ];
            for q in 0..4 {
                assert!(
                    (an[q] - fd[q]).norm() < 1e-8,
                    "layer {k} amplitude {q}: {} vs {}",
                    an[q],
                    fd[q]
                );
            }
        }
    }

    /// A thick metal layer (far beyond the rescaling threshold) keeps finite derivatives.
    #[test]
    fn opaque_metal_stays_finite() {
        let materials = [Complex64::new(0.05, 3.5), Complex64::new(1.38, 0.0)];
        let layers = [(0, 2000.0), (1, 90.0)];
        let stack = StackAt {
            incident: Complex64::new(1.0, 0.0),
            substrate: Complex64::new(1.52, 0.0),
            exit: Complex64::new(1.0, 0.0),
            materials: &materials,
            layers: &layers,
            back_layers: &[],
            substrate_mm: Some(1.0),
        };
        let (mut g, mut scratch) = (Gradient::default(), GradientScratch::default());
        solve_gradient(&stack, 500.0, 0.3, &mut scratch, &mut g);
        let fd = central(&stack, 500.0, 0.3, 1, 1e-3);
        assert!(
            (g.d_r_s[1] - fd[0]).abs() < 1e-8 && g.d_t_s.iter().all(|x| x.is_finite()),
            "{} vs {}",
            g.d_r_s[1],
            fd[0]
        );
    }

    /// A stack of 4000 quarter-wave layers in its stop band under four absorbing and
    /// dielectric layers: the product of the layer matrices grows by about (2.35/1.38)² per
    /// pair, some e^2000 over the stack, far beyond the largest double, so without the
    /// rescaling [B; C] and the adjoint rows overflow. Every derivative must be finite and
    /// those of the top layers (which matter: the absorbing layers over a near-perfect
    /// mirror) and of a few deep ones (vanishingly small) must agree with central
    /// differences of the overflow-safe solver, with and without a thick substrate.
    #[test]
    fn thousands_of_layers_stay_finite() {
        let materials = [
            Complex64::new(2.35, 0.0),
            Complex64::new(1.38, 0.0),
            Complex64::new(2.0, 0.3),
        ];
        let (wl, aoi) = (550.0, 30f64.to_radians());
        let mut layers: Vec<(usize, f64)> = (0..4000)
            .map(|i| {
                let m = i % 2;
                (
                    m,
                    550.0 / (4.0 * materials[m].re) * (1.0 + 0.01 * (i % 7) as f64),
                )
            })
            .collect();
        layers.extend([(2, 12.0), (1, 80.0), (2, 7.0), (0, 40.0)]);
        let n = layers.len();
        let (mut g, mut scratch) = (Gradient::default(), GradientScratch::default());
        for substrate_mm in [None, Some(1.0)] {
            let stack = StackAt {
                incident: Complex64::new(1.0, 0.0),
                substrate: Complex64::new(1.52, 0.0),
                exit: Complex64::new(1.0, 0.0),
                materials: &materials,
                layers: &layers,
                back_layers: &[],
                substrate_mm,
            };
            solve_gradient(&stack, wl, aoi, &mut scratch, &mut g);
            let value = solve(&stack, wl, aoi, Side::Front, &mut Vec::new());
            assert!(
                (g.response.r_s - value.r_s).abs() < 1e-12
                    && (g.response.r_p - value.r_p).abs() < 1e-12,
                "{substrate_mm:?}: values agree with solve"
            );
            for v in [&g.d_r_s, &g.d_r_p, &g.d_t_s, &g.d_t_p] {
                assert!(v.iter().all(|x| x.is_finite()), "{substrate_mm:?}: finite");
            }
            let mut largest = 0.0_f64;
            for k in [0, 1, 2000, n - 8, n - 5, n - 4, n - 3, n - 2, n - 1] {
                let fd = central(&stack, wl, aoi, k, 1e-3);
                let an = [g.d_r_s[k], g.d_r_p[k], g.d_t_s[k], g.d_t_p[k]];
                for q in 0..4 {
                    assert!(
                        (an[q] - fd[q]).abs() < 1e-8,
                        "{substrate_mm:?} layer {k} quantity {q}: analytic {} vs central {}",
                        an[q],
                        fd[q]
                    );
                    largest = largest.max(an[q].abs());
                }
            }
            assert!(largest > 1e-4, "{substrate_mm:?}: the top layers matter");
        }
    }
}
