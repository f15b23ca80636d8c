//! The rotated surface code and its XZZX variant on a `dz` × `dx` patch (columns × rows).
//!
//! Layout (see the module docs of [`super`] for coordinates): data `d[i, j]`, `0 ≤ i < dz`,
//! `0 ≤ j < dx`; check `(i, j)`, `0 ≤ i ≤ dz`, `0 ≤ j ≤ dx`, touches the data at its four corners
//! `nw = d[i-1, j-1]`, `ne = d[i, j-1]`, `sw = d[i-1, j]`, `se = d[i, j]` that exist. Checks are
//! coloured like a checkerboard: X-type when `i + j` is even, Z-type when odd. Weight-two X-type
//! checks sit on the top and bottom edges, weight-two Z-type checks on the left and right edges,
//! so the Z logical runs along a row (weight `dz`) and the X logical down a column (weight `dx`).
//!
//! XZZX ("The XZZX surface code", Nat. Commun. 12, 2172 (2021)) is this CSS code with a
//! Hadamard on every data qubit with `i + j` odd. Conjugating turns every check into X on its
//! `nw`, `se` corners and Z on its `ne`, `sw` corners. A Z fault on `d[i, j]` therefore flips the
//! checks at `(2i, 2j)` and `(2i + 2, 2j + 2)`: pure-Z faults flip detector pairs along the
//! north-west–south-east diagonal, which the coordinates show as they are.
//!
//! The memory experiment stores the Z logical (`basis z`: data prepared and read out in z, in x
//! on the Hadamard-conjugated XZZX qubits; Z-type checks are deterministic from the first round)
//! or the X logical (`basis x`, the mirror image).

use super::{Dir, Entangler, GenError, GenSpec, LogicalBasis, Order, Resolved, Style, Text};

/// X-type check (i, j) exists: even colour, not on the left or right edge.
const X_CHECK: &str = "(i + j) % 2 == 0 and i > 0 and i < dz";
/// Z-type check (i, j) exists: odd colour, not on the top or bottom edge.
const Z_CHECK: &str = "(i + j) % 2 == 1 and j > 0 and j < dx";

/// The condition, beyond the check's own, that its corner data qubit exists: X-type checks
/// already exclude the left and right edges, Z-type checks the top and bottom ones.
fn corner_exists(x_type: bool, d: Dir) -> &'static str {
    match (x_type, d) {
        (true, Dir::Ne | Dir::Nw) => "j > 0",
        (true, Dir::Se | Dir::Sw) => "j < dx",
        (false, Dir::Nw | Dir::Sw) => "i > 0",
        (false, Dir::Ne | Dir::Se) => "i < dz",
    }
}

fn check_cond(x_type: bool) -> &'static str {
    if x_type {
        X_CHECK
    } else {
        Z_CHECK
    }
}

/// The corner data qubit of check `(i, j)`, as `name[..]`.
fn corner(name: &str, d: Dir) -> String {
    match d {
        Dir::Ne => format!("{name}[i, j - 1]"),
        Dir::Nw => format!("{name}[i - 1, j - 1]"),
        Dir::Se => format!("{name}[i, j]"),
        Dir::Sw => format!("{name}[i - 1, j]"),
    }
}

/// The Pauli (`'x'` or `'z'`) a check of the given CSS type applies at a corner.
fn pauli(xzzx: bool, x_type: bool, d: Dir) -> char {
    if xzzx {
        if matches!(d, Dir::Nw | Dir::Se) {
            'x'
        } else {
            'z'
        }
    } else if x_type {
        'x'
    } else {
        'z'
    }
}

/// The corners of a check by where it sits: `(condition, corners)`, the last one unconditional.
fn shapes(x_type: bool) -> [(&'static str, Vec<Dir>); 3] {
    if x_type {
        [
            ("j == 0", vec![Dir::Sw, Dir::Se]),
            ("j == dx", vec![Dir::Nw, Dir::Ne]),
            ("", Dir::ALL.to_vec()),
        ]
    } else {
        [
            ("i == 0", vec![Dir::Ne, Dir::Se]),
            ("i == dz", vec![Dir::Nw, Dir::Sw]),
            ("", Dir::ALL.to_vec()),
        ]
    }
}

/// Writes `if c1 { s1 } else if c2 { s2 } else { s3 }` with one statement per shape.
fn by_shape(w: &mut Text, x_type: bool, stmt: impl Fn(&[Dir]) -> String) {
    let [(c1, s1), (c2, s2), (_, s3)] = shapes(x_type);
    w.open(&format!("if {c1}"));
    w.line(&stmt(&s1));
    w.else_open(&format!("if {c2} "));
    w.line(&stmt(&s2));
    w.else_open("");
    w.line(&stmt(&s3));
    w.close();
}

/// Opens the double loop over check positions.
fn open_checks(w: &mut Text) {
    w.open("for i in 0..dz + 1");
    w.open("for j in 0..dx + 1");
}

fn close2(w: &mut Text) {
    w.close();
    w.close();
}

/// Data bases `(i + j even, i + j odd)` for preparation and readout.
fn data_bases(xzzx: bool, basis: LogicalBasis) -> (&'static str, &'static str) {
    match (xzzx, basis) {
        (false, LogicalBasis::Z) => ("z", "z"),
        (false, LogicalBasis::X) => ("x", "x"),
        (true, LogicalBasis::Z) => ("z", "x"),
        (true, LogicalBasis::X) => ("x", "z"),
    }
}

pub(super) fn write(
    w: &mut Text,
    spec: &GenSpec,
    r: &Resolved,
    xzzx: bool,
) -> Result<(), GenError> {
    let basis = r.basis.unwrap_or(LogicalBasis::Z);
    if let Some(order) = &r.order {
        validate_order(order, spec.dx as i64, spec.dz as i64)?;
    }
    let name = if xzzx {
        "rotated XZZX surface code (CSS code with Hadamards on data with i + j odd)"
    } else {
        "rotated CSS surface code"
    };
    let stored = if basis == LogicalBasis::Z { "Z" } else { "X" };
    w.line(&format!(
        "# {name} memory, {stored} logical stored; dz columns × dx rows."
    ));
    w.line("# Check (i, j) at (2i, 2j) touches data nw d[i-1,j-1], ne d[i,j-1], sw d[i-1,j], se d[i,j];");
    w.line("# X-type checks have i + j even, Z-type checks i + j odd.");
    if r.style == Style::Ancilla {
        let order = r.order.as_ref().map_or_else(Order::hook_safe, Clone::clone);
        let list = |l: &[Dir; 4]| l.map(Dir::name).join(", ");
        w.line(&format!(
            "# Order `{}`: X-type checks visit {}; Z-type checks visit {}.",
            order.name,
            list(&order.x_type),
            list(&order.z_type)
        ));
    }
    w.line("");
    w.grid_header(spec);
    let any_check = format!("({X_CHECK}) or ({Z_CHECK})");
    if r.style == Style::Ancilla {
        open_checks(w);
        w.block(
            &format!("if {any_check}"),
            "qubit a[i, j] at (2 * i, 2 * j) role ancilla",
        );
        close2(w);
    }
    w.line("");
    let (even, odd) = data_bases(xzzx, basis);
    write_data_op(w, even, odd, |b| format!("reset {b} d[i, j]"));
    w.line("");
    w.open("for r in 0..rounds");
    w.open("round");
    match r.style {
        Style::Ancilla => write_ancilla_round(w, r, xzzx, &any_check),
        Style::Product => write_product_round(w, xzzx),
    }
    let first = if basis == LogicalBasis::Z {
        Z_CHECK
    } else {
        X_CHECK
    };
    open_checks(w);
    w.open("if r == 0");
    w.block(
        &format!("if {first}"),
        "detector at (2 * i, 2 * j, r) = m[r, i, j]",
    );
    w.else_open("");
    w.block(
        &format!("if {any_check}"),
        "detector at (2 * i, 2 * j, r) = m[r, i, j] ^ m[r - 1, i, j]",
    );
    w.close();
    close2(w);
    w.close();
    w.close();
    w.line("");
    w.line("# Final readout: each deterministic check's parity from the data must match the last round.");
    write_data_op(w, even, odd, |b| format!("measure {b} d[i, j] -> f[i, j]"));
    open_checks(w);
    w.open(&format!("if {first}"));
    by_shape(w, basis == LogicalBasis::X, |dirs| {
        let terms: Vec<String> = dirs.iter().map(|&d| corner("f", d)).collect();
        format!(
            "detector at (2 * i, 2 * j, rounds) = {} ^ m[rounds - 1, i, j]",
            terms.join(" ^ ")
        )
    });
    w.close();
    close2(w);
    if basis == LogicalBasis::Z {
        w.line("observable logical = f[0..dz, 0]");
    } else {
        w.line("observable logical = f[0, 0..dx]");
    }
    Ok(())
}

/// Writes a layer applying `op(basis)` to every data qubit, `even`/`odd` by the parity of
/// `i + j`.
fn write_data_op(w: &mut Text, even: &str, odd: &str, op: impl Fn(&str) -> String) {
    w.open("layer");
    w.open("for i in 0..dz");
    if even == odd {
        w.line(&format!("for j in 0..dx {{ {} }}", op(even)));
    } else {
        w.open("for j in 0..dx");
        w.line(&format!(
            "if (i + j) % 2 == 0 {{ {} }} else {{ {} }}",
            op(even),
            op(odd)
        ));
        w.close();
    }
    w.close();
    w.close();
}

fn write_ancilla_round(w: &mut Text, r: &Resolved, xzzx: bool, any_check: &str) {
    let order = r.order.as_ref().map_or_else(Order::hook_safe, Clone::clone);
    let entangler = r.entangler.unwrap_or(Entangler::Native);
    w.open("layer");
    open_checks(w);
    w.block(&format!("if {any_check}"), "reset x a[i, j]");
    close2(w);
    w.close();
    for step in 0..4 {
        let couplings = [
            (
                true,
                order.x_type[step],
                pauli(xzzx, true, order.x_type[step]),
            ),
            (
                false,
                order.z_type[step],
                pauli(xzzx, false, order.z_type[step]),
            ),
        ];
        // With the cx entangler a Z coupling is h · cx · h on the data qubit.
        let hadamards: Vec<String> = couplings
            .iter()
            .filter(|c| c.2 == 'z' && entangler == Entangler::Cx)
            .map(|&(x_type, d, _)| {
                format!(
                    "if {} and {} {{ h {} }}",
                    check_cond(x_type),
                    corner_exists(x_type, d),
                    corner("d", d)
                )
            })
            .collect();
        let gates: Vec<String> = couplings
            .iter()
            .map(|&(x_type, d, p)| {
                let gate = if p == 'x' || entangler == Entangler::Cx {
                    "cx"
                } else {
                    "cz"
                };
                format!(
                    "if {} and {} {{ {gate} a[i, j] {} }}",
                    check_cond(x_type),
                    corner_exists(x_type, d),
                    corner("d", d)
                )
            })
            .collect();
        w.line(&format!(
            "# step {step}: X-type checks couple to {}, Z-type checks to {}",
            order.x_type[step].name(),
            order.z_type[step].name()
        ));
        for lines in [&hadamards, &gates, &hadamards] {
            if lines.is_empty() {
                continue;
            }
            w.open("layer");
            open_checks(w);
            for l in lines {
                w.line(l);
            }
            close2(w);
            w.close();
        }
    }
    w.open("layer");
    open_checks(w);
    w.block(
        &format!("if {any_check}"),
        "measure x a[i, j] -> m[r, i, j]",
    );
    close2(w);
    w.close();
}

fn write_product_round(w: &mut Text, xzzx: bool) {
    // Checks with the same parity of i and of j share no data qubit, so four layers suffice.
    w.open("for s in 0..4");
    w.open("layer");
    w.open("for i in s % 2..dz + 1 by 2");
    w.open("for j in s / 2..dx + 1 by 2");
    for x_type in [true, false] {
        w.open(&format!("if {}", if x_type { X_CHECK } else { Z_CHECK }));
        by_shape(w, x_type, |dirs| {
            let factors: Vec<String> = dirs
                .iter()
                .map(|&d| format!("{} {}", pauli(xzzx, x_type, d), corner("d", d)))
                .collect();
            format!("measure {} -> m[r, i, j]", factors.join(" * "))
        });
        w.close();
    }
    w.close();
    w.close();
    w.close();
    w.close();
}

/// Checks that an order schedules each data qubit at most once per step and that every X-type
/// and Z-type check pair meets in an order that measures both correctly: on their shared data
/// qubits the X-type check must come first an even number of times (otherwise the partial
/// couplings do not commute and the ancilla results are random).
///
/// Linear in the number of checks: a check shares data only with the checks next to it, so each
/// X-type check is compared with its (at most eight) neighbours, and step clashes go through a
/// table indexed by data qubit and step. Both scans visit checks in the same order as a scan of
/// all pairs would, so the first problem found (and reported) is the same.
fn validate_order(order: &Order, rows: i64, cols: i64) -> Result<(), GenError> {
    let kind = |i: i64, j: i64| -> Option<bool> {
        if i < 0 || i > cols || j < 0 || j > rows {
            return None;
        }
        let x = (i + j) % 2 == 0 && i > 0 && i < cols;
        let z = (i + j) % 2 == 1 && j > 0 && j < rows;
        (x || z).then_some(x)
    };
    let checks = (0..=cols)
        .flat_map(|i| (0..=rows).map(move |j| (i, j)))
        .filter_map(|(i, j)| kind(i, j).map(|x| (i, j, x)));
    // The data qubits a check touches, with the step of each (`None` where the corner is off the
    // patch).
    let touches = |(i, j, x): (i64, i64, bool)| -> [Option<((i64, i64), usize)>; 4] {
        let list = if x { order.x_type } else { order.z_type };
        let mut out = [None; 4];
        for (step, d) in list.iter().enumerate() {
            let (di, dj) = d.offset();
            let (a, b) = (i + di, j + dj);
            if a >= 0 && a < cols && b >= 0 && b < rows {
                out[step] = Some(((a, b), step));
            }
        }
        out
    };
    // busy[(a * rows + b) * 4 + step] = 1 + index of the first check that touches data (a, b)
    // in that step, 0 if none does yet.
    let mut busy = vec![0usize; (rows * cols * 4).max(0) as usize];
    let check_of = |k: usize| ((k - 1) as i64 / (rows + 1), (k - 1) as i64 % (rows + 1));
    for c in checks.clone() {
        for (q, step) in touches(c).into_iter().flatten() {
            let slot = &mut busy[((q.0 * rows + q.1) * 4) as usize + step];
            if *slot != 0 {
                let other = check_of(*slot);
                return Err(GenError(format!(
                    "order `{}` makes data qubit d[{}, {}] meet checks ({}, {}) and ({}, {}) in \
                     the same step {step}; pick an order where each step moves every check the \
                     same way",
                    order.name, q.0, q.1, other.0, other.1, c.0, c.1
                )));
            }
            *slot = (c.0 * (rows + 1) + c.1) as usize + 1;
        }
    }
    for a in checks.filter(|c| c.2) {
        let ta = touches(a);
        // Neighbours in the order of the list of checks (by `i`, then `j`).
        for (di, dj) in (-1..=1).flat_map(|di| (-1..=1).map(move |dj| (di, dj))) {
            let (i, j) = (a.0 + di, a.1 + dj);
            if kind(i, j) != Some(false) {
                continue;
            }
            let tb = touches((i, j, false));
            let x_first = ta
                .iter()
                .flatten()
                .filter(|(q, sa)| tb.iter().flatten().any(|(p, sb)| p == q && sa < sb))
                .count();
            if x_first % 2 == 1 {
                return Err(GenError(format!(
                    "order `{}` does not measure checks ({}, {}) and ({}, {}) correctly: on their \
                     shared data the X-type check goes first once; use an order in which it goes \
                     first on both or on neither",
                    order.name, a.0, a.1, i, j
                )));
            }
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The all-pairs version `validate_order` replaced: kept as the reference it must agree
    /// with, message for message.
    fn validate_order_all_pairs(order: &Order, rows: i64, cols: i64) -> Result<(), GenError> {
        let checks: Vec<(i64, i64, bool)> = (0..=cols)
            .flat_map(|i| (0..=rows).map(move |j| (i, j)))
            .filter_map(|(i, j)| {
                let x = (i + j) % 2 == 0 && i > 0 && i < cols;
                let z = (i + j) % 2 == 1 && j > 0 && j < rows;
                (x || z).then_some((i, j, x))
            })
            .collect();
        let touches = |&(i, j, x): &(i64, i64, bool)| -> Vec<((i64, i64), usize)> {
            let list = if x { order.x_type } else { order.z_type };
            list.iter()
                .enumerate()
                .filter_map(|(step, d)| {
                    let (di, dj) = d.offset();
                    let (a, b) = (i + di, j + dj);
                    (a >= 0 && a < cols && b >= 0 && b < rows).then_some(((a, b), step))
                })
                .collect()
        };
        let mut busy = std::collections::HashMap::new();
        for c in &checks {
            for (q, step) in touches(c) {
                if let Some(other) = busy.insert((q, step), (c.0, c.1)) {
                    return Err(GenError(format!(
                        "order `{}` makes data qubit d[{}, {}] meet checks ({}, {}) and ({}, {}) \
                         in the same step {step}; pick an order where each step moves every \
                         check the same way",
                        order.name, q.0, q.1, other.0, other.1, c.0, c.1
                    )));
                }
            }
        }
        for a in checks.iter().filter(|c| c.2) {
            let ta = touches(a);
            for b in checks.iter().filter(|c| !c.2) {
                if (a.0 - b.0).abs() > 1 || (a.1 - b.1).abs() > 1 {
                    continue;
                }
                let tb = touches(b);
                let x_first = ta
                    .iter()
                    .filter(|(q, sa)| tb.iter().any(|(p, sb)| p == q && sa < sb))
                    .count();
                if x_first % 2 == 1 {
                    return Err(GenError(format!(
                        "order `{}` does not measure checks ({}, {}) and ({}, {}) correctly: on \
                         their shared data the X-type check goes first once; use an order in \
                         which it goes first on both or on neither",
                        order.name, a.0, a.1, b.0, b.1
                    )));
                }
            }
        }
        Ok(())
    }

    fn permutations() -> Vec<[Dir; 4]> {
        let mut out = Vec::new();
        for a in Dir::ALL {
            for b in Dir::ALL {
                for c in Dir::ALL {
                    for d in Dir::ALL {
                        let p = [a, b, c, d];
                        if Dir::ALL.iter().all(|x| p.contains(x)) {
                            out.push(p);
                        }
                    }
                }
            }
        }
        out
    }

    #[test]
    fn linear_validation_agrees_with_all_pairs() {
        let perms = permutations();
        assert_eq!(perms.len(), 24);
        let (mut ok, mut bad) = (0, 0);
        for x in &perms {
            for z in &perms {
                let order = Order {
                    name: "custom".into(),
                    x_type: *x,
                    z_type: *z,
                };
                for (rows, cols) in [(3, 3), (3, 5), (5, 3), (5, 5), (7, 5)] {
                    let fast = validate_order(&order, rows, cols);
                    assert_eq!(fast, validate_order_all_pairs(&order, rows, cols));
                    if fast.is_ok() {
                        ok += 1;
                    } else {
                        bad += 1;
                    }
                }
            }
        }
        // Both outcomes occur, so the comparison covers both the accepting and refusing paths.
        assert!(ok > 0 && bad > 0, "{ok} valid, {bad} refused");
    }

    #[test]
    fn standard_orders_are_valid_and_a_bad_one_is_not() {
        validate_order(&Order::hook_safe(), 5, 5).unwrap();
        validate_order(&Order::hook_aligned(), 3, 5).unwrap();
        // Same shape for both types but rotated steps: X-type first on one shared qubit only.
        let bad: Order = "custom:nw,ne,sw,se/ne,nw,se,sw".parse().unwrap();
        assert!(validate_order(&bad, 3, 3).is_err());
    }
}
