//! The statistics of the ladder: the acceptance-ratio estimate of `P_L(t_b) / P_L(t_a)` from
//! walks at two neighbouring scales, integrated autocorrelation times, and the log-log fit of
//! the scaling exponent.

/// The ratio `Z_b / Z_a` of the failure probabilities at two scales, from samples of the log
/// weight ratio `L(E) = ln(π_b(E) / π_a(E))` taken by walks targeting each scale.
///
/// # The identity
/// Let `F` be the failing configurations and `Z_t = Σ_{E∈F} π_t(E)` the failure probability at
/// scale `t`; `⟨·⟩_t` averages over `π_t` restricted to `F`, i.e. over `π_t(E)/Z_t`. For any
/// constant `C > 0`, `min(π_a, π_b/C)` summed over `F` can be written two ways:
///
/// ```text
/// Σ_F π_a · min(1, π_b/(C π_a)) = Σ_F min(π_a, π_b/C) = (1/C) Σ_F π_b · min(C π_a/π_b, 1)
/// ```
///
/// so `Z_a ⟨min(1, e^L/C)⟩_a = (Z_b/C) ⟨min(1, C e^{−L})⟩_b`, and
///
/// ```text
/// Z_b / Z_a = C · ⟨min(1, e^{L−c})⟩_a / ⟨min(1, e^{c−L})⟩_b,   c = ln C.
/// ```
///
/// `min(1, x)` is the Metropolis acceptance function, which is what makes this the
/// acceptance-ratio method of "Simulation of rare events in quantum error correction", Phys.
/// Rev. A 88, 062308 (2013) (with `C = 1` it is the plain form; the free constant is Bennett's,
/// J. Comput. Phys. 22, 245 (1976)). Any `C` gives an unbiased identity; the variance is
/// smallest when both averages are of similar size, near `C = Z_b/Z_a`, so `c` is taken as the
/// fixed point `c = ln(estimate(c))`, found by iteration.
pub(super) fn bennett(la: &[f64], lb: &[f64]) -> Option<Ratio> {
    if la.is_empty() || lb.is_empty() {
        return None;
    }
    let mut c = 0.0;
    let mut ln_ratio = f64::NAN;
    for _ in 0..200 {
        let next = ln_ratio_at(la, lb, c)?;
        let done = (next - c).abs() < 1e-12;
        ln_ratio = next;
        c = next;
        if done {
            break;
        }
    }
    Some(Ratio {
        ln_ratio,
        c,
        down: mean_min(la, -c),
        up: mean_min_neg(lb, c),
    })
}

/// A ratio estimate with the overlap averages it came from.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) struct Ratio {
    /// `ln(Z_b / Z_a)`.
    pub ln_ratio: f64,
    /// The constant `ln C` used.
    pub c: f64,
    /// `⟨min(1, e^{L−c})⟩_a`: how often a walk at `a` would accept a move to the weights of `b`.
    pub down: f64,
    /// `⟨min(1, e^{c−L})⟩_b`.
    pub up: f64,
}

/// `ln(Z_b/Z_a)` from the identity with constant `c`; `None` when an average vanishes (the
/// walks do not overlap at all).
pub(super) fn ln_ratio_at(la: &[f64], lb: &[f64], c: f64) -> Option<f64> {
    let a = mean_min(la, -c);
    let b = mean_min_neg(lb, c);
    (a > 0.0 && b > 0.0 && a.is_finite() && b.is_finite()).then(|| c + a.ln() - b.ln())
}

/// `mean(min(1, e^{l + shift}))`.
fn mean_min(l: &[f64], shift: f64) -> f64 {
    l.iter().map(|&x| (x + shift).min(0.0).exp()).sum::<f64>() / l.len() as f64
}

/// `mean(min(1, e^{shift − l}))`.
fn mean_min_neg(l: &[f64], shift: f64) -> f64 {
    l.iter().map(|&x| (shift - x).min(0.0).exp()).sum::<f64>() / l.len() as f64
}

/// The integrated autocorrelation time of a quantity recorded along several walks of equal
/// standing (in recorded samples; 1 means independent samples), with Sokal's self-consistent
/// (automatic) windowing: the sum `1 + 2 Σ_k ρ(k)` is cut at the first window `W`
/// with `W ≥ 5 τ(W)`. The autocovariance is averaged over the walks around the pooled mean.
/// `None` when the quantity never varies (no information about mixing from it).
pub(super) fn integrated_time(series: &[Vec<f64>]) -> Option<f64> {
    let n: usize = series.iter().map(Vec::len).sum();
    if n < 2 {
        return None;
    }
    let mean = series.iter().flatten().sum::<f64>() / n as f64;
    let autocov = |k: usize| -> f64 {
        let mut sum = 0.0;
        let mut count = 0usize;
        for s in series {
            if s.len() > k {
                for i in 0..s.len() - k {
                    sum += (s[i] - mean) * (s[i + k] - mean);
                }
                count += s.len() - k;
            }
        }
        if count == 0 {
            0.0
        } else {
            sum / count as f64
        }
    };
    let c0 = autocov(0);
    if c0 <= 1e-300 {
        return None;
    }
    let longest = series.iter().map(Vec::len).max().unwrap_or(0);
    let mut tau = 1.0;
    for k in 1..longest {
        tau += 2.0 * autocov(k) / c0;
        if k as f64 >= 5.0 * tau {
            break;
        }
    }
    Some(tau.max(1.0))
}

/// The sample mean and the variance of the mean of `x` (`None` for fewer than two values).
pub(super) fn mean_and_variance_of_mean(x: &[f64]) -> Option<(f64, f64)> {
    if x.len() < 2 {
        return None;
    }
    let n = x.len() as f64;
    let mean = x.iter().sum::<f64>() / n;
    let var = x.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1.0);
    Some((mean, var / n))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_identity_recovers_a_known_ratio() {
        // Two one-edge "graphs": F = {fired}, π_a = 0.1, π_b = 0.01. Every failing sample is the
        // same configuration, so L = ln(0.01/0.1) everywhere and the ratio is exact.
        let l = (0.01f64 / 0.1).ln();
        let r = bennett(&[l; 10], &[l; 7]).unwrap();
        assert!((r.ln_ratio - l).abs() < 1e-9, "{r:?}");
        // With C = Z_b/Z_a both averages are 1.
        assert!((r.down - 1.0).abs() < 1e-9 && (r.up - 1.0).abs() < 1e-9);
    }

    #[test]
    fn the_identity_holds_for_any_constant() {
        // F = {A, B} with π_a = (0.2, 0.1), π_b = (0.05, 0.08): Z_b/Z_a = 0.13/0.3. Exact averages
        // are reproduced by weighting samples in proportion to π_t.
        let la = [(0.05f64 / 0.2).ln(), (0.08f64 / 0.1).ln()];
        // Samples at a: A twice as likely as B; at b: A 5 times, B 8 times.
        let sa: Vec<f64> = [la[0], la[0], la[1]].to_vec();
        let sb: Vec<f64> = std::iter::repeat_n(la[0], 5)
            .chain(std::iter::repeat_n(la[1], 8))
            .collect();
        for c in [-3.0, -1.0, 0.0, 0.5] {
            let r = ln_ratio_at(&sa, &sb, c).unwrap();
            assert!((r - (0.13f64 / 0.3).ln()).abs() < 1e-12, "c = {c}: {r}");
        }
    }

    #[test]
    fn autocorrelation_of_independent_and_sticky_series() {
        // A period-2 alternation is anti-correlated: τ is floored at 1.
        let alt: Vec<f64> = (0..1000).map(|i| (i % 2) as f64).collect();
        assert_eq!(integrated_time(&[alt]), Some(1.0));
        // AR(1) with coefficient φ = 0.9 has τ = (1 + φ)/(1 − φ) = 19 (textbook result, e.g.
        // Sokal's notes cited above).
        use rand::{Rng, SeedableRng};
        let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(3);
        let mut x = 0.0;
        let ar: Vec<f64> = (0..200_000)
            .map(|_| {
                x = 0.9 * x + rng.gen::<f64>() - 0.5;
                x
            })
            .collect();
        let tau = integrated_time(&[ar]).unwrap();
        assert!(tau > 15.0 && tau < 23.0, "{tau}");
        assert_eq!(integrated_time(&[vec![3.0; 10]]), None);
    }
}
