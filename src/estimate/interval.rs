//! Interval arithmetic shared by the estimators: normal quantiles, the Wilson score interval
//! for a proportion, and Hoeffding sample sizes.

use crate::figure::Interval;

/// The standard normal quantile Φ⁻¹(p), 0 < p < 1, by Acklam's rational approximation
/// (relative error below 1.2e-9, ample for interval widths). P. J. Acklam, "An algorithm for
/// computing the inverse normal cumulative distribution function" (2003, widely reproduced;
/// coefficients from memory, checked against the table values in the tests).
pub fn normal_quantile(p: f64) -> f64 {
    assert!(p > 0.0 && p < 1.0, "quantile of {p}");
    const A: [f64; 6] = [
        -3.969683028665376e1,
        2.209460984245205e2,
        -2.759285104469687e2,
        1.38357751867269e2,
        -3.066479806614716e1,
        2.506628277459239,
    ];
    const B: [f64; 5] = [
        -5.447609879822406e1,
        1.615858368580409e2,
        -1.556989798598866e2,
        6.680131188771972e1,
        -1.328068155288572e1,
    ];
    const C: [f64; 6] = [
        -7.784894002430293e-3,
        -3.223964580411365e-1,
        -2.400758277161838,
        -2.549732539343734,
        4.374664141464968,
        2.938163982698783,
    ];
    const D: [f64; 4] = [
        7.784695709041462e-3,
        3.224671290700398e-1,
        2.445134137142996,
        3.754408661907416,
    ];
    let low = 0.02425;
    if p < low {
        let q = (-2.0 * p.ln()).sqrt();
        (((((C[0] * q + C[1]) * q + C[2]) * q + C[3]) * q + C[4]) * q + C[5])
            / ((((D[0] * q + D[1]) * q + D[2]) * q + D[3]) * q + 1.0)
    } else if p <= 1.0 - low {
        let q = p - 0.5;
        let r = q * q;
        (((((A[0] * r + A[1]) * r + A[2]) * r + A[3]) * r + A[4]) * r + A[5]) * q
            / (((((B[0] * r + B[1]) * r + B[2]) * r + B[3]) * r + B[4]) * r + 1.0)
    } else {
        let q = (-2.0 * (1.0 - p).ln()).sqrt();
        -(((((C[0] * q + C[1]) * q + C[2]) * q + C[3]) * q + C[4]) * q + C[5])
            / ((((D[0] * q + D[1]) * q + D[2]) * q + D[3]) * q + 1.0)
    }
}

/// z for a two-sided interval at `level` (0.95 → 1.959964).
pub fn z_for(level: f64) -> f64 {
    normal_quantile(0.5 + level / 2.0)
}

/// Natural log of the gamma function for x > 0, by the Lanczos approximation (g = 7, nine
/// coefficients; C. Lanczos, "A precision approximation of the gamma function", SIAM J. Numer.
/// Anal. B 1, 1964; coefficients as commonly tabulated, from memory, checked in the tests).
fn ln_gamma(x: f64) -> f64 {
    const C: [f64; 9] = [
        0.999_999_999_999_809_9,
        676.520_368_121_885_1,
        -1_259.139_216_722_402_8,
        771.323_428_777_653_1,
        -176.615_029_162_140_6,
        12.507_343_278_686_905,
        -0.138_571_095_265_720_12,
        9.984_369_578_019_572e-6,
        1.505_632_735_149_311_6e-7,
    ];
    if x < 0.5 {
        // Reflection keeps the series in its accurate range.
        let pi = std::f64::consts::PI;
        return (pi / (pi * x).sin()).ln() - ln_gamma(1.0 - x);
    }
    let x = x - 1.0;
    let mut a = C[0];
    let t = x + 7.5;
    for (i, &c) in C.iter().enumerate().skip(1) {
        a += c / (x + i as f64);
    }
    0.5 * (2.0 * std::f64::consts::PI).ln() + (x + 0.5) * t.ln() - t + a.ln()
}

/// The regularised incomplete beta function I_x(a, b), by its continued fraction evaluated
/// with the modified Lentz method (Press et al., Numerical Recipes, 3rd ed., 2007, §6.4).
fn incomplete_beta(a: f64, b: f64, x: f64) -> f64 {
    if x <= 0.0 {
        return 0.0;
    }
    if x >= 1.0 {
        return 1.0;
    }
    let front =
        (ln_gamma(a + b) - ln_gamma(a) - ln_gamma(b) + a * x.ln() + b * (1.0 - x).ln()).exp();
    if x < (a + 1.0) / (a + b + 2.0) {
        front * beta_fraction(a, b, x) / a
    } else {
        1.0 - front * beta_fraction(b, a, 1.0 - x) / b
    }
}

fn beta_fraction(a: f64, b: f64, x: f64) -> f64 {
    const TINY: f64 = 1e-300;
    let guard = |v: f64| if v.abs() < TINY { TINY } else { v };
    let (qab, qap, qam) = (a + b, a + 1.0, a - 1.0);
    let mut c = 1.0;
    let mut d = 1.0 / guard(1.0 - qab * x / qap);
    let mut h = d;
    for m in 1..=400 {
        let m = m as f64;
        let m2 = 2.0 * m;
        let aa = m * (b - m) * x / ((qam + m2) * (a + m2));
        d = 1.0 / guard(1.0 + aa * d);
        c = guard(1.0 + aa / c);
        h *= d * c;
        let aa = -(a + m) * (qab + m) * x / ((a + m2) * (qap + m2));
        d = 1.0 / guard(1.0 + aa * d);
        c = guard(1.0 + aa / c);
        let step = d * c;
        h *= step;
        if (step - 1.0).abs() < 1e-15 {
            break;
        }
    }
    h
}

/// The multiplier t for a two-sided interval at `level` from a Student t distribution with `df`
/// degrees of freedom (W. S. Gosset, "The probable error of a mean", Biometrika 6, 1908): the
/// t with P(|T| > t) = 1 − level, where P(|T| > t) = I_{df/(df+t²)}(df/2, 1/2). Solved by
/// bisection on x = df/(df+t²), where the tail probability is increasing.
pub fn t_for(level: f64, df: u64) -> f64 {
    assert!(df >= 1, "a t interval needs at least one degree of freedom");
    let nu = df as f64;
    let tail = 1.0 - level;
    let (mut lo, mut hi) = (0.0f64, 1.0f64);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if incomplete_beta(nu / 2.0, 0.5, mid) < tail {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    let x = 0.5 * (lo + hi);
    (nu * (1.0 - x) / x).sqrt()
}

/// Wilson score interval for `successes` out of `n` at `level`. E. B. Wilson, "Probable
/// inference, the law of succession, and statistical inference", JASA 22 (1927) 209–212.
pub fn wilson(successes: u64, n: u64, level: f64) -> Interval {
    if n == 0 {
        return Interval {
            low: 0.0,
            high: 1.0,
            level,
        };
    }
    let z = z_for(level);
    let n_f = n as f64;
    let p = successes as f64 / n_f;
    let z2 = z * z;
    let centre = (p + z2 / (2.0 * n_f)) / (1.0 + z2 / n_f);
    let half = z / (1.0 + z2 / n_f) * (p * (1.0 - p) / n_f + z2 / (4.0 * n_f * n_f)).sqrt();
    Interval {
        low: (centre - half).max(0.0),
        high: (centre + half).min(1.0),
        level,
    }
}

/// Samples that make |p̂ − p| ≤ eps with probability at least `level`, by Hoeffding's inequality:
/// k ≥ ln(2/δ) / (2 eps²), δ = 1 − level. W. Hoeffding, "Probability inequalities for sums of
/// bounded random variables", JASA 58 (1963) 13–30.
pub fn hoeffding_samples(eps: f64, level: f64) -> u64 {
    ((2.0 / (1.0 - level)).ln() / (2.0 * eps * eps)).ceil() as u64
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quantiles_match_tables() {
        // Standard normal table values (any statistics text; common practice).
        assert!((z_for(0.95) - 1.959963984540054).abs() < 1e-8);
        assert!((z_for(0.99) - 2.5758293035489).abs() < 1e-8);
        assert!((normal_quantile(0.5)).abs() < 1e-15);
        assert!((normal_quantile(0.001) + 3.090232306167813).abs() < 1e-8);
    }

    #[test]
    fn wilson_worked_example() {
        // 81 of 263 at 95%: [0.2553, 0.3662] (Wilson interval as tabulated in Newcombe,
        // "Two-sided confidence intervals for the single proportion", Stat. Med. 17, 1998,
        // example (a): 81/263 → 0.2553–0.3662).
        let i = wilson(81, 263, 0.95);
        assert!(
            (i.low - 0.2553).abs() < 5e-5 && (i.high - 0.3662).abs() < 5e-5,
            "{i:?}"
        );
    }

    #[test]
    fn t_quantiles_match_tables() {
        // Two-sided 95% and 99% points of Student's t (Fisher & Yates, "Statistical tables for
        // biological, agricultural and medical research", 1938, Table III; values from memory of
        // that standard table, to its 3 decimals, and more digits as commonly reproduced).
        for (level, df, t) in [
            (0.95, 1, 12.706204736),
            (0.95, 2, 4.302652730),
            (0.95, 3, 3.182446305),
            (0.95, 4, 2.776445105),
            (0.95, 9, 2.262157163),
            (0.95, 30, 2.042272456),
            (0.99, 4, 4.604094871),
        ] {
            assert!((t_for(level, df) - t).abs() < 1e-6, "{level} {df}");
        }
        // Large df tends to the normal quantile.
        assert!((t_for(0.95, 1_000_000) - z_for(0.95)).abs() < 1e-5);
        // Gamma(5) = 24, Gamma(1/2) = sqrt(pi).
        assert!((ln_gamma(5.0) - 24f64.ln()).abs() < 1e-12);
        assert!((ln_gamma(0.5) - std::f64::consts::PI.sqrt().ln()).abs() < 1e-12);
    }

    #[test]
    fn hoeffding_size() {
        // eps 0.01, delta 0.05: ln(40) / 0.0002 = 18,444.4 → 18,445 (Seshadhri, Pinar & Kolda).
        assert_eq!(hoeffding_samples(0.01, 0.95), 18_445);
    }
}
