//! Code properties of the generated families, computed from the circuits themselves: the
//! stabilizers are the Pauli-product measurements of the first round of a `--style product`
//! circuit and the logical operator is the product of the final single-qubit measurements in
//! the observable. Nothing here reads the generator's tables; data qubits are matched by their
//! coordinates only.

use std::collections::{BTreeMap, BTreeSet};

use slant::base::{Pauli, Source};
use slant::gen::{generate, Family, GenSpec, LogicalBasis, Style};
use slant::ir::{Circuit, OpKind};

/// A Pauli on at most 64 data qubits: bit `k` of `x`/`z` is the X/Z part on data qubit `k`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
struct P {
    x: u64,
    z: u64,
}

impl P {
    fn commutes(self, o: P) -> bool {
        ((self.x & o.z).count_ones() + (self.z & o.x).count_ones()).is_multiple_of(2)
    }
    fn mul(self, o: P) -> P {
        P {
            x: self.x ^ o.x,
            z: self.z ^ o.z,
        }
    }
    fn weight(self) -> u32 {
        (self.x | self.z).count_ones()
    }
    fn key(self) -> u128 {
        self.x as u128 | (self.z as u128) << 64
    }
    fn single(k: usize, p: Pauli) -> P {
        P {
            x: u64::from(p.has_x()) << k,
            z: u64::from(p.has_z()) << k,
        }
    }
}

/// A GF(2) row-reduced basis of Pauli vectors (phases ignored).
#[derive(Default)]
struct Span {
    rows: Vec<u128>,
}

impl Span {
    fn reduce(&self, mut v: u128) -> u128 {
        for &r in &self.rows {
            let lead = 127 - r.leading_zeros();
            if v >> lead & 1 == 1 {
                v ^= r;
            }
        }
        v
    }
    fn insert(&mut self, v: u128) -> bool {
        let v = self.reduce(v);
        if v == 0 {
            return false;
        }
        // Keep rows sorted by leading bit, highest first, each leading bit cleared elsewhere.
        let lead = 127 - v.leading_zeros();
        for r in &mut self.rows {
            if *r >> lead & 1 == 1 {
                *r ^= v;
            }
        }
        self.rows.push(v);
        self.rows
            .sort_unstable_by(|a, b| b.leading_zeros().cmp(&a.leading_zeros()).reverse());
        true
    }
    fn contains(&self, v: u128) -> bool {
        self.reduce(v) == 0
    }
}

/// A stabilizer code read off a product-style circuit.
struct Code {
    /// Data qubit coordinates, by data index.
    coords: Vec<(i64, i64)>,
    stabs: Vec<P>,
    logical: P,
    span: Span,
}

impl Code {
    fn n(&self) -> usize {
        self.coords.len()
    }

    fn from_circuit(c: &Circuit) -> Code {
        let data: Vec<usize> = (0..c.qubits.len())
            .filter(|&q| c.qubits[q].has_role("data"))
            .collect();
        assert!(data.len() <= 64);
        let index: BTreeMap<usize, usize> = data.iter().enumerate().map(|(k, &q)| (q, k)).collect();
        let coords = data
            .iter()
            .map(|&q| {
                let xy = &c.qubits[q].coords;
                (xy[0] as i64, xy[1] as i64)
            })
            .collect();
        let to_p = |op: &slant::ir::Op| {
            op.targets
                .iter()
                .zip(&op.paulis)
                .fold(P { x: 0, z: 0 }, |acc, (&t, &p)| {
                    acc.mul(P::single(index[&(t as usize)], p))
                })
        };
        let mut stabs = Vec::new();
        let mut by_record = BTreeMap::new();
        for layer in &c.layers {
            for op in &layer.ops {
                if let OpKind::Measure { record, .. } = op.kind {
                    by_record.insert(record, to_p(op));
                    if layer.round == Some(0) {
                        stabs.push(to_p(op));
                    }
                }
            }
        }
        assert_eq!(c.observables.len(), 1);
        let logical = c.observables[0]
            .records
            .iter()
            .fold(P { x: 0, z: 0 }, |acc, r| acc.mul(by_record[r]));
        let mut span = Span::default();
        for s in &stabs {
            span.insert(s.key());
        }
        Code {
            coords,
            stabs,
            logical,
            span,
        }
    }

    fn is_logical(&self, p: P) -> bool {
        self.stabs.iter().all(|s| s.commutes(p)) && !self.span.contains(p.key())
    }

    /// The least weight of a nontrivial logical operator whose single-qubit factors are drawn
    /// from `allowed`, by exhaustive search in order of weight (up to `max`).
    fn min_logical(&self, allowed: &[Pauli], max: usize) -> Option<usize> {
        let n = self.n();
        for w in 1..=max.min(n) {
            let mut found = false;
            combinations(n, w, &mut |set| {
                if found {
                    return;
                }
                let mut digits = vec![0usize; w];
                loop {
                    let p = set
                        .iter()
                        .zip(&digits)
                        .fold(P { x: 0, z: 0 }, |acc, (&q, &d)| {
                            acc.mul(P::single(q, allowed[d]))
                        });
                    if self.is_logical(p) {
                        found = true;
                        return;
                    }
                    // Next assignment of Paulis to the chosen qubits.
                    let mut k = 0;
                    while k < w {
                        digits[k] += 1;
                        if digits[k] < allowed.len() {
                            break;
                        }
                        digits[k] = 0;
                        k += 1;
                    }
                    if k == w {
                        break;
                    }
                }
            });
            if found {
                return Some(w);
            }
        }
        None
    }

    /// The data Pauli at coordinate `(x, y)`.
    fn at(&self, p: P, xy: (i64, i64)) -> Pauli {
        let k = self.coords.iter().position(|&c| c == xy).unwrap();
        Pauli::from_bits(p.x >> k & 1 == 1, p.z >> k & 1 == 1)
    }

    /// `p` as a map coordinate → Pauli, for comparing codes whose data are numbered differently.
    fn by_coords(&self, p: P) -> BTreeMap<(i64, i64), Pauli> {
        self.coords
            .iter()
            .map(|&xy| (xy, self.at(p, xy)))
            .filter(|e| e.1 != Pauli::I)
            .collect()
    }
}

/// Calls `f` with every `w`-subset of `0..n` in lexicographic order.
fn combinations(n: usize, w: usize, f: &mut dyn FnMut(&[usize])) {
    fn rec(start: usize, n: usize, w: usize, cur: &mut Vec<usize>, f: &mut dyn FnMut(&[usize])) {
        if cur.len() == w {
            f(cur);
            return;
        }
        for q in start..=n - (w - cur.len()) {
            cur.push(q);
            rec(q + 1, n, w, cur, f);
            cur.pop();
        }
    }
    rec(0, n, w, &mut Vec::new(), f);
}

fn product_code(
    family: Family,
    dx: u32,
    dz: u32,
    basis: Option<LogicalBasis>,
    periodic: bool,
) -> Code {
    let mut s = GenSpec::new(family, dz);
    s.dx = dx;
    s.rounds = 1;
    s.style = Some(Style::Product);
    s.basis = basis;
    s.periodic = periodic;
    let text = generate(&s).unwrap();
    let c = crate::support::load("code.slant", &text);
    Code::from_circuit(&c)
}

/// Stabilizers commute, the observable is a logical operator, and `k = n - rank`.
fn assert_stabilizer_code(code: &Code, k: usize) {
    for (a, s) in code.stabs.iter().enumerate() {
        for t in &code.stabs[a + 1..] {
            assert!(s.commutes(*t), "stabilizers {s:?} and {t:?} anticommute");
        }
    }
    assert!(
        code.is_logical(code.logical),
        "observable is not a nontrivial logical"
    );
    assert_eq!(
        code.n() - code.span.rows.len(),
        k,
        "number of logical qubits"
    );
}

const ANY: [Pauli; 3] = [Pauli::X, Pauli::Y, Pauli::Z];

/// Rotated surface code parameters [[d², 1, d]] ("Optimal resources for topological
/// two-dimensional stabilizer codes", PRA 76, 012305 (2007)), distance by exhaustive search.
#[test]
fn rotated_surface_code_is_d2_1_d() {
    for d in [3usize, 5] {
        for basis in [LogicalBasis::Z, LogicalBasis::X] {
            let code = product_code(Family::Surface, d as u32, d as u32, Some(basis), false);
            assert_eq!(code.n(), d * d);
            assert_stabilizer_code(&code, 1);
            assert_eq!(code.logical.weight() as usize, d);
            let pure = if basis == LogicalBasis::Z {
                code.logical.x
            } else {
                code.logical.z
            };
            assert_eq!(pure, 0, "a CSS memory stores a pure {basis:?} logical");
        }
        let code = product_code(Family::Surface, d as u32, d as u32, None, false);
        assert_eq!(
            code.min_logical(&ANY, d),
            Some(d),
            "distance of the d = {d} patch"
        );
    }
}

/// Rectangular patches: X-type distance = rows (`--dx`), Z-type distance = columns (`--dz`),
/// overall distance the smaller (same source as above: the planar code's distances are the
/// lengths of the two boundary-to-boundary strings).
#[test]
fn rectangular_surface_code_distances() {
    for (dx, dz) in [(3usize, 5usize), (5, 3)] {
        let code = product_code(Family::Surface, dx as u32, dz as u32, None, false);
        assert_eq!(code.n(), dx * dz);
        assert_stabilizer_code(&code, 1);
        assert_eq!(code.min_logical(&[Pauli::X], 6), Some(dx));
        assert_eq!(code.min_logical(&[Pauli::Z], 6), Some(dz));
        assert_eq!(code.min_logical(&ANY, 3), Some(dx.min(dz)));
    }
}

/// XZZX = the CSS code conjugated by Hadamards on alternating data qubits ("The XZZX surface
/// code", Nat. Commun. 12, 2172 (2021)): conjugate the generated CSS stabilizers and logical on
/// a checkerboard of data (by coordinates) and compare with the generated XZZX ones.
#[test]
fn xzzx_is_the_hadamard_conjugated_css_code() {
    for (dx, dz) in [(3u32, 3u32), (5, 5), (3, 5), (5, 3)] {
        for basis in [LogicalBasis::Z, LogicalBasis::X] {
            let css = product_code(Family::Surface, dx, dz, Some(basis), false);
            let xzzx = product_code(Family::Xzzx, dx, dz, Some(basis), false);
            assert_stabilizer_code(&xzzx, 1);
            let conj = |p: P| -> BTreeMap<(i64, i64), Pauli> {
                css.by_coords(p)
                    .into_iter()
                    .map(|((x, y), q)| {
                        let flip = ((x - 1) / 2 + (y - 1) / 2) % 2 == 1;
                        let q = match (flip, q) {
                            (true, Pauli::X) => Pauli::Z,
                            (true, Pauli::Z) => Pauli::X,
                            (_, q) => q,
                        };
                        ((x, y), q)
                    })
                    .collect()
            };
            let want: BTreeSet<_> = css.stabs.iter().map(|&s| conj(s)).collect();
            let got: BTreeSet<_> = xzzx.stabs.iter().map(|&s| xzzx.by_coords(s)).collect();
            assert_eq!(want, got, "{dx}×{dz}");
            assert_eq!(conj(css.logical), xzzx.by_coords(xzzx.logical));
            // Every weight-four check reads X Z Z X in nw, ne, sw, se order.
            for s in &xzzx.stabs {
                let m = xzzx.by_coords(*s);
                if m.len() == 4 {
                    let (x0, y0) = *m.keys().min().unwrap();
                    let order = [(x0, y0), (x0 + 2, y0), (x0, y0 + 2), (x0 + 2, y0 + 2)];
                    let ps: Vec<Pauli> = order.iter().map(|c| m[c]).collect();
                    assert_eq!(ps, [Pauli::X, Pauli::Z, Pauli::Z, Pauli::X]);
                }
            }
        }
    }
    let code = product_code(Family::Xzzx, 3, 3, None, false);
    assert_eq!(code.min_logical(&ANY, 3), Some(3));
}

/// XZZX on a co-prime torus: one logical qubit, and the only pure-Z logical is Z on every data
/// qubit ("The XZZX surface code", Nat. Commun. 12, 2172 (2021); recalled from memory, hence the
/// exhaustive search over all 2^n Z-type operators here). The stored observable anticommutes
/// with it, so pure-Z logical failures are visible.
#[test]
fn coprime_torus_has_one_qubit_and_z_distance_n() {
    for (dx, dz) in [(3u32, 2u32), (4, 3), (3, 4), (5, 3), (5, 4)] {
        let code = product_code(Family::Xzzx, dx, dz, None, true);
        let n = code.n();
        assert_eq!(n, (dx * dz) as usize);
        assert_stabilizer_code(&code, 1);
        let mut min = None;
        for z in 1u64..1 << n {
            let p = P { x: 0, z };
            if code.is_logical(p) {
                min = Some(min.map_or(z.count_ones(), |m: u32| m.min(z.count_ones())));
            }
        }
        assert_eq!(min, Some(n as u32), "{dz}×{dx} torus");
        let all_z = P {
            x: 0,
            z: (1u64 << n) - 1,
        };
        assert!(code.is_logical(all_z));
        assert!(!code.logical.commutes(all_z));
    }
}

/// Repetition codes: the bit-flip code corrects d - 1 over 2 bit flips (X distance d), the
/// phase-flip code the same for Z; one logical qubit each.
#[test]
fn repetition_codes_have_distance_d_against_their_flip() {
    for d in [3usize, 5] {
        let bit = product_code(
            Family::Repetition,
            d as u32,
            d as u32,
            Some(LogicalBasis::Z),
            false,
        );
        assert_stabilizer_code(&bit, 1);
        assert_eq!(bit.min_logical(&[Pauli::X], d), Some(d));
        let mut s = GenSpec::new(Family::Repetition, d as u32);
        s.flip = Some(slant::gen::Flip::Z);
        s.style = Some(Style::Product);
        s.rounds = 1;
        let c =
            slant::ir::load_source(&Source::new("r.slant", generate(&s).unwrap()), &[]).unwrap();
        let phase = Code::from_circuit(&c);
        assert_stabilizer_code(&phase, 1);
        assert_eq!(phase.min_logical(&[Pauli::Z], d), Some(d));
    }
}
