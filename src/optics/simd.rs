//! Four `f64` lanes for the solver's inner loops, and the choice of instruction set at run
//! time.
//!
//! [`F4`] is a plain `[f64; 4]` whose operations are written lane by lane and always inlined,
//! so the compiler turns them into whatever vector instructions the *surrounding function* is
//! compiled for: two 128-bit SSE2 halves in the portable build, one 256-bit AVX register where
//! the loop runs inside [`run_at`]'s AVX2 version. `sin_cos` and `exp` are branch-free
//! polynomials on the same lanes, so they vectorise too.
//!
//! [`run_at`] runs a kernel in the version for a [`Level`]: [`Level::best`] is the best the
//! processor supports (detected at run time through the `pulp` crate, so the same binary runs
//! on any x86-64); the tests run every level and compare. The layer loop forms its products
//! through [`Mad`]: fused multiply–adds at the AVX2 level, a product and a sum in the portable
//! one, so the levels agree to rounding (the tests hold them within 1e-13).

#![allow(
    clippy::inline_always,
    clippy::excessive_precision,
    clippy::approx_constant,
    reason = "lane code inlined into each instruction set's version; coefficients as published"
)]

use std::ops::{Add, Mul, Neg, Sub};

/// Four `f64` lanes.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
#[repr(C, align(32))]
pub(crate) struct F4(pub(crate) [f64; 4]);

impl F4 {
    pub(crate) const ZERO: Self = Self([0.0; 4]);
    pub(crate) const ONE: Self = Self([1.0; 4]);

    #[inline(always)]
    pub(crate) const fn splat(x: f64) -> Self {
        Self([x; 4])
    }

    /// Applies `f` to each lane (inlined, so straight-line lane code vectorises).
    #[inline(always)]
    pub(crate) fn map(self, f: impl Fn(f64) -> f64) -> Self {
        let a = self.0;
        Self([f(a[0]), f(a[1]), f(a[2]), f(a[3])])
    }

    #[inline(always)]
    pub(crate) fn zip(self, o: Self, f: impl Fn(f64, f64) -> f64) -> Self {
        let (a, b) = (self.0, o.0);
        Self([f(a[0], b[0]), f(a[1], b[1]), f(a[2], b[2]), f(a[3], b[3])])
    }

    #[inline(always)]
    pub(crate) fn abs(self) -> Self {
        self.map(f64::abs)
    }

    /// Lane-wise maximum of two numbers that are not NaN.
    #[inline(always)]
    pub(crate) fn max(self, o: Self) -> Self {
        self.zip(o, |a, b| if a > b { a } else { b })
    }

    /// Whether any lane lies outside `[lo, hi]` (NaN lanes count as inside).
    #[inline(always)]
    pub(crate) fn any_outside(self, lo: f64, hi: f64) -> bool {
        let a = self.0;
        let out = |x: f64| u8::from(x > hi) | u8::from(x < lo);
        (out(a[0]) | out(a[1]) | out(a[2]) | out(a[3])) != 0
    }

    /// Sine and cosine of each lane.
    ///
    /// Reduction by multiples of π/2 in three parts (Cody and Waite), then the minimax
    /// polynomials of the Cephes library on [−π/4, π/4]; accurate to a few ulp for arguments
    /// up to about 1e9 and within rounding of the reduction (≈ |x|·1e-16 absolute) beyond, up
    /// to 2⁵¹ — far more than any phase the design's bounds allow. NaN or infinite lanes give
    /// NaN.
    ///
    /// Products and sums are formed through `M`: fused where the instruction set has it (fewer
    /// instructions, and as accurate).
    #[inline(always)]
    pub(crate) fn sin_cos_with<M: Mad>(self) -> (Self, Self) {
        // π/2 in three parts; the first two have short mantissas so y·DP1, y·DP2 are exact for
        // moderate y (Cephes' DP1..DP3 for π/4, doubled).
        const DP1: f64 = 7.853_981_554_508_209_228_515_625E-1 * 2.0;
        const DP2: f64 = 7.946_627_356_147_928_367_14E-9 * 2.0;
        const DP3: f64 = 3.061_616_997_868_382_943_07E-17 * 2.0;
        // Minimax coefficients of sin and cos on [−π/4, π/4] (Cephes, sin.c).
        const S: [f64; 6] = [
            -1.666_666_666_666_663_072_95E-1,
            8.333_333_333_322_118_588_78E-3,
            -1.984_126_982_958_953_859_96E-4,
            2.755_731_362_138_572_452_13E-6,
            -2.505_074_776_285_780_728_66E-8,
            1.589_623_015_765_465_680_60E-10,
        ];
        const C: [f64; 6] = [
            4.166_666_666_666_659_292_18E-2,
            -1.388_888_888_887_305_641_16E-3,
            2.480_158_728_885_170_453_48E-5,
            -2.755_731_417_929_673_881_12E-7,
            2.087_570_084_197_473_167_78E-9,
            -1.135_853_652_138_768_173_00E-11,
        ];
        // Every step works on all four lanes at once, so each is one vector instruction.
        let xa = self.abs();
        let rounded = M::mad(
            xa,
            Self::splat(std::f64::consts::FRAC_2_PI),
            Self::splat(ROUND),
        );
        let q = rounded.bits();
        let y = rounded - Self::splat(ROUND);
        let r = M::mad(
            -y,
            Self::splat(DP3),
            M::mad(-y, Self::splat(DP2), M::mad(-y, Self::splat(DP1), xa)),
        );
        let r2 = r * r;
        let r4 = r2 * r2;
        // Estrin's scheme: shorter dependency chains than Horner's.
        let ps = estrin::<M>(&S, r2, r4);
        let pc = estrin::<M>(&C, r2, r4);
        let s = M::mad(r * r2, ps, r);
        let c = M::mad(r4, pc, M::mad(Self::splat(-0.5), r2, Self::ONE));
        // Odd quadrants swap sine and cosine.
        let swap = q.map(|q| (q & 1).wrapping_neg());
        let (sin1, cos1) = (s.select(swap, c), c.select(swap, s));
        // Sign of sine: quadrant bit 1 and the sign of x; of cosine: bit 1 of q + 1.
        let x = self.bits();
        let sin_sign = U4(std::array::from_fn(|i| ((q.0[i] << 62) ^ x.0[i]) & SIGN));
        let cos_sign = q.map(|q| (q.wrapping_add(1) << 62) & SIGN);
        (sin1.flip_signs(sin_sign), cos1.flip_signs(cos_sign))
    }

    /// e^x for each lane with x ≤ 709 (larger gives infinity); results below the smallest
    /// normal number (x < −708.4) are flushed to 0.
    #[inline(always)]
    pub(crate) fn exp(self) -> Self {
        self.exp_with::<Plain>()
    }

    /// [`F4::exp`] with its products and sums formed through `M`.
    #[inline(always)]
    pub(crate) fn exp_with<M: Mad>(self) -> Self {
        // ln 2 in two parts, the first with a short mantissa so r·LN2_HI is exact (fdlibm).
        const LN2_HI: f64 = 0.693_145_751_953_125;
        const LN2_LO: f64 = 1.428_606_820_309_417_232_12E-6;
        // 1/k! for k = 2..13.
        const P: [f64; 12] = [
            1.0 / 2.0,
            1.0 / 6.0,
            1.0 / 24.0,
            1.0 / 120.0,
            1.0 / 720.0,
            1.0 / 5040.0,
            1.0 / 40_320.0,
            1.0 / 362_880.0,
            1.0 / 3_628_800.0,
            1.0 / 39_916_800.0,
            1.0 / 479_001_600.0,
            1.0 / 6_227_020_800.0,
        ];
        let rounded = M::mad(
            self,
            Self::splat(std::f64::consts::LOG2_E),
            Self::splat(ROUND),
        );
        let r = rounded - Self::splat(ROUND);
        let f = M::mad(
            -r,
            Self::splat(LN2_LO),
            M::mad(-r, Self::splat(LN2_HI), self),
        );
        // Taylor series of e^f − 1 to f¹³ on |f| ≤ ln2/2: the first omitted term is below
        // 0.35¹⁴/14! ≈ 4e-18.
        let f2 = f * f;
        let f4 = f2 * f2;
        let f8 = f4 * f4;
        let p = |k: usize| Self::splat(P[k]);
        // e^f − 1 = f + f²·(P0 + P1 f + … + P11 f¹¹)
        let pair = |k: usize| M::mad(p(k + 1), f, p(k));
        let lo = M::mad(pair(2), f2, pair(0));
        let mid = M::mad(pair(6), f2, pair(4));
        let hi = M::mad(pair(10), f2, pair(8));
        let z = Self::ONE + M::mad(f2, M::mad(hi, f8, M::mad(mid, f4, lo)), f);
        // 2^r from the exponent bits: the low bits of `rounded` hold r (two's complement).
        let pow2 = Self(
            rounded
                .bits()
                .map(|b| b.wrapping_add(1023) << 52)
                .0
                .map(f64::from_bits),
        );
        let v = z * pow2;
        let under = r.zip(v, |r, v| if r < -1022.0 { 0.0 } else { v });
        r.zip(under, |r, v| if r > 1023.0 { f64::INFINITY } else { v })
    }

    /// The lanes' bit patterns.
    #[inline(always)]
    fn bits(self) -> U4 {
        U4(self.0.map(f64::to_bits))
    }

    /// Square root of each lane.
    #[inline(always)]
    pub(crate) fn sqrt(self) -> Self {
        self.map(f64::sqrt)
    }

    /// Lane-wise quotient.
    #[inline(always)]
    pub(crate) fn div(self, o: Self) -> Self {
        self.zip(o, |a, b| a / b)
    }

    /// Each lane's magnitude with the sign of `sign`'s lane.
    #[inline(always)]
    pub(crate) fn copysign(self, sign: Self) -> Self {
        self.zip(sign, f64::copysign)
    }

    /// All ones in the lanes where `self < o`.
    #[inline(always)]
    pub(crate) fn lt(self, o: Self) -> U4 {
        U4(std::array::from_fn(|i| {
            u64::from(self.0[i] < o.0[i]).wrapping_neg()
        }))
    }

    /// All ones in the lanes where `self == o`.
    #[inline(always)]
    pub(crate) fn eq(self, o: Self) -> U4 {
        U4(std::array::from_fn(|i| {
            u64::from(self.0[i] == o.0[i]).wrapping_neg()
        }))
    }

    /// `o` where `mask` is all ones and `self` where it is zero, bit by bit.
    #[inline(always)]
    pub(crate) fn select(self, mask: U4, o: Self) -> Self {
        let (a, b) = (o.bits(), self.bits());
        Self(std::array::from_fn(|i| {
            f64::from_bits((a.0[i] & mask.0[i]) | (b.0[i] & !mask.0[i]))
        }))
    }

    /// Each lane with its sign bit flipped where `sign` has it set.
    #[inline(always)]
    fn flip_signs(self, sign: U4) -> Self {
        let b = self.bits();
        Self(std::array::from_fn(|i| f64::from_bits(b.0[i] ^ sign.0[i])))
    }
}

/// Four `u64` lanes: the bit patterns of an [`F4`], or a mask (all ones or all zeros).
#[derive(Clone, Copy, Debug)]
pub(crate) struct U4([u64; 4]);

impl U4 {
    /// Bitwise and.
    #[inline(always)]
    pub(crate) fn and(self, o: Self) -> Self {
        Self(std::array::from_fn(|i| self.0[i] & o.0[i]))
    }

    /// Bitwise or.
    #[inline(always)]
    pub(crate) fn or(self, o: Self) -> Self {
        Self(std::array::from_fn(|i| self.0[i] | o.0[i]))
    }

    #[inline(always)]
    fn map(self, f: impl Fn(u64) -> u64) -> Self {
        let a = self.0;
        Self([f(a[0]), f(a[1]), f(a[2]), f(a[3])])
    }
}

impl Add for F4 {
    type Output = Self;
    #[inline(always)]
    fn add(self, o: Self) -> Self {
        self.zip(o, |a, b| a + b)
    }
}

impl Sub for F4 {
    type Output = Self;
    #[inline(always)]
    fn sub(self, o: Self) -> Self {
        self.zip(o, |a, b| a - b)
    }
}

impl Mul for F4 {
    type Output = Self;
    #[inline(always)]
    fn mul(self, o: Self) -> Self {
        self.zip(o, |a, b| a * b)
    }
}

impl Neg for F4 {
    type Output = Self;
    #[inline(always)]
    fn neg(self) -> Self {
        self.map(|a| -a)
    }
}

impl std::ops::AddAssign for F4 {
    #[inline(always)]
    fn add_assign(&mut self, o: Self) {
        *self = *self + o;
    }
}

impl std::ops::SubAssign for F4 {
    #[inline(always)]
    fn sub_assign(&mut self, o: Self) {
        *self = *self - o;
    }
}

/// 1.5·2⁵²: adding it rounds a number below 2⁵¹ in magnitude to the nearest integer (ties to
/// even) and leaves that integer in the low bits of the sum's mantissa.
const ROUND: f64 = 6_755_399_441_055_744.0;
const SIGN: u64 = 1 << 63;

/// p₀ + p₁z + … + p₅z⁵ with z = `z`, `z2` = z², by Estrin's scheme.
#[inline(always)]
fn estrin<M: Mad>(p: &[f64; 6], z: F4, z2: F4) -> F4 {
    let pair = |k: usize| M::mad(F4::splat(p[k + 1]), z, F4::splat(p[k]));
    M::mad(pair(4), z2 * z2, M::mad(pair(2), z2, pair(0)))
}

/// How a kernel forms a·b + c: in one fused, once-rounded instruction where the instruction
/// set has one ([`Fused`]), as a product and a sum otherwise ([`Plain`]). The two differ by
/// rounding only.
pub(crate) trait Mad {
    /// a·b + c in each lane.
    fn mad(a: F4, b: F4, c: F4) -> F4;
}

/// a·b + c as a product and a sum (the portable build has no fused instruction, and a
/// library call would be slow).
pub(crate) struct Plain;

impl Mad for Plain {
    #[inline(always)]
    fn mad(a: F4, b: F4, c: F4) -> F4 {
        a * b + c
    }
}

/// a·b + c fused: only for code compiled with the FMA instructions (the AVX2 level).
pub(crate) struct Fused;

impl Mad for Fused {
    #[inline(always)]
    fn mad(a: F4, b: F4, c: F4) -> F4 {
        let (a, b, c) = (a.0, b.0, c.0);
        F4(std::array::from_fn(|i| a[i].mul_add(b[i], c[i])))
    }
}

/// An instruction set the inner loops can run in.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Level {
    /// The x86-64 baseline (SSE2), or whatever the build targets: runs everywhere.
    Portable,
    /// AVX2 with FMA (x86-64-v3), used when the processor has it.
    #[cfg(any(target_arch = "x86", target_arch = "x86_64"))]
    Avx2,
}

impl Level {
    /// The best level this processor supports (detected once per process by the standard
    /// library's feature test).
    #[must_use]
    pub(crate) fn best() -> Self {
        #[cfg(any(target_arch = "x86", target_arch = "x86_64"))]
        if pulp::x86::V3::try_new().is_some() {
            return Self::Avx2;
        }
        Self::Portable
    }
}

/// Runs `kernel` compiled for `level` (when the processor lacks it, the portable version
/// runs). `kernel` is a `pulp` operation whose `with_simd` is `#[inline(always)]`, and
/// everything it calls that should use the wider instructions must be `#[inline(always)]`
/// too (a closure would not do: its body is not inlined into the instruction set's version).
#[inline(always)]
pub(crate) fn run_at<K: pulp::WithSimd>(level: Level, kernel: K) -> K::Output {
    use pulp::Simd;
    match level {
        #[cfg(any(target_arch = "x86", target_arch = "x86_64"))]
        Level::Avx2 => match pulp::x86::V3::try_new() {
            Some(simd) => Simd::vectorize(simd, kernel),
            None => Simd::vectorize(pulp::Scalar::new(), kernel),
        },
        Level::Portable => Simd::vectorize(pulp::Scalar::new(), kernel),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The lane functions against the standard library's (correctly rounded to within an ulp
    /// or so) sin, cos and exp over a wide range of arguments.
    #[test]
    fn lanes_agree_with_std() {
        let mut worst_trig = 0.0_f64;
        let mut worst_exp = 0.0_f64;
        let mut x = -3.0e4_f64;
        while x < 3.0e4 {
            let v = F4([x, x * 0.37 + 0.1, -x * 1e-3, x * 31.0]);
            let (s, c) = v.sin_cos_with::<Plain>();
            // The fused forms within rounding of the plain ones.
            let (fs, fc) = v.sin_cos_with::<Fused>();
            for i in 0..4 {
                let tol = 4e-16 * (1.0 + v.0[i].abs());
                assert!((fs.0[i] - s.0[i]).abs() <= tol && (fc.0[i] - c.0[i]).abs() <= tol);
            }
            for i in 0..4 {
                let (es, ec) = v.0[i].sin_cos();
                // Absolute error grows with |x| through the reduction (≈ |x|·ε).
                let tol = 1e-15 * (1.0 + v.0[i].abs());
                worst_trig = worst_trig.max((s.0[i] - es).abs() / tol);
                worst_trig = worst_trig.max((c.0[i] - ec).abs() / tol);
            }
            let e = F4([-x.abs() * 0.02, -x.abs() * 1e-4, x * 1e-5, -1e-9]);
            let got = e.exp();
            let fused = e.exp_with::<Fused>();
            for i in 0..4 {
                assert!((fused.0[i] - got.0[i]).abs() <= 4e-16 * got.0[i]);
                let want = e.0[i].exp();
                worst_exp = worst_exp.max((got.0[i] - want).abs() / (want * 1e-15));
            }
            x += 0.731;
        }
        assert!(worst_trig <= 1.0, "sin_cos error {worst_trig} of tolerance");
        assert!(worst_exp <= 1.0, "exp error {worst_exp} × 1e-15 relative");
        // Far tails: underflow flushes to zero, overflow is infinite, NaN stays NaN.
        let t = F4([-800.0, 800.0, f64::NAN, -708.0]).exp();
        assert!(
            t.0[0] == 0.0 && t.0[1].is_infinite() && t.0[2].is_nan(),
            "{t:?}"
        );
        assert!((t.0[3] / (-708.0f64).exp() - 1.0).abs() < 1e-15, "{t:?}");
        let (s, c) = F4([f64::NAN, f64::INFINITY, 0.0, -0.0]).sin_cos_with::<Plain>();
        assert!(s.0[0].is_nan() && c.0[1].is_nan(), "{s:?} {c:?}");
        assert!(
            s.0[2] == 0.0 && (c.0[2] - 1.0).abs() < 1e-16 && (c.0[3] - 1.0).abs() < 1e-16,
            "{s:?} {c:?}"
        );
    }
}
