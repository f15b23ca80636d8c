//! The import rules of DEVELOPERS.md, checked on the sources: every `crate::`, `super::` and
//! `self::` path in `src/` is resolved to the module it names, and
//!
//! 1. a stage may import only stages of a lower rank ([`RANKS`]), so stage imports go one way
//!    and cannot form a cycle;
//! 2. inside every directory module (a stage, or a directory such as `ir/expand/`), the files
//!    do not import each other in a cycle. An import of a name that the directory's `mod.rs`
//!    re-exports counts as an import of the file that defines it; `mod.rs`'s own `pub use`
//!    lines are its interface, not imports.
//!
//! Comments and string literals are skipped, so doc links are not imports. Test code counts like
//! any other code. The scanner is checked on small made-up trees below, so a rule that stopped
//! firing would be noticed.

use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;

/// Stage ranks: a stage may import only stages of a lower rank.
const RANKS: &[(&str, u32)] = &[
    ("base", 0),
    ("lang", 1),
    ("gen", 2),
    ("ir", 2),
    ("noise", 3),
    ("faults", 4),
    ("sim", 4),
    ("analysis", 5),
    ("decode", 5),
    ("study", 6),
    ("cli", 7),
];

fn rank(stage: &str) -> Option<u32> {
    RANKS.iter().find(|(s, _)| *s == stage).map(|&(_, r)| r)
}

/// Replaces comments and the contents of string and character literals by spaces, keeping
/// newlines so line numbers stay right.
fn strip(src: &str) -> String {
    let c: Vec<char> = src.chars().collect();
    let mut out = String::with_capacity(src.len());
    let blank = |out: &mut String, ch: char| out.push(if ch == '\n' { '\n' } else { ' ' });
    let ident = |ch: char| ch.is_alphanumeric() || ch == '_';
    let mut i = 0;
    while i < c.len() {
        let prev_ident = i > 0 && ident(c[i - 1]);
        if c[i] == '/' && c.get(i + 1) == Some(&'/') {
            while i < c.len() && c[i] != '\n' {
                blank(&mut out, c[i]);
                i += 1;
            }
        } else if c[i] == '/' && c.get(i + 1) == Some(&'*') {
            let mut depth = 0;
            loop {
                if i >= c.len() {
                    break;
                }
                if c[i] == '/' && c.get(i + 1) == Some(&'*') {
                    depth += 1;
                    out.push_str("  ");
                    i += 2;
                } else if c[i] == '*' && c.get(i + 1) == Some(&'/') {
                    depth -= 1;
                    out.push_str("  ");
                    i += 2;
                    if depth == 0 {
                        break;
                    }
                } else {
                    blank(&mut out, c[i]);
                    i += 1;
                }
            }
        } else if !prev_ident && (c[i] == 'r' || (c[i] == 'b' && c.get(i + 1) == Some(&'r'))) && {
            let j = if c[i] == 'b' { i + 2 } else { i + 1 };
            let hashes = c[j..].iter().take_while(|&&h| h == '#').count();
            c.get(j + hashes) == Some(&'"')
        } {
            // Raw string: r"…", r#"…"#, br"…".
            let j = if c[i] == 'b' { i + 2 } else { i + 1 };
            let hashes = c[j..].iter().take_while(|&&h| h == '#').count();
            for _ in i..j + hashes + 1 {
                out.push(' ');
            }
            i = j + hashes + 1;
            while i < c.len() {
                if c[i] == '"'
                    && c[i + 1..]
                        .iter()
                        .take(hashes)
                        .filter(|&&h| h == '#')
                        .count()
                        == hashes
                {
                    for _ in 0..hashes + 1 {
                        out.push(' ');
                    }
                    i += hashes + 1;
                    break;
                }
                blank(&mut out, c[i]);
                i += 1;
            }
        } else if c[i] == '"' {
            out.push(' ');
            i += 1;
            while i < c.len() && c[i] != '"' {
                if c[i] == '\\' {
                    blank(&mut out, c[i]);
                    i += 1;
                }
                if i < c.len() {
                    blank(&mut out, c[i]);
                    i += 1;
                }
            }
            out.push(' ');
            i += 1;
        } else if c[i] == '\'' && !prev_ident {
            // A character literal ('x', '\n', '\u{1F600}'), or a lifetime ('a) left alone.
            let literal = c.get(i + 1) == Some(&'\\') || c.get(i + 2) == Some(&'\'');
            if literal {
                out.push(' ');
                i += 1;
                while i < c.len() && c[i] != '\'' {
                    if c[i] == '\\' {
                        out.push(' ');
                        i += 1;
                    }
                    out.push(' ');
                    i += 1;
                }
                out.push(' ');
                i += 1;
            } else {
                out.push('\'');
                i += 1;
            }
        } else {
            out.push(c[i]);
            i += 1;
        }
    }
    out
}

#[derive(Clone, Debug, PartialEq)]
enum Tok {
    Ident(String),
    Colons,
    Punct(char),
}

fn tokens(text: &str) -> Vec<(Tok, usize)> {
    let c: Vec<char> = text.chars().collect();
    let mut out = Vec::new();
    let mut line = 1;
    let mut i = 0;
    while i < c.len() {
        let ch = c[i];
        if ch == '\n' {
            line += 1;
            i += 1;
        } else if ch.is_whitespace() {
            i += 1;
        } else if ch.is_alphabetic() || ch == '_' || ch == '$' {
            let start = i;
            while i < c.len() && (c[i].is_alphanumeric() || c[i] == '_' || c[i] == '$') {
                i += 1;
            }
            out.push((Tok::Ident(c[start..i].iter().collect()), line));
        } else if ch == ':' && c.get(i + 1) == Some(&':') {
            out.push((Tok::Colons, line));
            i += 2;
        } else {
            out.push((Tok::Punct(ch), line));
            i += 1;
        }
    }
    out
}

/// One path found in a file: its segments as written and where.
#[derive(Clone, Debug)]
struct Reference {
    /// Absolute module path it names (crate root = empty), resolved against the module it is
    /// written in.
    path: Vec<String>,
    line: usize,
    /// Written in a `pub use` or `pub(crate) use` declaration (a re-export).
    reexport: bool,
    /// The name it is imported under, for `use` declarations (the leaf or the alias).
    alias: Option<String>,
    /// A `use` path starting with a plain name (`use model::NoiseModel;`), resolved as a child
    /// of the module it is written in; kept only if that child exists.
    relative: bool,
}

/// Resolves `segments` (starting with `crate`, `super` or `self`) written inside module `at`.
fn absolute(at: &[String], segments: &[String]) -> Option<Vec<String>> {
    let mut out: Vec<String>;
    let mut rest = segments;
    match rest.first().map(String::as_str) {
        Some("crate") => {
            out = Vec::new();
            rest = &rest[1..];
        }
        Some("self") => {
            out = at.to_vec();
            rest = &rest[1..];
        }
        Some("super") => {
            out = at.to_vec();
            while rest.first().map(String::as_str) == Some("super") {
                out.pop()?;
                rest = &rest[1..];
            }
        }
        _ => return None,
    }
    out.extend(rest.iter().cloned());
    Some(out)
}

/// Parses a `use` tree starting at `toks[i]` (after `use`), appending every leaf path (with its
/// alias) to `out`. Returns the index after the tree.
fn use_tree(
    toks: &[(Tok, usize)],
    mut i: usize,
    prefix: &mut Vec<String>,
    out: &mut Vec<(Vec<String>, Option<String>, usize)>,
) -> usize {
    let depth = prefix.len();
    loop {
        match toks.get(i).map(|t| &t.0) {
            Some(Tok::Ident(name)) if name == "as" => {
                if let Some((Tok::Ident(alias), line)) = toks.get(i + 1) {
                    out.push((prefix.clone(), Some(alias.clone()), *line));
                }
                i += 2;
                break;
            }
            Some(Tok::Ident(name)) => {
                prefix.push(name.clone());
                i += 1;
                if toks.get(i).map(|t| &t.0) == Some(&Tok::Colons) {
                    i += 1;
                    continue;
                }
                if toks.get(i).map(|t| &t.0) == Some(&Tok::Ident("as".into())) {
                    continue;
                }
                let line = toks[i - 1].1;
                let leaf = if name == "self" {
                    prefix.pop();
                    prefix.last().cloned()
                } else {
                    Some(name.clone())
                };
                out.push((prefix.clone(), leaf, line));
                break;
            }
            Some(Tok::Punct('*')) => {
                prefix.push("*".into());
                out.push((prefix.clone(), None, toks[i].1));
                i += 1;
                break;
            }
            Some(Tok::Punct('{')) => {
                i += 1;
                loop {
                    match toks.get(i).map(|t| &t.0) {
                        Some(Tok::Punct('}')) => {
                            i += 1;
                            break;
                        }
                        Some(Tok::Punct(',')) => i += 1,
                        None => break,
                        _ => {
                            let mut inner = prefix.clone();
                            i = use_tree(toks, i, &mut inner, out);
                        }
                    }
                }
                break;
            }
            _ => break,
        }
    }
    prefix.truncate(depth);
    i
}

/// Every `crate::`, `super::` and `self::` path of a file whose module path is `module`.
fn references(module: &[String], text: &str) -> Vec<Reference> {
    let toks = tokens(&strip(text));
    let mut out = Vec::new();
    // Inline modules (`mod tests { … }`): (name, brace depth at which it closes).
    let mut inline: Vec<(String, usize)> = Vec::new();
    let mut depth = 0usize;
    let here = |inline: &[(String, usize)]| -> Vec<String> {
        let mut m = module.to_vec();
        m.extend(inline.iter().map(|(n, _)| n.clone()));
        m
    };
    let mut i = 0;
    while i < toks.len() {
        match &toks[i].0 {
            Tok::Punct('{') => depth += 1,
            Tok::Punct('}') => {
                depth = depth.saturating_sub(1);
                if inline.last().is_some_and(|(_, d)| *d == depth) {
                    inline.pop();
                }
            }
            Tok::Ident(kw) if kw == "mod" => {
                if let (Some((Tok::Ident(name), _)), Some((Tok::Punct('{'), _))) =
                    (toks.get(i + 1), toks.get(i + 2))
                {
                    inline.push((name.clone(), depth));
                    depth += 1;
                    i += 3;
                    continue;
                }
            }
            Tok::Ident(kw) if kw == "use" => {
                // `pub use` / `pub(crate) use` re-export.
                let reexport = (i >= 1 && toks[i - 1].0 == Tok::Ident("pub".into()))
                    || (i >= 4
                        && toks[i - 1].0 == Tok::Punct(')')
                        && toks[i - 4].0 == Tok::Ident("pub".into()));
                let mut leaves = Vec::new();
                let end = use_tree(&toks, i + 1, &mut Vec::new(), &mut leaves);
                let at = here(&inline);
                for (segments, alias, line) in leaves {
                    let (path, relative) = match absolute(&at, &segments) {
                        Some(path) => (path, false),
                        None => {
                            let mut path = at.clone();
                            path.extend(segments.iter().cloned());
                            (path, true)
                        }
                    };
                    out.push(Reference {
                        path,
                        line,
                        reexport,
                        alias,
                        relative,
                    });
                }
                i = end.max(i + 1);
                continue;
            }
            Tok::Ident(first)
                if matches!(first.as_str(), "crate" | "super" | "self")
                    && toks.get(i + 1).map(|t| &t.0) == Some(&Tok::Colons) =>
            {
                let line = toks[i].1;
                let mut segments = vec![first.clone()];
                let mut j = i + 1;
                while toks.get(j).map(|t| &t.0) == Some(&Tok::Colons) {
                    match toks.get(j + 1).map(|t| &t.0) {
                        Some(Tok::Ident(s)) => {
                            segments.push(s.clone());
                            j += 2;
                        }
                        _ => break,
                    }
                }
                if let Some(path) = absolute(&here(&inline), &segments) {
                    out.push(Reference {
                        path,
                        line,
                        reexport: false,
                        alias: None,
                        relative: false,
                    });
                }
                i = j;
                continue;
            }
            _ => {}
        }
        i += 1;
    }
    out
}

/// A source tree: file path relative to `src/` (e.g. `noise/model.rs`) → text.
type Tree = BTreeMap<String, String>;

/// The module path of a file: `noise/model.rs` → `noise::model`, `noise/mod.rs` → `noise`.
fn module_of(file: &str) -> Vec<String> {
    let mut parts: Vec<String> = file.split('/').map(String::from).collect();
    let last = parts.pop().unwrap_or_default();
    let stem = last.trim_end_matches(".rs");
    if stem != "mod" && stem != "lib" && stem != "main" {
        parts.push(stem.to_string());
    }
    parts
}

/// Every rule broken in `tree`, one line each.
fn violations(tree: &Tree) -> Vec<String> {
    let mut out = Vec::new();
    let is_module = |path: &[String]| {
        let p = path.join("/");
        tree.contains_key(&format!("{p}.rs")) || tree.contains_key(&format!("{p}/mod.rs"))
    };
    let refs: BTreeMap<&String, (Vec<String>, Vec<Reference>)> = tree
        .iter()
        .map(|(f, text)| {
            let m = module_of(f);
            let mut r = references(&m, text);
            // A plain first name is a child module here, or an outside crate (`std`, `serde`).
            r.retain(|r| !r.relative || is_module(&r.path[..m.len() + 1]));
            (f, (m, r))
        })
        .collect();
    // Rule 1: stage ranks.
    for (file, (module, rs)) in &refs {
        let Some(stage) = module.first() else {
            continue;
        };
        let Some(mine) = rank(stage) else {
            out.push(format!(
                "src/{file}: `{stage}` is not a stage listed in RANKS"
            ));
            continue;
        };
        for r in rs {
            let Some(target) = r.path.first() else {
                continue;
            };
            if target == stage {
                continue;
            }
            match rank(target) {
                None => out.push(format!(
                    "src/{file}:{}: `crate::{target}` is not a stage listed in RANKS",
                    r.line
                )),
                Some(theirs) if theirs >= mine => out.push(format!(
                    "src/{file}:{}: `{stage}` (rank {mine}) imports `{target}` (rank {theirs}); \
                     imports go to lower ranks only",
                    r.line
                )),
                Some(_) => {}
            }
        }
    }
    // Rule 2: no cycle among the files of a directory module.
    let dirs: Vec<Vec<String>> = tree
        .keys()
        .filter(|f| f.ends_with("/mod.rs"))
        .map(|f| module_of(f))
        .collect();
    for dir in dirs {
        let prefix = dir.join("/") + "/";
        let mod_file = format!("{prefix}mod.rs");
        // Children: the first path component below the directory.
        let child_of = |file: &str| -> Option<String> {
            let rest = file.strip_prefix(&prefix)?;
            Some(match rest.split_once('/') {
                Some((d, _)) => d.to_string(),
                None if rest == "mod.rs" => "mod".to_string(),
                None => rest.trim_end_matches(".rs").to_string(),
            })
        };
        let children: BTreeSet<String> = tree.keys().filter_map(|f| child_of(f)).collect();
        // Names mod.rs imports from a child (re-exports included): name → child.
        let mut owner: BTreeMap<String, String> = BTreeMap::new();
        if let Some((_, rs)) = refs.get(&mod_file) {
            for r in rs {
                if r.path.len() > dir.len() + 1 && r.path[..dir.len()] == dir[..] {
                    let child = &r.path[dir.len()];
                    if children.contains(child) {
                        if let Some(a) = &r.alias {
                            owner.insert(a.clone(), child.clone());
                        }
                    }
                }
            }
        }
        let mut edges: BTreeMap<String, BTreeMap<String, String>> = BTreeMap::new();
        for (file, (_, rs)) in &refs {
            let Some(from) = child_of(file) else { continue };
            for r in rs {
                if *file == &mod_file && r.reexport {
                    continue;
                }
                if r.path.len() <= dir.len() || r.path[..dir.len()] != dir[..] {
                    continue;
                }
                let n = &r.path[dir.len()];
                let to = if children.contains(n) && n != "mod" {
                    n.clone()
                } else {
                    owner.get(n).cloned().unwrap_or_else(|| "mod".into())
                };
                if to != from {
                    edges
                        .entry(from.clone())
                        .or_default()
                        .entry(to)
                        .or_insert(format!("src/{file}:{}", r.line));
                }
            }
        }
        if let Some(cycle) = find_cycle(&edges) {
            let steps: Vec<String> = cycle
                .windows(2)
                .map(|w| format!("{} → {} ({})", w[0], w[1], edges[&w[0]][&w[1]]))
                .collect();
            out.push(format!(
                "src/{prefix}: the files import each other in a cycle: {}",
                steps.join(", ")
            ));
        }
    }
    out
}

/// A cycle of the graph as a closed walk (first node repeated at the end), if there is one.
fn find_cycle(edges: &BTreeMap<String, BTreeMap<String, String>>) -> Option<Vec<String>> {
    fn visit(
        v: &str,
        edges: &BTreeMap<String, BTreeMap<String, String>>,
        state: &mut BTreeMap<String, u8>,
        stack: &mut Vec<String>,
    ) -> Option<Vec<String>> {
        state.insert(v.to_string(), 1);
        stack.push(v.to_string());
        for w in edges.get(v).into_iter().flat_map(|m| m.keys()) {
            match state.get(w).copied().unwrap_or(0) {
                1 => {
                    let at = stack.iter().position(|x| x == w).unwrap_or(0);
                    let mut cycle = stack[at..].to_vec();
                    cycle.push(w.clone());
                    return Some(cycle);
                }
                0 => {
                    if let Some(c) = visit(w, edges, state, stack) {
                        return Some(c);
                    }
                }
                _ => {}
            }
        }
        stack.pop();
        state.insert(v.to_string(), 2);
        None
    }
    let mut state = BTreeMap::new();
    for v in edges.keys() {
        if state.get(v).copied().unwrap_or(0) == 0 {
            if let Some(c) = visit(v, edges, &mut state, &mut Vec::new()) {
                return Some(c);
            }
        }
    }
    None
}

fn read_tree(dir: &Path, rel: &str, out: &mut Tree) {
    for entry in std::fs::read_dir(dir).expect("src/ is readable") {
        let path = entry.expect("directory entry").path();
        let name = path.file_name().unwrap().to_string_lossy().into_owned();
        let rel_name = if rel.is_empty() {
            name.clone()
        } else {
            format!("{rel}/{name}")
        };
        if path.is_dir() {
            read_tree(&path, &rel_name, out);
        } else if name.ends_with(".rs") {
            out.insert(rel_name, std::fs::read_to_string(&path).unwrap());
        }
    }
}

#[test]
fn imports_follow_the_stage_order_and_form_no_cycle() {
    let mut tree = Tree::new();
    read_tree(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("src"),
        "",
        &mut tree,
    );
    // The crate root only declares the stages; the binary only calls `cli`.
    tree.remove("lib.rs");
    tree.remove("main.rs");
    assert!(tree.len() > 50, "read {} files", tree.len());
    let stages: BTreeSet<String> = tree
        .keys()
        .filter_map(|f| module_of(f).first().cloned())
        .collect();
    let listed: BTreeSet<String> = RANKS.iter().map(|(s, _)| s.to_string()).collect();
    assert_eq!(stages, listed, "RANKS must list every stage under src/");
    let v = violations(&tree);
    assert!(v.is_empty(), "import rules broken:\n{}", v.join("\n"));
}

fn tree(files: &[(&str, &str)]) -> Tree {
    files
        .iter()
        .map(|(f, t)| (f.to_string(), t.to_string()))
        .collect()
}

#[test]
fn the_check_catches_an_import_against_the_order() {
    let t = tree(&[
        ("lang/mod.rs", "use crate::ir::Circuit;\n"),
        ("ir/mod.rs", "use crate::lang::Ast;\n"),
    ]);
    let v = violations(&t);
    assert_eq!(v.len(), 1, "{v:?}");
    assert!(
        v[0].starts_with("src/lang/mod.rs:1: `lang` (rank 1) imports `ir` (rank 2)"),
        "{v:?}"
    );
    // Equal ranks may not import each other either; comments, strings and doc links are not
    // imports.
    let t = tree(&[(
        "sim/mod.rs",
        "//! [`crate::faults::FaultGraph`]\nfn f() { let s = \"crate::faults::x\"; }\n\
         /* crate::study::Pipeline */ fn g() { crate::faults::extract(); }\n",
    )]);
    let v = violations(&t);
    assert_eq!(v.len(), 1, "{v:?}");
    assert!(v[0].starts_with("src/sim/mod.rs:3:"), "{v:?}");
}

#[test]
fn the_check_catches_a_cycle_between_files_but_not_through_reexports() {
    let t = tree(&[
        (
            "noise/mod.rs",
            "mod a;\nmod b;\npub use a::Alpha;\npub use b::Beta;\n",
        ),
        ("noise/a.rs", "use crate::noise::Beta;\npub struct Alpha;\n"),
        ("noise/b.rs", "use super::a::Alpha;\npub struct Beta;\n"),
    ]);
    let v = violations(&t);
    assert_eq!(v.len(), 1, "{v:?}");
    assert!(v[0].contains("a → b (src/noise/a.rs:1)"), "{v:?}");
    assert!(v[0].contains("b → a (src/noise/b.rs:1)"), "{v:?}");
    // Without the back edge (a test module's `use super::*` is its own file) there is none.
    let t = tree(&[
        (
            "noise/mod.rs",
            "mod a;\nmod b;\npub use a::Alpha;\npub use b::{self, Beta};\n",
        ),
        ("noise/a.rs", "use crate::noise::Beta;\npub struct Alpha;\n"),
        (
            "noise/b.rs",
            "pub struct Beta;\n#[cfg(test)]\nmod tests {\n    use super::*;\n}\n",
        ),
    ]);
    assert!(violations(&t).is_empty(), "{:?}", violations(&t));
}

#[test]
fn scanner_reads_use_trees_and_skips_literals() {
    let m = vec!["ir".to_string(), "expand".to_string()];
    let text = "use crate::base::{did_you_mean, Source as Src, npy::{self}};\n\
                const C: char = '\\'';\nfn f<'a>(x: &'a str) { let r = r#\"crate::study\"#; }\n\
                use super::eval::Value;\n";
    let refs = references(&m, text);
    let paths: Vec<String> = refs.iter().map(|r| r.path.join("::")).collect();
    assert_eq!(
        paths,
        [
            "base::did_you_mean",
            "base::Source",
            "base::npy",
            "ir::eval::Value"
        ]
    );
    assert_eq!(refs[1].alias.as_deref(), Some("Src"));
    assert_eq!(refs[3].line, 4);
}
