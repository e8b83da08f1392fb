//! [`super::solve_gradient`] for four points at once (four wavelengths of the optimiser's
//! targets), in SIMD lanes: the same forward and backward passes (method in
//! [`super::gradient`]), with the layer loop of [`super::lanes`] — each absorbing layer's
//! matrix scaled by e^(−Im δ), the running [B; C] and the adjoint rows brought back near 1 by
//! powers of two every few layers, the scales carried as logarithms and applied where a
//! derivative is formed — so stacks of thousands of layers stay finite. Compiled once per
//! instruction set, the best one chosen at run time ([`super::simd`]).

#![allow(
    clippy::inline_always,
    reason = "the lane code must be inlined into each instruction set's version to use it"
)]

use num_complex::Complex64;

use super::gradient::{Gradient, Pass, finish_gradient};
use super::lanes::{Cx4, Finished4, FrontEnds4, Phase, Tilted4, coherent4, inv, rotate};
use super::simd::{self, F4, Fused, Level, Mad, Plain};
use super::tmm::{BIG, Coherent, RENORM_EVERY, SMALL, Tilted, finish};
use super::{Media4, StackAt};

/// Reusable buffers for [`solve_gradient4`].
#[derive(Clone, Debug, Default)]
pub struct GradientScratch4 {
    /// Per layer in pass order: cos δ, i sin δ (scaled) and k₀ q.
    trig: Vec<[Cx4; 3]>,
    /// Per layer in pass order: [B; C] below the layer (s, p) and the natural logarithm of
    /// the scale taken out of each.
    below: Vec<([[Cx4; 2]; 2], [F4; 2])>,
    /// Per layer (deposition order): what the backward pass found, in lanes.
    terms: Vec<Terms>,
    front: [Pass; 4],
    inside: [Pass; 4],
    /// Only R's and T's derivatives are wanted (see [`GradientScratch4::intensities_only`]).
    intensities_only: bool,
}

impl GradientScratch4 {
    /// Buffers for a caller that needs only the derivatives of R and T (the optimiser): on a
    /// semi-infinite substrate the results' amplitude-derivative lists (`d_amp_*`) are then
    /// left empty, which saves two thirds of what the pass writes per layer.
    #[must_use]
    pub fn intensities_only() -> Self {
        Self {
            intensities_only: true,
            ..Self::default()
        }
    }
}

#[inline(always)]
fn add(a: Cx4, b: Cx4) -> Cx4 {
    Cx4 {
        re: a.re + b.re,
        im: a.im + b.im,
    }
}

#[inline(always)]
fn scale(z: Cx4, f: F4) -> Cx4 {
    Cx4 {
        re: z.re * f,
        im: z.im * f,
    }
}

/// Brings the row or column vector `v` back near 1 by a power of two per lane when any lane
/// has left [`SMALL`, `BIG`]; the natural logarithm taken out goes into `log`. Returns whether
/// anything was rescaled.
#[inline(always)]
fn renorm2(v: &mut [Cx4; 2], log: &mut F4) -> bool {
    let m = v[0]
        .re
        .abs()
        .max(v[0].im.abs())
        .max(v[1].re.abs().max(v[1].im.abs()));
    if !m.any_outside(SMALL, BIG) {
        return false;
    }
    rescale2(v, log, m);
    true
}

#[cold]
#[inline(never)]
fn rescale2(v: &mut [Cx4; 2], log: &mut F4, m: F4) {
    let f = F4(m.0.map(|m| super::tmm::renorm_factor(m).unwrap_or(1.0)));
    for z in v.iter_mut() {
        *z = scale(*z, f);
    }
    *log -= f.map(f64::ln);
}

/// The media of one coherent problem in four lanes: (incident, exit) per lane.
type Ends<'a> = ([&'a Tilted; 4], [&'a Tilted; 4]);

/// One coherent problem forward and backward, four points at once. `reversed` walks the
/// layers from the last (the coating seen from inside the substrate); derivatives land at
/// deposition indices in each lane's [`Pass`], or, with `direct`, straight in the points'
/// gradients. With `lanes_ends` (light from the front onto a semi-infinite substrate) the
/// results are finished in lanes too. The whole pass is one kernel in the chosen instruction
/// set.
#[allow(clippy::too_many_arguments)]
fn pass4(
    level: Level,
    (incident, substrate): Ends<'_>,
    mats: &[Tilted4],
    layers: &[(usize, f64)],
    reversed: bool,
    k0: F4,
    trig: &mut Vec<[Cx4; 3]>,
    below: &mut Vec<([[Cx4; 2]; 2], [F4; 2])>,
    terms: &mut Vec<Terms>,
    out: &mut [Pass; 4],
    direct: Option<(&mut [Gradient; 4], bool)>,
    lanes_ends: Option<&FrontEnds4>,
) {
    let n = layers.len();
    // Every entry is written by the backward pass, so the buffers are only sized, not cleared.
    if direct.is_none() {
        for lane in out.iter_mut() {
            for v in lane.dr.iter_mut().chain(lane.dd_rel.iter_mut()) {
                v.resize(n, Complex64::default());
            }
        }
    }
    simd::run_at(
        level,
        PassKernel {
            incident,
            substrate,
            mats,
            layers,
            reversed,
            k0,
            trig,
            below,
            terms,
            out,
            direct,
            lanes_ends,
        },
    );
}

/// [`pass4`]'s work as one operation for [`simd::run_at`].
struct PassKernel<'a> {
    incident: [&'a Tilted; 4],
    substrate: [&'a Tilted; 4],
    mats: &'a [Tilted4],
    layers: &'a [(usize, f64)],
    reversed: bool,
    k0: F4,
    trig: &'a mut Vec<[Cx4; 3]>,
    below: &'a mut Vec<([[Cx4; 2]; 2], [F4; 2])>,
    terms: &'a mut Vec<Terms>,
    out: &'a mut [Pass; 4],
    direct: Option<(&'a mut [Gradient; 4], bool)>,
    lanes_ends: Option<&'a FrontEnds4>,
}

impl pulp::WithSimd for PassKernel<'_> {
    type Output = ();

    #[inline(always)]
    fn with_simd<S: pulp::Simd>(self, _simd: S) {
        // Direct calls (not through a function pointer), so each is inlined here and
        // compiled for this instruction set.
        if S::IS_SCALAR {
            self.run::<Plain>();
        } else {
            self.run::<Fused>();
        }
    }
}

impl PassKernel<'_> {
    #[inline(always)]
    fn run<M: Mad>(self) {
        let Self {
            incident,
            substrate,
            mats,
            layers,
            reversed,
            k0,
            trig,
            below,
            terms,
            out,
            mut direct,
            lanes_ends,
        } = self;
        let n = layers.len();
        let eta_sub = [
            Cx4::gather(substrate.map(|t| t.eta_s)),
            Cx4::gather(substrate.map(|t| t.eta_p)),
        ];
        let eta0 = [
            Cx4::gather(incident.map(|t| t.eta_s)),
            Cx4::gather(incident.map(|t| t.eta_p)),
        ];
        let (v, log_scale, norm) = forward::<M>(Forward {
            mats,
            layers,
            reversed,
            k0,
            eta_sub,
            trig,
            below,
        });
        let finished = lanes_ends.map(|e| e.finish(v, [log_scale + norm[0], log_scale + norm[1]]));
        finish_each(
            out,
            finished.as_ref(),
            incident,
            substrate,
            v,
            log_scale,
            norm,
        );
        let (sink, results) = match direct.take() {
            Some((grads, amplitudes)) => {
                let results = [0, 1].map(|pol| res4(pol, finished.as_ref(), out));
                for (g, lane) in grads.iter_mut().zip(out.iter()) {
                    if amplitudes {
                        g.resize(n);
                    } else {
                        g.resize_intensities(n);
                    }
                    g.response = lane.result.response();
                }
                (Sink::Direct(grads, amplitudes), Some(results))
            }
            None => (Sink::Pass(out), None),
        };
        backward::<M>(Backward {
            mats,
            layers,
            reversed,
            trig,
            below,
            eta0,
            v,
            norm,
            results,
            terms,
            sink,
        });
    }
}

/// Each lane's results: from `finished` when the pass finished them in lanes, else one lane
/// at a time from the final [B; C] (`v`) and its scales.
#[inline(always)]
fn finish_each(
    out: &mut [Pass; 4],
    finished: Option<&[Finished4; 2]>,
    incident: [&Tilted; 4],
    substrate: [&Tilted; 4],
    v: [[Cx4; 2]; 2],
    log_scale: F4,
    norm: [F4; 2],
) {
    for (i, lane) in out.iter_mut().enumerate() {
        if let Some([s, p]) = finished {
            lane.result = Coherent {
                s: s.lane(i),
                p: p.lane(i),
            };
            continue;
        }
        let (inc, sub) = (incident[i], substrate[i]);
        let cos_ratio = (inc.q / inc.n) / (sub.q / sub.n);
        lane.result = Coherent {
            s: finish(
                inc.eta_s,
                v[0][0].lane(i),
                v[0][1].lane(i),
                sub.eta_s,
                Complex64::ONE,
                log_scale.0[i] + norm[0].0[i],
            ),
            p: finish(
                inc.eta_p,
                v[1][0].lane(i),
                v[1][1].lane(i),
                sub.eta_p,
                cos_ratio,
                log_scale.0[i] + norm[1].0[i],
            ),
        };
    }
}

/// Polarisation `pol`'s results in lanes (0 for s): taken from `finished` when it holds them
/// in lanes, else gathered from each lane's result.
#[inline(always)]
fn res4(pol: usize, finished: Option<&[Finished4; 2]>, out: &[Pass; 4]) -> Res4 {
    if let Some(Finished4::Lanes {
        r,
        t,
        transmittance,
        ..
    }) = finished.map(|f| &f[pol])
    {
        return Res4 {
            r: *r,
            t: *t,
            transmittance: *transmittance,
        };
    }
    let amp = |i: usize| {
        let c = &out[i].result;
        if pol == 0 { c.s } else { c.p }
    };
    Res4 {
        r: Cx4::gather(std::array::from_fn(|i| amp(i).r)),
        t: Cx4::gather(std::array::from_fn(|i| amp(i).t)),
        transmittance: F4(std::array::from_fn(|i| amp(i).transmittance)),
    }
}

/// One polarisation's results in four lanes: what the derivatives of R, T and t need.
#[derive(Clone, Copy)]
struct Res4 {
    r: Cx4,
    t: Cx4,
    transmittance: F4,
}

/// Per polarisation (s, p), what the backward pass finds for one layer, in lanes: with the
/// results at hand (a semi-infinite substrate) [dr, dt, dR + i·dT], with dR = 2 Re(r* dr),
/// dT = −2 T Re(dD/D) and dt = −t dD/D; otherwise [dr, dD/D, unused] for the thick
/// substrate's incoherent chain.
type Terms = [[Cx4; 3]; 2];

/// Where each layer's derivatives go.
enum Sink<'a> {
    /// dr and dD/D per point.
    Pass(&'a mut [Pass; 4]),
    /// The finished derivatives of R, T and (when the flag is set) the amplitudes per point.
    Direct(&'a mut [Gradient; 4], bool),
}

impl Sink<'_> {
    /// Spreads the layers' `terms` (in lanes) over the four points. Always inlined, so it
    /// runs in the backward pass's instruction set.
    #[inline(always)]
    fn spread(self, terms: &[Terms]) {
        match self {
            Self::Pass(out) => {
                for (i, lane) in out.iter_mut().enumerate() {
                    for pol in 0..2 {
                        let (dr, dd) = (&mut lane.dr[pol], &mut lane.dd_rel[pol]);
                        for ((t, dr), dd) in terms.iter().zip(dr.iter_mut()).zip(dd.iter_mut()) {
                            let [r, d, _] = &t[pol];
                            *dr = Complex64::new(r.re.0[i], r.im.0[i]);
                            *dd = Complex64::new(d.re.0[i], d.im.0[i]);
                        }
                    }
                }
            }
            Self::Direct(grads, false) => {
                // Four layers at a time: four lanes of four layers, transposed into four
                // points' runs of four.
                let whole = terms.len() - terms.len() % 4;
                for k in (0..whole).step_by(4) {
                    #[allow(
                        clippy::needless_range_loop,
                        reason = "pol picks both the lanes and each point's columns"
                    )]
                    for pol in 0..2 {
                        let rt: [Cx4; 4] = std::array::from_fn(|j| terms[k + j][pol][2]);
                        for (i, g) in grads.iter_mut().enumerate() {
                            let (d_r, d_t) = if pol == 0 {
                                (&mut g.d_r_s, &mut g.d_t_s)
                            } else {
                                (&mut g.d_r_p, &mut g.d_t_p)
                            };
                            d_r[k..k + 4].copy_from_slice(&rt.map(|z| z.re.0[i]));
                            d_t[k..k + 4].copy_from_slice(&rt.map(|z| z.im.0[i]));
                        }
                    }
                }
                for (i, g) in grads.iter_mut().enumerate() {
                    for (pol, (d_r, d_t)) in
                        [(&mut g.d_r_s, &mut g.d_t_s), (&mut g.d_r_p, &mut g.d_t_p)]
                            .into_iter()
                            .enumerate()
                    {
                        for ((term, d_r), d_t) in terms
                            .iter()
                            .zip(d_r.iter_mut())
                            .zip(d_t.iter_mut())
                            .skip(whole)
                        {
                            let rt = &term[pol][2];
                            *d_r = rt.re.0[i];
                            *d_t = rt.im.0[i];
                        }
                    }
                }
            }
            Self::Direct(grads, true) => {
                for (i, g) in grads.iter_mut().enumerate() {
                    let Gradient {
                        d_r_s,
                        d_r_p,
                        d_t_s,
                        d_t_p,
                        d_amp_r_s,
                        d_amp_r_p,
                        d_amp_t_s,
                        d_amp_t_p,
                        ..
                    } = g;
                    let columns = [
                        (d_r_s, d_t_s, d_amp_r_s, d_amp_t_s),
                        (d_r_p, d_t_p, d_amp_r_p, d_amp_t_p),
                    ];
                    for (pol, (d_r, d_t, d_amp_r, d_amp_t)) in columns.into_iter().enumerate() {
                        let rows = terms
                            .iter()
                            .zip(d_r.iter_mut())
                            .zip(d_t.iter_mut())
                            .zip(d_amp_r.iter_mut())
                            .zip(d_amp_t.iter_mut());
                        for ((((term, d_r), d_t), d_amp_r), d_amp_t) in rows {
                            // Through references: copying the lanes out by value first would
                            // cost more than the copy itself.
                            let [dr, dt, rt] = &term[pol];
                            *d_r = rt.re.0[i];
                            *d_t = rt.im.0[i];
                            *d_amp_r = Complex64::new(dr.re.0[i], dr.im.0[i]);
                            *d_amp_t = Complex64::new(dt.re.0[i], dt.im.0[i]);
                        }
                    }
                }
            }
        }
    }
}

/// What [`forward`] works on.
struct Forward<'a> {
    mats: &'a [Tilted4],
    layers: &'a [(usize, f64)],
    reversed: bool,
    k0: F4,
    eta_sub: [Cx4; 2],
    trig: &'a mut Vec<[Cx4; 3]>,
    below: &'a mut Vec<([[Cx4; 2]; 2], [F4; 2])>,
}

/// What [`backward`] works on.
struct Backward<'a> {
    mats: &'a [Tilted4],
    layers: &'a [(usize, f64)],
    reversed: bool,
    trig: &'a [[Cx4; 3]],
    below: &'a [([[Cx4; 2]; 2], [F4; 2])],
    eta0: [Cx4; 2],
    v: [[Cx4; 2]; 2],
    norm: [F4; 2],
    results: Option<[Res4; 2]>,
    terms: &'a mut Vec<Terms>,
    /// Where the terms go once the pass is done.
    sink: Sink<'a>,
}

/// The forward pass: keeps [B; C] below each layer in `below` and the layer's trigonometry in
/// `trig`; returns the final [B; C] (s, p), the log of the absorbing layers' scale and the
/// log of the renormalisation of each polarisation.
#[inline(always)]
#[allow(clippy::type_complexity, reason = "unpacked by the one caller")]
fn forward<M: Mad>(
    Forward {
        mats,
        layers,
        reversed,
        k0,
        eta_sub,
        trig,
        below,
    }: Forward<'_>,
) -> ([[Cx4; 2]; 2], F4, [F4; 2]) {
    let n = layers.len();
    // Sized once and written in place (a push of these large values goes through memcpy).
    trig.resize(n, [Cx4::ZERO; 3]);
    below.resize(n, ([[Cx4::ZERO; 2]; 2], [F4::ZERO; 2]));
    let mut v = [[Cx4::ONE, eta_sub[0]], [Cx4::ONE, eta_sub[1]]];
    let mut norm = [F4::ZERO; 2];
    let mut log_scale = F4::ZERO;
    for p in 0..n {
        if p % RENORM_EVERY == 0 && p > 0 {
            renorm2(&mut v[0], &mut norm[0]);
            renorm2(&mut v[1], &mut norm[1]);
        }
        let (mi, d_nm) = layers[if reversed { n - 1 - p } else { p }];
        let m = &mats[mi];
        let phase = Phase::new::<M>(m, k0 * F4::splat(d_nm));
        log_scale += phase.im_delta;
        below[p] = (v, norm);
        trig[p] = [phase.cos_d, phase.i_sin_d, scale(m.q, k0)];
        for (pol, column) in v.iter_mut().enumerate() {
            *column = phase.through::<M>(*column, m.eta[pol], m.inv_eta[pol]);
        }
    }
    renorm2(&mut v[0], &mut norm[0]);
    renorm2(&mut v[1], &mut norm[1]);
    (v, log_scale, norm)
}

/// The backward pass: the adjoint rows [C, −B] (for dr) and [η₀, 1] (for dD) carried down,
/// contracted with ∂M/∂d · v below each layer.
#[inline(always)]
#[allow(clippy::too_many_arguments)]
fn backward<M: Mad>(
    Backward {
        mats,
        layers,
        reversed,
        trig,
        below,
        eta0,
        v,
        norm,
        results,
        terms,
        sink,
    }: Backward<'_>,
) {
    let n = layers.len();
    terms.resize(n, [[Cx4::ZERO; 3]; 2]);
    let amplitudes = !matches!(sink, Sink::Direct(_, false));
    for pol in 0..2 {
        let [b, c] = v[pol];
        let den = add(eta0[pol].mul_m::<M>(b), c);
        let inv_den = inv(den);
        let dr_factor = scale(
            eta0[pol].mul_m::<M>(inv_den.mul_m::<M>(inv_den)),
            F4::splat(2.0),
        );
        // Only R's and T's derivatives wanted: dR = 2 Re(r* dr) = Re(a·(−i k₀q)·s₁) with
        // a = 2 r* · dr_factor, and dT = −2T Re(dD/D) = Re(b·(−i k₀q)·s₂) with
        // b = −2T / D, both constant over the layers: they are folded into the rows at the
        // start (the rows carry them down linearly), and dr and dD are never formed.
        let rt_factors = results
            .as_ref()
            .filter(|_| !amplitudes)
            .map(|res| rt_factors::<M>(&res[pol], dr_factor, inv_den));
        // Row vectors and the logs of their scales: the true rows are w·e^f.
        let mut w1 = [
            c,
            Cx4 {
                re: -b.re,
                im: -b.im,
            },
        ];
        let mut f1 = norm[pol];
        let mut w2 = [eta0[pol], Cx4::ONE];
        let mut f2 = F4::ZERO;
        if let Some((a, b)) = &rt_factors {
            w1 = w1.map(|z| a.mul_m::<M>(z));
            w2 = w2.map(|z| b.mul_m::<M>(z));
        }
        // Whether any scale is in play (the forward pass or the rows were rescaled).
        let mut scaled = norm[pol].0.iter().any(|&x| x != 0.0);
        for (count, p) in (0..n).rev().enumerate() {
            if count % RENORM_EVERY == 0 && count > 0 {
                scaled |= renorm2(&mut w1, &mut f1);
                scaled |= renorm2(&mut w2, &mut f2);
            }
            let [cd, is, kq] = trig[p];
            let k = if reversed { n - 1 - p } else { p };
            let m = &mats[layers[k].0];
            let (eta, inv_eta) = (m.eta[pol], m.inv_eta[pol]);
            let ([bb, cb], below_norm) = (below[p].0[pol], below[p].1[pol]);
            // w ← w·M first: with ∂M/∂d = k₀q·M·J, J = [[0, −i/η], [−iη, 0]], the layer's
            // term w·(∂M/∂d)·v is k₀q·(w·M)·(J·v), and J·v = −i·[C/η; η·B].
            [w1, w2] = rows_through::<M>([w1, w2], m.real, cd, is, eta, inv_eta);
            let (j0, j1) = if m.real {
                (scale(cb, inv_eta.re), scale(bb, eta.re))
            } else {
                (inv_eta.mul_m::<M>(cb), eta.mul_m::<M>(bb))
            };
            let (s1, s2) = (
                w1[0].mul_plus::<M>(j0, w1[1], j1),
                w2[0].mul_plus::<M>(j0, w2[1], j1),
            );
            // −i·k₀q
            let minus_i_kq = Cx4 {
                re: kq.im,
                im: -kq.re,
            };
            let rescale = scaled || below_norm.0.iter().any(|&x| x != 0.0);
            if rt_factors.is_some() {
                // Re(−i k₀q · s)
                let mut d_r = M::mad(minus_i_kq.re, s1.re, -(minus_i_kq.im * s1.im));
                let mut d_t = M::mad(minus_i_kq.re, s2.re, -(minus_i_kq.im * s2.im));
                if rescale {
                    d_r = d_r * (f1 + below_norm - norm[pol] - norm[pol]).exp();
                    d_t = d_t * (f2 + below_norm - norm[pol]).exp();
                }
                // Only the slot the spread reads.
                terms[k][pol][2] = Cx4 { re: d_r, im: d_t };
                continue;
            }
            let mut dr = dr_factor.mul_m::<M>(minus_i_kq).mul_m::<M>(s1);
            let mut dd = inv_den.mul_m::<M>(minus_i_kq).mul_m::<M>(s2);
            if rescale {
                dr = scale(dr, (f1 + below_norm - norm[pol] - norm[pol]).exp());
                dd = scale(dd, (f2 + below_norm - norm[pol]).exp());
            }
            // Kept in lanes here and spread over the points afterwards: writing single lanes
            // from inside the loop would have the compiler shuffle every product.
            terms[k][pol] = match &results {
                None => [dr, dd, Cx4::ZERO],
                Some(res) => {
                    let res = &res[pol];
                    let d_r = F4::splat(2.0) * M::mad(res.r.re, dr.re, res.r.im * dr.im);
                    let d_t = F4::splat(-2.0) * res.transmittance * dd.re;
                    let t_dd = res.t.mul_m::<M>(dd);
                    let dt = Cx4 {
                        re: -t_dd.re,
                        im: -t_dd.im,
                    };
                    [dr, dt, Cx4 { re: d_r, im: d_t }]
                }
            };
        }
    }
    sink.spread(terms);
}

/// The factors a = 2 r*·`dr_factor` and b = −2T·`inv_den` that turn the backward pass's
/// contractions into the derivatives of R and T directly.
#[inline(always)]
fn rt_factors<M: Mad>(res: &Res4, dr_factor: Cx4, inv_den: Cx4) -> (Cx4, Cx4) {
    let conj_r = Cx4 {
        re: res.r.re,
        im: -res.r.im,
    };
    (
        scale(conj_r.mul_m::<M>(dr_factor), F4::splat(2.0)),
        scale(inv_den, F4::splat(-2.0) * res.transmittance),
    )
}

/// Both adjoint rows times one layer's matrix (cos δ = `cd`, i sin δ = `is`, admittance
/// `eta`): real products only when the layer is lossless (`real`).
#[inline(always)]
fn rows_through<M: Mad>(
    [w1, w2]: [[Cx4; 2]; 2],
    real: bool,
    cd: Cx4,
    is: Cx4,
    eta: Cx4,
    inv_eta: Cx4,
) -> [[Cx4; 2]; 2] {
    if real {
        let (c, s) = (cd.re, is.im);
        // [w0 cos δ − i η sin δ w1, w1 cos δ − i sin δ w0/η]
        let (u, w) = (s * eta.re, s * inv_eta.re);
        return [rotate::<M>(w1, c, u, w), rotate::<M>(w2, c, u, w)];
    }
    let (x, y) = (eta.mul_m::<M>(is), is.mul_m::<M>(inv_eta));
    // No closure here: everything in the kernel must be inlined into it.
    [
        [
            w1[0].mul_sub::<M>(cd, w1[1], x),
            w1[1].mul_sub::<M>(cd, w1[0], y),
        ],
        [
            w2[0].mul_sub::<M>(cd, w2[1], x),
            w2[1].mul_sub::<M>(cd, w2[0], y),
        ],
    ]
}

/// [`super::solve_gradient`] for four points (light from the front): `media` from
/// [`Media4::new`] with these stacks' indices, the angles and [`super::Side::Front`]; the
/// stacks share their layers. Writes each point's response and derivatives into `out`.
/// Agrees with [`super::solve_gradient`] to rounding; nothing is allocated once the buffers
/// have grown to the layer count.
pub fn solve_gradient4(
    media: &Media4,
    stacks: [&StackAt<'_>; 4],
    wavelength_nm: [f64; 4],
    scratch: &mut GradientScratch4,
    out: &mut [Gradient; 4],
) {
    solve_gradient4_at(Level::best(), media, stacks, wavelength_nm, scratch, out);
}

/// [`solve_gradient4`] in a chosen instruction set (tests compare them).
pub(crate) fn solve_gradient4_at(
    level: Level,
    media: &Media4,
    stacks: [&StackAt<'_>; 4],
    wavelength_nm: [f64; 4],
    scratch: &mut GradientScratch4,
    out: &mut [Gradient; 4],
) {
    let k0 = F4(wavelength_nm.map(|w| std::f64::consts::TAU / w));
    let setups = &media.setups;
    let mats = &media.packed;
    let layers = stacks[0].layers;
    let ends = |pick: fn(&super::Setup) -> &(Tilted, Tilted)| -> Ends<'_> {
        (
            std::array::from_fn(|i| &pick(&setups[i]).0),
            std::array::from_fn(|i| &pick(&setups[i]).1),
        )
    };
    let GradientScratch4 {
        trig,
        below,
        terms,
        front,
        inside,
        intensities_only,
    } = scratch;
    let semi_infinite = stacks[0].substrate_mm.is_none();
    let amplitudes = !*intensities_only;
    // On a semi-infinite substrate the front pass gives the derivatives themselves.
    pass4(
        level,
        ends(|s| &s.front_out),
        mats,
        layers,
        false,
        k0,
        trig,
        below,
        terms,
        front,
        semi_infinite.then_some((&mut *out, amplitudes)),
        media.front.as_ref(),
    );
    if semi_infinite {
        return;
    }
    pass4(
        level,
        ends(|s| &s.front_in),
        mats,
        layers,
        true,
        k0,
        trig,
        below,
        terms,
        inside,
        None,
        None,
    );
    // The back face (its coating or the bare surface) seen from inside the substrate.
    let (ci, cs) = ends(|s| &s.back_in);
    let back = stacks[0].back_layers;
    let back_in = coherent4(
        ci,
        back.iter().rev().map(|&(m, d)| (&mats[m], d)),
        cs,
        wavelength_nm,
    );
    for i in 0..4 {
        finish_gradient(
            stacks[i],
            &setups[i],
            wavelength_nm[i],
            &front[i],
            Some((&inside[i], back_in[i])),
            &mut out[i],
        );
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::optics::{GradientScratch, Side, solve_gradient};

    use crate::optics::test_rng::Rng;

    /// Every value and derivative of a gradient, for comparisons.
    fn numbers(g: &Gradient) -> Vec<f64> {
        let r = &g.response;
        let mut v = vec![r.r_s, r.r_p, r.t_s, r.t_p, r.a_s, r.a_p];
        for d in [&g.d_r_s, &g.d_r_p, &g.d_t_s, &g.d_t_p] {
            v.extend(d.iter().copied());
        }
        for d in [&g.d_amp_r_s, &g.d_amp_r_p, &g.d_amp_t_s, &g.d_amp_t_p] {
            v.extend(d.iter().flat_map(|z| [z.re, z.im]));
        }
        v
    }

    /// Four lanes against the one-point derivatives ([`solve_gradient`], itself checked
    /// against central differences) on random absorbing stacks at oblique incidence, with and
    /// without a thick absorbing substrate and a coated back face; and the widest instruction
    /// set this processor has against the portable one (it must be the chosen one where the
    /// processor has AVX2 and FMA, so the comparison is not of one version with itself).
    #[test]
    fn four_lanes_agree_with_one_point_and_across_instruction_sets() {
        #[cfg(any(target_arch = "x86", target_arch = "x86_64"))]
        if std::arch::is_x86_feature_detected!("avx2") && std::arch::is_x86_feature_detected!("fma")
        {
            assert_eq!(Level::best(), Level::Avx2, "the AVX2 loop is chosen");
        }
        let best = Level::best();
        let mut rng = Rng(0x2545_f491_4f6c_dd1d);
        let (mut scratch4, mut one) = (GradientScratch4::default(), GradientScratch::default());
        let mut compared = 0;
        for case in 0..16 {
            let n = 1 + (rng.next() * 40.0) as usize;
            let layers: Vec<(usize, f64)> = (0..n)
                .map(|_| ((rng.next() * 3.0) as usize % 3, rng.range(5.0, 250.0)))
                .collect();
            let back = [(0, rng.range(20.0, 120.0)), (1, rng.range(20.0, 120.0))];
            let substrate_mm = (case % 2 == 1).then(|| rng.range(0.5, 3.0));
            let rows: Vec<[Complex64; 3]> = (0..4)
                .map(|_| {
                    // The third material is lossless (the real-arithmetic path).
                    std::array::from_fn(|m| {
                        let k = rng.range(0.0, 0.3);
                        Complex64::new(rng.range(1.3, 2.6), if m == 2 { 0.0 } else { k })
                    })
                })
                .collect();
            let sub_k = if case % 3 == 0 { 0.0 } else { 1e-6 };
            let stacks: Vec<StackAt<'_>> = rows
                .iter()
                .map(|row| StackAt {
                    incident: Complex64::new(1.0, 0.0),
                    substrate: Complex64::new(1.6, sub_k),
                    exit: Complex64::new(1.0, 0.0),
                    materials: row,
                    layers: &layers,
                    back_layers: if case % 4 == 1 { &back } else { &[] },
                    substrate_mm,
                })
                .collect();
            let stacks: [&StackAt<'_>; 4] = std::array::from_fn(|i| &stacks[i]);
            let wl: [f64; 4] = std::array::from_fn(|_| rng.range(400.0, 900.0));
            let aoi: [f64; 4] = std::array::from_fn(|_| rng.range(0.0, 70.0).to_radians());
            let media = Media4::new(stacks, aoi, Side::Front);
            let mut portable: [Gradient; 4] = Default::default();
            let mut wide: [Gradient; 4] = Default::default();
            solve_gradient4_at(
                Level::Portable,
                &media,
                stacks,
                wl,
                &mut scratch4,
                &mut portable,
            );
            solve_gradient4_at(best, &media, stacks, wl, &mut scratch4, &mut wide);
            for i in 0..4 {
                let mut g = Gradient::default();
                solve_gradient(stacks[i], wl[i], aoi[i], &mut one, &mut g);
                let (a, b, c) = (numbers(&portable[i]), numbers(&wide[i]), numbers(&g));
                assert_eq!(a.len(), c.len(), "case {case}: sizes");
                for q in 0..a.len() {
                    assert!(
                        (a[q] - b[q]).abs() < 1e-13,
                        "case {case} lane {i} number {q}: portable {} vs {best:?} {}",
                        a[q],
                        b[q]
                    );
                    assert!(
                        (a[q] - c[q]).abs() < 1e-10 * (1.0 + c[q].abs()),
                        "case {case} lane {i} number {q}: four lanes {} vs one point {}",
                        a[q],
                        c[q]
                    );
                    compared += 1;
                }
            }
        }
        assert!(compared > 3000, "compared {compared} numbers");
    }

    /// Asking for R's and T's derivatives only gives the same numbers to rounding, and leaves
    /// the amplitude lists empty; a second full call after it fills them again.
    #[test]
    fn intensities_only_gives_the_derivatives_of_r_and_t_to_rounding() {
        let materials = [Complex64::new(2.3, 0.02), Complex64::new(1.46, 0.0)];
        let layers: Vec<(usize, f64)> = (0..12).map(|i| (i % 2, 40.0 + 9.0 * i as f64)).collect();
        let stack = StackAt {
            incident: Complex64::new(1.0, 0.0),
            substrate: Complex64::new(1.52, 0.0),
            exit: Complex64::new(1.0, 0.0),
            materials: &materials,
            layers: &layers,
            back_layers: &[],
            substrate_mm: None,
        };
        let wl = [450.0, 520.0, 610.0, 700.0];
        let aoi = [40f64.to_radians(); 4];
        let media = Media4::new([&stack; 4], aoi, Side::Front);
        let mut full: [Gradient; 4] = Default::default();
        solve_gradient4(
            &media,
            [&stack; 4],
            wl,
            &mut GradientScratch4::default(),
            &mut full,
        );
        let mut only: [Gradient; 4] = full.clone();
        let mut scratch = GradientScratch4::intensities_only();
        solve_gradient4(&media, [&stack; 4], wl, &mut scratch, &mut only);
        for (a, b) in full.iter().zip(&only) {
            for (x, y) in [
                (&a.d_r_s, &b.d_r_s),
                (&a.d_r_p, &b.d_r_p),
                (&a.d_t_s, &b.d_t_s),
                (&a.d_t_p, &b.d_t_p),
            ] {
                assert_eq!(x.len(), layers.len());
                // The same quantities by a shorter product: equal to rounding.
                let scale = x.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
                assert!(
                    x.iter().zip(y).all(|(x, y)| (x - y).abs() <= 1e-14 * scale),
                    "{x:?} vs {y:?}"
                );
            }
            assert!(b.d_amp_r_s.is_empty() && b.d_amp_t_p.is_empty());
            assert_eq!(a.response, b.response);
        }
        solve_gradient4(
            &media,
            [&stack; 4],
            wl,
            &mut GradientScratch4::default(),
            &mut only,
        );
        assert_eq!(only[2].d_amp_t_s, full[2].d_amp_t_s);
    }

    /// 4000 quarter-wave layers in their stop band under absorbing layers (see the one-point
    /// test in `gradient`): the lanes stay finite and agree with the one-point derivatives,
    /// which are checked against central differences there.
    #[test]
    fn thousands_of_layers_stay_finite_in_lanes() {
        let materials = [
            Complex64::new(2.35, 0.0),
            Complex64::new(1.38, 0.0),
            Complex64::new(2.0, 0.3),
        ];
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
            let wl = [550.0, 545.0, 560.0, 530.0];
            let aoi = [30f64.to_radians(); 4];
            let media = Media4::new([&stack; 4], aoi, Side::Front);
            let mut four: [Gradient; 4] = Default::default();
            let mut scratch = GradientScratch4::default();
            solve_gradient4(&media, [&stack; 4], wl, &mut scratch, &mut four);
            let mut largest = 0.0_f64;
            for i in 0..4 {
                let mut g = Gradient::default();
                solve_gradient(
                    &stack,
                    wl[i],
                    aoi[i],
                    &mut GradientScratch::default(),
                    &mut g,
                );
                let (a, c) = (numbers(&four[i]), numbers(&g));
                for q in 0..a.len() {
                    assert!(
                        a[q].is_finite(),
                        "{substrate_mm:?} lane {i} number {q}: finite"
                    );
                    assert!(
                        (a[q] - c[q]).abs() < 1e-9 * (1.0 + c[q].abs()),
                        "{substrate_mm:?} lane {i} number {q}: lanes {} vs one point {}",
                        a[q],
                        c[q]
                    );
                    largest = largest.max(a[q].abs());
                }
            }
            assert!(
                largest > 1e-4,
                "{substrate_mm:?}: real derivatives were compared"
            );
        }
    }
}
