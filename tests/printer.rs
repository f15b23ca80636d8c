//! The canonical printer behind `slant fmt` (round trips, layout, the library's own circuits) and
//! the samples of the grammar reference.

use crate::support::try_load;
use proptest::prelude::*;
use slant::base::Source;

// ---- canonical printer ------------------------------------------------------------------------

/// The AST's debug form with every span erased, for comparing trees parsed from different text.
fn shape(text: &str) -> String {
    let ast = slant::lang::parse(&Source::new("s", text))
        .unwrap_or_else(|e| panic!("{}\n{text}", e[0].render()));
    let dbg = format!("{:?}", ast.stmts);
    let mut out = String::with_capacity(dbg.len());
    let mut rest = dbg.as_str();
    while let Some(i) = rest.find("Span {") {
        out.push_str(&rest[..i]);
        let j = rest[i..].find('}').unwrap();
        rest = &rest[i + j + 1..];
    }
    out.push_str(rest);
    out
}

fn fmt(text: &str) -> String {
    slant::lang::print(&slant::lang::parse(&Source::new("s", text)).unwrap())
}

fn round_trip(text: &str) {
    let printed = fmt(text);
    assert_eq!(
        shape(text),
        shape(&printed),
        "tree changed by printing:\n{printed}"
    );
    assert_eq!(printed, fmt(&printed), "printing is not idempotent");
}

#[test]
fn library_circuits_are_canonical() {
    for entry in std::fs::read_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/circuits")).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_some_and(|e| e == "slant") {
            let text = std::fs::read_to_string(&path).unwrap();
            round_trip(&text);
            assert_eq!(
                fmt(&text),
                text,
                "{} is not in canonical form",
                path.display()
            );
        }
    }
}

#[test]
fn printer_normalises_layout() {
    let messy = "param  d=3 # size\nqubit q[0..d]   role data,edge\nfor k in 0 .. d by 2{\n h q[k]\n}\nif d>2 and not d==4{ x q[0] }else if d<0 { y q[0] } else { z q[0] }\nnoise pauli zz=1e-3 ix=0.5 q[0] q[1]\nmeasure x q[0]*z q[1]->m flip 0.25\ndetector at(1,2.5,0)=m\n";
    let expected = "param d = 3 # size\nqubit q[0..d] role data, edge\nfor k in 0..d by 2 {\n    h q[k]\n}\nif d > 2 and not d == 4 {\n    x q[0]\n} else if d < 0 {\n    y q[0]\n} else {\n    z q[0]\n}\nnoise pauli zz=0.001 ix=0.5 q[0] q[1]\nmeasure x q[0] * z q[1] -> m flip 0.25\ndetector at (1, 2.5, 0) = m\n";
    assert_eq!(fmt(messy), expected);
    round_trip(messy);
}

#[test]
fn else_may_start_a_new_line() {
    let text = "qubit a\nif 0 {\n    x a\n}\nelse {\n    z a\n}\n";
    assert_eq!(
        fmt(text),
        "qubit a\nif 0 {\n    x a\n} else {\n    z a\n}\n"
    );
    assert!(try_load("t.slant", text).is_ok());
}

#[test]
fn parentheses_are_kept_only_where_needed() {
    assert_eq!(
        fmt("qubit q[(1 + 2) * 3 - (4 - 5) - -(6 + 1)]\n"),
        "qubit q[(1 + 2) * 3 - (4 - 5) - -(6 + 1)]\n"
    );
    assert_eq!(fmt("qubit q[((1 * 2)) + 3]\n"), "qubit q[1 * 2 + 3]\n");
}

/// Random well-formed programs for the round-trip property.
fn arb_expr() -> impl Strategy<Value = String> {
    let leaf = prop_oneof![
        (0i64..50).prop_map(|v| v.to_string()),
        prop_oneof![Just("k"), Just("d")].prop_map(str::to_string),
        (0u32..1000).prop_map(|v| format!("{}.5", v)),
    ];
    leaf.prop_recursive(4, 24, 2, |inner| {
        prop_oneof![
            (
                inner.clone(),
                prop_oneof![
                    Just("+"),
                    Just("-"),
                    Just("*"),
                    Just("/"),
                    Just("%"),
                    Just("<"),
                    Just("=="),
                    Just("and"),
                    Just("or")
                ],
                inner.clone()
            )
                .prop_map(|(a, op, b)| format!("({a} {op} {b})")),
            inner.clone().prop_map(|a| format!("-{a}")),
            inner.prop_map(|a| format!("not ({a})")),
        ]
    })
}

fn arb_stmt() -> impl Strategy<Value = String> {
    prop_oneof![
        arb_expr().prop_map(|e| format!("qubit q[{e}] at ({e}, 1)")),
        arb_expr().prop_map(|e| format!("h q[{e}], q[0..{e}]")),
        arb_expr().prop_map(|e| format!("if {e} {{\n x q[0]\n}} else {{ # c\n y q[1] }}")),
        arb_expr().prop_map(|e| format!("measure z q[{e}] * x r -> m[{e}, 0..2] flip 0.125")),
        arb_expr().prop_map(|e| format!(
            "for k in 0..{e} by 2 {{ detector s[k] at (k, {e}) = m[k] ^ m[k - 1] }}"
        )),
        arb_expr().prop_map(|e| format!("noise pauli x=0.25 z={e} q[0], q[1]")),
        Just("# a comment".to_string()),
        Just("layer { cx a b, c d }".to_string()),
        Just("round {\n\n  reset x a, b\n  noise joint p=0.5 x a * y b\n}".to_string()),
        Just("observable l ^= m ^ n # trailing".to_string()),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 200, .. ProptestConfig::default() })]

    /// parse(print(parse(x))) == parse(x), and printing is idempotent.
    #[test]
    fn print_round_trips(stmts in proptest::collection::vec(arb_stmt(), 1..8), blank in any::<bool>()) {
        let sep = if blank { "\n\n" } else { "\n" };
        let text = stmts.join(sep) + "\n";
        round_trip(&text);
    }
}

// ---- grammar reference ------------------------------------------------------------------------

/// Every ```slant block of the reference parses, and the complete examples (those declaring a
/// qubit) also expand and pass the determinism check, so documentation and parser cannot drift.
#[test]
fn reference_examples_parse() {
    let text = include_str!("../grammar/reference.md");
    let mut count = 0;
    for block in text.split("```slant").skip(1) {
        let code = block.split("```").next().unwrap();
        let source = Source::new("reference.md", code);
        let ast =
            slant::lang::parse(&source).unwrap_or_else(|e| panic!("{}\n{code}", e[0].render()));
        if code.contains("qubit") {
            slant::ir::load_source(&source, &[])
                .unwrap_or_else(|e| panic!("{}\n{code}", e[0].render()));
        }
        round_trip(code);
        let _ = ast;
        count += 1;
    }
    assert!(count >= 15, "only {count} examples found");
}
