//! Threshold estimates from sweep results: crossing points of successive distances, and the
//! below-threshold scaling fit.
//!
//! In: the [`Point`]s of one curve group (same label, decoder and bias; see [`Point::group`]),
//! several distances over a shared list of physical error rates `p`. Out: [`Crossing`]s and a
//! [`ScalingFit`].
//!
//! Conventions:
//! - rates are per shot (`failures / shots`) unless the caller converts them; points with no
//!   failure have no logarithm and are left out of both estimates;
//! - a crossing of distances `d1 < d2` is where `ln pL(d2) − ln pL(d1)` changes sign from negative
//!   (the larger code is better) to positive, located by linear interpolation in `ln p` between
//!   the two neighbouring grid points both curves share. Every pair of distances is tried
//!   ([`pairs`]); a pair that does not cross says why (the larger code is better, or worse, at
//!   every shared `p`: the threshold lies beyond the grid, or the pair shares too few points). The
//!   threshold estimate ([`threshold`]) is the crossing of the largest pair that crosses (largest
//!   `d2`, then largest `d1`), which suffers least from finite-size drift; a crossing in the
//!   first or last interval of the grid is flagged ([`Crossing::at_edge`]);
//! - its uncertainty ([`bootstrap`]) comes from a parametric bootstrap over the stored counts:
//!   each point's failure count is redrawn from a binomial with its own shots and observed rate
//!   (exactly for up to 1000 shots, else by the Poisson limit when fewer than 30 failures or
//!   successes are expected and by the normal limit otherwise), the estimate recomputed, and the
//!   2.5% and 97.5% quantiles reported with the share of resamples that had no crossing at all
//!   ("Bootstrap methods: another look at the jackknife", B. Efron, Ann. Statist. 7, 1 (1979));
//! - the scaling fit is `pL ≈ A · (p/p_th)^((d+1)/2)` ("Surface codes: towards practical
//!   large-scale quantum computation", PRA 86, 032324 (2012)) on the points below the crossing:
//!   with `k = (d+1)/2`, `ln pL − k ln p = ln A − k ln p_th` is linear in the unknowns
//!   `(ln A, ln p_th)`; it is solved by least squares weighted by the failure count (the inverse
//!   variance of `ln pL` for a binomial count).

use std::collections::BTreeMap;

use crate::study::sweep::Point;

/// Where the curves of two distances cross.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Crossing {
    /// The smaller distance.
    pub d1: u32,
    /// The larger distance.
    pub d2: u32,
    /// Physical error rate at the crossing.
    pub p: f64,
    /// The crossing lies in the first or last interval of the grid the two curves share: the
    /// grid should be extended to confirm it.
    pub at_edge: bool,
}

/// Why a pair of distances has no crossing in the grid.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum NoCrossing {
    /// The larger code is better at every shared `p`: the threshold lies above the grid.
    Above,
    /// The larger code is worse at every shared `p`: the threshold lies below the grid.
    Below,
    /// The difference changes sign the wrong way (the larger code better only above some `p`).
    Inverted,
    /// Fewer than two shared points with failures.
    TooFewPoints,
}

impl NoCrossing {
    /// A short explanation for reports.
    pub fn describe(self) -> &'static str {
        match self {
            NoCrossing::Above => {
                "the larger code is better at every p: the threshold lies above the grid"
            }
            NoCrossing::Below => {
                "the larger code is worse at every p: the threshold lies below the grid"
            }
            NoCrossing::Inverted => {
                "the curves cross the wrong way (larger code better only at larger p)"
            }
            NoCrossing::TooFewPoints => "fewer than two shared points with failures",
        }
    }
}

/// The result for one pair of distances.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Pair {
    /// The smaller distance.
    pub d1: u32,
    /// The larger distance.
    pub d2: u32,
    /// The crossing, or why there is none.
    pub result: Result<Crossing, NoCrossing>,
}

/// The fit `pL ≈ A (p/p_th)^((d+1)/2)`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ScalingFit {
    /// Prefactor `A`.
    pub a: f64,
    /// Fitted threshold `p_th`.
    pub p_th: f64,
    /// Points used.
    pub points: usize,
}

/// `(p, ln pL)` per distance, sorted by `p`, points with failures only.
fn curves(points: &[Point]) -> BTreeMap<u32, Vec<(f64, f64)>> {
    let mut out: BTreeMap<u32, Vec<(f64, f64)>> = BTreeMap::new();
    for pt in points {
        if pt.failures > 0 && pt.shots > 0 && pt.p > 0.0 {
            out.entry(pt.distance)
                .or_default()
                .push((pt.p, (pt.failures as f64 / pt.shots as f64).ln()));
        }
    }
    for c in out.values_mut() {
        c.sort_by(|a, b| a.0.total_cmp(&b.0));
    }
    out
}

/// The crossing of two curves, if their difference changes sign from negative to positive.
fn cross(d1: u32, c1: &[(f64, f64)], d2: u32, c2: &[(f64, f64)]) -> Result<Crossing, NoCrossing> {
    // Shared p values (exact equality: both come from the same grid).
    let diff: Vec<(f64, f64)> = c1
        .iter()
        .filter_map(|&(p, l1)| c2.iter().find(|x| x.0 == p).map(|&(_, l2)| (p, l2 - l1)))
        .collect();
    if diff.len() < 2 {
        return Err(NoCrossing::TooFewPoints);
    }
    let last = diff.len() - 2;
    let found = diff.windows(2).enumerate().find_map(|(k, w)| {
        let ((p0, f0), (p1, f1)) = (w[0], w[1]);
        if f0 < 0.0 && f1 >= 0.0 {
            let (x0, x1) = (p0.ln(), p1.ln());
            let x = x0 + (x1 - x0) * (-f0) / (f1 - f0);
            Some(Crossing {
                d1,
                d2,
                p: x.exp(),
                at_edge: k == 0 || k == last,
            })
        } else {
            None
        }
    });
    found.ok_or(if diff.iter().all(|d| d.1 < 0.0) {
        NoCrossing::Above
    } else if diff.iter().all(|d| d.1 >= 0.0) {
        NoCrossing::Below
    } else {
        NoCrossing::Inverted
    })
}

/// Every pair of distances `d1 < d2` with its crossing or why it has none, smallest pair first.
pub fn pairs(points: &[Point]) -> Vec<Pair> {
    let c = curves(points);
    let ds: Vec<u32> = c.keys().copied().collect();
    let mut out = Vec::new();
    for (i, &d1) in ds.iter().enumerate() {
        for &d2 in &ds[i + 1..] {
            out.push(Pair {
                d1,
                d2,
                result: cross(d1, &c[&d1], d2, &c[&d2]),
            });
        }
    }
    out
}

/// Crossings of every pair of distances that crosses, smallest pair first.
pub fn crossings(points: &[Point]) -> Vec<Crossing> {
    pairs(points)
        .into_iter()
        .filter_map(|p| p.result.ok())
        .collect()
}

/// The threshold estimate: the crossing of the largest pair of distances that crosses (largest
/// `d2`, then largest `d1`).
pub fn threshold(points: &[Point]) -> Option<Crossing> {
    crossings(points).into_iter().max_by_key(|c| (c.d2, c.d1))
}

/// A threshold estimate's bootstrap uncertainty.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Bootstrap {
    /// Resamples drawn.
    pub resamples: usize,
    /// 2.5% and 97.5% quantiles of the estimate over the resamples that had one.
    pub interval: Option<(f64, f64)>,
    /// Share of resamples without any crossing.
    pub no_crossing: f64,
}

/// Redraws `k` failures of `n` shots from a binomial with the observed rate (module docs).
fn redraw(n: u64, k: u64, rng: &mut rand_xoshiro::Xoshiro256PlusPlus) -> u64 {
    use rand::Rng;
    if n == 0 {
        return 0;
    }
    let q = k as f64 / n as f64;
    if n <= 1000 {
        return (0..n).filter(|_| rng.gen::<f64>() < q).count() as u64;
    }
    let poisson = |lambda: f64, rng: &mut rand_xoshiro::Xoshiro256PlusPlus| -> u64 {
        // Knuth's product of uniforms: exact for the small means it is used for.
        let limit = (-lambda).exp();
        let (mut count, mut prod) = (0u64, rng.gen::<f64>());
        while prod > limit {
            count += 1;
            prod *= rng.gen::<f64>();
        }
        count
    };
    let (mean, rest) = (n as f64 * q, n as f64 * (1.0 - q));
    if mean < 30.0 {
        poisson(mean, rng).min(n)
    } else if rest < 30.0 {
        n - poisson(rest, rng).min(n)
    } else {
        // Box–Muller normal draw.
        let (u1, u2) = (rng.gen::<f64>().max(f64::MIN_POSITIVE), rng.gen::<f64>());
        let z = (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos();
        (mean + z * (mean * (1.0 - q)).sqrt())
            .round()
            .clamp(0.0, n as f64) as u64
    }
}

/// The bootstrap of [`threshold`] over the counts of `points` (module docs): `resamples`
/// redraws from a fixed `seed`, so the interval is reproducible.
pub fn bootstrap(points: &[Point], resamples: usize, seed: u64) -> Bootstrap {
    use rand::SeedableRng;
    let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(seed);
    let mut found = Vec::with_capacity(resamples);
    let mut copy = points.to_vec();
    for _ in 0..resamples {
        for (c, p) in copy.iter_mut().zip(points) {
            c.failures = redraw(p.shots, p.failures, &mut rng);
        }
        if let Some(t) = threshold(&copy) {
            found.push(t.p);
        }
    }
    found.sort_by(f64::total_cmp);
    let quantile = |f: f64| found[((found.len() - 1) as f64 * f).round() as usize];
    Bootstrap {
        resamples,
        interval: (!found.is_empty()).then(|| (quantile(0.025), quantile(0.975))),
        no_crossing: if resamples == 0 {
            0.0
        } else {
            1.0 - found.len() as f64 / resamples as f64
        },
    }
}

/// Fits `pL ≈ A (p/p_th)^((d+1)/2)` to the points with `p < below` (module docs). Needs points
/// of at least two distances; `None` otherwise.
pub fn scaling_fit(points: &[Point], below: f64) -> Option<ScalingFit> {
    // Normal equations of the weighted least squares for y = u − k v with u = ln A, v = ln p_th.
    let (mut s11, mut s12, mut s22, mut b1, mut b2) = (0.0, 0.0, 0.0, 0.0, 0.0);
    let mut n = 0;
    let mut ds = std::collections::BTreeSet::new();
    for pt in points {
        if pt.failures == 0 || pt.p >= below || pt.p <= 0.0 {
            continue;
        }
        let k = (pt.distance as f64 + 1.0) / 2.0;
        let y = (pt.failures as f64 / pt.shots as f64).ln() - k * pt.p.ln();
        let w = pt.failures as f64;
        // Row (1, −k).
        s11 += w;
        s12 -= w * k;
        s22 += w * k * k;
        b1 += w * y;
        b2 -= w * k * y;
        n += 1;
        ds.insert(pt.distance);
    }
    if ds.len() < 2 {
        return None;
    }
    let det = s11 * s22 - s12 * s12;
    if det.abs() < 1e-300 {
        return None;
    }
    let u = (b1 * s22 - s12 * b2) / det;
    let v = (s11 * b2 - s12 * b1) / det;
    Some(ScalingFit {
        a: u.exp(),
        p_th: v.exp(),
        points: n,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn pt(d: u32, p: f64, rate: f64) -> Point {
        let shots = 1_000_000_000u64;
        Point {
            task: format!("{d} {p}"),
            label: "l".into(),
            decoder: "mwpm".into(),
            bias: None,
            vary: Default::default(),
            noise: String::new(),
            family: "surface".into(),
            distance: d,
            rounds: d,
            p,
            shots,
            failures: (rate * shots as f64).round() as u64,
            splitting: None,
        }
    }

    #[test]
    fn exact_power_laws_give_back_their_threshold() {
        // pL = 0.1 (p/0.01)^((d+1)/2) for d = 3, 5, 7: every pair crosses at p = 0.01 exactly,
        // and the fit recovers A and p_th.
        let law = |d: u32, p: f64| 0.1 * (p / 0.01f64).powf((d as f64 + 1.0) / 2.0);
        let grid = [0.002, 0.004, 0.008, 0.012, 0.016];
        let pts: Vec<Point> = [3, 5, 7]
            .iter()
            .flat_map(|&d| grid.iter().map(move |&p| pt(d, p, law(d, p).min(1.0))))
            .collect();
        let c = crossings(&pts);
        // Every pair: 3/5, 3/7 and 5/7.
        assert_eq!(c.len(), 3);
        for x in &c {
            assert!((x.p / 0.01 - 1.0).abs() < 1e-3, "{x:?}");
        }
        assert_eq!(
            (threshold(&pts).unwrap().d1, threshold(&pts).unwrap().d2),
            (5, 7)
        );
        let fit = scaling_fit(&pts, 0.01).unwrap();
        assert!((fit.p_th / 0.01 - 1.0).abs() < 1e-3, "{fit:?}");
        assert!((fit.a / 0.1 - 1.0).abs() < 1e-2, "{fit:?}");
        assert_eq!(fit.points, 9);
    }

    /// The bootstrap interval of exact power laws with many shots is tight around the true
    /// crossing; with few shots at a crossing in the last grid interval many resamples lose it.
    #[test]
    fn bootstrap_brackets_the_crossing() {
        let law = |d: u32, p: f64| 0.1 * (p / 0.01f64).powf((d as f64 + 1.0) / 2.0);
        let grid = [0.004, 0.006, 0.008, 0.012, 0.016];
        let pts: Vec<Point> = [3, 5]
            .iter()
            .flat_map(|&d| grid.iter().map(move |&p| pt(d, p, law(d, p).min(1.0))))
            .collect();
        let b = bootstrap(&pts, 200, 1);
        let (lo, hi) = b.interval.unwrap();
        assert!(lo <= 0.01 && 0.01 <= hi && hi / lo < 1.01, "{b:?}");
        assert_eq!(b.no_crossing, 0.0);
        assert!(!threshold(&pts).unwrap().at_edge);
        // A crossing between the last two points is flagged.
        let edge: Vec<Point> = pts
            .iter()
            .filter(|p| p.p < 0.012 || p.p > 0.013)
            .cloned()
            .collect();
        let mut few = edge.clone();
        for p in &mut few {
            p.shots = 200;
            p.failures = ((law(p.distance, p.p).min(1.0)) * 200.0).round() as u64;
        }
        assert!(threshold(&edge).unwrap().at_edge);
        let b = bootstrap(&few, 300, 2);
        let (lo, hi) = b.interval.unwrap();
        assert!(b.no_crossing > 0.0 && hi / lo > 1.5, "{b:?}");
        assert_eq!(
            bootstrap(&few, 300, 2),
            b,
            "a fixed seed reproduces the interval"
        );
    }

    #[test]
    fn curves_that_never_cross_have_no_threshold() {
        let pts = vec![
            pt(3, 0.01, 0.1),
            pt(5, 0.01, 0.05),
            pt(3, 0.02, 0.2),
            pt(5, 0.02, 0.1),
        ];
        assert!(crossings(&pts).is_empty());
        assert!(threshold(&pts).is_none());
        assert_eq!(pairs(&pts)[0].result, Err(NoCrossing::Above));
        assert!(scaling_fit(&pts[..1], 1.0).is_none());
    }
}
