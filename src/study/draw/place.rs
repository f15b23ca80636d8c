//! Where qubits go on the page: their coordinates (or, when asked, rows by role), the spacing
//! that sizes every mark, the outline of the data qubits, and the unwrapping of checks that reach
//! across a periodic boundary.
//!
//! Periodic lattices (a torus) carry no flag saying so; a check is unwrapped when it is far
//! larger than its neighbourhood and moving some of its qubits by one lattice period makes it
//! local (see [`Places::unwrap`]). The period of an axis is the extent of the qubits along it
//! plus the smallest gap between distinct coordinates, which is the period of any square or
//! rectangular lattice laid out from its first cell.

use std::sync::Arc;

use crate::base::{Diagnostic, Source};
use crate::ir::Circuit;

use super::model::{Placement, Point, Role};

/// Qubit places and the lattice facts derived from them.
#[derive(Clone, Debug)]
pub(super) struct Places {
    /// Place of each qubit.
    pub at: Vec<Point>,
    /// How they were found.
    pub placement: Placement,
    /// Median nearest-neighbour distance (1 when undefined).
    pub spacing: f64,
    /// Period of each axis (`None` when all qubits share the coordinate).
    periods: [Option<f64>; 2],
}

impl Places {
    /// Places from the circuit's coordinates. Without any coordinates, `rows` chooses between
    /// an error and placement in rows by role; a circuit giving coordinates to some qubits but
    /// not others is always an error (a half-placed picture would mislead).
    pub fn new(c: &Circuit, rows: bool) -> Result<Places, Diagnostic> {
        let missing = c.qubits.iter().position(|q| q.coords.is_empty());
        let any = c.qubits.iter().any(|q| !q.coords.is_empty());
        let (at, placement) = match missing {
            None => (
                c.qubits
                    .iter()
                    .map(|q| (q.coords[0], q.coords.get(1).copied().unwrap_or(0.0)))
                    .collect(),
                Placement::Coordinates,
            ),
            Some(_) if !any && rows => (rows_by_role(c), Placement::Rows),
            Some(k) => return Err(no_coordinates(&c.source, c, k, any)),
        };
        let spacing = median_nearest(&at);
        let periods = [0, 1].map(|axis| period(at.iter().map(|p| coord(*p, axis))));
        Ok(Places {
            at,
            placement,
            spacing,
            periods,
        })
    }

    /// The images of `points` seen from a check at `centre`: each point moved by at most one
    /// period per axis to its image nearest the centre, when that brings every point within two
    /// spacings of the centre and the check was larger before (a check wrapping around a
    /// torus); otherwise unchanged. An open lattice's check is already as small as it gets, so
    /// it never moves.
    pub fn unwrap(&self, centre: Point, points: &[Point]) -> Vec<Point> {
        let far = |pts: &[Point]| pts.iter().map(|&p| dist(p, centre)).fold(0.0, f64::max);
        let moved: Vec<Point> = points
            .iter()
            .map(|&p| {
                let mut q = [p.0, p.1];
                for (axis, v) in q.iter_mut().enumerate() {
                    if let Some(l) = self.periods[axis] {
                        let c = coord(centre, axis);
                        *v = [*v - l, *v, *v + l]
                            .into_iter()
                            .min_by(|a, b| (a - c).abs().total_cmp(&(b - c).abs()))
                            .unwrap_or(*v);
                    }
                }
                (q[0], q[1])
            })
            .collect();
        let (before, after) = (far(points), far(&moved));
        if after + 1e-9 < before && after <= 2.0 * self.spacing + 1e-9 {
            moved
        } else {
            points.to_vec()
        }
    }
}

fn coord(p: Point, axis: usize) -> f64 {
    if axis == 0 {
        p.0
    } else {
        p.1
    }
}

/// Euclidean distance.
pub(super) fn dist(a: Point, b: Point) -> f64 {
    ((a.0 - b.0).powi(2) + (a.1 - b.1).powi(2)).sqrt()
}

/// Data qubits in row 0, ancillas in row 1, flags and others in row 2, each in declaration
/// order; ancillas sit between the data columns.
fn rows_by_role(c: &Circuit) -> Vec<Point> {
    let mut next = [0.0f64; 3];
    c.qubits
        .iter()
        .map(|q| {
            let row = match Role::of(&q.roles) {
                Role::Data => 0,
                Role::Ancilla => 1,
                Role::Flag | Role::Other => 2,
            };
            let x = next[row] + if row == 1 { 0.5 } else { 0.0 };
            next[row] += 1.0;
            (x, row as f64)
        })
        .collect()
}

fn no_coordinates(source: &Arc<Source>, c: &Circuit, k: usize, some: bool) -> Diagnostic {
    let q = &c.qubits[k];
    if some {
        Diagnostic::error(
            source,
            q.span,
            format!(
                "qubit `{}` has no coordinates, but other qubits do; cannot place it",
                q.name
            ),
        )
        .with_hint("give every qubit a place, e.g. `qubit a at (2, 0)`")
    } else {
        Diagnostic::error(
            source,
            q.span,
            "no qubit has coordinates, so there is no layout to draw",
        )
        .with_hint(
            "give each qubit a place (`qubit a at (2, 0)`), or pass `--rows` to draw the qubits \
             in rows by role",
        )
    }
}

/// Median over qubits of the distance to the nearest other qubit at a different place; 1 when
/// there is none.
fn median_nearest(at: &[Point]) -> f64 {
    let mut d: Vec<f64> = at
        .iter()
        .enumerate()
        .filter_map(|(i, &p)| {
            at.iter()
                .enumerate()
                .filter(|&(j, &q)| j != i && dist(p, q) > 1e-9)
                .map(|(_, &q)| dist(p, q))
                .min_by(f64::total_cmp)
        })
        .collect();
    if d.is_empty() {
        return 1.0;
    }
    d.sort_by(f64::total_cmp);
    d[d.len() / 2]
}

/// Extent plus smallest gap of the distinct values (see the module docs); `None` for a single
/// value.
fn period(values: impl Iterator<Item = f64>) -> Option<f64> {
    let mut v: Vec<f64> = values.collect();
    v.sort_by(f64::total_cmp);
    v.dedup_by(|a, b| (*a - *b).abs() < 1e-9);
    let gap = v.windows(2).map(|w| w[1] - w[0]).min_by(f64::total_cmp)?;
    Some(v[v.len() - 1] - v[0] + gap)
}

/// Convex hull, counter-clockwise in a y-up frame (Andrew's monotone chain); empty for fewer
/// than three points off one line.
pub(super) fn hull(points: &[Point]) -> Vec<Point> {
    let mut p = points.to_vec();
    p.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.total_cmp(&b.1)));
    p.dedup_by(|a, b| dist(*a, *b) < 1e-9);
    if p.len() < 3 {
        return Vec::new();
    }
    let cross =
        |o: Point, a: Point, b: Point| (a.0 - o.0) * (b.1 - o.1) - (a.1 - o.1) * (b.0 - o.0);
    let mut out: Vec<Point> = Vec::with_capacity(2 * p.len());
    for pass in 0..2 {
        let start = out.len();
        let iter: Box<dyn Iterator<Item = &Point>> = if pass == 0 {
            Box::new(p.iter())
        } else {
            Box::new(p.iter().rev())
        };
        for &q in iter {
            while out.len() >= start + 2
                && cross(out[out.len() - 2], out[out.len() - 1], q) <= 1e-12
            {
                out.pop();
            }
            out.push(q);
        }
        out.pop();
    }
    if out.len() < 3 {
        Vec::new()
    } else {
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hull_of_a_square_with_its_centre() {
        let h = hull(&[(0.0, 0.0), (2.0, 0.0), (1.0, 1.0), (2.0, 2.0), (0.0, 2.0)]);
        assert_eq!(h.len(), 4);
        assert!(!h.contains(&(1.0, 1.0)));
        assert!(hull(&[(0.0, 0.0), (1.0, 0.0), (2.0, 0.0)]).is_empty());
    }

    #[test]
    fn period_of_a_lattice_row() {
        assert_eq!(period([1.0, 3.0, 5.0].into_iter()), Some(6.0));
        assert_eq!(period([4.0, 4.0].into_iter()), None);
    }
}
