//! Tests of the expander's internals: the up-front count against what expansion spends, and
//! the fast evaluator against the diagnosing one.

use super::budget::{cost, counts_depend_on};
use super::*;
use crate::lang::StmtKind;

/// (up-front count, count spent while expanding) of a circuit under a large limit.
fn counts(text: &str) -> (Tally, Tally) {
    let src = Source::new("t.slant", text);
    let ast = crate::lang::parse(&src).unwrap_or_else(|d| panic!("{}", d[0].render()));
    let mut x = Expander::new(src.clone(), &[], u64::MAX / 2);
    let estimate = x.check_estimate(&ast.stmts).unwrap();
    x.block(&ast.stmts);
    let spent = x.used;
    if let Err(d) = x.finish(&ast.stmts) {
        panic!("{}\n{text}", d[0].render());
    }
    (estimate, spent)
}

#[test]
fn up_front_count_is_exact() {
    // The up-front count promises to be what expansion spends, on every construct: the
    // generated families exercise loops that depend on their variables and loops that do
    // not, conditions, layers, products, detectors and observables.
    let mut texts: Vec<String> = Vec::new();
    for entry in std::fs::read_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/circuits")).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_some_and(|e| e == "slant") {
            texts.push(std::fs::read_to_string(path).unwrap());
        }
    }
    texts.push(
        "param n = 6\nqubit q[0..n, 0..2] role data, extra\nqubit z at (1, 2, 3)\n\
         for i in 0..n {\n  for j in 0..i by 2 { layer { h q[j, 0]; cx q[i, 0] q[i, 1] } }\n\
         }\nfor i in 0..n {\n  if i % 3 == 0 { measure z q[i, 0] -> m[i] } else { \
         measure x q[i, 1] * x q[i, 0] -> m[i] flip 0.1 }\n}\n\
         layer { reset z q[0..n, 0]; noise depolarizing p=0.1 q[0..n, 1] }\n\
         noise joint p=0.1 x z * z q[0, 0]\n\
         detector at (1, 2) = m[0..n] ^ m[0..n]\nobservable o = m[1]\nobservable o ^= m[2..4]\n"
            .into(),
    );
    assert!(texts.len() > 10);
    for text in &texts {
        let (estimate, spent) = counts(text);
        assert_eq!(estimate, spent, "{text}");
        assert!(spent.items > 0 && spent.steps > 0);
    }
}

#[test]
fn fast_evaluation_agrees_with_the_diagnosing_one() {
    let exprs = [
        "1 + 2 * 3",
        "-7 / 2",
        "-7 % 2",
        "7 % -2",
        "n - i * 2",
        "(i + 1) % 2 == 0 and i > 0 or not n",
        "0 and 1 / 0",
        "1 or 1 / 0",
        "1 / 0",
        "1 % 0",
        "1.5 % 2",
        "1.5 / 0",
        "2 / 0.0",
        "9223372036854775807 + 1",
        "-(-9223372036854775807 - 1)",
        "(-9223372036854775807 - 1) / -1",
        "(-9223372036854775807 - 1) % -1",
        "not 0.5",
        "1.5 and 1",
        "0.5 < 1",
        "unknown + 1",
        "2.5 * 2 == 5",
    ];
    let src = Source::new("t", "");
    let mut x = Expander::new(src, &[], 100);
    x.params.push(("n".into(), 5));
    x.vars.push(("i".into(), 3));
    for text in exprs {
        let ast = crate::lang::parse(&Source::new("t", format!("param p = {text}\n")))
            .unwrap_or_else(|d| panic!("{text}: {}", d[0].render()));
        let StmtKind::Param { value, .. } = &ast.stmts[0].kind else {
            panic!("{text}");
        };
        assert_eq!(x.value(value), x.eval_diagnosed(value).ok(), "{text}");
    }
}

#[test]
fn running_count_backs_up_the_estimate_and_halts() {
    // Expanded without the up-front count, as if it had missed: the running count refuses
    // once, at the statement that passes the limit, and nothing after it is expanded.
    let text = "qubit a\nfor i in 0..1000 { h a }\nqubit b\n";
    let src = Source::new("t.slant", text);
    let ast = crate::lang::parse(&src).unwrap();
    let mut x = Expander::new(src.clone(), &[], 100);
    x.block(&ast.stmts);
    assert_eq!(x.errors.len(), 1);
    let d = &x.errors[0];
    assert_eq!(
        d.message,
        "the circuit expands past the size limit of 100 items"
    );
    assert_eq!(d.location().map(|l| (l.1, l.2)), Some((2, 20)));
    assert!(x.used.items <= 100 + cost::LAYER + cost::OP + cost::TARGET);
    assert!(!x.qubit_ids.contains_key("b"));
    // Steps are counted the same way.
    let src = Source::new("t.slant", "qubit a\nfor i in 0..1000 { }\n");
    let ast = crate::lang::parse(&src).unwrap();
    let mut x = Expander::new(src.clone(), &[], 100);
    x.block(&ast.stmts);
    assert!(x.errors[0]
        .message
        .contains("runs past the limit of 100 steps"));
}

#[test]
fn dependent_loops_are_walked_and_others_multiplied() {
    let dependent = "qubit a\nfor i in 0..100 {\n  for j in 0..i { h a }\n}\n";
    // 4950 lone `h a`: a layer, an op and its target each, and a step for the statement and
    // one for its loop iteration.
    let (estimate, spent) = counts(dependent);
    let per = cost::LAYER + cost::OP + cost::TARGET;
    assert_eq!(estimate.items, cost::QUBIT + 4950 * per);
    assert_eq!(estimate, spent);
    assert!(!counts_depend_on(
        &crate::lang::parse(&Source::new("t", "for j in 0..n { h q[i] }\n"))
            .unwrap()
            .stmts,
        "i"
    ));
    for body in [
        "for j in 0..i { }",
        "if i > 2 { h a }",
        "h q[0..i]",
        "detector = m[i..3]",
    ] {
        let ast = crate::lang::parse(&Source::new("t", format!("{body}\n"))).unwrap();
        assert!(counts_depend_on(&ast.stmts, "i"), "{body}");
    }
}

#[test]
fn stretches_count_conditions_exactly() {
    // Loops whose bodies depend on the variable only through conditions are counted one
    // period per stretch (shape.rs); the count must still equal what expansion spends, for
    // every kind of condition the analysis accepts, for steps that do not divide the period,
    // for negative values and for stretches shorter than a period.
    let conditions = [
        "(i + j) % 2 == 0 and j > 0 and j < n",
        "(i + j) % 2 == 1 and i > 0 and i < n or j == 3",
        "not (2 * j + i) % 3 == 1",
        "j != 4 and (j - 7) % 5 < 2",
        "3 * j - 2 * i >= 5",
        "-j % 4 == 1 or j * 2 < i",
        "(j % 2) * 3 + (j % 3) == 2",
        "(j % 6) / 2 == 1",
        "j % -4 == 3",
        "i > 2",
        "(j > 3) * i + (j < 9) == 1",
        "j + 1 > j",
        "(j % 2 == 0) == (j % 3 == 0)",
    ];
    for cond in conditions {
        for (range, step) in [
            ("0..n + 1", ""),
            ("-5..17", " by 3"),
            ("2..4", ""),
            ("0..40", " by 7"),
        ] {
            let text = format!(
                "param n = 9\nqubit q[0..n]\nfor i in 0..n {{\n  for j in {range}{step} {{\n    \
                 if {cond} {{ h q[i] }} else {{ layer {{ x q[0]; z q[1] }} }}\n    \
                 if {cond} and j % 2 == 0 {{ measure z q[i] -> m[i, j + 100] }}\n  }}\n}}\n"
            );
            let (estimate, spent) = counts(&text);
            assert_eq!(estimate, spent, "{text}");
        }
    }
}

#[test]
fn condition_shapes_find_breaks_and_periods() {
    let src = Source::new("t", "");
    let mut x = Expander::new(src, &[], 100);
    x.params.push(("n".into(), 10));
    x.vars.push(("i".into(), 3));
    let shape = |x: &Expander, body: &str| {
        let ast = crate::lang::parse(&Source::new("t", format!("{body}\n"))).unwrap();
        x.count_shape(&ast.stmts, "j").map(|mut s| {
            s.breaks.sort_unstable();
            (s.breaks, s.period)
        })
    };
    // The surface code's guard: a period of 2, a stretch boundary near j = 0 and near j = n.
    let (breaks, period) = shape(&x, "if (i + j) % 2 == 0 and j > 0 and j < n { h q[i] }").unwrap();
    assert_eq!(period, 2);
    assert!(breaks.contains(&1) && breaks.contains(&10), "{breaks:?}");
    assert_eq!(
        shape(&x, "if j % 3 == 0 or j % 4 == 1 { h a }").unwrap().1,
        12
    );
    // What the analysis cannot follow is walked instead.
    for body in [
        "for k in 0..j { h a }",
        "h q[0..j]",
        "if j * j > 3 { h a }",
        "if j / 2 == 1 { h a }",
        "for k in 0..3 { if j + k > 2 { h a } }",
        "if j % 100000 == 0 { h a }",
        "if j > unknown { h a }",
        "if j > 2.5 { h a }",
    ] {
        assert_eq!(shape(&x, body), None, "{body}");
    }
    // Conditions not on the variable do not constrain the shape.
    assert_eq!(shape(&x, "if i > 2 { h a }"), Some((vec![], 1)));
}

#[test]
fn a_patch_guarded_by_conditions_is_counted_without_walking_it() {
    // The loops of a generated d = 1001 surface patch: every gate sits behind a guard on the
    // loop variables. Walking them evaluated about 8 million iterations (seconds); counted in
    // stretches, a few thousand. The count itself must not change: it is compared with the
    // same loops counted by hand (one lone-free layer of gates per guard that holds).
    let d = 1001i64;
    let text = format!(
        "param dx = {d}\nparam dz = {d}\n\
         for i in 0..dz + 1 {{\n    for j in 0..dx + 1 {{\n        \
         if (i + j) % 2 == 0 and i > 0 and i < dz or (i + j) % 2 == 1 and j > 0 and j < dx {{\n            \
         qubit a[i, j]\n        }}\n    }}\n}}\n\
         layer {{\n    for i in 0..dz + 1 {{\n        for j in 0..dx + 1 {{\n            \
         if (i + j) % 2 == 0 and i > 0 and i < dz and j > 0 {{ cx a[i, j] d[i - 1, j - 1] }}\n            \
         if (i + j) % 2 == 1 and j > 0 and j < dx and i > 0 {{ cz a[i, j] d[i - 1, j - 1] }}\n        \
         }}\n    }}\n}}\n"
    );
    let src = Source::new("t.slant", text.as_str());
    let ast = crate::lang::parse(&src).unwrap_or_else(|d| panic!("{}", d[0].render()));
    let mut x = Expander::new(src.clone(), &[], u64::MAX / 2);
    let estimate = x.check_estimate(&ast.stmts).unwrap();
    assert!(x.evaluated < 50_000, "{} iterations evaluated", x.evaluated);
    let (mut ancillas, mut gates) = (0u64, 0u64);
    for i in 0..=d {
        for j in 0..=d {
            let (even, odd) = ((i + j) % 2 == 0, (i + j) % 2 == 1);
            if even && i > 0 && i < d || odd && j > 0 && j < d {
                ancillas += 1;
            }
            gates += u64::from(even && i > 0 && i < d && j > 0);
            gates += u64::from(odd && j > 0 && j < d && i > 0);
        }
    }
    let per_gate = cost::OP + 2 * cost::TARGET;
    assert_eq!(
        estimate.items,
        ancillas * cost::QUBIT + cost::LAYER + gates * per_gate
    );
}
