//! Counted nouns for reports: "1 observable", "4 detectors".

/// `n` followed by `noun`, with an `s` unless `n` is 1 (`noun` ending in `y` after a consonant
/// takes `ies`; `noun` ending in `s`, `x` or `ch` takes `es`).
pub fn count(n: usize, noun: &str) -> String {
    if n == 1 {
        return format!("1 {noun}");
    }
    format!("{n} {}", plural(noun))
}

/// The plural of an English noun of the kinds slant's reports use.
pub fn plural(noun: &str) -> String {
    let b = noun.as_bytes();
    if noun.ends_with('y') && b.len() > 1 && !b"aeiou".contains(&b[b.len() - 2]) {
        format!("{}ies", &noun[..noun.len() - 1])
    } else if noun.ends_with('s') || noun.ends_with('x') || noun.ends_with("ch") {
        format!("{noun}es")
    } else {
        format!("{noun}s")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_agree_with_their_noun() {
        assert_eq!(count(1, "observable"), "1 observable");
        assert_eq!(count(0, "observable"), "0 observables");
        assert_eq!(count(3, "hyperedge"), "3 hyperedges");
        assert_eq!(count(2, "inexact channel"), "2 inexact channels");
        assert_eq!(count(2, "boundary"), "2 boundaries");
        assert_eq!(count(2, "key"), "2 keys");
        assert_eq!(count(2, "match"), "2 matches");
    }
}
