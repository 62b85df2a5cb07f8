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
    fn hoeffding_size() {
        // eps 0.01, delta 0.05: ln(40) / 0.0002 = 18,444.4 → 18,445 (Seshadhri, Pinar & Kolda).
        assert_eq!(hoeffding_samples(0.01, 0.95), 18_445);
    }
}
