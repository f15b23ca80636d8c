//! Binomial statistics for logical error estimates: Wilson score intervals and the per-round rate.
//!
//! In: a count of logical failures `k` out of `n` shots (and, for the per-round rate, the number of
//! syndrome-extraction rounds `R`). Out: point estimates and two-sided confidence intervals as
//! probabilities in `[0, 1]`.
//!
//! Conventions:
//! - the interval is the Wilson score interval (E. B. Wilson, "Probable inference, the law of
//!   succession, and statistical inference", JASA 22, 209 (1927)); unlike the normal ("Wald")
//!   interval it stays inside `[0, 1]` and is not empty when `k = 0` or `k = n`, which matters
//!   for the small failure counts of low-noise runs;
//! - the per-round rate is `p_round = 1 − (1 − p_shot)^(1/R)`: the rate of failure per round that,
//!   repeated independently over `R` rounds with "at least one round fails" counted as a failed
//!   shot, gives `p_shot`. Two failing rounds can cancel in a real memory experiment, so this
//!   convention slightly underestimates `p_round` when `p_shot` is large; it is monotone, so the
//!   interval maps end-point by end-point.

/// The normal quantile for a two-sided 95% interval.
pub const Z95: f64 = 1.959_963_984_540_054;

/// A binomial proportion with its Wilson score interval.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Estimate {
    /// Point estimate `k / n` (0 when `n = 0`).
    pub rate: f64,
    /// Lower end of the interval.
    pub low: f64,
    /// Upper end of the interval.
    pub high: f64,
}

impl Estimate {
    /// The estimate of `k` failures in `n` shots with normal quantile `z` (e.g. [`Z95`]).
    pub fn wilson(k: u64, n: u64, z: f64) -> Estimate {
        let (low, high) = wilson(k, n, z);
        let rate = if n == 0 { 0.0 } else { k as f64 / n as f64 };
        Estimate { rate, low, high }
    }

    /// The same estimate converted to a per-round rate over `rounds` rounds (see module docs).
    pub fn per_round(self, rounds: u32) -> Estimate {
        Estimate {
            rate: per_round(self.rate, rounds),
            low: per_round(self.low, rounds),
            high: per_round(self.high, rounds),
        }
    }
}

/// The Wilson score interval for `k` successes in `n` trials at normal quantile `z`
/// (JASA 22, 209 (1927)):
/// `(p̂ + z²/2n ± z·sqrt(p̂(1−p̂)/n + z²/4n²)) / (1 + z²/n)` with `p̂ = k/n`.
/// Returns `(0, 1)` for `n = 0` (no information).
pub fn wilson(k: u64, n: u64, z: f64) -> (f64, f64) {
    if n == 0 {
        return (0.0, 1.0);
    }
    let n_f = n as f64;
    let p = k.min(n) as f64 / n_f;
    let z2 = z * z;
    let denom = 1.0 + z2 / n_f;
    let centre = p + z2 / (2.0 * n_f);
    let half = z * (p * (1.0 - p) / n_f + z2 / (4.0 * n_f * n_f)).sqrt();
    let low = ((centre - half) / denom).max(0.0);
    let high = ((centre + half) / denom).min(1.0);
    // At k = 0 (k = n) the lower (upper) end is exactly 0 (1); rounding can leave ±1e-17.
    let low = if k == 0 { 0.0 } else { low };
    let high = if k >= n { 1.0 } else { high };
    (low, high)
}

/// Per-round failure rate `1 − (1 − p_shot)^(1/R)` (module docs give the convention). `R = 0` is
/// treated as one round.
pub fn per_round(p_shot: f64, rounds: u32) -> f64 {
    let r = rounds.max(1) as f64;
    if p_shot >= 1.0 {
        return 1.0;
    }
    // -expm1(ln1p(-p)/R) keeps precision when p_shot is tiny.
    -((-p_shot).ln_1p() / r).exp_m1()
}

/// The two-sided 95% quantile of Student's t distribution with `df` degrees of freedom, for
/// intervals from a few batch means. `df` up to 30 from the standard table (values recalled from
/// memory; a test checks them against the expansion below), beyond it the Cornish–Fisher
/// expansion `z + (z³ + z)/(4ν) + (5z⁵ + 16z³ + 3z)/(96ν²)` (Abramowitz & Stegun, Handbook of
/// Mathematical Functions (1964), 26.7.5). Infinite for `df = 0`.
pub fn student_t95(df: usize) -> f64 {
    const TABLE: [f64; 30] = [
        12.706, 4.303, 3.182, 2.776, 2.571, 2.447, 2.365, 2.306, 2.262, 2.228, 2.201, 2.179, 2.160,
        2.145, 2.131, 2.120, 2.110, 2.101, 2.093, 2.086, 2.080, 2.074, 2.069, 2.064, 2.060, 2.056,
        2.052, 2.048, 2.045, 2.042,
    ];
    match df {
        0 => f64::INFINITY,
        1..=30 => TABLE[df - 1],
        _ => t95_expansion(df as f64),
    }
}

fn t95_expansion(nu: f64) -> f64 {
    let z = Z95;
    z + (z.powi(3) + z) / (4.0 * nu)
        + (5.0 * z.powi(5) + 16.0 * z.powi(3) + 3.0 * z) / (96.0 * nu * nu)
}

/// Weighted least squares of `y` on `x` for `(x, y, σ)` (see `slope.rs` for the weights and the
/// error): `(slope, standard error, intercept)`,
/// `None` with fewer than two distinct `x`.
pub(crate) fn fit_line(data: &[(f64, f64, Option<f64>)]) -> Option<(f64, Option<f64>, f64)> {
    let n = data.len();
    if n < 2 {
        return None;
    }
    let weighted = data.iter().all(|d| d.2.is_some_and(|s| s > 0.0));
    let w = |d: &(f64, f64, Option<f64>)| match d.2 {
        Some(s) if weighted => 1.0 / (s * s),
        _ => 1.0,
    };
    let sw: f64 = data.iter().map(w).sum();
    let mx = data.iter().map(|d| w(d) * d.0).sum::<f64>() / sw;
    let my = data.iter().map(|d| w(d) * d.1).sum::<f64>() / sw;
    let sxx: f64 = data.iter().map(|d| w(d) * (d.0 - mx).powi(2)).sum();
    if sxx.is_nan() || sxx <= 0.0 {
        return None;
    }
    let sxy: f64 = data.iter().map(|d| w(d) * (d.0 - mx) * (d.1 - my)).sum();
    let slope = sxy / sxx;
    let intercept = my - slope * mx;
    let chi2: f64 = data
        .iter()
        .map(|d| w(d) * (d.1 - intercept - slope * d.0).powi(2))
        .sum();
    let dof = n as f64 - 2.0;
    let error = if weighted {
        let inflate = if dof > 0.0 {
            (chi2 / dof).sqrt().max(1.0)
        } else {
            1.0
        };
        Some(inflate / sxx.sqrt())
    } else if dof > 0.0 {
        Some((chi2 / dof / sxx).sqrt())
    } else {
        None
    };
    Some((slope, error, intercept))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn t_quantiles_agree_with_their_expansion() {
        // The expansion's error falls as 1/ν³: within 0.3% from 8 degrees of freedom on.
        for df in 8..=30 {
            let (t, e) = (student_t95(df), t95_expansion(df as f64));
            assert!(
                (t / e - 1.0).abs() < 3e-3,
                "df {df}: table {t}, expansion {e}"
            );
        }
        // Monotone, towards the normal quantile.
        for df in 1..200 {
            assert!(student_t95(df) > student_t95(df + 1));
        }
        assert!((student_t95(100_000) - Z95).abs() < 1e-4);
    }

    #[test]
    fn wilson_matches_hand_computed_values() {
        // k = 0, n = 10, z = 1.96: upper = z²/n / (1 + z²/n) = 0.38416 / 1.38416 (exact formula).
        let (lo, hi) = wilson(0, 10, 1.96);
        assert_eq!(lo, 0.0);
        assert!((hi - 0.38416 / 1.38416).abs() < 1e-12);
        // k = 5, n = 10, z = 1.96: symmetric about 1/2; half-width
        // 1.96·sqrt(0.025 + 0.009604)/1.38416 (formula evaluated by hand).
        let (lo, hi) = wilson(5, 10, 1.96);
        let half = 1.96 * (0.025f64 + 0.009_604).sqrt() / 1.384_16;
        assert!((lo - (0.5 - half)).abs() < 1e-12 && (hi - (0.5 + half)).abs() < 1e-12);
        assert_eq!(wilson(3, 0, Z95), (0.0, 1.0));
        assert_eq!(wilson(7, 7, Z95).1, 1.0);
    }

    #[test]
    fn wilson_contains_the_point_estimate_and_shrinks_with_n() {
        for &(k, n) in &[(1u64, 100u64), (50, 100), (99, 100), (3, 100_000)] {
            let (lo, hi) = wilson(k, n, Z95);
            let p = k as f64 / n as f64;
            assert!(lo <= p && p <= hi, "{k}/{n}: {lo} {hi}");
            let (lo2, hi2) = wilson(k * 10, n * 10, Z95);
            assert!(hi2 - lo2 < hi - lo);
        }
    }

    #[test]
    fn per_round_inverts_the_shot_rate() {
        let pr: f64 = 0.01;
        let shot = 1.0 - (1.0 - pr).powi(7);
        assert!((per_round(shot, 7) - pr).abs() < 1e-14);
        assert_eq!(per_round(0.3, 1), 0.3);
        assert_eq!(per_round(1.0, 5), 1.0);
        assert_eq!(per_round(0.0, 5), 0.0);
        // Tiny rates keep relative precision: 1e-12 over 4 rounds is 2.5e-13.
        assert!((per_round(1e-12, 4) / 2.5e-13 - 1.0).abs() < 1e-9);
    }
}
