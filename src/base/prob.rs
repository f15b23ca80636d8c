//! Probabilities of independent events.

/// `p ⊕ q = p(1−q) + q(1−p)`: the probability that exactly one of two independent events
/// happens. It combines two independent flips of the same thing (two faults with one symptom, a
/// measurement's own flip and a noise model's), since the thing is flipped iff exactly one fires.
pub fn xor_prob(p: f64, q: f64) -> f64 {
    p * (1.0 - q) + q * (1.0 - p)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exactly_one_of_two() {
        // Two independent events: P(exactly one) = p(1-q) + q(1-p).
        assert!((xor_prob(0.1, 0.2) - (0.1 * 0.8 + 0.2 * 0.9)).abs() < 1e-15);
        assert_eq!(xor_prob(0.0, 0.3), 0.3);
        assert_eq!(xor_prob(0.3, 0.0), 0.3);
        // Two sure flips cancel.
        assert_eq!(xor_prob(1.0, 1.0), 0.0);
    }
}
