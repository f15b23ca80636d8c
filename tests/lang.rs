//! The language front end: the bad-input catalogue, the `check` and `fmt` subcommands end to
//! end, and determinism checked against the sampler (the printer and the grammar samples are in
//! `printer.rs`).

use crate::support::{run_cli, try_load};
use proptest::prelude::*;
use slant::base::Source;

/// Asserts that `text` is rejected with a first diagnostic whose message contains `message` and
/// whose primary location is `line:col`.
fn rejects(text: &str, message: &str, line: usize, col: usize) {
    rejects_with(text, &[], message, line, col);
}

fn rejects_with(text: &str, sets: &[(String, i64)], message: &str, line: usize, col: usize) {
    let errs = match slant::ir::load_source(&Source::new("t.slant", text), sets) {
        Ok(_) => panic!("accepted but should reject with `{message}`:\n{text}"),
        Err(e) => e,
    };
    let d = &errs[0];
    assert!(
        d.message.contains(message),
        "message `{}` lacks `{message}`\n{}",
        d.message,
        d.render()
    );
    let (_, l, c) = d.location().expect("located");
    assert_eq!(
        (l, c),
        (line, col),
        "location of `{}`\n{}",
        d.message,
        d.render()
    );
}

// ---- the bad-input catalogue ------------------------------------------------------------------

#[test]
fn unknown_gate_with_suggestion() {
    let errs = try_load("t.slant", "qubit a\nqubit b\nczz a b\n").unwrap_err();
    assert_eq!(errs[0].message, "unknown statement or gate `czz`");
    assert_eq!(errs[0].hint.as_deref(), Some("did you mean `cz`?"));
    rejects(
        "qubit a\nqubit b\nczz a b\n",
        "unknown statement or gate",
        3,
        1,
    );
}

#[test]
fn upper_case_gate_gets_a_hint() {
    let errs = try_load("t.slant", "qubit a\nH a\n").unwrap_err();
    assert_eq!(
        errs[0].hint.as_deref(),
        Some("names are lower-case: `H` → `h`")
    );
}

/// Every diagnostic of `text`, rendered as the user sees them, one after another.
fn rendered(text: &str) -> String {
    try_load("t.slant", text)
        .unwrap_err()
        .iter()
        .map(|d| d.render())
        .collect()
}

#[test]
fn upper_case_statement_names_the_lower_case_statement() {
    // `M` is no typo of a one-letter gate: it stands for `measure`.
    assert_eq!(
        rendered("qubit a\nM z a -> m\n"),
        "error: unknown statement or gate `M`\n  --> t.slant:2:1\n  |\n2 | M z a -> m\n  \
         | ^\n  = hint: names are lower-case: `M` → `measure`\n"
    );
    assert_eq!(
        rendered("qubit a\nqubit b\nCX a b\n"),
        "error: unknown statement or gate `CX`\n  --> t.slant:3:1\n  |\n3 | CX a b\n  \
         | ^^\n  = hint: names are lower-case: `CX` → `cx`\n"
    );
}

#[test]
fn named_detector_in_a_loop_gets_an_index_hint() {
    let text = "qubit a\nfor r in 0..3 {\n    measure z a -> m[r]\n    \
                detector flagged = m[r]\n}\n";
    assert_eq!(
        rendered(text),
        "error: detector `flagged` is declared again on the next iteration of its loop\n  \
         --> t.slant:4:14\n  |\n4 |     detector flagged = m[r]\n  |              ^^^^^^^\n  \
         = hint: each iteration declares a new detector; index its name by the loop variable: \
         `detector flagged[r] ...`\n"
    );
}

#[test]
fn a_refused_measurement_is_reported_once() {
    // `q[5]` does not exist: the measurement is refused, and the detectors that use its results
    // get no "undefined result" errors of their own.
    let text = "qubit q[0..3]\nmeasure z q[5] -> m\ndetector = m\ndetector = m\n";
    let all = rendered(text);
    assert_eq!(all.matches("error:").count(), 1, "{all}");
    assert!(
        all.starts_with("error: index out of range: qubit `q[5]` is not declared"),
        "{all}"
    );
}

#[test]
fn non_deterministic_observable_gets_an_observable_hint() {
    assert_eq!(
        rendered("qubit a\nh a\nmeasure z a -> m\nobservable logical = m\n"),
        "error: observable `logical` is not deterministic: without noise its value is random\n  \
         --> t.slant:4:1\n  |\n4 | observable logical = m\n  | ^^^^^^^^^^^^^^^^^^^^^^\n  \
         --> t.slant:1:7\n  |\n1 | qubit a\n  |       ^ randomised by the initial |0> state \
         of `a`\n  = hint: an observable is the parity of results that read out one logical \
         operator: measure its qubits in the basis it was prepared in, and include every qubit \
         of the logical\n"
    );
}

#[test]
fn pauli_with_one_and_two_qubit_keys_is_refused_at_the_key() {
    assert_eq!(
        rendered("qubit a\nqubit b\nnoise pauli zz=0.01 x=0.02 a b\n"),
        "error: `pauli` mixes two-qubit keys with the one-qubit key `x`\n  --> t.slant:3:21\n  \
         |\n3 | noise pauli zz=0.01 x=0.02 a b\n  |                     ^\n  = hint: one channel \
         acts on one qubit (`x= y= z=`) or on a pair (`ix= … zz=`); write two `noise pauli` \
         statements\n"
    );
}

#[test]
fn wrong_arity_two_qubit() {
    rejects(
        "qubit a\nqubit b\nqubit c\ncx a b c\n",
        "`cx` acts on 2 qubits but this group has 3",
        4,
        4,
    );
}

#[test]
fn wrong_arity_one_qubit() {
    rejects(
        "qubit a\nqubit b\nh a b\n",
        "`h` acts on 1 qubit but this group has 2",
        3,
        3,
    );
}

#[test]
fn qubit_twice_in_layer() {
    rejects(
        "qubit a\nlayer { h a; x a }\n",
        "qubit `a` is used twice in one layer",
        2,
        16,
    );
}

#[test]
fn qubit_twice_in_one_gate() {
    rejects(
        "qubit a\ncx a a\n",
        "qubit `a` is used twice in one layer",
        2,
        6,
    );
}

#[test]
fn undefined_qubit() {
    rejects("qubit alpha\nh alpah\n", "undefined qubit `alpah`", 2, 3);
    let errs = try_load("t.slant", "qubit alpha\nh alpah\n").unwrap_err();
    assert_eq!(errs[0].hint.as_deref(), Some("did you mean `alpha`?"));
}

#[test]
fn undefined_result() {
    rejects(
        "qubit a\nmeasure z a -> m\ndetector = mm\n",
        "undefined result `mm`",
        3,
        12,
    );
}

#[test]
fn result_of_a_later_iteration() {
    let text =
        "qubit a\nfor r in 0..3 {\n    measure z a -> m[r]\n    detector = m[r] ^ m[r + 1]\n}\n";
    rejects(text, "result `m[1]` is used before it is measured", 4, 23);
}

#[test]
fn index_out_of_range() {
    rejects(
        "qubit q[0..3]\nh q[3]\n",
        "index out of range: qubit `q[3]` is not declared",
        2,
        3,
    );
}

#[test]
fn duplicate_qubit() {
    let errs = try_load("t.slant", "qubit a\nqubit a\n").unwrap_err();
    assert_eq!(errs[0].secondary[0].text, "first declared here");
    rejects("qubit a\nqubit a\n", "qubit `a` is declared twice", 2, 7);
}

#[test]
fn duplicate_result() {
    rejects(
        "qubit a\nmeasure z a -> m\nmeasure z a -> m\n",
        "result `m` is measured twice",
        3,
        16,
    );
}

#[test]
fn probability_out_of_range() {
    rejects(
        "qubit a\nnoise dephasing p=1.5 a\n",
        "probability `1.5` is outside [0, 1]",
        2,
        19,
    );
}

#[test]
fn channel_sum_above_one() {
    rejects(
        "qubit a\nnoise pauli x=0.6 z=0.6 a\n",
        "sum to 1.2, above 1",
        2,
        1,
    );
}

#[test]
fn malformed_number() {
    rejects(
        "qubit a\nnoise dephasing p=1e a\n",
        "malformed number `1e`",
        2,
        19,
    );
    rejects(
        "qubit a\nnoise dephasing p=.5 a\n",
        "malformed number",
        2,
        19,
    );
}

#[test]
fn unterminated_block() {
    rejects("qubit a\nlayer {\n    h a\n", "unterminated block", 2, 7);
}

#[test]
fn unexpected_closing_brace() {
    rejects(
        "qubit a\nh a\n}\n",
        "unexpected `}` with no open block",
        3,
        1,
    );
}

#[test]
fn loop_past_the_size_limit() {
    // 10^10 lone `h a`: a layer, an operation and its target each.
    let text = "qubit a\nfor i in 0..100000 {\n    for j in 0..100000 {\n        h a\n    }\n}\n";
    rejects(
        text,
        "this loop would expand to about 60000000000 items",
        2,
        1,
    );
}

#[test]
fn size_limit_is_configurable_on_the_command_line() {
    use slant::ir::cost;
    let text = "param n = 50\nqubit q[0..n]\nfor k in 0..n {\n    h q[k]\n}\n";
    // The count is exact: 50 qubits and 50 lone single-target gates.
    let items = 50 * cost::QUBIT + 50 * (cost::LAYER + cost::OP + cost::TARGET);
    let (code, _, err) = run_cli(&["check", "-", "--max-items", "60"], Some(text));
    assert_eq!(code, 1);
    assert!(err.contains("past the limit of 60"), "{err}");
    assert!(err.contains("--max-items"), "{err}");
    let below = (items - 1).to_string();
    let (code, _, err) = run_cli(&["check", "-", "--max-items", &below], Some(text));
    assert_eq!(code, 1);
    assert!(
        err.contains(&format!("the circuit would expand to about {items} items")),
        "{err}"
    );
    let (code, _, err) = run_cli(
        &["check", "-", "--max-items", &items.to_string()],
        Some(text),
    );
    assert_eq!(code, 0, "{err}");
}

/// Refused by the up-front count (a "would" message at `line:col`) under `--max-items max`,
/// with the hint, through the binary.
fn refused_up_front(text: &str, max: u64, message: &str, location: &str) {
    let (code, _, err) = run_cli(&["check", "-", "--max-items", &max.to_string()], Some(text));
    assert_eq!(code, 1, "{err}");
    assert!(err.contains(message), "{err}");
    assert!(err.contains(&format!("--> -:{location}\n")), "{err}");
    assert!(err.contains("raise the limit with `--max-items`"), "{err}");
}

#[test]
fn size_limit_counts_targets_terms_and_records() {
    // Once only statements were counted, so each of these passed as a few hundred items.
    // 100 gates of 100 targets each.
    refused_up_front(
        "qubit q[0..100]\nfor i in 0..100 { h q[0..100] }\n",
        5000,
        "this loop would expand to about 10500 items, past the limit of 5000",
        "2:1",
    );
    // 100 detectors of 20 terms each.
    refused_up_front(
        "qubit a\nfor k in 0..20 { measure z a -> m[k] }\nfor i in 0..100 { detector = m[0..20] }\n",
        1500,
        "this loop would expand to about 2400 items, past the limit of 1500",
        "3:1",
    );
    // One statement naming a million qubits.
    refused_up_front(
        "qubit q[0..1000, 0..1000]\n",
        100,
        "this statement would expand to about 4000000 items, past the limit of 100",
        "1:1",
    );
    // A loop that builds nothing still takes time: its iterations count as steps.
    refused_up_front(
        "qubit a\nfor i in 0..1000000000000 { }\n",
        1000,
        "this loop would run about 1000000000000 steps",
        "2:1",
    );
}

#[test]
fn size_limit_sees_loops_whose_bounds_depend_on_outer_variables() {
    // The inner bound depends on `i`: this once slipped past the up-front estimate and was
    // only refused by the running count, after building everything up to the limit.
    refused_up_front(
        "qubit a\nfor i in 0..100 {\n    for j in 0..i { h a }\n}\n",
        10000,
        "this loop would expand to at least",
        "2:1",
    );
    // So does a condition on the loop variable. This one is counted in stretches of one
    // period (every other iteration builds a lone `h a`: 6 items), so the count is exact,
    // not a lower bound from a walk cut short.
    refused_up_front(
        "qubit a\nfor i in 0..1000000 {\n    if i % 2 == 0 { h a }\n}\n",
        10000,
        "this loop would expand to about 3000000 items",
        "2:1",
    );
    // Within the limit, the walk counts exactly and the circuit loads.
    let (code, _, err) = run_cli(
        &["check", "-", "--max-items", "30000"],
        Some("qubit a\nfor i in 0..100 {\n    for j in 0..i { h a }\n}\n"),
    );
    assert_eq!(code, 0, "{err}");
}

#[test]
fn default_limit_refuses_memory_bombs_at_once() {
    // Each of these once loaded (using 0.8 to 8 GB) or was refused only after tens of
    // seconds. Under the default limit they are refused before anything is built.
    for (text, location) in [
        ("qubit a\nfor i in 0..19000000 { h a }\n", "2:1"),
        (
            "qubit q[0..10000]\nfor i in 0..20000 { h q[0..10000] }\n",
            "2:1",
        ),
        (
            "qubit a\nfor k in 0..2000 { measure z a -> m[k] }\n\
             for i in 0..100000 { detector = m[0..2000] }\n",
            "3:1",
        ),
        (
            "qubit a\nfor i in 0..7000 {\n    for j in 0..i { h a }\n}\n",
            "2:1",
        ),
    ] {
        let start = std::time::Instant::now();
        let (code, _, err) = run_cli(&["check", "-"], Some(text));
        assert_eq!(code, 1, "{err}");
        assert!(err.contains("past the limit of 20000000"), "{err}");
        assert!(err.contains(&format!("--> -:{location}\n")), "{err}");
        // Not a timing test: a generous bound that only a runaway expansion would miss.
        assert!(start.elapsed().as_secs() < 20, "{text}");
    }
}

#[test]
fn override_of_unknown_parameter() {
    let sets = vec![("distanse".to_string(), 5)];
    let errs = slant::ir::load_source(&Source::new("t", "param distance = 3\nqubit a\n"), &sets)
        .unwrap_err();
    assert_eq!(
        errs[0].message,
        "`--set distanse=...` names no parameter of this circuit"
    );
    assert_eq!(errs[0].hint.as_deref(), Some("did you mean `distance`?"));
}

#[test]
fn override_of_a_generator_option_names_the_parameters() {
    // Generated rotated patches take `dx` and `dz`, not the generator's `--distance`.
    let text = "param dx = 3\nparam dz = 3\nparam rounds = 3\nqubit a\n";
    for name in ["distanse", "distance", "Distance"] {
        let sets = vec![(name.to_string(), 5)];
        let errs = slant::ir::load_source(&Source::new("t", text), &sets).unwrap_err();
        assert_eq!(
            errs[0].message,
            format!("`--set {name}=...` names no parameter of this circuit")
        );
        assert_eq!(
            errs[0].hint.as_deref(),
            Some(
                "did you mean `dx` and `dz`? this circuit takes its two distances separately: \
                 `--set dx=5 --set dz=5`"
            ),
            "{name}"
        );
    }
    // A close name still gets the plain suggestion, whatever its case.
    let sets = vec![("ROUNDS".to_string(), 2)];
    let errs = slant::ir::load_source(&Source::new("t", text), &sets).unwrap_err();
    assert_eq!(errs[0].hint.as_deref(), Some("did you mean `rounds`?"));
    // Through the binary: a circuit that does not take the name is rejected input (exit 1).
    let (code, _, err) = run_cli(&["check", "-", "--set", "distanse=5"], Some(text));
    assert_eq!(code, 1);
    assert!(err.contains("did you mean `dx` and `dz`?"), "{err}");
}

#[test]
fn malformed_set_is_a_usage_error() {
    // A setting that could never name a parameter is a bad flag: exit 2, before reading input.
    for (set, message) in [
        ("=3", "give the parameter's name before `=`"),
        (" =3", "give the parameter's name before `=`"),
        ("3x=1", "`3x` is not a parameter name"),
        ("a b=1", "`a b` is not a parameter name"),
        ("rounds", "expected NAME=INT"),
        ("rounds=x", "`x` is not an integer"),
    ] {
        let (code, _, err) = run_cli(&["check", "-", "--set", set], Some("qubit a\n"));
        assert_eq!(code, 2, "--set {set:?}: {err}");
        assert!(err.contains(message), "--set {set:?}: {err}");
    }
    let (code, _, err) = run_cli(
        &["check", "-", "--set", "_n2=1"],
        Some("param _n2 = 0\nqubit a\n"),
    );
    assert_eq!(code, 0, "{err}");
}

#[test]
fn non_deterministic_detector_names_the_culprit() {
    let text =
        "qubit a\nqubit b\nh b\nmeasure z a -> ma\nmeasure z b -> mb\ndetector both = ma ^ mb\n";
    let errs = try_load("t.slant", text).unwrap_err();
    assert!(errs[0]
        .message
        .contains("detector `both` is not deterministic"));
    let (_, l, c) = errs[0].location().unwrap();
    assert_eq!((l, c), (6, 1));
    assert!(errs[0].secondary[0]
        .text
        .contains("initial |0> state of `b`"));
}

#[test]
fn non_deterministic_detector_from_a_measurement() {
    // The X measurement in between randomises the second Z result.
    let text =
        "qubit a\nmeasure z a -> m1\nmeasure x a -> m2\nmeasure z a -> m3\ndetector = m1 ^ m3\n";
    let errs = try_load("t.slant", text).unwrap_err();
    let label = &errs[0].secondary[0];
    assert!(
        label.text.contains("randomised by this measurement"),
        "{}",
        errs[0].render()
    );
    assert_eq!(label.source.line_col(label.span.start).0, 3);
}

#[test]
fn non_deterministic_observable() {
    rejects(
        "qubit a\nh a\nmeasure z a -> m\nobservable logical = m\n",
        "observable `logical` is not deterministic",
        4,
        1,
    );
}

#[test]
fn empty_file_is_rejected() {
    rejects("", "the circuit declares no qubits", 1, 1);
    rejects("# only a comment\n", "the circuit declares no qubits", 1, 1);
}

#[test]
fn non_utf8_bytes() {
    let err = slant::base::source_from_bytes("t.slant".into(), b"qubit a\n\xffh a\n".to_vec())
        .unwrap_err();
    assert_eq!(err.message, "the file is not valid UTF-8");
    assert_eq!(err.location().map(|l| (l.1, l.2)), Some((2, 1)));
}

#[test]
fn byte_order_mark_is_skipped() {
    // Some Windows editors start UTF-8 files with U+FEFF; it is not part of the circuit.
    let text = "\u{feff}qubit a\nh a\n";
    let (code, out, err) = run_cli(&["check", "-"], Some(text));
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("qubits        1"), "{out}");
    // Locations count from the character after the mark.
    let (code, _, err) = run_cli(&["check", "-"], Some("\u{feff}czz a\n"));
    assert_eq!(code, 1);
    assert!(err.contains("--> -:1:1\n"), "{err}");
    // Bytes that are not UTF-8 are still located in the text after the mark.
    let err = slant::base::source_from_bytes(
        "t.slant".into(),
        b"\xef\xbb\xbfqubit a\n\xffh a\n".to_vec(),
    )
    .unwrap_err();
    assert_eq!(err.location().map(|l| (l.1, l.2)), Some((2, 1)));
    // The canonical form has no mark: `fmt` drops it and `fmt --check` flags it.
    let (code, out, _) = run_cli(&["fmt", "-"], Some(text));
    assert_eq!((code, out.as_str()), (0, "qubit a\nh a\n"));
    let (code, _, _) = run_cli(&["fmt", "--check", "-"], Some(text));
    assert_eq!(code, 3);
    // Anywhere but the start it is an ordinary character, refused with a location.
    let (code, _, err) = run_cli(&["check", "-"], Some("qubit a\n\u{feff}h a\n"));
    assert_eq!(code, 1);
    assert!(err.contains("-:2:1"), "{err}");
    assert!(err.contains("the invisible character U+FEFF"), "{err}");
}

#[test]
fn very_long_line_is_windowed() {
    let mut text = String::from("qubit a\n");
    for _ in 0..2000 {
        text.push_str("h a; ");
    }
    text.push_str("hh a\n");
    let errs = try_load("t.slant", &text).unwrap_err();
    let (_, l, c) = errs[0].location().unwrap();
    assert_eq!((l, c), (2, 10001));
    let rendered = errs[0].render();
    assert!(rendered.lines().all(|line| line.len() < 200), "{rendered}");
    assert!(
        rendered.contains("2 | ... h a;") && rendered.contains("hh a\n"),
        "{rendered}"
    );
    assert!(rendered.contains("^^\n"), "{rendered}");
}

#[test]
fn deep_nesting_is_refused() {
    let mut text = String::from("qubit a\n");
    for _ in 0..100 {
        text.push_str("if 1 {\n");
    }
    rejects(&text, "nests deeper than 64 levels", 66, 6);
}

/// Runs `slant check` and `slant fmt` on `text` through the binary (whose worker thread has the
/// stack the language's bounds are sized for) and requires a located refusal, never a crash.
fn binary_rejects(text: &str, message: &str, location: &str) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("deep.slant");
    std::fs::write(&path, text).unwrap();
    for cmd in ["check", "fmt"] {
        let (code, _, err) = run_cli(&[cmd, path.to_str().unwrap()], None);
        assert_eq!(code, 1, "`slant {cmd}` exit code; stderr:\n{err}");
        assert!(err.contains(message), "`slant {cmd}`: {err}");
        assert!(err.contains(&format!("deep.slant:{location}")), "{err}");
    }
}

#[test]
fn chains_that_recurse_are_bounded() {
    // Each of these once overflowed the stack: the parser recursed per `else if` and per prefix
    // operator, and evaluation recursed per binary operator.
    let mut chain = String::from("qubit a\nif 0 { h a }\n");
    chain.push_str(&"else if 0 { h a }\n".repeat(5000));
    binary_rejects(&chain, "more than 1000 `else if` in one chain", "1003:6");
    let minus = format!("qubit q[0..2]\nh q[{}1]\n", "-".repeat(20_000));
    binary_rejects(&minus, "more than 64 prefix operators", "2:69");
    let nots = format!("qubit a\nif {}0 {{ h a }}\n", "not ".repeat(200_000));
    binary_rejects(&nots, "more than 64 prefix operators", "2:260");
    let sum = format!("qubit q[0..2]\nh q[{}]\n", vec!["0"; 20_000].join("+"));
    binary_rejects(&sum, "more than 1000 operators in one expression", "2:2006");
    // Just inside the bounds, the same shapes are accepted.
    let mut chain = String::from("qubit a\nif 0 { h a }\n");
    chain.push_str(&"else if 0 { h a }\n".repeat(999));
    let sum = format!("qubit q[0..2]\nh q[{}]\n", vec!["0"; 1000].join("+"));
    let dir = tempfile::tempdir().unwrap();
    for (name, text) in [("chain", chain), ("sum", sum)] {
        let path = dir.path().join(format!("{name}.slant"));
        std::fs::write(&path, text).unwrap();
        for cmd in ["check", "fmt"] {
            let (code, _, err) = run_cli(&[cmd, path.to_str().unwrap()], None);
            assert_eq!(code, 0, "`slant {cmd}` on {name}: {err}");
        }
    }
}

#[test]
fn closed_pipe_ends_quietly() {
    // `slant new … | head` must not panic when the reader goes away (common practice for Unix
    // filters: die of SIGPIPE, status 128 + 13 in the shell).
    // The reader (`true`) is gone before slant writes anything.
    let script = format!(
        "( sleep 0.3; exec '{}' new repetition --distance 3 ) | true; echo \"${{PIPESTATUS[0]}}\"",
        env!("CARGO_BIN_EXE_slant")
    );
    let out = std::process::Command::new("bash")
        .args(["-c", &script])
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(!stderr.contains("panicked"), "{stderr}");
    assert_eq!(
        String::from_utf8_lossy(&out.stdout).trim(),
        "141",
        "{stderr}"
    );
}

#[test]
fn unknown_channel_and_parameter() {
    rejects(
        "qubit a\nnoise depolarising p=0.1 a\n",
        "unknown noise channel `depolarising`",
        2,
        7,
    );
    rejects(
        "qubit a\nnoise dephasing q=0.1 a\n",
        "`dephasing` takes no parameter `q`",
        2,
        17,
    );
    rejects(
        "qubit a\nnoise dephasing a\n",
        "`noise dephasing` needs `p=`",
        2,
        1,
    );
}

#[test]
fn measurement_without_result_name() {
    rejects(
        "qubit a\nmeasure z a m\n",
        "expected `->` and a result name",
        2,
        13,
    );
}

#[test]
fn missing_basis() {
    rejects(
        "qubit a\nreset a\n",
        "expected a basis `x`, `y` or `z`, found `a`",
        2,
        7,
    );
}

#[test]
fn reserved_word_as_name() {
    rejects("qubit at\n", "`at` is a reserved word", 1, 7);
}

#[test]
fn unknown_name_in_expression() {
    rejects(
        "param distance = 3\nqubit a\nfor k in 0..distanc {\n    h a\n}\n",
        "unknown name `distanc`",
        3,
        13,
    );
}

#[test]
fn division_by_zero() {
    rejects("qubit q[0..2]\nh q[1 / 0]\n", "division by zero", 2, 9);
}

#[test]
fn trailing_junk_after_statement() {
    rejects(
        "qubit a\nh a )\n",
        "expected the end of the statement, found `)`",
        2,
        5,
    );
}

#[test]
fn extending_an_undeclared_observable() {
    rejects(
        "qubit a\nmeasure z a -> m\nobservable l ^= m\n",
        "extended before it is declared",
        3,
        12,
    );
}

#[test]
fn zipped_ranges_of_different_length() {
    rejects(
        "qubit a[0..3]\nqubit b[0..2]\ncx a[0..3] b[0..2]\n",
        "different lengths (3 and 2)",
        3,
        4,
    );
}

#[test]
fn chained_comparison() {
    rejects(
        "qubit a\nif 1 < 2 < 3 {\n    h a\n}\n",
        "comparisons cannot be chained",
        2,
        10,
    );
}

#[test]
fn several_independent_errors_are_reported() {
    let errs = try_load("t.slant", "qubit a\nczz a\nh a\nmesure z a -> m\n").unwrap_err();
    assert_eq!(errs.len(), 2, "{errs:?}");
    assert_eq!(errs[1].location().map(|l| l.1), Some(4));
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 300, .. ProptestConfig::default() })]

    /// Random bytes never panic the front end.
    #[test]
    fn random_bytes_never_panic(bytes in proptest::collection::vec(any::<u8>(), 0..400)) {
        if let Ok(src) = slant::base::source_from_bytes("r".into(), bytes) {
            let _ = slant::ir::load_source(&src, &[]);
        }
    }

    /// Random edits of valid circuits never panic the front end.
    #[test]
    fn mutated_circuits_never_panic(pos in 0usize..2000, len in 0usize..8, insert in "[ -~\n]{0,6}", which in 0usize..2) {
        let base = [BELL, REPETITION][which];
        let pos = pos.min(base.len());
        let end = (pos + len).min(base.len());
        if base.is_char_boundary(pos) && base.is_char_boundary(end) {
            let text = format!("{}{}{}", &base[..pos], insert, &base[end..]);
            let _ = try_load("t.slant", &text);
            if let Ok(ast) = slant::lang::parse(&Source::new("m", text)) {
                let _ = slant::lang::print(&ast);
            }
        }
    }
}

const BELL: &str = include_str!("../circuits/bell.slant");
const REPETITION: &str = include_str!("../circuits/repetition_d3.slant");

// ---- subcommands end to end -------------------------------------------------------------------

#[test]
fn check_prints_a_summary() {
    let (code, out, err) = run_cli(
        &["check", "circuits/repetition_d3.slant", "--set", "rounds=2"],
        None,
    );
    assert_eq!(code, 0, "{err}");
    assert_eq!(
        out,
        "circuits/repetition_d3.slant: ok\n  parameters    distance=3 rounds=2\n  qubits        5 (ancilla 2, data 3)\n  layers        10 in 2 rounds\n  operations    cx 8, measure 7, reset 9\n  measurements  7\n  detectors     6 (all deterministic)\n  observables   1 (all deterministic)\n  noise         none (expected faults per shot 0.0000e0)\n  size          214 items\n"
    );
}

#[test]
fn check_json_and_stdin() {
    let (code, out, _) = run_cli(
        &["check", "-", "--json"],
        Some("qubit a\nnoise depolarizing p=0.03 a\nmeasure z a -> m flip 0.01\ndetector = m\n"),
    );
    assert_eq!(code, 0);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["detectors"], 1);
    assert_eq!(v["ok"], true);
    assert_eq!(v["noise_channels"]["depolarizing"], 1);
    assert!((v["noise_total_probability"].as_f64().unwrap() - 0.04).abs() < 1e-12);
    // A refusal is machine-readable too (and still rendered for people on stderr).
    let (code, out, err) = run_cli(&["check", "-", "--json"], Some("qubit a\nczz a\n"));
    assert_eq!(code, 1);
    assert!(err.contains("did you mean `cz`?"), "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["ok"], false);
    let e = &v["errors"][0];
    assert_eq!(e["message"], "unknown statement or gate `czz`");
    assert_eq!(
        (
            e["location"]["line"].clone(),
            e["location"]["column"].clone()
        ),
        (2.into(), 1.into())
    );
    assert_eq!(e["hint"], "did you mean `cz`?");
}

#[test]
fn record_table_maps_result_names_to_indices() {
    let c = try_load(
        "t.slant",
        "qubit q[0..2]\nfor r in 0..2 {\n  measure z q[0..2] -> m[r, 0..2]\n}\n\
         detector = m[1, 0] ^ m[0, 0]\n",
    )
    .unwrap();
    let table = c.record_table();
    assert_eq!(table.len(), 4);
    assert_eq!(table["m[0,0]"], 0);
    assert_eq!(table["m[1,1]"], 3);
    // Detector parities are stored as sorted record sets.
    assert_eq!(
        c.detectors[0].records,
        vec![table["m[0,0]"], table["m[1,0]"]]
    );
}

#[test]
fn check_exit_codes_and_rendered_error() {
    let (code, out, err) = run_cli(&["check", "-"], Some("qubit a\nczz a\n"));
    assert_eq!(code, 1);
    assert_eq!(out, "");
    assert_eq!(err, "error: unknown statement or gate `czz`\n  --> -:2:1\n  |\n2 | czz a\n  | ^^^\n  = hint: did you mean `cz`?\n");
    let (code, _, _) = run_cli(&["check"], None);
    assert_eq!(code, 2);
    let (code, _, err) = run_cli(&["check", "no/such/file.slant"], None);
    assert_eq!(code, 1);
    assert!(err.contains("cannot read `no/such/file.slant`"), "{err}");
}

#[test]
fn fmt_check_answers_no_with_code_3() {
    let (code, out, _) = run_cli(&["fmt", "--check", "-"], Some("qubit   a\n"));
    assert_eq!(code, 3);
    assert!(out.contains("not in canonical form"));
    let (code, out, _) = run_cli(&["fmt", "-"], Some("qubit   a\n"));
    assert_eq!((code, out.as_str()), (0, "qubit a\n"));
    let (code, _, _) = run_cli(&["fmt", "--check", "circuits/bell.slant"], None);
    assert_eq!(code, 0);
}

// ---- determinism: sensitivity sweep against the Pauli-frame sampler ---------------------------

/// Random small Clifford circuits with measurements, resets and random detector parities.
fn arb_random_circuit() -> impl Strategy<Value = String> {
    let op = (0u8..8, 0u32..4, 1u32..4, 0u8..3).prop_map(|(kind, a, off, basis)| {
        let b = (a + off) % 4;
        let basis = ["x", "y", "z"][basis as usize];
        match kind {
            0 => format!("h q{a}"),
            1 => format!("s q{a}"),
            2 => format!("cx q{a} q{b}"),
            3 => format!("cz q{a} q{b}"),
            4 => format!("sx q{a}"),
            5 => format!("reset {basis} q{a}"),
            6 => format!("measure {basis} q{a} * z q{b} -> M"),
            _ => format!("measure {basis} q{a} -> M"),
        }
    });
    (
        proptest::collection::vec(op, 1..14),
        proptest::collection::vec(proptest::collection::vec(0usize..64, 1..4), 1..5),
    )
        .prop_map(|(ops, parities)| {
            let mut text = String::from("qubit q0\nqubit q1\nqubit q2\nqubit q3\n");
            let mut records = 0;
            for op in ops {
                if op.contains("-> M") {
                    text += &op.replace("-> M", &format!("-> m{records}"));
                    records += 1;
                } else {
                    text += &op;
                }
                text.push('\n');
            }
            if records == 0 {
                text += "measure z q0 -> m0\n";
                records = 1;
            }
            for (k, parity) in parities.iter().enumerate() {
                let terms: Vec<String> =
                    parity.iter().map(|r| format!("m{}", r % records)).collect();
                text += &format!("detector d{k} = {}\n", terms.join(" ^ "));
            }
            text
        })
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 150, .. ProptestConfig::default() })]

    /// The determinism check (backward sensitivity sweep) and the noiseless Pauli-frame sampler
    /// (forward frames with randomised gauge) are independent implementations; they must agree
    /// on which detectors are random. A random detector stays silent in 512 shots with
    /// probability 2^-512.
    #[test]
    fn determinism_check_agrees_with_noiseless_sampling(text in arb_random_circuit()) {
        let source = Source::new("r.slant", text.clone());
        let ast = slant::lang::parse(&source).unwrap();
        let circuit = slant::ir::expand(&ast, &[], &Default::default()).unwrap();
        let flagged: Vec<bool> = match slant::ir::check(&circuit) {
            Ok(()) => vec![false; circuit.detectors.len()],
            Err(errs) => (0..circuit.detectors.len())
                .map(|k| errs.iter().any(|e| e.message.contains(&format!("detector `d{k}`"))))
                .collect(),
        };
        let mut fired = vec![false; circuit.detectors.len()];
        slant::sim::sample(&circuit, 512, 7, slant::sim::Outputs::syndromes(), |batch| {
            for (k, f) in fired.iter_mut().enumerate() {
                *f |= (0..batch.shots).any(|s| batch.get(&batch.detectors, k, s));
            }
        });
        prop_assert_eq!(&flagged, &fired, "{}", text);
        // Third opinion, from the stabilizer tableau: 64 random branches of the outcome tree
        // (each random measurement resolved by a fair coin); a random detector keeps one parity
        // in all of them with probability 2^-63.
        use rand::{Rng, SeedableRng};
        let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(5);
        let base = slant::sim::reference_run(&circuit).detectors;
        let mut varies = vec![false; circuit.detectors.len()];
        for _ in 0..64 {
            let run = slant::sim::branch_run(&circuit, || rng.gen::<bool>());
            for (v, (a, b)) in varies.iter_mut().zip(run.detectors.iter().zip(&base)) {
                *v |= a != b;
            }
        }
        prop_assert_eq!(flagged, varies, "{}", text);
    }
}
