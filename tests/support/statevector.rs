//! An independent dense state-vector simulator for exact statistics of small noisy circuits.
//!
//! Written for the tests only and deliberately unlike the library's simulators: it stores the
//! 2^n complex amplitudes, applies gate *matrices* (textbook definitions, Nielsen & Chuang,
//! *Quantum Computation and Quantum Information*, §4.2 and §4.3), measures Pauli products with the
//! projectors (I ± P)/2, and enumerates exhaustively every combination of noise terms (each channel
//! application branches into "nothing" and each of its terms) times every measurement branch with
//! nonzero Born probability, times every classical result flip. Summing branch probabilities gives
//! exact probabilities; nothing is sampled. Cost grows as the product of branch counts, so keep
//! circuits small (≤ 8 qubits, a few dozen channel applications at most).
//!
//! Conventions match the IR: all qubits start in |0>, qubit `q` is bit `q` of the basis index, a
//! result `true` means eigenvalue −1, resets prepare the +1 eigenstate of their basis.

#![allow(dead_code)]

use slant::base::{Basis, Gate, Pauli};
use slant::ir::{Circuit, OpKind};

#[derive(Clone, Copy, Debug, PartialEq)]
struct C {
    re: f64,
    im: f64,
}

impl C {
    const ZERO: C = C { re: 0.0, im: 0.0 };
    const ONE: C = C { re: 1.0, im: 0.0 };
    const I: C = C { re: 0.0, im: 1.0 };
    fn new(re: f64, im: f64) -> C {
        C { re, im }
    }
    fn mul(self, o: C) -> C {
        C::new(
            self.re * o.re - self.im * o.im,
            self.re * o.im + self.im * o.re,
        )
    }
    fn add(self, o: C) -> C {
        C::new(self.re + o.re, self.im + o.im)
    }
    fn sub(self, o: C) -> C {
        C::new(self.re - o.re, self.im - o.im)
    }
    fn scale(self, s: f64) -> C {
        C::new(self.re * s, self.im * s)
    }
    fn norm2(self) -> f64 {
        self.re * self.re + self.im * self.im
    }
}

type M2 = [[C; 2]; 2];

fn matrix(g: Gate) -> M2 {
    let (o, l, i) = (C::ZERO, C::ONE, C::I);
    let r = std::f64::consts::FRAC_1_SQRT_2;
    let h = C::new(0.5, 0.5);
    let hc = C::new(0.5, -0.5);
    match g {
        Gate::I => [[l, o], [o, l]],
        Gate::X => [[o, l], [l, o]],
        Gate::Y => [[o, i.scale(-1.0)], [i, o]],
        Gate::Z => [[l, o], [o, l.scale(-1.0)]],
        Gate::H => [
            [C::new(r, 0.0), C::new(r, 0.0)],
            [C::new(r, 0.0), C::new(-r, 0.0)],
        ],
        Gate::S => [[l, o], [o, i]],
        Gate::Sdg => [[l, o], [o, i.scale(-1.0)]],
        // √X = ½[[1+i, 1−i], [1−i, 1+i]].
        Gate::Sx => [[h, hc], [hc, h]],
        Gate::Sxdg => [[hc, h], [h, hc]],
        Gate::Cx | Gate::Cy | Gate::Cz | Gate::Swap => [[l, o], [o, l]],
    }
}

fn pauli_matrix(p: Pauli) -> M2 {
    match p {
        Pauli::I => matrix(Gate::I),
        Pauli::X => matrix(Gate::X),
        Pauli::Y => matrix(Gate::Y),
        Pauli::Z => matrix(Gate::Z),
    }
}

/// A pure state on `n` qubits.
#[derive(Clone, Debug)]
pub struct State {
    n: usize,
    amp: Vec<C>,
}

impl State {
    /// |0…0>.
    pub fn new(n: usize) -> State {
        let mut amp = vec![C::ZERO; 1 << n];
        amp[0] = C::ONE;
        State { n, amp }
    }

    fn apply1(&mut self, m: &M2, q: usize) {
        let bit = 1 << q;
        for i in 0..self.amp.len() {
            if i & bit == 0 {
                let (a0, a1) = (self.amp[i], self.amp[i | bit]);
                self.amp[i] = m[0][0].mul(a0).add(m[0][1].mul(a1));
                self.amp[i | bit] = m[1][0].mul(a0).add(m[1][1].mul(a1));
            }
        }
    }

    /// Controlled-U with U a 2×2 matrix.
    fn controlled(&mut self, m: &M2, c: usize, t: usize) {
        let (cb, tb) = (1 << c, 1 << t);
        for i in 0..self.amp.len() {
            if i & cb != 0 && i & tb == 0 {
                let (a0, a1) = (self.amp[i], self.amp[i | tb]);
                self.amp[i] = m[0][0].mul(a0).add(m[0][1].mul(a1));
                self.amp[i | tb] = m[1][0].mul(a0).add(m[1][1].mul(a1));
            }
        }
    }

    /// Applies a gate to one target group.
    pub fn gate(&mut self, g: Gate, t: &[u32]) {
        let a = t[0] as usize;
        match g {
            Gate::Cx => self.controlled(&matrix(Gate::X), a, t[1] as usize),
            Gate::Cy => self.controlled(&matrix(Gate::Y), a, t[1] as usize),
            Gate::Cz => self.controlled(&matrix(Gate::Z), a, t[1] as usize),
            Gate::Swap => {
                let (ab, bb) = (1 << a, 1 << t[1]);
                for i in 0..self.amp.len() {
                    if i & ab != 0 && i & bb == 0 {
                        self.amp.swap(i, i ^ ab ^ bb);
                    }
                }
            }
            _ => self.apply1(&matrix(g), a),
        }
    }

    fn pauli(&mut self, factors: &[(u32, Pauli)]) {
        for &(q, p) in factors {
            self.apply1(&pauli_matrix(p), q as usize);
        }
    }

    /// The two post-measurement states of a Pauli product with their probabilities:
    /// `[(p(+1), state), (p(−1), state)]`.
    fn project(&self, factors: &[(u32, Pauli)]) -> [(f64, State); 2] {
        let mut image = self.clone();
        image.pauli(factors);
        let branch = |sign: f64| {
            let amp: Vec<C> = self
                .amp
                .iter()
                .zip(&image.amp)
                .map(|(a, b)| a.add(b.scale(sign)).scale(0.5))
                .collect();
            let p: f64 = amp.iter().map(|a| a.norm2()).sum();
            let s = if p > 0.0 { 1.0 / p.sqrt() } else { 0.0 };
            (
                p,
                State {
                    n: self.n,
                    amp: amp.into_iter().map(|a| a.scale(s)).collect(),
                },
            )
        };
        [branch(1.0), branch(-1.0)]
    }
}

/// One atomic step of a circuit.
#[derive(Clone, Debug)]
enum Step {
    Gate(Gate, Vec<u32>),
    Measure(u32, Vec<(u32, Pauli)>, f64),
    Reset(u32, Basis),
    Noise(Vec<(f64, Vec<(u32, Pauli)>)>),
}

fn steps(circuit: &Circuit, noisy: bool) -> Vec<Step> {
    let mut out = Vec::new();
    for layer in &circuit.layers {
        for op in &layer.ops {
            match &op.kind {
                OpKind::Gate(g) => {
                    for t in op.targets.chunks(g.arity()) {
                        out.push(Step::Gate(*g, t.to_vec()));
                    }
                }
                OpKind::Measure { record, flip } => out.push(Step::Measure(
                    *record,
                    op.targets
                        .iter()
                        .copied()
                        .zip(op.paulis.iter().copied())
                        .collect(),
                    if noisy { *flip } else { 0.0 },
                )),
                OpKind::Reset(b) => {
                    for &q in &op.targets {
                        out.push(Step::Reset(q, *b));
                    }
                }
                OpKind::Noise(ch) if noisy => {
                    let groups: Vec<&[u32]> = match ch {
                        slant::ir::Channel::Joint { .. } => vec![&op.targets[..]],
                        _ => op.targets.chunks(ch.arity()).collect(),
                    };
                    for g in groups {
                        let terms = ch
                            .terms()
                            .into_iter()
                            .map(|(p, ps)| (p, g.iter().copied().zip(ps).collect()))
                            .collect();
                        out.push(Step::Noise(terms));
                    }
                }
                OpKind::Noise(_) => {}
            }
        }
    }
    out
}

/// Calls `leaf(probability, records)` for every branch of the enumeration.
fn enumerate(circuit: &Circuit, noisy: bool, leaf: &mut dyn FnMut(f64, &[bool])) {
    let steps = steps(circuit, noisy);
    let mut records = vec![false; circuit.records.len()];
    walk(
        &steps,
        0,
        State::new(circuit.qubits.len()),
        1.0,
        &mut records,
        leaf,
    );
}

const TINY: f64 = 1e-15;

fn walk(
    steps: &[Step],
    at: usize,
    mut st: State,
    w: f64,
    rec: &mut Vec<bool>,
    leaf: &mut dyn FnMut(f64, &[bool]),
) {
    let mut i = at;
    while i < steps.len() {
        match &steps[i] {
            Step::Gate(g, t) => st.gate(*g, t),
            Step::Measure(r, f, flip) => {
                for (outcome, (p, post)) in st.project(f).into_iter().enumerate() {
                    if p * w < TINY {
                        continue;
                    }
                    for (flipped, pf) in [(false, 1.0 - flip), (true, *flip)] {
                        if pf * p * w < TINY {
                            continue;
                        }
                        rec[*r as usize] = (outcome == 1) ^ flipped;
                        walk(steps, i + 1, post.clone(), w * p * pf, rec, leaf);
                    }
                }
                return;
            }
            Step::Reset(q, b) => {
                for (outcome, (p, mut post)) in
                    st.project(&[(*q, b.pauli())]).into_iter().enumerate()
                {
                    if p * w < TINY {
                        continue;
                    }
                    if outcome == 1 {
                        let fix = if *b == Basis::X { Pauli::Z } else { Pauli::X };
                        post.pauli(&[(*q, fix)]);
                    }
                    walk(steps, i + 1, post, w * p, rec, leaf);
                }
                return;
            }
            Step::Noise(terms) => {
                let total: f64 = terms.iter().map(|t| t.0).sum();
                if (1.0 - total) * w >= TINY {
                    walk(steps, i + 1, st.clone(), w * (1.0 - total), rec, leaf);
                }
                for (p, f) in terms {
                    let mut s = st.clone();
                    s.pauli(f);
                    walk(steps, i + 1, s, w * p, rec, leaf);
                }
                return;
            }
        }
        i += 1;
    }
    leaf(w, rec);
}

/// Exact statistics of a noisy circuit.
#[derive(Clone, Debug)]
pub struct Exact {
    /// Probability that each detector fires (its parity differs from the noiseless value).
    pub detectors: Vec<f64>,
    /// `pairs[i][j]`: probability that detectors `i` and `j` both fire (`pairs[i][i]` = marginal).
    pub pairs: Vec<Vec<f64>>,
    /// Probability that each observable flips.
    pub observables: Vec<f64>,
    /// Probability that each measurement result is 1.
    pub records: Vec<f64>,
    /// Total probability enumerated (1 up to rounding; a check on the enumeration).
    pub total: f64,
}

fn parity(records: &[u32], values: &[bool]) -> bool {
    records.iter().fold(false, |a, &r| a ^ values[r as usize])
}

/// Noiseless detector and observable values (they must be deterministic; panics otherwise).
pub fn noiseless_values(circuit: &Circuit) -> (Vec<bool>, Vec<bool>) {
    let mut seen: Option<(Vec<bool>, Vec<bool>)> = None;
    enumerate(circuit, false, &mut |_, rec| {
        let d: Vec<bool> = circuit
            .detectors
            .iter()
            .map(|d| parity(&d.records, rec))
            .collect();
        let o: Vec<bool> = circuit
            .observables
            .iter()
            .map(|o| parity(&o.records, rec))
            .collect();
        match &seen {
            None => seen = Some((d, o)),
            Some(s) => assert!(
                s.0 == d && s.1 == o,
                "a detector or observable is not deterministic"
            ),
        }
    });
    seen.unwrap_or_default()
}

/// Exact detector, pair, observable and record probabilities by exhaustive enumeration.
pub fn exact(circuit: &Circuit) -> Exact {
    let (d0, o0) = noiseless_values(circuit);
    let nd = circuit.detectors.len();
    let mut ex = Exact {
        detectors: vec![0.0; nd],
        pairs: vec![vec![0.0; nd]; nd],
        observables: vec![0.0; circuit.observables.len()],
        records: vec![0.0; circuit.records.len()],
        total: 0.0,
    };
    let mut fired = Vec::with_capacity(nd);
    enumerate(circuit, true, &mut |w, rec| {
        ex.total += w;
        fired.clear();
        for (k, d) in circuit.detectors.iter().enumerate() {
            if parity(&d.records, rec) != d0[k] {
                fired.push(k);
                ex.detectors[k] += w;
            }
        }
        for &a in &fired {
            for &b in &fired {
                ex.pairs[a][b] += w;
            }
        }
        for (k, o) in circuit.observables.iter().enumerate() {
            if parity(&o.records, rec) != o0[k] {
                ex.observables[k] += w;
            }
        }
        for (k, &v) in rec.iter().enumerate() {
            if v {
                ex.records[k] += w;
            }
        }
    });
    ex
}

/// Exact probability that each detector fires, and that each pair fires together.
pub fn exact_detector_stats(circuit: &Circuit) -> (Vec<f64>, Vec<Vec<f64>>) {
    let ex = exact(circuit);
    (ex.detectors, ex.pairs)
}

/// Noiseless run that resolves every random measurement to +1 (result 0): per record, the result
/// and whether it was random. The library's tableau makes the same choice, so the two must agree.
pub fn forced_run(circuit: &Circuit) -> Vec<(bool, bool)> {
    let mut out = vec![(false, false); circuit.records.len()];
    let mut st = State::new(circuit.qubits.len());
    for step in steps(circuit, false) {
        match step {
            Step::Gate(g, t) => st.gate(g, &t),
            Step::Measure(r, f, _) => {
                let [(p0, s0), (p1, s1)] = st.project(&f);
                let random = p0 > 1e-9 && p1 > 1e-9;
                if p0 > 1e-9 {
                    out[r as usize] = (false, random);
                    st = s0;
                } else {
                    out[r as usize] = (true, false);
                    st = s1;
                }
            }
            Step::Reset(q, b) => {
                let [(p0, s0), (_, mut s1)] = st.project(&[(q, b.pauli())]);
                if p0 > 1e-9 {
                    st = s0;
                } else {
                    let fix = if b == Basis::X { Pauli::Z } else { Pauli::X };
                    s1.pauli(&[(q, fix)]);
                    st = s1;
                }
            }
            Step::Noise(_) => {}
        }
    }
    out
}
