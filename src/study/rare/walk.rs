//! The state of one random walk over fault configurations: which edges of the fault graph fired,
//! the detection events and observable flips they produce, and the decoder's verdict on them.
//!
//! A configuration is a set `E` of fired edges. Toggling edge `m` XORs its detectors into the
//! detection events and its observables into the true flips; both are kept incrementally (an
//! event list with positions, so a toggle costs the edge's detector count). The configuration
//! *fails* when the decoder, given only the detection events, predicts observable flips other
//! than the true ones, or leaves an event unpaired (counted as a failure, as direct sampling
//! counts it).
//!
//! The Metropolis step ([`Walk::step`]) targets `π_t(E) = Π_{m∈E} p_m Π_{m∉E} (1 − p_m)`
//! restricted to failing configurations: it proposes toggling one edge chosen uniformly (a
//! symmetric proposal), accepts with probability `min(1, π_t(E')/π_t(E))` and then only if `E'`
//! still fails. The prior test comes first, so the decoder runs only for proposals that pass it:
//! at low noise nearly every proposal adds an edge and is refused by the prior alone.

use rand::Rng;
use rand_xoshiro::Xoshiro256PlusPlus;

use crate::decode::Decoder;
use crate::faults::FaultGraph;

/// Marks an edge or detector absent from its list.
const ABSENT: u32 = u32::MAX;

/// The symptoms of the fault graph's edges in compressed form; the same at every noise scale.
#[derive(Clone, Debug)]
pub(super) struct Symptoms {
    det_start: Vec<u32>,
    det: Vec<u32>,
    obs_start: Vec<u32>,
    obs: Vec<u32>,
    num_detectors: usize,
    num_observables: usize,
}

impl Symptoms {
    /// The symptoms of every edge of `graph`, hyperedges and silent logical errors included (the
    /// walk samples the fault graph itself, not the decoder's matchable view).
    pub fn of(graph: &FaultGraph) -> Symptoms {
        let mut s = Symptoms {
            det_start: vec![0],
            det: Vec::new(),
            obs_start: vec![0],
            obs: Vec::new(),
            num_detectors: graph.detectors.len(),
            num_observables: graph.observables.len(),
        };
        for e in &graph.edges {
            s.det.extend_from_slice(&e.detectors);
            s.det_start.push(s.det.len() as u32);
            s.obs.extend_from_slice(&e.observables);
            s.obs_start.push(s.obs.len() as u32);
        }
        s
    }

    /// Symptoms given as `(detectors, observables)` per edge (hand-made graphs, and graphs whose
    /// edges a caller already holds as lists).
    pub fn from_lists(
        num_detectors: usize,
        num_observables: usize,
        edges: &[(Vec<u32>, Vec<u32>)],
    ) -> Symptoms {
        let mut s = Symptoms {
            det_start: vec![0],
            det: Vec::new(),
            obs_start: vec![0],
            obs: Vec::new(),
            num_detectors,
            num_observables,
        };
        for (d, o) in edges {
            s.det.extend_from_slice(d);
            s.det_start.push(s.det.len() as u32);
            s.obs.extend_from_slice(o);
            s.obs_start.push(s.obs.len() as u32);
        }
        s
    }

    /// Number of edges.
    pub fn len(&self) -> usize {
        self.det_start.len() - 1
    }

    fn detectors(&self, m: usize) -> &[u32] {
        &self.det[self.det_start[m] as usize..self.det_start[m + 1] as usize]
    }

    fn observables(&self, m: usize) -> &[u32] {
        &self.obs[self.obs_start[m] as usize..self.obs_start[m + 1] as usize]
    }
}

/// Acceptance factors of the prior at one noise scale: `p/(1−p)` to add an edge and its inverse
/// to remove one, each capped at 1.
#[derive(Clone, Debug)]
pub(super) struct Odds {
    add: Vec<f64>,
    remove: Vec<f64>,
}

impl Odds {
    /// The factors of the priors `p`.
    pub fn new(p: &[f64]) -> Odds {
        let ratio = |p: f64| {
            if p >= 1.0 {
                f64::INFINITY
            } else {
                p / (1.0 - p)
            }
        };
        Odds {
            add: p.iter().map(|&p| ratio(p).min(1.0)).collect(),
            remove: p
                .iter()
                .map(|&p| {
                    if p <= 0.0 {
                        1.0
                    } else {
                        (1.0 / ratio(p)).min(1.0)
                    }
                })
                .collect(),
        }
    }
}

/// One walk: a configuration with its detection events and true observable flips.
pub(super) struct Walk<'a> {
    sym: &'a Symptoms,
    decoder: &'a dyn Decoder,
    /// Position of each edge in `fired`, or [`ABSENT`].
    fired_pos: Vec<u32>,
    fired: Vec<u32>,
    /// Position of each detector in `events`, or [`ABSENT`].
    event_pos: Vec<u32>,
    events: Vec<u32>,
    flips: Vec<bool>,
    actual: Vec<u32>,
}

impl<'a> Walk<'a> {
    /// The empty configuration.
    pub fn new(sym: &'a Symptoms, decoder: &'a dyn Decoder) -> Walk<'a> {
        Walk {
            sym,
            decoder,
            fired_pos: vec![ABSENT; sym.len()],
            fired: Vec::new(),
            event_pos: vec![ABSENT; sym.num_detectors],
            events: Vec::new(),
            flips: vec![false; sym.num_observables],
            actual: Vec::new(),
        }
    }

    /// The fired edges, in no particular order.
    pub fn fired(&self) -> &[u32] {
        &self.fired
    }

    /// Fires edge `m` if it is off, and turns it off if it fired.
    pub fn toggle(&mut self, m: usize) {
        flip_member(&mut self.fired, &mut self.fired_pos, m);
        for &d in self.sym.detectors(m) {
            flip_member(&mut self.events, &mut self.event_pos, d as usize);
        }
        for &o in self.sym.observables(m) {
            self.flips[o as usize] ^= true;
        }
    }

    /// Turns every edge off.
    pub fn clear(&mut self) {
        while let Some(&m) = self.fired.last() {
            self.toggle(m as usize);
        }
    }

    /// Sets the configuration to `edges` (each listed once).
    pub fn set(&mut self, edges: &[u32]) {
        self.clear();
        for &m in edges {
            self.toggle(m as usize);
        }
    }

    /// Whether the decoder fails on the current configuration.
    pub fn fails(&mut self) -> bool {
        let decoded = self.decoder.decode(&self.events);
        if decoded.unmatched > 0 {
            return true;
        }
        self.actual.clear();
        self.actual.extend(
            self.flips
                .iter()
                .enumerate()
                .filter(|(_, &f)| f)
                .map(|(o, _)| o as u32),
        );
        decoded.observables != self.actual
    }

    /// Draws a fresh configuration from the priors `p` (each edge fires independently), with
    /// `p_max` at least every prior. Gaps between candidate edges are geometric with `p_max`
    /// and each candidate fires with `p_m / p_max`, so a draw costs the number of candidates,
    /// not the number of edges.
    pub fn draw(&mut self, p: &[f64], p_max: f64, rng: &mut Xoshiro256PlusPlus) {
        self.clear();
        if p_max <= 0.0 {
            return;
        }
        let log_q = (-p_max).ln_1p();
        let mut m = 0usize;
        loop {
            if p_max < 1.0 {
                // Number of failures before the next success of a Bernoulli(p_max) sequence.
                let u: f64 = 1.0 - rng.gen::<f64>();
                let skip = (u.ln() / log_q).floor();
                if skip >= (p.len() - m) as f64 {
                    return;
                }
                m += skip as usize;
            }
            if m >= p.len() {
                return;
            }
            if p[m] >= p_max || rng.gen::<f64>() * p_max < p[m] {
                self.toggle(m);
            }
            m += 1;
        }
    }

    /// One Metropolis proposal under `odds`; returns whether it was accepted. The configuration
    /// must fail before the call and fails after it.
    #[inline]
    pub fn step(&mut self, odds: &Odds, rng: &mut Xoshiro256PlusPlus) -> bool {
        let m = rng.gen_range(0..self.sym.len());
        let factor = if self.fired_pos[m] == ABSENT {
            odds.add[m]
        } else {
            odds.remove[m]
        };
        if factor < 1.0 && rng.gen::<f64>() >= factor {
            return false;
        }
        self.toggle(m);
        if self.fails() {
            true
        } else {
            self.toggle(m);
            false
        }
    }
}

/// Adds `x` to the set `items` if it is absent and removes it if present, in O(1): `pos[x]` is
/// its index in `items` or `ABSENT`, and a removal moves the last item into the hole.
fn flip_member(items: &mut Vec<u32>, pos: &mut [u32], x: usize) {
    let at = pos[x];
    if at == ABSENT {
        pos[x] = items.len() as u32;
        items.push(x as u32);
    } else {
        let last = items.pop().unwrap_or(x as u32);
        if last as usize != x {
            items[at as usize] = last;
            pos[last as usize] = at;
        }
        pos[x] = ABSENT;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::decode::Decoded;
    use rand::SeedableRng;

    /// Predicts no flip: a configuration fails exactly when it flips an observable.
    struct Nothing;
    impl Decoder for Nothing {
        fn decode(&self, _events: &[u32]) -> Decoded {
            Decoded::default()
        }
    }

    fn chain_symptoms() -> Symptoms {
        // Three edges on a line of two detectors: boundary–0 (flips the observable), 0–1, 1–boundary.
        Symptoms {
            det_start: vec![0, 1, 3, 4],
            det: vec![0, 0, 1, 1],
            obs_start: vec![0, 1, 1, 1],
            obs: vec![0],
            num_detectors: 2,
            num_observables: 1,
        }
    }

    #[test]
    fn toggles_keep_events_and_flips_in_step() {
        let sym = chain_symptoms();
        let mut w = Walk::new(&sym, &Nothing);
        w.toggle(0);
        w.toggle(1);
        assert_eq!(w.events, vec![1]);
        assert!(w.fails());
        w.toggle(0);
        assert_eq!(w.events, vec![1, 0]);
        assert!(!w.fails());
        w.clear();
        assert!(w.events.is_empty() && w.fired.is_empty() && !w.flips[0]);
    }

    #[test]
    fn draws_fire_each_edge_with_its_prior() {
        let sym = chain_symptoms();
        let mut w = Walk::new(&sym, &Nothing);
        let p = [0.3, 0.05, 0.15];
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(7);
        let mut counts = [0u32; 3];
        let n = 40_000;
        for _ in 0..n {
            w.draw(&p, 0.3, &mut rng);
            for &m in w.fired() {
                counts[m as usize] += 1;
            }
        }
        for (c, p) in counts.iter().zip(p) {
            let sd = (p * (1.0 - p) / n as f64).sqrt();
            // 5 sigma binomial tolerance (common practice for seeded sampled checks).
            assert!((*c as f64 / n as f64 - p).abs() < 5.0 * sd, "{c} vs {p}");
        }
    }
}
