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
//!   the two neighbouring grid points both curves share. The threshold estimate is the crossing of
//!   the two largest distances, which suffer least from finite-size drift;
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
fn cross(d1: u32, c1: &[(f64, f64)], d2: u32, c2: &[(f64, f64)]) -> Option<Crossing> {
    // Shared p values (exact equality: both come from the same grid).
    let diff: Vec<(f64, f64)> = c1
        .iter()
        .filter_map(|&(p, l1)| c2.iter().find(|x| x.0 == p).map(|&(_, l2)| (p, l2 - l1)))
        .collect();
    diff.windows(2).find_map(|w| {
        let ((p0, f0), (p1, f1)) = (w[0], w[1]);
        if f0 < 0.0 && f1 >= 0.0 {
            let (x0, x1) = (p0.ln(), p1.ln());
            let x = x0 + (x1 - x0) * (-f0) / (f1 - f0);
            Some(Crossing { d1, d2, p: x.exp() })
        } else {
            None
        }
    })
}

/// Crossings of successive distances, smallest pair first.
pub fn crossings(points: &[Point]) -> Vec<Crossing> {
    let c = curves(points);
    let ds: Vec<u32> = c.keys().copied().collect();
    ds.windows(2)
        .filter_map(|w| cross(w[0], &c[&w[0]], w[1], &c[&w[1]]))
        .collect()
}

/// The threshold estimate: the crossing of the largest pair of successive distances that cross.
pub fn threshold(points: &[Point]) -> Option<Crossing> {
    crossings(points).last().copied()
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
            distance: d,
            rounds: d,
            p,
            shots,
            failures: (rate * shots as f64).round() as u64,
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
        assert_eq!(c.len(), 2);
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
        assert!(scaling_fit(&pts[..1], 1.0).is_none());
    }
}
