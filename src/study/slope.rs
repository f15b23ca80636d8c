//! The sub-threshold scaling of a sweep: the slope of `ln p_L` against `ln p` per distance,
//! fitted to the splitting points of one curve group, next to the exponent the circuit distance
//! predicts.
//!
//! In: the [`Point`]s of one group (see [`Point::group`]); only points with a splitting estimate
//! take part (sampled points near threshold would bend the line). Out: one [`SlopeFit`] per
//! distance with at least two such points.
//!
//! Below threshold `p_L ≈ A p^k` with `k = ⌈d/2⌉` for a code of circuit distance `d` (the
//! fewest faults that cause an undetected logical error; "Surface codes: towards practical
//! large-scale quantum computation", PRA 86, 032324 (2012), gives `(d+1)/2` for odd `d`). The
//! fit is weighted least squares of `y = ln p_L` on `x = ln p` with weights `1/σ²`, `σ` the
//! stated relative uncertainty of each point (one standard deviation of `ln p_L`): slope
//! `Σw(x−x̄)(y−ȳ) / Σw(x−x̄)²`, standard error `1/√(Σw(x−x̄)²)`, inflated by `√(χ²/(n−2))` when
//! the points scatter more than their stated uncertainties allow (common practice, the Birge
//! ratio). Without stated uncertainties the fit is unweighted and the error comes from the
//! residuals alone (none with two points).

use std::collections::BTreeMap;

use crate::study::stats::fit_line;
use crate::study::sweep::Point;

/// The fitted slope of one distance.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize)]
pub struct SlopeFit {
    /// Distance of the code family (the generator's).
    pub distance: u32,
    /// The slope `k` of `ln p_L = ln A + k ln p`.
    pub slope: f64,
    /// Its standard error (`None`: unknown, e.g. two unweighted points).
    pub error: Option<f64>,
    /// `ln A`, so the fitted line is `p_L = e^{ln_a} p^k`.
    pub ln_a: f64,
    /// The circuit distance the rows report (at the lowest `p` fitted).
    pub circuit_distance: Option<u32>,
    /// `⌈d/2⌉` of the circuit distance, when it is exact.
    pub expected: Option<u32>,
    /// Points fitted.
    pub points: usize,
    /// Smallest and largest `p` fitted.
    pub p_range: [f64; 2],
}

/// Fits the slope per distance over the splitting points of `points` (one group) with `p ≤
/// below` (all when `None`), on the per-round rate when `per_round`, else per shot.
pub fn slopes(points: &[Point], per_round: bool, below: Option<f64>) -> Vec<SlopeFit> {
    let mut by_d: BTreeMap<u32, Vec<&Point>> = BTreeMap::new();
    for p in points {
        if p.splitting.is_some() && p.p > 0.0 && below.is_none_or(|b| p.p <= b) {
            by_d.entry(p.distance).or_default().push(p);
        }
    }
    by_d.into_iter()
        .filter_map(|(d, mut pts)| {
            pts.sort_by(|a, b| a.p.total_cmp(&b.p));
            let used: Vec<&Point> = pts
                .into_iter()
                .filter(|p| p.estimate(per_round).rate > 0.0)
                .collect();
            let data: Vec<(f64, f64, Option<f64>)> = used
                .iter()
                .filter_map(|p| {
                    let s = p.splitting.as_ref()?;
                    Some((p.p.ln(), p.estimate(per_round).rate.ln(), s.uncertainty))
                })
                .collect();
            let (slope, error, ln_a) = fit_line(&data)?;
            let first = used[0].splitting.as_ref();
            Some(SlopeFit {
                distance: d,
                slope,
                error,
                ln_a,
                circuit_distance: first.and_then(|s| s.circuit_distance.map(|c| c.value)),
                expected: first.and_then(|s| s.expected_exponent),
                points: data.len(),
                p_range: [used[0].p, used[used.len() - 1].p],
            })
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    use crate::study::stats::Estimate;
    use crate::study::sweep::{ChunkRow, SplittingRow};

    /// A synthetic splitting row (invented data for the check, not a measurement).
    fn synthetic(d: u32, p: f64, rate: f64, uncertainty: Option<f64>) -> ChunkRow {
        let e = Estimate {
            rate,
            low: rate * 0.9,
            high: rate * 1.1,
        };
        ChunkRow {
            version: crate::study::STORE_VERSION,
            task: format!("synthetic d={d} p={p}"),
            chunk: 0,
            shots: 1000,
            failures: 100,
            seed: 0,
            label: "synthetic".into(),
            family: "surface".into(),
            distance: d,
            rounds: d,
            p,
            bias: None,
            vary: Default::default(),
            noise: format!("circuit p={p}"),
            decoder: "mwpm".into(),
            method: "splitting".into(),
            splitting: Some(SplittingRow {
                per_shot: e,
                per_round: e,
                uncertainty,
                chains: 8,
                sweeps: 100.0,
                proposals: 2000,
                top_scale: 16.0,
                ladder: Vec::new(),
                exponent: None,
                circuit_distance: Some(crate::study::sweep::DistanceRow {
                    value: d,
                    lower: d,
                    high_rate: None,
                }),
                expected_exponent: Some(d.div_ceil(2)),
            }),
        }
    }

    #[test]
    fn an_exact_power_law_gives_back_its_exponent() {
        // Synthetic rows p_L = 0.3 (p / 0.01)^((d+1)/2), the below-threshold form of PRA 86,
        // 032324 (2012), at four p: the fit returns (d+1)/2 and ln A exactly, and with equal
        // stated uncertainties σ the standard error of a weighted fit is σ/√Σ(x−x̄)².
        let ps = [0.0003, 0.0006, 0.001, 0.003];
        let mut rows = Vec::new();
        for d in [3u32, 5, 7] {
            for p in ps {
                let k = (d as f64 + 1.0) / 2.0;
                rows.push(synthetic(d, p, 0.3 * (p / 0.01f64).powf(k), Some(0.1)));
            }
        }
        // A sampled point of the group is left out of the fit.
        let mut sampled = synthetic(3, 0.006, 0.5, None);
        sampled.method = "sampling".into();
        sampled.splitting = None;
        rows.push(sampled);
        let points = crate::study::sweep::aggregate(&rows);
        let fits = slopes(&points, true, None);
        let xs: Vec<f64> = ps.iter().map(|p| p.ln()).collect();
        let mean = xs.iter().sum::<f64>() / 4.0;
        let sxx: f64 = xs.iter().map(|x| (x - mean).powi(2)).sum();
        assert_eq!(fits.len(), 3);
        for f in &fits {
            let k = (f.distance as f64 + 1.0) / 2.0;
            assert!((f.slope - k).abs() < 1e-9, "{f:?}");
            assert!(
                (f.ln_a - (0.3f64.ln() - k * 0.01f64.ln())).abs() < 1e-9,
                "{f:?}"
            );
            assert!((f.error.unwrap() - 0.1 / sxx.sqrt()).abs() < 1e-12, "{f:?}");
            assert_eq!(f.expected, Some(f.distance.div_ceil(2)));
            assert_eq!((f.points, f.p_range), (4, [0.0003, 0.003]));
        }
        // `below` keeps the low-p points only.
        let low = slopes(&points, true, Some(0.001));
        assert!(low.iter().all(|f| f.points == 3 && f.p_range[1] == 0.001));
        // Points that scatter beyond their stated uncertainty inflate the error (Birge ratio).
        rows[1].splitting.as_mut().unwrap().per_round.rate *= 2.0;
        let fits = slopes(&crate::study::sweep::aggregate(&rows), true, None);
        assert!(
            fits[0].error.unwrap() > 2.0 * 0.1 / sxx.sqrt(),
            "{:?}",
            fits[0]
        );
    }

    #[test]
    fn unweighted_residual_error_is_the_textbook_one() {
        // y = 2x + 1 with residuals +0.1, −0.2, +0.1 at x = 0, 1, 2: slope 2 exactly (the
        // residuals are symmetric), residual variance 0.06/1, Sxx = 2, so the error is √0.03
        // (ordinary least squares, any statistics textbook).
        let data = [(0.0, 1.1, None), (1.0, 2.8, None), (2.0, 5.1, None)];
        let (slope, error, a) = fit_line(&data).unwrap();
        assert!((slope - 2.0).abs() < 1e-12 && (a - 1.0).abs() < 1e-12);
        assert!((error.unwrap() - 0.03f64.sqrt()).abs() < 1e-12);
        assert_eq!(fit_line(&data[..1]), None);
        assert_eq!(fit_line(&[(1.0, 1.0, None), (1.0, 2.0, None)]), None);
    }
}
