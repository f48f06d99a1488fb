//! Transcendental functions used by the model, routed through the `libm` crate.
//!
//! Native builds would otherwise use the platform's C library and WebAssembly
//! builds Rust's own port, which can differ in the last bit. Using one
//! implementation everywhere makes the page and the CLI agree to the bit, so
//! exported tables are byte-identical (an invariant the browser tests check).

/// e^x.
#[inline]
pub fn exp(x: f64) -> f64 {
    libm::exp(x)
}
/// Natural logarithm.
#[inline]
pub fn ln(x: f64) -> f64 {
    libm::log(x)
}
/// x^y.
#[inline]
pub fn pow(x: f64, y: f64) -> f64 {
    libm::pow(x, y)
}
/// Square root. IEEE 754 requires it correctly rounded, so every platform gives the same
/// bits; the standard library's (the `sqrtsd`/`f64.sqrt` instruction) is used rather than
/// libm's, whose x86 version is an explicit scalar intrinsic that stops loops from vectorising.
#[inline]
pub fn sqrt(x: f64) -> f64 {
    x.sqrt()
}
/// Cosine.
#[inline]
pub fn cos(x: f64) -> f64 {
    libm::cos(x)
}
/// 10^x.
#[inline]
pub fn exp10(x: f64) -> f64 {
    libm::pow(10.0, x)
}
/// Fourth root.
#[inline]
pub fn root4(x: f64) -> f64 {
    sqrt(sqrt(x))
}

/// exp(x) - 1, accurate for small |x| (libm `expm1`).
#[inline]
pub fn exp_m1(x: f64) -> f64 {
    libm::expm1(x)
}

/// ln(1 + x), accurate for small |x| (libm `log1p`).
#[inline]
pub fn ln_1p(x: f64) -> f64 {
    libm::log1p(x)
}

/// ln Gamma(x) (libm `lgamma`).
#[inline]
pub fn ln_gamma(x: f64) -> f64 {
    libm::lgamma(x)
}

/// e^x by a branch-free polynomial that the compiler can vectorise (docs/model.md, "Numerics:
/// the polynomial exp").
///
/// Method (Cody & Waite 1980 reduction, Taylor polynomial): n = round(x / ln 2) by the
/// 1.5 * 2^52 shift, r = x - n ln2_hi - n ln2_lo with the two-part ln 2 of fdlibm (n ln2_hi is
/// exact), |r| <= 0.3466 + 1e-16; e^r by its Taylor series to degree 13 in Horner form (the
/// truncation is below 5e-18 relative; Estrin's scheme for the evaluation); the result p 2^n is formed as (p 2^n1) 2^n2 with
/// n1 = round(n/2), n2 = n - n1, so that results in the subnormal range are rounded once and
/// e^x overflows to infinity and underflows to zero where libm's does.
///
/// Only additions, multiplications, comparisons and bit moves are used (no fused
/// multiply-add, no table, no library call), so the result is the same bit for bit natively
/// and in WebAssembly, and a loop over an array of arguments is vectorised.
///
/// Accuracy, measured against libm's `exp` (`tests::exp_poly_is_within_one_ulp_of_libm`, 1.6
/// million arguments over [-745, 709.7], the whole range of finite non-zero results): at most
/// 1 ulp from libm's result, and equal to it for about 96.5 % of arguments; NaN gives NaN,
/// -inf and x < -745.2 give 0, +inf and x > 709.79 give +inf.
#[inline(always)]
pub fn exp_poly(x: f64) -> f64 {
    const LOG2_E: f64 = core::f64::consts::LOG2_E;
    // fdlibm's split of ln 2: LN2_HI has 32 trailing zero bits, so n * LN2_HI is exact.
    const LN2_HI: f64 = 0.693_147_180_369_123_8; // bits 0x3fe62e42fee00000
    const LN2_LO: f64 = 1.908_214_929_270_587_7e-10; // bits 0x3dea39ef35793c76
                                                     // Adding 1.5 * 2^52 rounds to the nearest integer, held in the low bits of the sum.
    const SHIFT: f64 = 6_755_399_441_055_744.0;
    // 1/k!, k = 2..=13.
    const C: [f64; 12] = [
        1.0 / 2.0,
        1.0 / 6.0,
        1.0 / 24.0,
        1.0 / 120.0,
        1.0 / 720.0,
        1.0 / 5_040.0,
        1.0 / 40_320.0,
        1.0 / 362_880.0,
        1.0 / 3_628_800.0,
        1.0 / 39_916_800.0,
        1.0 / 479_001_600.0,
        1.0 / 6_227_020_800.0,
    ];
    // Outside [-745.2, 709.8] the result is 0 or infinity (e^x < 2^-1075 rounds to 0, e^x >
    // f64::MAX is infinite): selected at the end, while the arithmetic works on x = 0 there, so
    // no lane underflows (an underflowing multiplication costs a microcode assist on x86).
    // NaN fails both tests and propagates.
    let (zero, infinite) = (x < -745.2, x > 709.8);
    let x = if zero | infinite { 0.0 } else { x };
    let n = (x * LOG2_E + SHIFT) - SHIFT;
    let r = (x - n * LN2_HI) - n * LN2_LO;
    // Estrin's scheme: the same polynomial with a dependency chain of 7 operations instead of
    // Horner's 24, so the loop is not bound by the latency of one lane's chain.
    let r2 = r * r;
    let r4 = r2 * r2;
    let r8 = r4 * r4;
    let a0 = C[0] + C[1] * r;
    let a1 = C[2] + C[3] * r;
    let a2 = C[4] + C[5] * r;
    let a3 = C[6] + C[7] * r;
    let a4 = C[8] + C[9] * r;
    let a5 = C[10] + C[11] * r;
    let b0 = a0 + a1 * r2;
    let b1 = a2 + a3 * r2;
    let b2 = a4 + a5 * r2;
    let q = (b0 + b1 * r4) + b2 * r8;
    let p = 1.0 + (r + r2 * q);
    // 2^n1 and 2^n2 from the exponent bits; n1, n2 in [-538, 513], so both are normal.
    let k1 = n * 0.5 + SHIFT;
    let n1 = k1 - SHIFT;
    let k2 = (n - n1) + SHIFT;
    let pow2 = |k: f64| f64::from_bits(k.to_bits().wrapping_add(1023) << 52);
    let y = p * pow2(k1) * pow2(k2);
    let y = if zero { 0.0 } else { y };
    if infinite {
        f64::INFINITY
    } else {
        y
    }
}

/// Where [`exp_poly`]'s result is a normal number and neither of its range tests applies:
/// x in [-708, 709] gives n = round(x / ln 2) in [-1021, 1023] and p in [0.70, 1.42], so
/// p 2^n lies in [2^-1022, 2^1024). The simd128 form takes a shorter, equal path there.
#[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
const EXP_NORMAL_LOW: f64 = -708.0;
/// See [`EXP_NORMAL_LOW`].
#[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
const EXP_NORMAL_HIGH: f64 = 709.0;

/// fdlibm's kernel coefficients (k_cos.c, k_sin.c) and pi/2 split (e_rem_pio2.c), by their
/// bits: shared by [`cos_reduced`] and its simd128 form.
mod cos_kernel {
    pub(super) const C1: f64 = f64::from_bits(0x3fa5_5555_5555_554c);
    pub(super) const C2: f64 = f64::from_bits(0xbf56_c16c_16c1_5177);
    pub(super) const C3: f64 = f64::from_bits(0x3efa_01a0_19cb_1590);
    pub(super) const C4: f64 = f64::from_bits(0xbe92_7e4f_809c_52ad);
    pub(super) const C5: f64 = f64::from_bits(0x3e21_ee9e_bdb4_b1c4);
    pub(super) const C6: f64 = f64::from_bits(0xbda8_fae9_be88_38d4);
    pub(super) const S1: f64 = f64::from_bits(0xbfc5_5555_5555_5549);
    pub(super) const S2: f64 = f64::from_bits(0x3f81_1111_1110_f8a6);
    pub(super) const S3: f64 = f64::from_bits(0xbf2a_01a0_19c1_61d5);
    pub(super) const S4: f64 = f64::from_bits(0x3ec7_1de3_57b1_fe7d);
    pub(super) const S5: f64 = f64::from_bits(0xbe5a_e5e6_8a2b_9ceb);
    pub(super) const S6: f64 = f64::from_bits(0x3de5_d93a_5acf_d57c);
    pub(super) const PIO2_1: f64 = f64::from_bits(0x3ff9_21fb_5440_0000);
    pub(super) const PIO2_1T: f64 = f64::from_bits(0x3dd0_b461_1a62_6331);
}

/// cos(x) by the same operations as libm's `cos` (fdlibm's `__cos`/`__sin` kernels and its
/// one-step reduction by pi/2), written branch-free so that a loop over arguments vectorises,
/// for |x| <= pi/4 and for 0 < x <= 3 pi/4 except the few arguments whose high word is that of
/// pi/2 (there libm reduces more precisely). Returns the value and whether x is in that range;
/// outside it the value is meaningless and the caller must use [`cos`]. Where it returns
/// `true` the value equals libm's `cos(x)` bit for bit (the same operations in the same order;
/// `tests::cos_reduced_equals_libm_bit_for_bit`).
#[inline(always)]
pub fn cos_reduced(x: f64) -> (f64, bool) {
    use cos_kernel::*;
    let bits = x.to_bits();
    let high = ((bits >> 32) as u32) & 0x7fff_ffff;
    let positive = (bits >> 63) == 0;
    // |x| <= pi/4: __cos(x, 0), or exactly 1 below 2^-27 sqrt(2).
    let small = high <= 0x3fe9_21fb;
    let tiny = high < 0x3e46_a09e;
    let k_cos = |x: f64, y: f64| {
        let z = x * x;
        let w = z * z;
        let r = z * (C1 + z * (C2 + z * C3)) + w * w * (C4 + z * (C5 + z * C6));
        let hz = 0.5 * z;
        let w = 1.0 - hz;
        w + (((1.0 - w) - hz) + (z * r - x * y))
    };
    let near = k_cos(x, 0.0);
    // pi/4 < x <= 3 pi/4: n = 1, y = x - pi/2 in two parts, cos x = -__sin(y0, y1, 1).
    let z = x - PIO2_1;
    let y0 = z - PIO2_1T;
    let y1 = (z - y0) - PIO2_1T;
    let zz = y0 * y0;
    let w = zz * zz;
    let r = S2 + zz * (S3 + zz * S4) + zz * w * (S5 + zz * S6);
    let v = zz * y0;
    let far = -(y0 - ((zz * (0.5 * y1 - v * r) - y1) - v * S1));
    let value = if tiny {
        1.0
    } else if small {
        near
    } else {
        far
    };
    let reduced = positive & (high <= 0x4002_d97c) & ((high & 0x000f_ffff) != 0x0009_21fb);
    (value, small | reduced)
}

/// x^n by binary powering, the same multiplications in the same order as the runtime routine
/// `f64::powi` calls for an exponent not known at compile time (`__powidf2` of LLVM's
/// compiler-rt and of Rust's `compiler_builtins`: multiply the result by x for each set bit of
/// |n| from the lowest, squaring x between bits; 1/result for n < 0), applied to a whole slice
/// so that the loops vectorise. `scratch` must be as long as `values`; on return `values[i]` is
/// `values[i].powi(n)` bit for bit (`tests::powi_slice_equals_powi`).
#[inline(always)]
pub fn powi_slice(values: &mut [f64], scratch: &mut [f64], n: i32) {
    let scratch = &mut scratch[..values.len()];
    // scratch holds the result so far, values the running square.
    scratch.fill(1.0);
    let mut bits = n.unsigned_abs();
    loop {
        if bits & 1 != 0 {
            for (m, &a) in scratch.iter_mut().zip(values.iter()) {
                *m *= a;
            }
        }
        bits >>= 1;
        if bits == 0 {
            break;
        }
        for a in values.iter_mut() {
            *a *= *a;
        }
    }
    if n < 0 {
        for (v, &m) in values.iter_mut().zip(scratch.iter()) {
            *v = 1.0 / m;
        }
    } else {
        values.copy_from_slice(scratch);
    }
}

/// An upper bound of ln(y) for y >= 1 from the binary exponent alone: (e + 1) ln 2 with
/// 2^e <= y < 2^(e+1), so it is never below ln y and at most ln 2 above it. Branch-free
/// (vectorised like [`exp_poly`]); y must be finite (infinity and NaN give a finite bound).
#[inline(always)]
pub fn ln_upper_bound(y: f64) -> f64 {
    // The biased exponent as a double: 2^52 + e_biased, minus 2^52.
    let biased =
        f64::from_bits(0x4330_0000_0000_0000 | (y.to_bits() >> 52)) - 4_503_599_627_370_496.0;
    (biased - 1022.0) * core::f64::consts::LN_2
}

/// An upper bound of 1/y for y >= 2^-1022 from the binary exponent alone: 2^-e with
/// 2^e <= y < 2^(e+1) (e clamped to at most 1022, where 2^-1022 still bounds 1/y), so it is
/// never below 1/y and at most twice it. Branch-free, no division (vectorised like
/// [`exp_poly`]); y must be finite and at least `f64::MIN_POSITIVE`.
#[inline(always)]
pub fn inverse_upper_bound(y: f64) -> f64 {
    const TWO_52: f64 = 4_503_599_627_370_496.0;
    // The biased exponent E as a double (as in `ln_upper_bound`); 2^-e = 2^(1023 - E) has the
    // biased exponent 2046 - E, formed in the low bits of 2^52 + (2046 - E) and shifted up.
    let biased = f64::from_bits(0x4330_0000_0000_0000 | (y.to_bits() >> 52)) - TWO_52;
    let field = (2046.0 - biased.min(2045.0)) + TWO_52;
    f64::from_bits(field.to_bits() << 52)
}

/// [`exp_poly`] of every value of a slice, in place, bit for bit. With WebAssembly simd128 two
/// values per vector ([`simd128::exp_poly`]); elsewhere the scalar loop (which the compiler
/// vectorises where it vectorises loops).
#[inline(always)]
pub fn exp_poly_slice(values: &mut [f64]) {
    #[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
    {
        let pairs = values.len() / 2 * 2;
        // The constants once, read in the loop (see simd128::ExpVectors).
        let constants = core::hint::black_box(simd128::ExpVectors::new());
        for q in (0..pairs).step_by(2) {
            let y = simd128::exp_poly_pair(simd128::load2(values, q), &constants);
            simd128::store2(values, q, y);
        }
        for v in &mut values[pairs..] {
            *v = exp_poly(*v);
        }
    }
    #[cfg(not(all(target_arch = "wasm32", target_feature = "simd128")))]
    for v in values.iter_mut() {
        *v = exp_poly(*v);
    }
}

/// WebAssembly simd128 forms (two doubles per vector) of the branch-free functions above: the
/// same IEEE operations in the same order, selects as bit masks, no fused multiply-add, so each
/// lane equals the scalar function bit for bit. Built only when the target has simd128.
#[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
pub(crate) mod simd128 {
    use super::{EXP_NORMAL_HIGH, EXP_NORMAL_LOW};
    use core::arch::wasm32::*;

    /// Both lanes `x`.
    #[inline(always)]
    pub(crate) fn splat(x: f64) -> v128 {
        f64x2_splat(x)
    }

    /// `if mask { a } else { b }` per lane.
    #[inline(always)]
    pub(crate) fn select(mask: v128, a: v128, b: v128) -> v128 {
        v128_bitselect(a, b, mask)
    }

    /// The constants of [`exp_poly`] as vectors. A hot loop builds them once outside the loop
    /// (through `core::hint::black_box`) and reads them from there, rather than have each
    /// materialised in every iteration from its immediate bits.
    #[derive(Clone, Copy)]
    pub(crate) struct ExpVectors {
        low: v128,
        high: v128,
        zero: v128,
        log2_e: v128,
        shift: v128,
        ln2_hi: v128,
        ln2_lo: v128,
        c: [v128; 12],
        one: v128,
        half: v128,
        bias: v128,
        infinity: v128,
        normal_low: v128,
        normal_high: v128,
    }

    impl ExpVectors {
        /// The constants.
        #[inline(always)]
        pub(crate) fn new() -> ExpVectors {
            ExpVectors {
                low: splat(-745.2),
                high: splat(709.8),
                zero: splat(0.0),
                log2_e: splat(core::f64::consts::LOG2_E),
                shift: splat(6_755_399_441_055_744.0),
                ln2_hi: splat(0.693_147_180_369_123_8),
                ln2_lo: splat(1.908_214_929_270_587_7e-10),
                c: [
                    1.0 / 2.0,
                    1.0 / 6.0,
                    1.0 / 24.0,
                    1.0 / 120.0,
                    1.0 / 720.0,
                    1.0 / 5_040.0,
                    1.0 / 40_320.0,
                    1.0 / 362_880.0,
                    1.0 / 3_628_800.0,
                    1.0 / 39_916_800.0,
                    1.0 / 479_001_600.0,
                    1.0 / 6_227_020_800.0,
                ]
                .map(splat),
                one: splat(1.0),
                half: splat(0.5),
                bias: i64x2_splat(1023),
                infinity: splat(f64::INFINITY),
                normal_low: splat(EXP_NORMAL_LOW),
                normal_high: splat(EXP_NORMAL_HIGH),
            }
        }
    }

    /// [`super::exp_poly`], two lanes.
    #[inline(always)]
    #[cfg_attr(not(test), allow(dead_code))]
    pub(crate) fn exp_poly(x: v128) -> v128 {
        exp_poly_with(x, &ExpVectors::new())
    }

    /// [`exp_poly`] with its constants from `k`.
    #[inline(always)]
    pub(crate) fn exp_poly_with(x: v128, k: &ExpVectors) -> v128 {
        let zero = f64x2_lt(x, k.low);
        let infinite = f64x2_gt(x, k.high);
        let x = select(v128_or(zero, infinite), k.zero, x);
        let (_, n, p) = exp_poly_reduced(x, k);
        let k1 = f64x2_add(f64x2_mul(n, k.half), k.shift);
        let n1 = f64x2_sub(k1, k.shift);
        let k2 = f64x2_add(f64x2_sub(n, n1), k.shift);
        let pow2 = |e: v128| i64x2_shl(i64x2_add(e, k.bias), 52);
        let y = f64x2_mul(f64x2_mul(p, pow2(k1)), pow2(k2));
        let y = select(zero, k.zero, y);
        select(infinite, k.infinity, y)
    }

    /// The reduction and the polynomial of [`super::exp_poly`]: (x log2 e + 1.5 2^52, whose
    /// low bits hold n; n; p = e^r).
    #[inline(always)]
    fn exp_poly_reduced(x: v128, k: &ExpVectors) -> (v128, v128, v128) {
        let shifted = f64x2_add(f64x2_mul(x, k.log2_e), k.shift);
        let n = f64x2_sub(shifted, k.shift);
        let r = f64x2_sub(f64x2_sub(x, f64x2_mul(n, k.ln2_hi)), f64x2_mul(n, k.ln2_lo));
        let r2 = f64x2_mul(r, r);
        let r4 = f64x2_mul(r2, r2);
        let r8 = f64x2_mul(r4, r4);
        let c = &k.c;
        let pair = |j: usize| f64x2_add(c[j], f64x2_mul(c[j + 1], r));
        let (a0, a1, a2, a3, a4, a5) = (pair(0), pair(2), pair(4), pair(6), pair(8), pair(10));
        let b0 = f64x2_add(a0, f64x2_mul(a1, r2));
        let b1 = f64x2_add(a2, f64x2_mul(a3, r2));
        let b2 = f64x2_add(a4, f64x2_mul(a5, r2));
        let q = f64x2_add(f64x2_add(b0, f64x2_mul(b1, r4)), f64x2_mul(b2, r8));
        let p = f64x2_add(k.one, f64x2_add(r, f64x2_mul(r2, q)));
        (shifted, n, p)
    }

    /// [`exp_poly_with`], bit for bit, taking a shorter path when both lanes lie in
    /// [`EXP_NORMAL_LOW`, `EXP_NORMAL_HIGH`] (what the model's exponentials nearly always are):
    /// there no lane is out of range, and the result p 2^n is a normal number, so p 2^n1 2^n2
    /// (two exact scalings) equals p 2^n (one exact scaling), formed from the reduction's own
    /// shifted sum. Both lanes below -745.2 give 0 (+0, as the general form selects), without
    /// the polynomial: the FUV attenuations of the disk's dense inner midplane. Otherwise (a
    /// lane outside, or NaN) the general form.
    #[inline(always)]
    pub(crate) fn exp_poly_pair(x: v128, k: &ExpVectors) -> v128 {
        let normal = v128_and(f64x2_ge(x, k.normal_low), f64x2_le(x, k.normal_high));
        if i64x2_all_true(normal) {
            let (shifted, _, p) = exp_poly_reduced(x, k);
            f64x2_mul(p, i64x2_shl(i64x2_add(shifted, k.bias), 52))
        } else if i64x2_all_true(f64x2_lt(x, k.low)) {
            k.zero
        } else {
            exp_poly_with(x, k)
        }
    }

    /// `values[i]` and `values[i + 1]` as one vector.
    #[inline(always)]
    #[allow(unsafe_code)]
    pub(crate) fn load2(values: &[f64], i: usize) -> v128 {
        assert!(i + 1 < values.len());
        // SAFETY: i + 1 < len (checked above): both doubles lie inside the slice; v128_load
        // has no alignment requirement.
        unsafe { v128_load(values.as_ptr().add(i).cast::<v128>()) }
    }

    /// Writes both lanes of `v` to `values[i]` and `values[i + 1]`.
    #[inline(always)]
    #[allow(unsafe_code)]
    pub(crate) fn store2(values: &mut [f64], i: usize, v: v128) {
        assert!(i + 1 < values.len());
        // SAFETY: i + 1 < len (checked above): both doubles lie inside the slice; v128_store
        // has no alignment requirement.
        unsafe { v128_store(values.as_mut_ptr().add(i).cast::<v128>(), v) }
    }

    /// The constants of [`cos_reduced`] as vectors, built once outside a hot loop (through
    /// `core::hint::black_box`) like [`ExpVectors`].
    #[derive(Clone, Copy)]
    pub(crate) struct CosVectors {
        sign_off: v128,
        zero: v128,
        small: v128,
        tiny: v128,
        c: [v128; 6],
        s: [v128; 6],
        half: v128,
        one: v128,
        zero_f: v128,
        pio2_1: v128,
        pio2_1t: v128,
        reduced_high: v128,
        mantissa_high: v128,
        pio2_mantissa_high: v128,
    }

    impl CosVectors {
        /// The constants.
        #[inline(always)]
        pub(crate) fn new() -> CosVectors {
            use super::cos_kernel::*;
            CosVectors {
                sign_off: i64x2_splat(0x7fff_ffff),
                zero: i64x2_splat(0),
                small: i64x2_splat(0x3fe9_21fb),
                tiny: i64x2_splat(0x3e46_a09e),
                c: [C1, C2, C3, C4, C5, C6].map(splat),
                s: [S1, S2, S3, S4, S5, S6].map(splat),
                half: splat(0.5),
                one: splat(1.0),
                zero_f: splat(0.0),
                pio2_1: splat(PIO2_1),
                pio2_1t: splat(PIO2_1T),
                reduced_high: i64x2_splat(0x4002_d97c),
                mantissa_high: i64x2_splat(0x000f_ffff),
                pio2_mantissa_high: i64x2_splat(0x0009_21fb),
            }
        }
    }

    /// [`super::cos_reduced`], two lanes: the value and, as a lane mask, whether it holds.
    #[inline(always)]
    #[cfg_attr(not(test), allow(dead_code))]
    pub(crate) fn cos_reduced(x: v128) -> (v128, v128) {
        cos_reduced_with(x, &CosVectors::new())
    }

    /// [`cos_reduced`] with its constants from `k`.
    #[inline(always)]
    pub(crate) fn cos_reduced_with(x: v128, k: &CosVectors) -> (v128, v128) {
        let high = v128_and(u64x2_shr(x, 32), k.sign_off);
        let small = i64x2_le(high, k.small);
        let tiny = i64x2_lt(high, k.tiny);
        let value = select(tiny, k.one, select(small, cos_near(x, k), cos_far(x, k)));
        (value, v128_or(small, cos_far_holds(x, high, k)))
    }

    /// [`cos_reduced_with`], bit for bit, computing only the kernel a pair needs when both of
    /// its lanes need the same one (|x| <= pi/4: fdlibm's __cos; above: -__sin of x - pi/2),
    /// as on the fine grid, where x grows with the index.
    #[inline(always)]
    pub(crate) fn cos_pair(x: v128, k: &CosVectors) -> (v128, v128) {
        let high = v128_and(u64x2_shr(x, 32), k.sign_off);
        let small = i64x2_le(high, k.small);
        if i64x2_all_true(small) {
            let tiny = i64x2_lt(high, k.tiny);
            (select(tiny, k.one, cos_near(x, k)), small)
        } else if !v128_any_true(small) {
            // No lane is small, so none is tiny either.
            (cos_far(x, k), cos_far_holds(x, high, k))
        } else {
            cos_reduced_with(x, k)
        }
    }

    /// fdlibm's __cos(x, 0) (|x| <= pi/4).
    #[inline(always)]
    fn cos_near(x: v128, k: &CosVectors) -> v128 {
        let (add, sub, mul) = (f64x2_add, f64x2_sub, f64x2_mul);
        let [c1, c2, c3, c4, c5, c6] = k.c;
        let z = mul(x, x);
        let w = mul(z, z);
        let r = add(
            mul(z, add(c1, mul(z, add(c2, mul(z, c3))))),
            mul(mul(w, w), add(c4, mul(z, add(c5, mul(z, c6))))),
        );
        let hz = mul(k.half, z);
        let w = sub(k.one, hz);
        add(
            w,
            add(sub(sub(k.one, w), hz), sub(mul(z, r), mul(x, k.zero_f))),
        )
    }

    /// -__sin(y0, y1, 1) of y = x - pi/2 in two parts (pi/4 < x <= 3 pi/4).
    #[inline(always)]
    fn cos_far(x: v128, k: &CosVectors) -> v128 {
        let (add, sub, mul) = (f64x2_add, f64x2_sub, f64x2_mul);
        let [s1, s2, s3, s4, s5, s6] = k.s;
        let z = sub(x, k.pio2_1);
        let y0 = sub(z, k.pio2_1t);
        let y1 = sub(sub(z, y0), k.pio2_1t);
        let zz = mul(y0, y0);
        let w = mul(zz, zz);
        let r = add(
            add(s2, mul(zz, add(s3, mul(zz, s4)))),
            mul(mul(zz, w), add(s5, mul(zz, s6))),
        );
        let v = mul(zz, y0);
        f64x2_neg(sub(
            y0,
            sub(
                sub(mul(zz, sub(mul(k.half, y1), mul(v, r))), y1),
                mul(v, s1),
            ),
        ))
    }

    /// Where [`cos_far`] is libm's value: 0 < x <= 3 pi/4, except the high word of pi/2.
    #[inline(always)]
    fn cos_far_holds(x: v128, high: v128, k: &CosVectors) -> v128 {
        let positive = i64x2_ge(x, k.zero);
        v128_and(
            v128_and(positive, i64x2_le(high, k.reduced_high)),
            v128_not(i64x2_eq(
                v128_and(high, k.mantissa_high),
                k.pio2_mantissa_high,
            )),
        )
    }

    /// The constants of [`log1p_positive`]: those of fdlibm's s_log1p.c as libm has them, and
    /// the bit masks of its branches.
    #[derive(Clone, Copy)]
    pub(crate) struct Log1pVectors {
        zero: v128,
        one: v128,
        half: v128,
        two: v128,
        ln2_hi: v128,
        ln2_lo: v128,
        lg: [v128; 7],
        exponent_bits: v128,
        two_52_plus_bias: v128,
        tiny: v128,
        reduce: v128,
        infinite: v128,
        high_offset: v128,
        high_mantissa: v128,
        high_base: v128,
        low_word: v128,
        k_two: v128,
        k_54: v128,
    }

    impl Log1pVectors {
        /// The constants.
        #[inline(always)]
        pub(crate) fn new() -> Log1pVectors {
            let int = i64x2_splat;
            Log1pVectors {
                zero: splat(0.0),
                one: splat(1.0),
                half: splat(0.5),
                two: splat(2.0),
                ln2_hi: splat(f64::from_bits(0x3fe6_2e42_fee0_0000)),
                ln2_lo: splat(f64::from_bits(0x3dea_39ef_3579_3c76)),
                // LG1 ... LG7 of s_log1p.c, by their bits.
                lg: [
                    0x3fe5_5555_5555_5593_u64,
                    0x3fd9_9999_9997_fa04,
                    0x3fd2_4924_9422_9359,
                    0x3fcc_71c5_1d8e_78af,
                    0x3fc7_4664_96cb_03de,
                    0x3fc3_9a09_d078_c69f,
                    0x3fc2_f112_df3e_5244,
                ]
                .map(f64::from_bits)
                .map(splat),
                exponent_bits: int(0x4330_0000_0000_0000),
                two_52_plus_bias: splat(4_503_599_627_370_496.0 + 1023.0),
                tiny: int(0x3ca0_0000),
                reduce: int(0x3fda_827a),
                infinite: int(0x7ff0_0000),
                high_offset: int(0x3ff0_0000 - 0x3fe6_a09e),
                high_mantissa: int(0x000f_ffff),
                high_base: int(0x3fe6_a09e),
                low_word: int(0xffff_ffff),
                k_two: int(1023 + 2),
                k_54: int(1023 + 54),
            }
        }
    }

    /// libm's `log1p` (fdlibm's s_log1p.c) in two lanes, bit for bit, for x > 0 (the caller
    /// checks; other lanes' values are meaningless): x < 2^-53 gives x, infinity gives x, below
    /// sqrt(2) - 1 no reduction (k = 0), else u = 1 + x reduced into [sqrt(2)/2, sqrt(2)) by its
    /// high word with the correction c; every branch computed, then selected.
    #[inline(always)]
    pub(crate) fn log1p_positive(x: v128, c: &Log1pVectors) -> v128 {
        let (add, sub, mul) = (f64x2_add, f64x2_sub, f64x2_mul);
        let hx = u64x2_shr(x, 32);
        let tiny = i64x2_lt(hx, c.tiny);
        let reduce = i64x2_ge(hx, c.reduce);
        let infinite = i64x2_ge(hx, c.infinite);
        // The reduction of u = 1 + x.
        let u = add(c.one, x);
        let hu = i64x2_add(u64x2_shr(u, 32), c.high_offset);
        let k_biased = u64x2_shr(hu, 20);
        let dk_reduced = sub(v128_or(k_biased, c.exponent_bits), c.two_52_plus_bias);
        let correction = f64x2_div(
            select(
                i64x2_ge(k_biased, c.k_two),
                sub(c.one, sub(u, x)),
                sub(x, sub(u, c.one)),
            ),
            u,
        );
        let correction = select(i64x2_lt(k_biased, c.k_54), correction, c.zero);
        let high = i64x2_add(v128_and(hu, c.high_mantissa), c.high_base);
        let reduced = v128_or(i64x2_shl(high, 32), v128_and(u, c.low_word));
        let f = select(reduce, sub(reduced, c.one), x);
        let cc = select(reduce, correction, c.zero);
        let dk = select(reduce, dk_reduced, c.zero);
        let hfsq = mul(mul(c.half, f), f);
        let s = f64x2_div(f, add(c.two, f));
        let z = mul(s, s);
        let w = mul(z, z);
        let [lg1, lg2, lg3, lg4, lg5, lg6, lg7] = c.lg;
        let t1 = mul(w, add(lg2, mul(w, add(lg4, mul(w, lg6)))));
        let t2 = mul(z, add(lg1, mul(w, add(lg3, mul(w, add(lg5, mul(w, lg7)))))));
        let r = add(t2, t1);
        let value = add(
            add(
                sub(add(mul(s, add(hfsq, r)), add(mul(dk, c.ln2_lo), cc)), hfsq),
                f,
            ),
            mul(dk, c.ln2_hi),
        );
        select(v128_or(tiny, infinite), x, value)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Distance in units in the last place between two finite doubles of the same sign (or zero).
    fn ulps(a: f64, b: f64) -> u64 {
        let (a, b) = (a.to_bits() as i64, b.to_bits() as i64);
        (a - b).unsigned_abs()
    }

    /// A deterministic sequence in [0, 1) (a 64-bit linear congruential generator,
    /// Knuth's MMIX constants; common practice, no source).
    fn uniform(n: usize) -> impl Iterator<Item = f64> {
        let mut s: u64 = 0x2545_f491_4f6c_dd1d;
        (0..n).map(move |_| {
            s = s
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            (s >> 11) as f64 / (1u64 << 53) as f64
        })
    }

    #[test]
    fn exp_poly_is_within_one_ulp_of_libm() {
        // Reference: libm's exp (correct to < 1 ulp, its documentation). The whole range of
        // finite, non-zero results, plus the small arguments the model's -E_b/T never reaches.
        let mut worst = (0u64, 0.0f64);
        let mut count_off = 0usize;
        let mut total = 0usize;
        for (lo, hi) in [(-745.0, 709.7), (-40.0, 0.0), (-1.0, 1.0), (-1e-6, 1e-6)] {
            for u in uniform(400_000) {
                let x = lo + (hi - lo) * u;
                let (got, want) = (exp_poly(x), libm::exp(x));
                let d = ulps(got, want);
                total += 1;
                if d > 0 {
                    count_off += 1;
                }
                if d > worst.0 {
                    worst = (d, x);
                }
            }
        }
        assert!(worst.0 <= 1, "worst {} ulp at x = {:e}", worst.0, worst.1);
        // Measured: 56 082 of the 1.6 million differ from libm, each by one ulp.
        assert!(count_off < total / 10, "{count_off} of {total} differ");
    }

    #[test]
    fn exp_poly_slice_equals_exp_poly() {
        // Odd length (a remainder after the pairs) and the special values.
        let mut xs: Vec<f64> = uniform(10_001).map(|u| -760.0 + 1480.0 * u).collect();
        xs.extend([
            0.0,
            -0.0,
            f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
            -745.1,
            709.78,
        ]);
        let mut values = xs.clone();
        exp_poly_slice(&mut values);
        for (&x, &v) in xs.iter().zip(&values) {
            assert_eq!(v.to_bits(), exp_poly(x).to_bits(), "{x:e}");
        }
    }

    /// The simd128 forms equal the scalar functions bit for bit (WebAssembly with simd128 only).
    #[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
    #[test]
    fn simd128_forms_equal_the_scalar_functions() {
        use core::arch::wasm32::{f64x2, f64x2_extract_lane, i64x2_extract_lane};
        let mut xs: Vec<f64> = uniform(200_000).map(|u| (u - 0.2) * 3.0).collect();
        xs.extend(uniform(20_000).map(|u| core::f64::consts::FRAC_PI_2 + (u - 0.5) * 1e-5));
        xs.extend(uniform(20_000).map(|u| u * 1e-7));
        xs.extend([0.0, -0.0, f64::NAN, f64::INFINITY, -1.0, 2.4, 5e-324]);
        for pair in xs.chunks_exact(2) {
            let (value, ok) = simd128::cos_reduced(f64x2(pair[0], pair[1]));
            let e = simd128::exp_poly(f64x2(pair[0] * 200.0, pair[1] * 200.0));
            for (k, &x) in pair.iter().enumerate() {
                let (v, o) = if k == 0 {
                    (
                        f64x2_extract_lane::<0>(value),
                        i64x2_extract_lane::<0>(ok) != 0,
                    )
                } else {
                    (
                        f64x2_extract_lane::<1>(value),
                        i64x2_extract_lane::<1>(ok) != 0,
                    )
                };
                let (want, want_ok) = cos_reduced(x);
                assert_eq!(o, want_ok, "{x:e}");
                if want_ok {
                    assert_eq!(v.to_bits(), want.to_bits(), "{x:e}");
                }
                let ek = if k == 0 {
                    f64x2_extract_lane::<0>(e)
                } else {
                    f64x2_extract_lane::<1>(e)
                };
                assert_eq!(ek.to_bits(), exp_poly(x * 200.0).to_bits(), "{x:e}");
            }
        }
        // exp_poly_pair equals exp_poly in each lane: over the whole range, with pairs mixing a
        // normal-range lane and one outside, at the edges of the normal range and at the edge
        // below which both lanes of a pair are 0 (-745.2).
        let k = simd128::ExpVectors::new();
        let mut args: Vec<f64> = uniform(400_000).map(|u| (u - 0.5) * 1600.0).collect();
        args.extend(uniform(100_000).map(|u| -708.0 - u * 40.0));
        args.extend(uniform(100_000).map(|u| 708.5 + u * 2.0));
        for edge in [EXP_NORMAL_LOW, EXP_NORMAL_HIGH, -745.2] {
            let mut below = edge;
            let mut above = edge;
            for _ in 0..64 {
                args.extend([below, above]);
                below = f64::from_bits(below.to_bits() - 1);
                above = f64::from_bits(above.to_bits() + 1);
            }
        }
        args.extend([
            0.0,
            -0.0,
            f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
            -745.2,
            709.8,
        ]);
        let n = args.len();
        for (a, b) in args.iter().zip(args.iter().rev().take(n)) {
            for (x0, x1) in [(*a, *b), (*a, *a)] {
                let e = simd128::exp_poly_pair(f64x2(x0, x1), &k);
                let (e0, e1) = (f64x2_extract_lane::<0>(e), f64x2_extract_lane::<1>(e));
                assert_eq!(e0.to_bits(), exp_poly(x0).to_bits(), "{x0:e}");
                assert_eq!(e1.to_bits(), exp_poly(x1).to_bits(), "{x1:e}");
            }
        }
    }

    /// The simd128 form of libm's log1p (for x > 0) gives libm's bits in each lane: over
    /// 1e-30 .. 1e308, at every branch boundary of fdlibm's code (by the high word, and where
    /// the reduction's k reaches 2 and 54) and at special values (WebAssembly with simd128 only;
    /// derived, D).
    #[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
    #[test]
    fn simd128_log1p_equals_libm() {
        use core::arch::wasm32::{f64x2, f64x2_extract_lane};
        let c = simd128::Log1pVectors::new();
        let around = |v: f64| {
            let mut out = vec![v];
            let (mut lo, mut hi) = (v, v);
            for _ in 0..40 {
                lo = f64::from_bits(lo.to_bits() - 1);
                hi = f64::from_bits(hi.to_bits() + 1);
                out.extend([lo, hi]);
            }
            out
        };
        let mut xs: Vec<f64> = uniform(300_000)
            .map(|u| (10f64).powf(-30.0 + 338.0 * u))
            .collect();
        xs.extend(uniform(100_000).map(|u| u * 4.0));
        for h in [0x3ca0_0000_u64, 0x3fda_827a, 0x7fe0_0000] {
            xs.extend(around(f64::from_bits(h << 32)));
        }
        for v in [
            core::f64::consts::SQRT_2 - 1.0,
            1.0,
            3.0,
            (2f64).powi(53),
            (2f64).powi(54),
            (2f64).powi(55),
        ] {
            xs.extend(around(v));
        }
        xs.extend([5e-324, f64::MAX, f64::INFINITY, 1e-300]);
        if xs.len() % 2 == 1 {
            xs.push(1.0);
        }
        for pair in xs.chunks_exact(2) {
            let v = simd128::log1p_positive(f64x2(pair[0], pair[1]), &c);
            let got = [f64x2_extract_lane::<0>(v), f64x2_extract_lane::<1>(v)];
            for (g, &x) in got.iter().zip(pair) {
                assert_eq!(g.to_bits(), libm::log1p(x).to_bits(), "log1p({x:e})");
            }
        }
    }

    #[test]
    fn exp_poly_limits_and_special_values() {
        assert_eq!(exp_poly(0.0), 1.0);
        assert_eq!(exp_poly(-0.0), 1.0);
        assert_eq!(exp_poly(f64::NEG_INFINITY), 0.0);
        assert_eq!(exp_poly(-746.0), 0.0);
        assert_eq!(exp_poly(-1e300), 0.0);
        assert_eq!(exp_poly(f64::INFINITY), f64::INFINITY);
        assert_eq!(exp_poly(709.79), f64::INFINITY);
        assert_eq!(exp_poly(1e300), f64::INFINITY);
        assert!(exp_poly(f64::NAN).is_nan());
        // The largest finite result and the subnormal range (libm as the reference).
        for x in [709.78, 709.782_712_893_384, -708.4, -720.0, -740.0, -745.1] {
            let (got, want) = (exp_poly(x), libm::exp(x));
            assert!(ulps(got, want) <= 1, "{x}: {got:e} vs {want:e}");
        }
        // e (the constant) to the last bit or one off.
        assert!(ulps(exp_poly(1.0), core::f64::consts::E) <= 1);
    }

    #[test]
    fn ln_upper_bound_bounds_the_logarithm_within_ln2() {
        for u in uniform(100_000) {
            let y = libm::exp(700.0 * u);
            let (bound, ln) = (ln_upper_bound(y), libm::log(y));
            assert!(
                bound >= ln && bound <= ln + core::f64::consts::LN_2 + 1e-12,
                "{y:e}"
            );
        }
        assert_eq!(ln_upper_bound(1.0), core::f64::consts::LN_2);
    }

    #[test]
    fn inverse_upper_bound_bounds_the_inverse_within_a_factor_2() {
        // 1/y <= bound < 2/y (exact powers of 2 give 1/y itself), over the normal range
        // (derived, D: 2^e <= y < 2^(e+1) gives 2^-(e+1) < 1/y <= 2^-e).
        let mut ys: Vec<f64> = uniform(200_000)
            .map(|u| (2f64).powf(-1022.0 + 2045.9 * u))
            .collect();
        ys.extend([
            f64::MIN_POSITIVE,
            1.0,
            1.5,
            2.0,
            3.0,
            f64::MAX,
            1e-300,
            1e300,
        ]);
        for y in ys {
            let bound = inverse_upper_bound(y);
            // Exact: bound * y in [1, 2) where both are normal (bound is a power of 2).
            let product = bound * y;
            if y < (2f64).powi(1022) {
                assert!((1.0..2.0).contains(&product), "{y:e}: {bound:e}");
            } else {
                assert_eq!(bound, (2f64).powi(-1022), "{y:e}");
            }
        }
        assert_eq!(inverse_upper_bound(1.0), 1.0);
        assert_eq!(inverse_upper_bound(3.0), 0.5);
        assert_eq!(inverse_upper_bound(f64::MIN_POSITIVE), (2f64).powi(1022));
    }

    #[test]
    fn cos_reduced_equals_libm_bit_for_bit() {
        // Reference: libm's cos. Wide uniform samples over the range the fast path covers and
        // beyond it (where it must say so), plus the edges of its branches.
        let mut covered = 0usize;
        let mut samples: Vec<f64> = uniform(400_000).map(|u| u * 2.5).collect();
        samples.extend(uniform(200_000).map(|u| (u - 0.5) * 2.0 * core::f64::consts::FRAC_PI_4));
        samples.extend(uniform(100_000).map(|u| u * 1e-6));
        samples.extend(uniform(100_000).map(|u| core::f64::consts::FRAC_PI_2 + (u - 0.5) * 1e-5));
        for high in [
            0x3fe9_21fbu64,
            0x3fe9_21fc,
            0x3e46_a09e,
            0x3e46_a09d,
            0x4002_d97c,
            0x4002_d97d,
            0x3ff9_21fb,
            0x3ff9_21fa,
        ] {
            for low in [0u64, 1, 0x5444_2d18, 0xffff_ffff] {
                samples.push(f64::from_bits((high << 32) | low));
            }
        }
        samples.extend([
            0.0,
            -0.0,
            1e-300,
            5e-324,
            -1.0,
            -3.0,
            4.0,
            f64::NAN,
            f64::INFINITY,
        ]);
        for x in samples {
            let (got, ok) = cos_reduced(x);
            if ok {
                covered += 1;
                assert_eq!(got.to_bits(), libm::cos(x).to_bits(), "x = {x:e}");
            } else {
                // Only NaN, infinities, negative arguments beyond pi/4, arguments beyond 3 pi/4
                // and those with pi/2's high word go to libm.
                let high = (x.to_bits() >> 32) & 0x7fff_ffff;
                let elsewhere = !(-core::f64::consts::FRAC_PI_4..=2.35).contains(&x);
                assert!(elsewhere || high == 0x3ff9_21fb, "{x:e} should be covered");
            }
        }
        assert!(covered > 700_000, "{covered}");
    }

    #[test]
    fn powi_slice_equals_powi() {
        let xs: Vec<f64> = uniform(10_000).map(|u| (u - 0.3) * 3.0).collect();
        for n in -9..=40 {
            let n = std::hint::black_box(n);
            let mut values = xs.clone();
            let mut scratch = vec![0.0; xs.len()];
            powi_slice(&mut values, &mut scratch, n);
            for (&x, &v) in xs.iter().zip(&values) {
                assert_eq!(v.to_bits(), x.powi(n).to_bits(), "{x}^{n}");
            }
        }
    }
}
