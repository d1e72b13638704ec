//! Natural logarithm and exponential computed with basic IEEE-754
//! arithmetic only, so that simulated data are the same bytes on every
//! platform (the platform's `ln` and `exp` may differ in the last bit).
//!
//! Both follow the argument reduction and minimax polynomials of Sun
//! Microsystems' fdlibm (`e_log.c` and `e_exp.c`, 1993), as also used by musl
//! libc; their stated error is below 1 ulp.

const LN2_HI: f64 = f64::from_bits(0x3fe62e42_fee00000); // 6.93147180369123816490e-01
const LN2_LO: f64 = f64::from_bits(0x3dea39ef_35793c76); // 1.90821492927058770002e-10
const INV_LN2: f64 = std::f64::consts::LOG2_E; // 0x3ff71547_652b82fe

const LG1: f64 = f64::from_bits(0x3FE55555_55555593); // 6.666666666666735130e-01
const LG2: f64 = f64::from_bits(0x3FD99999_9997FA04); // 3.999999999940941908e-01
const LG3: f64 = f64::from_bits(0x3FD24924_94229359); // 2.857142874366239149e-01
const LG4: f64 = f64::from_bits(0x3FCC71C5_1D8E78AF); // 2.222219843214978396e-01
const LG5: f64 = f64::from_bits(0x3FC74664_96CB03DE); // 1.818357216161805012e-01
const LG6: f64 = f64::from_bits(0x3FC39A09_D078C69F); // 1.531383769920937332e-01
const LG7: f64 = f64::from_bits(0x3FC2F112_DF3E5244); // 1.479819860511658591e-01

const P1: f64 = f64::from_bits(0x3FC55555_5555553E); // 1.66666666666666019037e-01
const P2: f64 = f64::from_bits(0xBF66C16C_16BEBD93); // -2.77777777770155933842e-03
const P3: f64 = f64::from_bits(0x3F11566A_AF25DE2C); // 6.61375632143793436117e-05
const P4: f64 = f64::from_bits(0xBEBBBD41_C5D26BF1); // -1.65339022054652515390e-06
const P5: f64 = f64::from_bits(0x3E663769_72BEA4D0); // 4.13813679705723846039e-08

/// Natural logarithm of a positive, finite `x` (NaN for negative input,
/// negative infinity for zero).
pub fn ln(x: f64) -> f64 {
    if x.is_nan() || x < 0.0 {
        return f64::NAN;
    }
    if x == 0.0 {
        return f64::NEG_INFINITY;
    }
    if x.is_infinite() {
        return x;
    }
    let mut bits = x.to_bits();
    let mut k: i32 = 0;
    let mut hx = (bits >> 32) as u32;
    if hx < 0x0010_0000 {
        // Subnormal: scale up by 2^54.
        k -= 54;
        bits = (x * f64::from_bits(0x4350_0000_0000_0000)).to_bits();
        hx = (bits >> 32) as u32;
    }
    if bits == 0x3ff0_0000_0000_0000 {
        return 0.0;
    }
    // Reduce x into [sqrt(2)/2, sqrt(2)].
    hx = hx.wrapping_add(0x3ff0_0000 - 0x3fe6_a09e);
    k += (hx >> 20) as i32 - 0x3ff;
    hx = (hx & 0x000f_ffff) + 0x3fe6_a09e;
    let x = f64::from_bits((u64::from(hx) << 32) | (bits & 0xffff_ffff));
    let f = x - 1.0;
    let hfsq = 0.5 * f * f;
    let s = f / (2.0 + f);
    let z = s * s;
    let w = z * z;
    let t1 = w * (LG2 + w * (LG4 + w * LG6));
    let t2 = z * (LG1 + w * (LG3 + w * (LG5 + w * LG7)));
    let r = t2 + t1;
    let dk = f64::from(k);
    s * (hfsq + r) + dk * LN2_LO - hfsq + f + dk * LN2_HI
}

/// e to the power `x`; 0 below -745 and infinity above 709.78.
pub fn exp(x: f64) -> f64 {
    if x.is_nan() {
        return x;
    }
    if x > 709.782_712_893_384 {
        return f64::INFINITY;
    }
    if x < -745.133_219_101_941_1 {
        return 0.0;
    }
    let ax = x.abs();
    let (hi, lo, k) = if ax > 0.5 * std::f64::consts::LN_2 {
        let k = if ax >= 1.5 * std::f64::consts::LN_2 {
            (INV_LN2 * x + if x < 0.0 { -0.5 } else { 0.5 }) as i32
        } else if x < 0.0 {
            -1
        } else {
            1
        };
        let kf = f64::from(k);
        (x - kf * LN2_HI, kf * LN2_LO, k)
    } else if ax > f64::from_bits(0x3e30_0000_0000_0000) {
        (x, 0.0, 0)
    } else {
        return 1.0 + x;
    };
    let r = hi - lo;
    let rr = r * r;
    let c = r - rr * (P1 + rr * (P2 + rr * (P3 + rr * (P4 + rr * P5))));
    let y = 1.0 + (r * c / (2.0 - c) - lo + hi);
    scale(y, k)
}

/// `y * 2^k` for y near 1, by exact multiplications by powers of two
/// (fdlibm's `scalbn`); a subnormal result is rounded once, in the last step.
fn scale(mut y: f64, mut k: i32) -> f64 {
    let pow2 = |e: i32| f64::from_bits(((e + 1023) as u64) << 52);
    if k > 1023 {
        y *= pow2(1023);
        k = (k - 1023).min(1023);
    } else if k < -1022 {
        y *= pow2(-1022) * pow2(53);
        k = (k + 1022 - 53).max(-1022);
    }
    y * pow2(k)
}

/// The logistic function 1 / (1 + e^-x).
pub fn expit(x: f64) -> f64 {
    if x >= 0.0 {
        1.0 / (1.0 + exp(-x))
    } else {
        let e = exp(x);
        e / (1.0 + e)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn inverse_ln2_is_fdlibms_word() {
        assert_eq!(INV_LN2.to_bits(), 0x3ff71547_652b82fe);
    }

    fn ulps(a: f64, b: f64) -> u64 {
        (a.to_bits() as i64 - b.to_bits() as i64).unsigned_abs()
    }

    #[test]
    fn agree_with_the_platform_library() {
        // Reference: the platform's correctly-rounded-or-nearly ln/exp; fdlibm
        // is accurate to < 1 ulp, so the two may differ by at most 1-2 ulp.
        let mut x = 1e-300_f64;
        while x < 1e300 {
            assert!(ulps(ln(x), x.ln()) <= 2, "ln({x:e}) = {} vs {}", ln(x), x.ln());
            x *= 1.000_7 + x.fract() * 1e-3;
        }
        for &x in &[5e-324, 1e-310, 0.5, 1.0, 2.0, 1.0 + 1e-15, std::f64::consts::E] {
            assert!(ulps(ln(x), x.ln()) <= 2, "ln({x:e})");
        }
        let mut x = -745.0_f64;
        while x < 709.0 {
            assert!(
                ulps(exp(x), x.exp()) <= 2,
                "exp({x}) = {:e} vs {:e}",
                exp(x),
                x.exp()
            );
            x += 0.013_7;
        }
        for &x in &[0.0, 1e-20, -1e-20, 0.3, -0.3, 1.0, -1.0, 700.0, -740.0] {
            assert!(ulps(exp(x), x.exp()) <= 2, "exp({x:e})");
        }
        assert_eq!(exp(800.0), f64::INFINITY);
        assert_eq!(exp(-800.0), 0.0);
        assert_eq!(ln(0.0), f64::NEG_INFINITY);
        assert!(ln(-1.0).is_nan());
        assert!((expit(0.0) - 0.5).abs() < 1e-16);
        assert!((expit(2.0) - 1.0 / (1.0 + (-2.0f64).exp())).abs() < 1e-16);
        assert!((expit(-30.0) - (-30.0f64).exp() / (1.0 + (-30.0f64).exp())).abs() < 1e-28);
    }
}
