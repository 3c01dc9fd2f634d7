//! Integer conversion of dose amounts between the integer units of the amplifier ranges.
//!
//! A threshold is held as a fixed-point number of **integer units of the reference range**
//! (the least sensitive range)
//! ([`FRAC_BITS`] fractional bits, an `i128`), computed once when it is armed. The closed
//! per-range totals are brought into the same scale by a [`Ratio`] per range, and the
//! remaining distance to the level into the units of the open segment's range by one more
//! ratio, so a range change costs a few 64 × 64-bit multiplies and no floating point.
//!
//! Every conversion returns the magnitude it computed together with a bound on how far it
//! may lie below the exact value; callers round each threshold in its safe direction from
//! those bounds (see [`super::Rounding`]).

/// Fractional bits of a fixed-point amount of integer units (2⁻⁵² of a unit). With every
/// value saturated at [`FIXED_MAX`] (2¹²²), amounts up to 2⁷⁰ integer units of the reference
/// range (the least sensitive one) are represented: more than a year of a 24-bit converter
/// at full scale sampled on a 1 MHz tick.
pub(crate) const FRAC_BITS: u32 = 52;

/// Largest magnitude of a fixed-point value (2¹²²): a sum or difference of up to 16 such
/// values never overflows an `i128`, so they are added without saturation checks.
pub(crate) const FIXED_MAX: i128 = 1 << 122;
const MAG_MAX: u128 = FIXED_MAX.unsigned_abs();

/// A ratio of two positive `f64` values to 64 significant bits: `m · 2^(e − 64)` with
/// `m` in `2⁶³ ..< 2⁶⁴`, rounded down; `m = 0` is the ratio zero (a range the meter lacks).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct Ratio {
    m: u64,
    e: i16,
}

impl Ratio {
    /// Exactly one.
    pub(crate) const ONE: Self = Self { m: 1 << 63, e: 1 };

    /// `a / b` rounded down to 64 significant bits, in integers from the two `f64`s' bits;
    /// zero unless both are finite and > 0 (and the ratio within 2^±16 000).
    #[inline(never)]
    pub(crate) fn of(a: f64, b: f64) -> Self {
        let (Some((ma, ea)), Some((mb, eb))) = (mantissa(a), mantissa(b)) else {
            return Self::default();
        };
        // ma, mb in 2⁵² ..< 2⁵³: m = ⌊ma · 2^(64 − extra) / mb⌋ lies in 2⁶³ ..< 2⁶⁴.
        let extra = i32::from(ma >= mb);
        let m = long_division(ma, mb, 64 - extra.unsigned_abs());
        // a / b = (ma / mb) · 2^(ea − eb) = q · 2^(ea − eb − 64).
        match i16::try_from(ea.wrapping_sub(eb).wrapping_add(extra)) {
            Ok(e) => Self { m, e },
            Err(_) => Self::default(),
        }
    }

    /// Whether this is the ratio zero.
    pub(crate) const fn is_zero(self) -> bool {
        self.m == 0
    }

    /// `|x| · ratio`, rounded down, saturated at 2¹²². The exact product lies in
    /// `[result, result + slack(result)]` (see [`slack`]).
    #[cfg(test)]
    pub(crate) fn scale_magnitude(self, u: u128) -> u128 {
        self.scale_magnitude_by(u, 0)
    }

    /// `|x| · ratio · 2^extra` (`0 ≤ extra ≤ 64`), rounded down, saturated at 2¹²², with the
    /// same error bound as [`scale_magnitude`](Self::scale_magnitude): an integer total goes
    /// into fixed point with one multiply and one shift.
    pub(crate) fn scale_magnitude_by(self, u: u128, extra: u32) -> u128 {
        if self.m == 0 || u == 0 {
            return 0;
        }
        // A window of the top 64 bits of u: u ≈ w · 2^k (rounded down, relative error
        // below 2⁻⁶³ when k > 0, exact when k = 0).
        let k = match (u >> 64) as u64 {
            0 => 0,
            hi => bit_length(hi),
        };
        let w = shr_128(u, k) as u64;
        let p = mul_64(w, self.m);
        // u · ratio · 2^extra ≈ p · 2^(k + e + extra − 64); k, extra ≤ 64 and |e| < 2¹⁵.
        let sh = i32::from(self.e)
            .wrapping_add(k as i32)
            .wrapping_add(extra as i32)
            .wrapping_sub(64);
        if sh <= 0 {
            shr_128(p, sh.unsigned_abs()).min(MAG_MAX)
        } else if sh >= 122 || shr_128(p, (122 - sh) as u32) != 0 {
            MAG_MAX
        } else {
            // 0 < sh < 122, and p · 2^sh < 2¹²² by the test above.
            shl_128(p, sh as u32)
        }
    }
}

/// `x >> s` (0 for `s ≥ 128`) on 64-bit halves: the 128-bit variable shift the compiler
/// emits for a Cortex-M0 needs a large stack frame.
#[inline]
fn shr_128(x: u128, s: u32) -> u128 {
    let (hi, lo) = ((x >> 64) as u64, x as u64);
    let (h, l) = if s >= 128 {
        (0, 0)
    } else if s >= 64 {
        (0, hi.wrapping_shr(s - 64))
    } else if s == 0 {
        (hi, lo)
    } else {
        (hi >> s, (lo >> s) | (hi << (64 - s)))
    };
    (u128::from(h) << 64) | u128::from(l)
}

/// `x << s` for `s < 128` (bits shifted out are lost), on 64-bit halves as [`shr_128`].
#[inline]
fn shl_128(x: u128, s: u32) -> u128 {
    let (hi, lo) = ((x >> 64) as u64, x as u64);
    let (h, l) = if s >= 128 {
        (0, 0)
    } else if s >= 64 {
        (lo.wrapping_shl(s - 64), 0)
    } else if s == 0 {
        (hi, lo)
    } else {
        ((hi << s) | (lo >> (64 - s)), lo << s)
    };
    (u128::from(h) << 64) | u128::from(l)
}

/// One [`Ratio`] per range, stored as two columns: 40 bytes for four ranges instead of 64
/// (a `Ratio` pads its 10 bytes to 16).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct RatioTable {
    m: [u64; crate::frontend::MAX_RANGES],
    e: [i16; crate::frontend::MAX_RANGES],
}

impl RatioTable {
    /// The ratio of range `r`, zero for a range out of bounds.
    pub(crate) fn get(&self, r: usize) -> Ratio {
        match (self.m.get(r), self.e.get(r)) {
            (Some(m), Some(e)) => Ratio { m: *m, e: *e },
            _ => Ratio::default(),
        }
    }

    /// Set the ratio of range `r` (ignored out of bounds).
    pub(crate) fn set(&mut self, r: usize, ratio: Ratio) {
        if let (Some(m), Some(e)) = (self.m.get_mut(r), self.e.get_mut(r)) {
            *m = ratio.m;
            *e = ratio.e;
        }
    }
}

/// How far below the exact product a [`Ratio::scale_magnitude`] result may lie: the ratio and
/// the window are each rounded down by less than 2⁻⁶³ of themselves, the result by less than
/// one last place — so `mag · 2⁻⁶¹ + 2` bounds it.
pub(crate) const fn slack(mag: u128) -> u128 {
    // mag >> 61 < 2⁶⁷: never wraps.
    (mag >> 61).wrapping_add(2)
}

/// The integer mantissa (2⁵² ..< 2⁵³) and exponent of a finite positive `f64`
/// (`x = m · 2^e`), or `None`.
#[inline(never)]
fn mantissa(x: f64) -> Option<(u64, i32)> {
    if !(x.is_finite() && x > 0.0) {
        return None;
    }
    let bits = x.to_bits();
    let exp = ((bits >> 52) & 0x7ff) as i32;
    let frac = bits & ((1 << 52) - 1);
    if exp == 0 {
        // Subnormal: normalise the fraction (it is not zero, x > 0).
        let shift = frac.leading_zeros().saturating_sub(11);
        Some((frac << shift, (-1074i32).wrapping_sub(shift as i32)))
    } else {
        Some((frac | (1 << 52), exp - 1075))
    }
}

/// `⌊a · 2^bits / b⌋` for `b / 2 ≤ a < 2 · b < 2⁶³` and a quotient below 2⁶⁴, one bit at a
/// time: a few bytes of code instead of the 128-bit division routine (configuration time
/// only, when a meter's ratios are computed).
#[inline(never)]
fn long_division(a: u64, b: u64, bits: u32) -> u64 {
    // a < 2b: the integer part is 0 or 1.
    let mut q = u64::from(a >= b);
    let mut r = if a >= b { a.wrapping_sub(b) } else { a };
    for _ in 0..bits {
        // r < b < 2⁶², so 2r never wraps.
        r <<= 1;
        q <<= 1;
        if r >= b {
            r = r.wrapping_sub(b);
            q |= 1;
        }
    }
    q
}

/// The number of significant bits of `x` (0 for 0), by halving in 32-bit registers: a
/// Cortex-M0 has no count-leading-zeros instruction and shifts 64-bit values in a routine.
fn bit_length(x: u64) -> u32 {
    let (mut w, mut n) = match (x >> 32) as u32 {
        0 => (x as u32, 0u32),
        hi => (hi, 32),
    };
    // Constant shifts (a loop over the steps kept a shift-overflow check); n ≤ 63 throughout.
    if w >> 16 != 0 {
        w >>= 16;
        n = n.wrapping_add(16);
    }
    if w >> 8 != 0 {
        w >>= 8;
        n = n.wrapping_add(8);
    }
    if w >> 4 != 0 {
        w >>= 4;
        n = n.wrapping_add(4);
    }
    if w >> 2 != 0 {
        w >>= 2;
        n = n.wrapping_add(2);
    }
    if w >> 1 != 0 {
        w >>= 1;
        n = n.wrapping_add(1);
    }
    n.wrapping_add(w & 1)
}

/// `a · b` for 32-bit factors, from four 16 × 16-bit products: ARMv6-M (Cortex-M0/M0+)
/// multiplies only 32 × 32 → 32 bits, and the general 64-bit multiply routine costs about 40
/// instructions. ARMv6-M is told apart by its lack of 32-bit compare-and-swap (it has neither
/// that nor a 64-bit multiply instruction).
#[cfg(all(target_arch = "arm", not(target_has_atomic = "32")))]
#[inline(always)]
fn mul_32(a: u32, b: u32) -> u64 {
    let (a1, a0) = (a >> 16, a & 0xffff);
    let (b1, b0) = (b >> 16, b & 0xffff);
    // Every partial product is below 2³², so the wrapping multiplies never wrap; the sums
    // are the exact product (< 2⁶⁴), so the wrapping adds never wrap.
    let lo = u64::from(a0.wrapping_mul(b0));
    let mid = u64::from(a0.wrapping_mul(b1)).wrapping_add(u64::from(a1.wrapping_mul(b0)));
    let hi = u64::from(a1.wrapping_mul(b1));
    (hi << 32).wrapping_add(mid << 16).wrapping_add(lo)
}

/// `a · b` for 32-bit factors: one widening multiply where the core has it (UMULL on
/// ARMv7-M and the host).
#[cfg(not(all(target_arch = "arm", not(target_has_atomic = "32"))))]
#[inline(always)]
fn mul_32(a: u32, b: u32) -> u64 {
    // Below 2⁶⁴: never wraps.
    u64::from(a).wrapping_mul(u64::from(b))
}

/// `a · b` exactly (|a · b| < 2⁶³): on ARMv6-M through [`mul_32`] (no 64-bit multiply
/// routine), elsewhere one widening multiply.
pub(crate) fn mul_i32_u32(a: i32, b: u32) -> i64 {
    if cfg!(all(target_arch = "arm", not(target_has_atomic = "32"))) {
        // |a| ≤ 2³¹ and b < 2³²: the magnitude is below 2⁶³, so the cast and negation are
        // exact.
        let m = mul_32(a.unsigned_abs(), b) as i64;
        if a < 0 {
            m.wrapping_neg()
        } else {
            m
        }
    } else {
        // One widening multiply where the core has it; exact, as above.
        i64::from(a).wrapping_mul(i64::from(b))
    }
}

/// The full 128-bit product of two `u64`, from four 32 × 32-bit products (a Cortex-M0 has
/// only a 32-bit multiply; this avoids the general 128 × 128-bit routine). Out of line with
/// 64-bit carries only, so its temporaries do not widen the caller's stack frame.
#[inline(never)]
fn mul_64(a: u64, b: u64) -> u128 {
    let (a1, a0) = ((a >> 32) as u32, a as u32);
    let (b1, b0) = ((b >> 32) as u32, b as u32);
    let p00 = mul_32(a0, b0);
    let (mid, c1) = mul_32(a0, b1).overflowing_add(mul_32(a1, b0));
    let (lo, c2) = p00.overflowing_add(mid << 32);
    // The high half of the exact product: never wraps.
    let hi = mul_32(a1, b1)
        .wrapping_add(mid >> 32)
        .wrapping_add(u64::from(c1) << 32)
        .wrapping_add(u64::from(c2));
    (u128::from(hi) << 64) | u128::from(lo)
}

/// `x · 2^FRAC_BITS`, saturated at ±[`FIXED_MAX`] (an integer total in fixed point, exactly).
pub(crate) fn to_fixed(x: i128) -> i128 {
    const LIMIT: i128 = FIXED_MAX >> FRAC_BITS;
    if x >= LIMIT {
        FIXED_MAX
    } else if x <= -LIMIT {
        -FIXED_MAX
    } else {
        x << FRAC_BITS
    }
}

/// `x` clamped to ±[`FIXED_MAX`].
pub(crate) fn clamp_fixed(x: i128) -> i128 {
    x.clamp(-FIXED_MAX, FIXED_MAX)
}

/// Bounds `(low, high)` on `x · ratio` for a signed fixed-point `x`: the exact product lies
/// between them.
pub(crate) fn product_bounds(x: i128, ratio: Ratio) -> (i128, i128) {
    bounds(x, ratio, 0)
}

/// Bounds `(low, high)` on `x · ratio` in fixed point for an integer total `x` (the exact
/// value `x · 2^FRAC_BITS · ratio` lies between them).
pub(crate) fn total_bounds(x: i128, ratio: Ratio) -> (i128, i128) {
    if ratio == Ratio::ONE {
        let f = to_fixed(x);
        return (f, f);
    }
    bounds(x, ratio, FRAC_BITS)
}

/// Bounds on `x · ratio · 2^extra`.
fn bounds(x: i128, ratio: Ratio, extra: u32) -> (i128, i128) {
    if ratio == Ratio::ONE && extra == 0 {
        return (x, x);
    }
    let mag = ratio.scale_magnitude_by(x.unsigned_abs(), extra);
    // mag ≤ 2¹²² and slack ≤ 2⁶¹ + 2: both fit an i128 with room to add.
    let lo = mag as i128;
    let hi = lo.wrapping_add(slack(mag) as i128);
    if x >= 0 {
        (lo, hi)
    } else {
        // Both below 2¹²³ in magnitude: the negations are exact.
        (hi.wrapping_neg(), lo.wrapping_neg())
    }
}

/// `x` (finite) times 2^FRAC_BITS, rounded up (`up`) or down, clamped to ±[`FIXED_MAX`], from
/// the bits of the `f64`: no floating-point rounding routine and no float-to-`i128` routine.
#[inline(never)]
pub(crate) fn f64_to_fixed(x: f64, up: bool) -> i128 {
    let Some((m, e)) = mantissa(x.abs()) else {
        return 0; // zero (the caller rejects non-finite values)
    };
    // |x| · 2^FRAC_BITS = m · 2^(e + FRAC_BITS); round the magnitude towards the direction
    // wanted for the signed value.
    let sh = e.wrapping_add(FRAC_BITS as i32);
    let magnitude_up = up != (x < 0.0);
    let mag: u128 = if sh >= 0 {
        // m < 2⁵³: beyond a shift of 69 the value is above FIXED_MAX anyway.
        if sh > 69 {
            MAG_MAX
        } else {
            (u128::from(m) << sh).min(MAG_MAX)
        }
    } else {
        let s = sh.unsigned_abs();
        let (q, lost) = if s >= 64 {
            (0, true)
        } else {
            (m >> s, m & ((1u64 << s) - 1) != 0)
        };
        u128::from(q).wrapping_add(u128::from(magnitude_up && lost))
    };
    let v = mag as i128;
    if x < 0.0 {
        v.wrapping_neg()
    } else {
        v
    }
}

/// `⌈x / 2^FRAC_BITS⌉` as an `i64`, saturating.
pub(crate) fn ceil_units(x: i128) -> i64 {
    // |x| ≤ 2¹²⁶ (a sum of few values below FIXED_MAX): the add cannot overflow.
    let q = x.wrapping_add((1 << FRAC_BITS) - 1) >> FRAC_BITS;
    i64::try_from(q).unwrap_or(if q > 0 { i64::MAX } else { i64::MIN })
}

/// `⌊x / 2^FRAC_BITS⌋` as an `i64`, saturating.
pub(crate) fn floor_units(x: i128) -> i64 {
    let q = x >> FRAC_BITS;
    i64::try_from(q).unwrap_or(if q > 0 { i64::MAX } else { i64::MIN })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A small deterministic generator (xorshift64*), so the random cases are reproducible.
    struct Rng(u64);
    impl Rng {
        fn next(&mut self) -> u64 {
            self.0 ^= self.0 >> 12;
            self.0 ^= self.0 << 25;
            self.0 ^= self.0 >> 27;
            self.0.wrapping_mul(0x2545_f491_4f6c_dd1d)
        }
        fn f64_log(&mut self, lo: f64, hi: f64) -> f64 {
            let u = (self.next() >> 11) as f64 / (1u64 << 53) as f64;
            lo * (hi / lo).powf(u)
        }
    }

    /// `a · b` as a 256-bit number (high, low halves), exactly, from 64-bit limbs.
    fn wide(a: u128, b: u64) -> (u128, u128) {
        let lo = (a & u128::from(u64::MAX)) * u128::from(b);
        let hi = (a >> 64) * u128::from(b);
        let (low, carry) = lo.overflowing_add(hi << 64);
        ((hi >> 64) + u128::from(carry), low)
    }

    #[test]
    fn ratio_is_the_quotient_rounded_down_to_64_bits() {
        // Exact from the definition: q = m · 2^(e − 64) with m · b ≤ a · 2^(64 − e) < (m + 1) · b,
        // checked on the integer mantissas.
        let mut rng = Rng(0x9e37_79b9_7f4a_7c15);
        for _ in 0..100_000 {
            let a = rng.f64_log(1e-15, 1e3);
            let b = rng.f64_log(1e-15, 1e3);
            let r = Ratio::of(a, b);
            let (ma, ea) = mantissa(a).unwrap();
            let (mb, eb) = mantissa(b).unwrap();
            assert!(r.m >> 63 == 1, "{a} / {b}: not normalised");
            // d = e − (ea − eb) is 0 or 1: m · 2^d · mb ≤ ma · 2⁶⁴ < (m + 1) · 2^d · mb.
            let d = i32::from(r.e) - (ea - eb);
            assert!(d == 0 || d == 1, "{a} / {b}: exponent {d}");
            let lhs = (u128::from(r.m) << d) * u128::from(mb);
            let num = u128::from(ma) << 64;
            assert!(lhs <= num && num < lhs + (u128::from(mb) << d), "{a} / {b}");
        }
        assert_eq!(Ratio::of(2.5, 2.5), Ratio::ONE);
        assert!(Ratio::of(0.0, 1.0).is_zero());
        assert!(Ratio::of(1.0, 0.0).is_zero());
        assert!(Ratio::of(f64::NAN, 1.0).is_zero());
        assert!(Ratio::of(1.0, f64::INFINITY).is_zero());
        // Subnormals are normalised, not lost.
        let r = Ratio::of(f64::from_bits(1), f64::from_bits(4));
        assert_eq!((r.m, r.e), (1 << 63, -1));
    }

    #[test]
    fn scaled_magnitude_lies_within_its_slack_below_the_exact_product() {
        let mut rng = Rng(0x0123_4567_89ab_cdef);
        for i in 0..200_000u32 {
            let r = Ratio::of(rng.f64_log(1e-12, 1e-3), rng.f64_log(1e-12, 1e-3));
            // Magnitudes of every size, up to 2¹²⁰.
            let bits = rng.next() % 121;
            let u = (u128::from(rng.next()) << 64 | u128::from(rng.next())) >> (127 - bits);
            let got = r.scale_magnitude(u);
            // Exact: u · m · 2^(e − 64), as a 256-bit product shifted.
            let (hi, lo) = wide(u, r.m);
            let sh = i32::from(r.e) - 64;
            let exact_floor = if sh <= 0 {
                let s = sh.unsigned_abs();
                if s >= 128 {
                    hi >> (s - 128)
                } else if s == 0 {
                    assert_eq!(hi, 0);
                    lo
                } else if hi >> s != 0 {
                    // At least 2¹²⁸: beyond the saturation point.
                    u128::MAX
                } else {
                    (hi << (128 - s)) | (lo >> s)
                }
            } else {
                assert!(hi == 0 && lo >> (128 - sh) == 0, "case {i} overflows");
                lo << sh
            };
            if exact_floor >= MAG_MAX {
                assert_eq!(got, MAG_MAX, "case {i}: not saturated");
                continue;
            }
            assert!(
                got <= exact_floor,
                "case {i}: {got} above the exact {exact_floor}"
            );
            assert!(
                exact_floor <= got + slack(got),
                "case {i}: {got} more than its slack below {exact_floor}"
            );
        }
    }

    #[test]
    fn f64_to_fixed_rounds_like_ceil_and_floor() {
        let mut rng = Rng(5);
        for i in 0..200_000 {
            let x = rng.f64_log(1e-20, 1e20) * if i % 3 == 0 { -1.0 } else { 1.0 };
            let scaled = x * (1u64 << FRAC_BITS) as f64; // exact: a power of two
            for up in [false, true] {
                let want = if up { scaled.ceil() } else { scaled.floor() };
                let want = (want as i128).clamp(-FIXED_MAX, FIXED_MAX);
                assert_eq!(f64_to_fixed(x, up), want, "{x} up={up}");
            }
        }
        assert_eq!(f64_to_fixed(0.0, true), 0);
        assert_eq!(f64_to_fixed(-0.5, true), -(1 << (FRAC_BITS - 1)));
        assert_eq!(f64_to_fixed(1e300, false), FIXED_MAX);
        assert_eq!(f64_to_fixed(-1e300, true), -FIXED_MAX);
        assert_eq!(f64_to_fixed(f64::from_bits(1), true), 1);
        assert_eq!(f64_to_fixed(f64::from_bits(1), false), 0);
        assert_eq!(f64_to_fixed(-f64::from_bits(1), false), -1);
    }

    #[test]
    fn wide_shifts_equal_the_native_ones() {
        let mut rng = Rng(99);
        for _ in 0..10_000 {
            let x = u128::from(rng.next()) << 64 | u128::from(rng.next());
            for s in [
                0,
                1,
                31,
                32,
                63,
                64,
                65,
                100,
                127,
                (rng.next() % 128) as u32,
            ] {
                assert_eq!(shr_128(x, s), x >> s);
                assert_eq!(shl_128(x, s), x << s);
            }
            assert_eq!(shr_128(x, 128), 0);
            assert_eq!(shr_128(x, 1000), 0);
        }
    }

    #[test]
    fn small_multiplies_equal_the_wide_product() {
        let mut rng = Rng(77);
        for _ in 0..100_000 {
            let (a, b) = (rng.next() as u32, rng.next() as u32);
            assert_eq!(mul_32(a, b), u64::from(a) * u64::from(b));
            let (x, y) = (rng.next(), rng.next());
            assert_eq!(mul_64(x, y), u128::from(x) * u128::from(y));
            let s = a as i32;
            assert_eq!(mul_i32_u32(s, b), i64::from(s) * i64::from(b));
            let v = x >> (rng.next() % 64);
            assert_eq!(bit_length(v), 64 - v.leading_zeros());
        }
        for (x, n) in [
            (0u64, 0),
            (1, 1),
            (2, 2),
            (3, 2),
            (u64::MAX, 64),
            (1 << 32, 33),
            (u32::MAX.into(), 32),
        ] {
            assert_eq!(bit_length(x), n, "{x}");
        }
        assert_eq!(
            mul_i32_u32(i32::MIN, u32::MAX),
            i64::from(i32::MIN) * i64::from(u32::MAX)
        );
    }

    #[test]
    fn product_bounds_bracket_signed_values() {
        let r = Ratio::of(3.0, 7.0);
        for x in [-(1i128 << 100) - 12_345, -1, 0, 1, 7 << 48, (1 << 90) + 99] {
            let (lo, hi) = product_bounds(x, r);
            // x · 3 / 7 exactly, compared by cross-multiplying (no overflow at these sizes).
            assert!(lo * 7 <= x * 3 && x * 3 <= hi * 7, "{x}: {lo} ..= {hi}");
            assert!(hi - lo <= slack(lo.unsigned_abs()) as i128, "{x}");
        }
        for x in [-(1i128 << 68) - 3, -5, 0, 1, 123_456_789, (1 << 69) + 1] {
            let (lo, hi) = total_bounds(x, r);
            let exact = (x << FRAC_BITS) * 3;
            assert!(lo * 7 <= exact && exact <= hi * 7, "{x}: {lo} ..= {hi}");
            assert_eq!(total_bounds(x, Ratio::ONE), (to_fixed(x), to_fixed(x)));
        }
        assert_eq!(ceil_units((5 << FRAC_BITS) + 1), 6);
        assert_eq!(ceil_units(5 << FRAC_BITS), 5);
        assert_eq!(ceil_units(-(5 << FRAC_BITS) - 1), -5);
        assert_eq!(floor_units(-(5 << FRAC_BITS) - 1), -6);
        assert_eq!(floor_units(1 << 120), i64::MAX);
        assert_eq!(ceil_units(-(1 << 120)), i64::MIN);
        assert_eq!(to_fixed(3), 3 << FRAC_BITS);
        assert_eq!(to_fixed(1 << 100), FIXED_MAX);
    }
}
