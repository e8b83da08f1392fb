//! The characteristic-matrix loop for four independent points at once (four wavelengths, or
//! four angles), in SIMD lanes. Same mathematics as [`super::coherent`]; each layer's matrix is
//! always scaled by e^(−Im δ) (so no division is needed), every few layers the running
//! [B; C] of each lane is brought back near 1 by a power of two (so long stacks in a stop band
//! cannot overflow), and both scales are carried as logarithms to the end.
//!
//! The loop is compiled once per instruction set ([`super::simd`]) and the best one the
//! processor has is chosen at run time; the versions agree to rounding (see [`simd::Mad`]).

#![allow(
    clippy::inline_always,
    reason = "the lane code must be inlined into each instruction set's version to use it"
)]

use num_complex::Complex64;

use super::simd::{self, F4, Fused, Level, Mad, Plain};
use super::tmm::{Amplitudes, BIG, Coherent, RENORM_EVERY, SMALL, Tilted, finish, renorm_factor};
use super::{ColumnsMut, FrontRun, Response};

/// Four complex numbers, real and imaginary parts in separate lanes.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Cx4 {
    pub(crate) re: F4,
    pub(crate) im: F4,
}

impl Cx4 {
    pub(crate) const ZERO: Self = Self {
        re: F4::ZERO,
        im: F4::ZERO,
    };
    pub(crate) const ONE: Self = Self {
        re: F4::ONE,
        im: F4::ZERO,
    };

    #[inline(always)]
    pub(crate) fn gather(z: [Complex64; 4]) -> Self {
        Self {
            re: F4(z.map(|z| z.re)),
            im: F4(z.map(|z| z.im)),
        }
    }

    #[inline(always)]
    pub(crate) fn lane(self, i: usize) -> Complex64 {
        Complex64::new(self.re.0[i], self.im.0[i])
    }

    #[inline(always)]
    pub(crate) fn mul(self, o: Self) -> Self {
        Self {
            re: self.re * o.re - self.im * o.im,
            im: self.re * o.im + self.im * o.re,
        }
    }

    /// self·b − c·d, products formed through `M`.
    #[inline(always)]
    pub(crate) fn mul_sub<M: Mad>(self, b: Self, c: Self, d: Self) -> Self {
        let a = self;
        let re = M::mad(-a.im, b.im, a.re * b.re);
        let re = M::mad(c.im, d.im, M::mad(-c.re, d.re, re));
        let im = M::mad(a.im, b.re, a.re * b.im);
        let im = M::mad(-c.im, d.re, M::mad(-c.re, d.im, im));
        Self { re, im }
    }

    /// self·b + c·d, products formed through `M`.
    #[inline(always)]
    pub(crate) fn mul_plus<M: Mad>(self, b: Self, c: Self, d: Self) -> Self {
        let a = self;
        let re = M::mad(-a.im, b.im, a.re * b.re);
        let re = M::mad(-c.im, d.im, M::mad(c.re, d.re, re));
        let im = M::mad(a.im, b.re, a.re * b.im);
        let im = M::mad(c.im, d.re, M::mad(c.re, d.im, im));
        Self { re, im }
    }

    /// self·o, products formed through `M`.
    #[inline(always)]
    pub(crate) fn mul_m<M: Mad>(self, o: Self) -> Self {
        Self {
            re: M::mad(-self.im, o.im, self.re * o.re),
            im: M::mad(self.im, o.re, self.re * o.im),
        }
    }
}

/// 1/z lane by lane.
#[inline(always)]
pub(crate) fn inv(z: Cx4) -> Cx4 {
    let n = z.re * z.re + z.im * z.im;
    let r = F4::ONE.zip(n, |a, b| a / b);
    Cx4 {
        re: z.re * r,
        im: -(z.im * r),
    }
}

/// Rescales each lane's [B; C] by a power of two when it has left [`SMALL`, `BIG`] (rare: a
/// quick test of all lanes first); the natural logarithm taken out is added to `log_norm`.
#[inline(always)]
fn renorm4(b: &mut Cx4, c: &mut Cx4, log_norm: &mut F4) {
    let m = b.re.abs().max(b.im.abs()).max(c.re.abs().max(c.im.abs()));
    if m.any_outside(SMALL, BIG) {
        rescale4(b, c, log_norm, m);
    }
}

/// The rare part of [`renorm4`], kept out of line.
#[cold]
#[inline(never)]
fn rescale4(b: &mut Cx4, c: &mut Cx4, log_norm: &mut F4, m: F4) {
    let f = F4(m.0.map(|m| renorm_factor(m).unwrap_or(1.0)));
    for x in [&mut b.re, &mut b.im, &mut c.re, &mut c.im] {
        *x = *x * f;
    }
    *log_norm -= f.map(f64::ln);
}

/// A medium at four points: q and the admittances per lane.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Tilted4 {
    pub(crate) q: Cx4,
    /// Admittances η (s, p): indexed by polarisation, so a loop over both picks one by its
    /// address (a choice between two fields had the compiler load them lane by lane).
    pub(crate) eta: [Cx4; 2],
    /// 1/η (s, p).
    pub(crate) inv_eta: [Cx4; 2],
    /// q is real in every lane: the layer neither absorbs nor is evanescent (no exp needed).
    pub(crate) real: bool,
}

impl Tilted4 {
    /// Tilts four indices for four Snell invariants at once: [`Tilted::new`] lane by lane,
    /// branch-free (each case is formed in every lane and chosen by a mask), so it vectorises.
    /// Always inlined, so inside a kernel it is compiled for the chosen instruction set.
    #[inline(always)]
    pub(crate) fn new(n: [Complex64; 4], snell: [f64; 4]) -> Self {
        let (nr, ni) = (F4(n.map(|z| z.re)), F4(n.map(|z| z.im)));
        let s = F4(snell);
        let n2 = Cx4 {
            re: nr * nr - ni * ni,
            im: nr * ni + ni * nr,
        };
        let (u, v) = (n2.re - s * s, n2.im);
        let m = (u * u + v * v).sqrt();
        // The principal root (see `tmm::principal_sqrt`): t = √((|w| + |Re w|) / 2) on both
        // branches (m − u = m + |u| for u < 0), then the other part by one division.
        let t = (F4::splat(0.5) * (m + u.abs())).sqrt();
        let w = v.div(F4::splat(2.0) * t);
        let negative = u.lt(F4::ZERO);
        let zero = m.eq(F4::ZERO);
        let q_re = t.select(negative, w.abs()).select(zero, F4::ZERO);
        let q_im = w.select(negative, t.copysign(v)).select(zero, v);
        // The decaying branch: Im q > 0, or Re q > 0 when q is real.
        let flip = q_im
            .lt(F4::ZERO)
            .or(q_im.eq(F4::ZERO).and(q_re.lt(F4::ZERO)));
        let (q_re, q_im) = (q_re.select(flip, -q_re), q_im.select(flip, -q_im));
        // Exactly at a critical angle: a tiny q, as in `Tilted::new`.
        let tiny = (q_re * q_re + q_im * q_im).lt(F4::splat(1e-300));
        let q = Cx4 {
            re: q_re.select(tiny, F4::ZERO),
            im: q_im.select(tiny, F4::splat(1e-150)),
        };
        let inv_q = inv(q);
        let inv_n2 = inv(n2);
        Self {
            q,
            eta: [q, n2.mul(inv_q)],
            inv_eta: [inv_q, q.mul(inv_n2)],
            real: q.im.0.iter().all(|&x| x == 0.0),
        }
    }

    /// Four tilted media as lanes (the tests build stacks this way).
    #[cfg(test)]
    pub(crate) fn gather(t: [&Tilted; 4]) -> Self {
        Self {
            q: Cx4::gather(t.map(|t| t.q)),
            eta: [
                Cx4::gather(t.map(|t| t.eta_s)),
                Cx4::gather(t.map(|t| t.eta_p)),
            ],
            inv_eta: [
                Cx4::gather(t.map(|t| t.inv_eta_s)),
                Cx4::gather(t.map(|t| t.inv_eta_p)),
            ],
            real: t.iter().all(|t| t.q.im == 0.0),
        }
    }
}

/// [`super::coherent`] for four points: `incident`, `substrate` and each layer's medium are
/// given per lane, the thicknesses are shared. Runs in the best instruction set available.
pub(crate) fn coherent4<'a>(
    incident: [&Tilted; 4],
    layers: impl Iterator<Item = (&'a Tilted4, f64)>,
    substrate: [&Tilted; 4],
    wavelength_nm: [f64; 4],
) -> [Coherent; 4] {
    coherent4_at(Level::best(), incident, layers, substrate, wavelength_nm)
}

/// [`coherent4`] in a chosen instruction set (tests compare them).
pub(crate) fn coherent4_at<'a>(
    level: Level,
    incident: [&Tilted; 4],
    layers: impl Iterator<Item = (&'a Tilted4, f64)>,
    substrate: [&Tilted; 4],
    wavelength_nm: [f64; 4],
) -> [Coherent; 4] {
    let eta_sub = [
        Cx4::gather(substrate.map(|t| t.eta_s)),
        Cx4::gather(substrate.map(|t| t.eta_p)),
    ];
    let k0 = F4(wavelength_nm.map(|w| std::f64::consts::TAU / w));
    let (bc, log_s, log_p) = simd::run_at(
        level,
        Product {
            layers,
            eta_sub,
            k0,
        },
    );
    let [(bs, cs), (bp, cp)] = bc;
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
                log_s.0[i],
            ),
            p: finish(
                inc.eta_p,
                bp.lane(i),
                cp.lane(i),
                sub.eta_p,
                cos_ratio,
                log_p.0[i],
            ),
        }
    })
}

/// The most common problem, four points at once from start to end: light from the front onto
/// a coating on a semi-infinite substrate. Everything per point — tilting the media, the layer
/// loop, and R, T, A and the amplitudes — runs in lanes, in the best instruction set
/// available; only a point whose scale is extreme (a layer loop that needed rescaling by many
/// orders of magnitude) is finished one lane at a time. Same results as the general path of
/// [`super::solve4`] to rounding.
pub(crate) struct Front4<'a> {
    /// Each point's incident index (its real part counts: the incident medium is transparent).
    pub(crate) incident: [Complex64; 4],
    /// Each point's substrate index.
    pub(crate) substrate: [Complex64; 4],
    /// Each point's layer-material indices (the same materials in every lane).
    pub(crate) materials: [&'a [Complex64]; 4],
    /// The layers, deposition order: (material, nm).
    pub(crate) layers: &'a [(usize, f64)],
    /// Sine of each point's angle of incidence.
    pub(crate) sin_aoi: [f64; 4],
    /// Vacuum wavelength of each point (nm).
    pub(crate) wavelength_nm: [f64; 4],
    /// Buffer for the tilted layer materials.
    pub(crate) packed: &'a mut Vec<Tilted4>,
}

impl pulp::WithSimd for Front4<'_> {
    type Output = [Response; 4];

    #[inline(always)]
    fn with_simd<S: pulp::Simd>(self, _simd: S) -> Self::Output {
        let n0 = F4(self.incident.map(|n| n.re));
        let snell = n0 * F4(self.sin_aoi);
        self.packed.clear();
        let materials = self.materials;
        // A plain loop, not an iterator adapter: so the tilting is inlined here and compiled
        // for this instruction set.
        #[allow(
            clippy::needless_range_loop,
            reason = "m indexes all four lanes' material lists"
        )]
        for m in 0..materials[0].len() {
            self.packed.push(Tilted4::new(
                std::array::from_fn(|i| materials[i][m]),
                snell.0,
            ));
        }
        let ends = FrontEnds4::new(self.incident, self.substrate, snell);
        let layers = self.layers.iter().map(|&(m, d)| (&self.packed[m], d));
        front_responses::<S, _>(layers, &ends, self.wavelength_nm)
    }
}

/// [`Front4`] with the media tilted beforehand (the optimiser's case, see
/// [`super::Media4`]).
pub(crate) struct FrontWith<'a> {
    /// The layer materials, tilted.
    pub(crate) packed: &'a [Tilted4],
    /// The incident medium and the substrate, tilted.
    pub(crate) ends: &'a FrontEnds4,
    /// The layers, deposition order: (material, nm).
    pub(crate) layers: &'a [(usize, f64)],
    /// Vacuum wavelength of each point (nm).
    pub(crate) wavelength_nm: [f64; 4],
}

impl pulp::WithSimd for FrontWith<'_> {
    type Output = [Response; 4];

    #[inline(always)]
    fn with_simd<S: pulp::Simd>(self, _simd: S) -> Self::Output {
        let layers = self.layers.iter().map(|&(m, d)| (&self.packed[m], d));
        front_responses::<S, _>(layers, self.ends, self.wavelength_nm)
    }
}

/// The ends of the front problem in four lanes: a transparent incident medium and a
/// semi-infinite substrate, tilted.
#[derive(Clone, Copy, Debug)]
pub(crate) struct FrontEnds4 {
    /// The incident medium's admittances (s, p), real: it is transparent and the angle below
    /// 90°, so q₀ = n₀ cos θ₀ is real.
    pub(crate) eta0: [F4; 2],
    /// The substrate's admittances (s, p).
    pub(crate) eta_sub: [Cx4; 2],
    /// t_p's factor cos θ₀ / cos θ_sub = (q₀ / n₀) · (N_sub / q_sub).
    pub(crate) t_factor_p: Cx4,
}

impl FrontEnds4 {
    /// The ends for these indices (the incident medium's real part counts) and Snell
    /// invariants.
    #[inline(always)]
    pub(crate) fn new(incident: [Complex64; 4], substrate: [Complex64; 4], snell: F4) -> Self {
        let n0 = F4(incident.map(|n| n.re));
        let sub = Tilted4::new(substrate, snell.0);
        let q0 = (n0 * n0 - snell * snell).map(f64::sqrt);
        let eta0_p = (n0 * n0).zip(q0, |a, b| a / b);
        let cos0 = q0.zip(n0, |a, b| a / b);
        let ratio = Cx4::gather(substrate).mul(sub.inv_eta[0]);
        Self {
            eta0: [q0, eta0_p],
            eta_sub: sub.eta,
            t_factor_p: Cx4 {
                re: ratio.re * cos0,
                im: ratio.im * cos0,
            },
        }
    }
}

impl FrontEnds4 {
    /// R, T, A and the amplitudes of each polarisation (s, p) from its final [B; C] and the
    /// natural logarithm of the scale taken out of it.
    #[inline(always)]
    pub(crate) fn finish(
        &self,
        [[bs, cs], [bp, cp]]: [[Cx4; 2]; 2],
        log: [F4; 2],
    ) -> [Finished4; 2] {
        [
            finish4(self.eta0[0], bs, cs, self.eta_sub[0], Cx4::ONE, log[0]),
            finish4(
                self.eta0[1],
                bp,
                cp,
                self.eta_sub[1],
                self.t_factor_p,
                log[1],
            ),
        ]
    }
}

/// The responses of `layers` between `ends` at four wavelengths: the layer loop and the
/// finish in lanes, products fused where `S` has the instructions.
#[inline(always)]
fn front_responses<'a, S: pulp::Simd, I: Iterator<Item = (&'a Tilted4, f64)>>(
    layers: I,
    ends: &FrontEnds4,
    wavelength_nm: [f64; 4],
) -> [Response; 4] {
    let [s, p] = front_finished::<S, I>(layers, ends, wavelength_nm);
    std::array::from_fn(|i| {
        let (s, p) = (s.lane(i), p.lane(i));
        Response {
            r_s: s.reflectance,
            r_p: p.reflectance,
            t_s: s.transmittance,
            t_p: p.transmittance,
            a_s: s.absorptance,
            a_p: p.absorptance,
            amp_r_s: s.r,
            amp_r_p: p.r,
            amp_t_s: s.t,
            amp_t_p: p.t,
        }
    })
}

/// [`front_responses`] up to the finished s and p lanes.
#[inline(always)]
fn front_finished<'a, S: pulp::Simd, I: Iterator<Item = (&'a Tilted4, f64)>>(
    layers: I,
    ends: &FrontEnds4,
    wavelength_nm: [f64; 4],
) -> [Finished4; 2] {
    let k0 = F4(wavelength_nm.map(|w| std::f64::consts::TAU / w));
    let ([(bs, cs), (bp, cp)], log_s, log_p) = if S::IS_SCALAR {
        product4::<Plain>(layers, ends.eta_sub, k0)
    } else {
        product4::<Fused>(layers, ends.eta_sub, k0)
    };
    ends.finish([[bs, cs], [bp, cp]], [log_s, log_p])
}

/// [`Front4`] over a whole [`FrontRun`], four points at a time, each group's results written
/// straight into the columns: the loop runs inside one instruction-set version, and nothing
/// per point is built in between.
pub(crate) struct FrontRun4<'a, 'b> {
    /// The run (its columns checked against each other by the caller).
    pub(crate) run: &'a FrontRun<'a>,
    /// Sine of the run's angle of incidence.
    pub(crate) sin_aoi: f64,
    /// Where the results go.
    pub(crate) out: &'a mut ColumnsMut<'b>,
    /// Buffer for the tilted layer materials.
    pub(crate) packed: &'a mut Vec<Tilted4>,
}

impl pulp::WithSimd for FrontRun4<'_, '_> {
    type Output = ();

    #[inline(always)]
    fn with_simd<S: pulp::Simd>(self, _simd: S) {
        let run = self.run;
        let points = run.wavelength_nm.len();
        let count = run.materials.len() / points.max(1);
        let sin_aoi = F4::splat(self.sin_aoi);
        let mut first = 0;
        while first < points {
            // Points past the end repeat the last one; their lanes are not written.
            let at: [usize; 4] = std::array::from_fn(|k| (first + k).min(points - 1));
            let incident = at.map(|i| run.incident[i]);
            let snell = F4(incident.map(|n| n.re)) * sin_aoi;
            self.packed.clear();
            for m in 0..count {
                let column = &run.materials[m * points..(m + 1) * points];
                self.packed
                    .push(Tilted4::new(at.map(|i| column[i]), snell.0));
            }
            let ends = FrontEnds4::new(incident, at.map(|i| run.substrate[i]), snell);
            let layers = run.layers.iter().map(|&(m, d)| (&self.packed[m], d));
            let [s, p] = front_finished::<S, _>(layers, &ends, at.map(|i| run.wavelength_nm[i]));
            store(self.out, first, (points - first).min(4), &s, &p);
            first += 4;
        }
    }
}

/// Writes the first `valid` lanes of a group's s and p results into `out` from slot `first`:
/// whole vectors when all four lanes count and were finished in lanes, else lane by lane.
#[inline(always)]
fn store(out: &mut ColumnsMut<'_>, first: usize, valid: usize, s: &Finished4, p: &Finished4) {
    if let (
        4,
        Finished4::Lanes {
            r: r_s,
            t: t_s,
            reflectance: rs,
            transmittance: ts,
            absorptance: as_,
        },
        Finished4::Lanes {
            r: r_p,
            t: t_p,
            reflectance: rp,
            transmittance: tp,
            absorptance: ap,
        },
    ) = (valid, s, p)
    {
        let half = F4::splat(0.5);
        let span = first..first + 4;
        let put = |column: &mut [f64], x: F4| column[span.clone()].copy_from_slice(&x.0);
        put(out.r_s, *rs);
        put(out.r_p, *rp);
        put(out.r, half * (*rs + *rp));
        put(out.t_s, *ts);
        put(out.t_p, *tp);
        put(out.t, half * (*ts + *tp));
        put(out.a_s, *as_);
        put(out.a_p, *ap);
        put(out.a, half * (*as_ + *ap));
        for k in 0..4 {
            out.amp_r_s[first + k] = r_s.lane(k);
            out.amp_r_p[first + k] = r_p.lane(k);
            out.amp_t_s[first + k] = t_s.lane(k);
            out.amp_t_p[first + k] = t_p.lane(k);
        }
        return;
    }
    for k in 0..valid {
        let (s, p, i) = (s.lane(k), p.lane(k), first + k);
        out.r_s[i] = s.reflectance;
        out.r_p[i] = p.reflectance;
        out.r[i] = 0.5 * (s.reflectance + p.reflectance);
        out.t_s[i] = s.transmittance;
        out.t_p[i] = p.transmittance;
        out.t[i] = 0.5 * (s.transmittance + p.transmittance);
        out.a_s[i] = s.absorptance;
        out.a_p[i] = p.absorptance;
        out.a[i] = 0.5 * (s.absorptance + p.absorptance);
        out.amp_r_s[i] = s.r;
        out.amp_r_p[i] = p.r;
        out.amp_t_s[i] = s.t;
        out.amp_t_p[i] = p.t;
    }
}

/// R, T, A and amplitudes of one polarisation in four lanes, or what to finish lane by lane.
pub(crate) enum Finished4 {
    /// Every lane done in lanes.
    Lanes {
        r: Cx4,
        t: Cx4,
        reflectance: F4,
        transmittance: F4,
        absorptance: F4,
    },
    /// Some lane's scale is extreme: each lane by [`finish`] (the careful formulas).
    OneByOne([Amplitudes; 4]),
}

impl Finished4 {
    #[inline(always)]
    pub(crate) fn lane(&self, i: usize) -> Amplitudes {
        match self {
            Self::Lanes {
                r,
                t,
                reflectance,
                transmittance,
                absorptance,
            } => Amplitudes {
                r: r.lane(i),
                t: t.lane(i),
                reflectance: reflectance.0[i],
                transmittance: transmittance.0[i],
                absorptance: absorptance.0[i],
            },
            Self::OneByOne(a) => a[i],
        }
    }
}

/// [`finish`] for four lanes with a transparent incident medium (real `eta0`): the same
/// formulas, in lanes, when every lane's scale e^(−`log_scale`) and |η₀B + C|² are far from
/// overflow and underflow (all but extreme stacks); otherwise lane by lane through `finish`.
#[inline(always)]
pub(crate) fn finish4(
    eta0: F4,
    b: Cx4,
    c: Cx4,
    eta_sub: Cx4,
    t_factor: Cx4,
    log_scale: F4,
) -> Finished4 {
    let den = Cx4 {
        re: eta0 * b.re + c.re,
        im: eta0 * b.im + c.im,
    };
    let den2 = den.re * den.re + den.im * den.im;
    let tame = (0..4).all(|i| log_scale.0[i].abs() < 150.0 && (1e-150..1e150).contains(&den2.0[i]));
    if !tame {
        return Finished4::OneByOne(std::array::from_fn(|i| {
            finish(
                Complex64::new(eta0.0[i], 0.0),
                b.lane(i),
                c.lane(i),
                eta_sub.lane(i),
                t_factor.lane(i),
                log_scale.0[i],
            )
        }));
    }
    let inv_den2 = F4::ONE.zip(den2, |a, b| a / b);
    let inv_den = Cx4 {
        re: den.re * inv_den2,
        im: -(den.im * inv_den2),
    };
    let num = Cx4 {
        re: eta0 * b.re - c.re,
        im: eta0 * b.im - c.im,
    };
    let r = num.mul(inv_den);
    let four = F4::splat(4.0) * eta0 * inv_den2;
    let scale = (-log_scale).exp();
    let transmittance = four * eta_sub.re * (scale * scale);
    // Re(B C*)
    let bc = b.re * c.re + b.im * c.im;
    let t_amp = inv_den.mul(t_factor);
    let two_eta0_scale = F4::splat(2.0) * eta0 * scale;
    Finished4::Lanes {
        reflectance: r.re * r.re + r.im * r.im,
        r,
        t: Cx4 {
            re: t_amp.re * two_eta0_scale,
            im: t_amp.im * two_eta0_scale,
        },
        transmittance,
        absorptance: four * bc - transmittance,
    }
}

/// [x, y] ← [cos·x − i·u·y, cos·y − i·w·x] with real `cos`, `u`, `w`: a lossless layer's
/// matrix applied to a column [B; C] (u = sin δ/η, w = η sin δ).
#[inline(always)]
pub(crate) fn rotate<M: Mad>([x, y]: [Cx4; 2], cos: F4, u: F4, w: F4) -> [Cx4; 2] {
    [
        Cx4 {
            re: M::mad(u, y.im, cos * x.re),
            im: M::mad(-u, y.re, cos * x.im),
        },
        Cx4 {
            re: M::mad(w, x.im, cos * y.re),
            im: M::mad(-w, x.re, cos * y.im),
        },
    ]
}

/// [`product4`] as an operation for [`simd::run_at`].
struct Product<I> {
    layers: I,
    eta_sub: [Cx4; 2],
    k0: F4,
}

impl<'a, I: Iterator<Item = (&'a Tilted4, f64)>> pulp::WithSimd for Product<I> {
    type Output = ([(Cx4, Cx4); 2], F4, F4);

    #[inline(always)]
    fn with_simd<S: pulp::Simd>(self, _simd: S) -> Self::Output {
        if S::IS_SCALAR {
            product4::<Plain>(self.layers, self.eta_sub, self.k0)
        } else {
            product4::<Fused>(self.layers, self.eta_sub, self.k0)
        }
    }
}

/// One layer's phase δ = k₀ q d at four points: the sine and cosine of Re δ, and for a layer
/// that absorbs or is evanescent cos δ and i sin δ scaled by e^(−Im δ) (so no division is
/// needed), with Im δ, the logarithm of that scale.
#[derive(Clone, Copy)]
pub(crate) struct Phase {
    pub(crate) sin_a: F4,
    pub(crate) cos_a: F4,
    /// cos δ · e^(−Im δ) (cos Re δ when the layer is lossless).
    pub(crate) cos_d: Cx4,
    /// i sin δ · e^(−Im δ) (i sin Re δ when the layer is lossless).
    pub(crate) i_sin_d: Cx4,
    /// Im δ ≥ 0 (q is on the decaying branch); zero for a lossless layer.
    pub(crate) im_delta: F4,
    /// The layer is lossless and propagating: cos δ and the admittances are real, i sin δ is
    /// imaginary, so each complex product is two real ones.
    pub(crate) real: bool,
}

impl Phase {
    /// The phase of layer `m` with k₀·d = `kd`.
    #[inline(always)]
    pub(crate) fn new<M: Mad>(m: &Tilted4, kd: F4) -> Self {
        let (sin_a, cos_a) = (m.q.re * kd).sin_cos_with::<M>();
        if m.real {
            return Self {
                sin_a,
                cos_a,
                cos_d: Cx4 {
                    re: cos_a,
                    im: F4::ZERO,
                },
                i_sin_d: Cx4 {
                    re: F4::ZERO,
                    im: sin_a,
                },
                im_delta: F4::ZERO,
                real: true,
            };
        }
        // cosh b · e^(−b) and sinh b · e^(−b), with b = Im δ
        let b = m.q.im * kd;
        let em = (-b).exp_with::<M>();
        let em2 = em * em;
        let half = F4::splat(0.5);
        let (ch, sh) = ((F4::ONE + em2) * half, (F4::ONE - em2) * half);
        // cos(a + ib) = cos a cosh b − i sin a sinh b; i sin(a + ib) = −cos a sinh b + i sin a cosh b
        Self {
            sin_a,
            cos_a,
            cos_d: Cx4 {
                re: cos_a * ch,
                im: -(sin_a * sh),
            },
            i_sin_d: Cx4 {
                re: -(cos_a * sh),
                im: sin_a * ch,
            },
            im_delta: b,
            real: false,
        }
    }

    /// The column [B; C] times the layer's (scaled) matrix for one polarisation, admittance
    /// `eta`.
    #[inline(always)]
    pub(crate) fn through<M: Mad>(&self, [b, c]: [Cx4; 2], eta: Cx4, inv_eta: Cx4) -> [Cx4; 2] {
        if self.real {
            let s = self.sin_a;
            return rotate::<M>([b, c], self.cos_a, s * inv_eta.re, s * eta.re);
        }
        let (x, y) = (
            self.i_sin_d.mul_m::<M>(inv_eta),
            self.i_sin_d.mul_m::<M>(eta),
        );
        [
            self.cos_d.mul_sub::<M>(b, x, c),
            self.cos_d.mul_sub::<M>(c, y, b),
        ]
    }
}

/// [B; C] for s and p after all `layers`, starting from [1; η_sub], and the natural logarithm
/// of the scale taken out of each (s, p). Always inlined, so it is compiled for the caller's
/// instruction set; `M` is [`Fused`] only where that set has fused multiply–adds.
#[inline(always)]
#[allow(
    clippy::type_complexity,
    reason = "two polarisations of [B; C] and their scales, unpacked by the one caller"
)]
fn product4<'a, M: Mad>(
    layers: impl Iterator<Item = (&'a Tilted4, f64)>,
    eta_sub: [Cx4; 2],
    k0: F4,
) -> ([(Cx4, Cx4); 2], F4, F4) {
    let (mut bs, mut cs) = (Cx4::ONE, eta_sub[0]);
    let (mut bp, mut cp) = (Cx4::ONE, eta_sub[1]);
    let mut log_scale = F4::ZERO;
    let (mut norm_s, mut norm_p) = (F4::ZERO, F4::ZERO);
    let mut since_renorm = 0;
    for (m, d_nm) in layers {
        since_renorm += 1;
        if since_renorm > RENORM_EVERY {
            since_renorm = 1;
            renorm4(&mut bs, &mut cs, &mut norm_s);
            renorm4(&mut bp, &mut cp, &mut norm_p);
        }
        let phase = Phase::new::<M>(m, k0 * F4::splat(d_nm));
        log_scale += phase.im_delta;
        [bs, cs] = phase.through::<M>([bs, cs], m.eta[0], m.inv_eta[0]);
        [bp, cp] = phase.through::<M>([bp, cp], m.eta[1], m.inv_eta[1]);
    }
    renorm4(&mut bs, &mut cs, &mut norm_s);
    renorm4(&mut bp, &mut cp, &mut norm_p);
    ([(bs, cs), (bp, cp)], log_scale + norm_s, log_scale + norm_p)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::optics::coherent;

    use crate::optics::test_rng::Rng;

    /// Every quantity of a coherent result, for comparisons.
    fn numbers(c: &Coherent) -> [f64; 14] {
        let [s, p] = [c.s, c.p];
        [
            s.reflectance,
            s.transmittance,
            s.absorptance,
            s.r.re,
            s.r.im,
            s.t.re,
            s.t.im,
            p.reflectance,
            p.transmittance,
            p.absorptance,
            p.r.re,
            p.r.im,
            p.t.re,
            p.t.im,
        ]
    }

    /// The version for the widest instruction set this processor has against the portable
    /// one, on random absorbing stacks at oblique incidence (four wavelengths per call), and
    /// both against the one-point solver. Where the processor has AVX2 and FMA, the wide
    /// version must be the one chosen, so the comparison is not of one version with itself.
    #[test]
    fn instruction_sets_agree() {
        #[cfg(any(target_arch = "x86", target_arch = "x86_64"))]
        if std::arch::is_x86_feature_detected!("avx2") && std::arch::is_x86_feature_detected!("fma")
        {
            assert_eq!(Level::best(), Level::Avx2, "the AVX2 loop is chosen");
        }
        let best = Level::best();
        let mut rng = Rng(0x5851_f42d_4c95_7f2d);
        let mut worst = 0.0_f64;
        let mut compared = 0;
        for case in 0..40 {
            let snell = rng.range(0.0, 0.95);
            let materials: Vec<[Tilted; 4]> = (0..4)
                .map(|_| {
                    let n = Complex64::new(rng.range(1.3, 2.6), rng.range(0.0, 0.4));
                    std::array::from_fn(|i| {
                        // Slightly different index per lane, as with dispersion.
                        Tilted::new(n * (1.0 + 0.01 * i as f64), snell)
                    })
                })
                .collect();
            let packed: Vec<Tilted4> = materials
                .iter()
                .map(|l| Tilted4::gather(l.each_ref()))
                .collect();
            // Up to 60 layers so the every-8-layers rescaling check runs too.
            let n = 1 + (rng.next() * 60.0) as usize;
            let layers: Vec<(usize, f64)> = (0..n)
                .map(|_| ((rng.next() * 4.0) as usize % 4, rng.range(5.0, 400.0)))
                .collect();
            let inc = Tilted::new(Complex64::new(1.0, 0.0), snell);
            let sub = Tilted::new(Complex64::new(rng.range(1.4, 1.9), 0.0), snell);
            let wl: [f64; 4] = std::array::from_fn(|_| rng.range(350.0, 1200.0));
            let run = |level| {
                let it = layers.iter().map(|&(m, d)| (&packed[m], d));
                coherent4_at(level, [&inc; 4], it, [&sub; 4], wl)
            };
            let (portable, wide) = (run(Level::Portable), run(best));
            for i in 0..4 {
                let one = coherent(
                    &inc,
                    layers.iter().map(|&(m, d)| (&materials[m][i], d)),
                    &sub,
                    wl[i],
                );
                let (a, b, c) = (numbers(&portable[i]), numbers(&wide[i]), numbers(&one));
                for q in 0..a.len() {
                    assert!(a[q].is_finite(), "case {case} lane {i}: finite");
                    worst = worst.max((a[q] - b[q]).abs());
                    assert!(
                        (a[q] - b[q]).abs() < 1e-13,
                        "case {case} lane {i} quantity {q}: portable {} vs {best:?} {}",
                        a[q],
                        b[q]
                    );
                    assert!(
                        (a[q] - c[q]).abs() < 1e-10,
                        "case {case} lane {i} quantity {q}: four lanes {} vs one point {}",
                        a[q],
                        c[q]
                    );
                    compared += 1;
                }
            }
        }
        assert!(
            compared > 2000,
            "compared {compared} numbers, worst {worst}"
        );
    }

    /// Tilting four lanes at once against [`Tilted::new`] one by one: absorbing, lossless,
    /// evanescent (beyond the critical angle) and exactly critical media.
    #[test]
    fn tilting_in_lanes_agrees_with_one_medium() {
        let mut rng = Rng(0x9e37_79b9_7f4a_7c15);
        let fields = |t: &Tilted| [t.q, t.eta_s, t.eta_p, t.inv_eta_s, t.inv_eta_p];
        for case in 0..200 {
            let n: [Complex64; 4] = std::array::from_fn(|i| match (case + i) % 4 {
                0 => Complex64::new(rng.range(1.0, 3.0), rng.range(0.0, 2.0)),
                1 => Complex64::new(rng.range(0.05, 1.0), rng.range(1.0, 8.0)),
                2 => Complex64::new(rng.range(1.0, 2.0), 0.0),
                _ => Complex64::new(1.0, 0.0),
            });
            let snell: [f64; 4] = std::array::from_fn(|i| match (case + i) % 5 {
                // Exactly critical for the transparent index 1.0.
                0 => 1.0,
                _ => rng.range(0.0, 1.9),
            });
            let four = Tilted4::new(n, snell);
            for i in 0..4 {
                let one = Tilted::new(n[i], snell[i]);
                let lanes = [
                    four.q.lane(i),
                    four.eta[0].lane(i),
                    four.eta[1].lane(i),
                    four.inv_eta[0].lane(i),
                    four.inv_eta[1].lane(i),
                ];
                for (k, (a, b)) in lanes.iter().zip(fields(&one)).enumerate() {
                    assert!(
                        (a - b).norm() <= 1e-13 * (1.0 + b.norm()),
                        "case {case} lane {i} field {k}: {a} vs {b} (n {}, S {})",
                        n[i],
                        snell[i]
                    );
                }
            }
            let all_real = (0..4).all(|i| Tilted::new(n[i], snell[i]).q.im == 0.0);
            assert_eq!(four.real, all_real, "case {case}: lossless flag");
        }
    }
}
