//! The bodies of slant's fuzz targets, one function per reader: circuits (parser, expander,
//! determinism check, canonical printer, and for small circuits noise, fault graph and
//! sampler), noise-model files, `--noise` texts, sweep specs and results stores.
//!
//! Shared by the cargo-fuzz targets (`fuzz/fuzz_targets/*.rs`, nightly + cargo-fuzz) and the
//! stable driver that `cargo test` runs (`tests/fuzz.rs`), so both test the same thing. A
//! target returns normally on any input, accepted or refused; a panic, a hang or an allocation
//! past the memory cap is a finding.

use std::sync::Arc;

use slant::base::{source_from_bytes, Source};
use slant::ir::{Circuit, Limits};
use slant::noise::{NoiseModel, NoiseSpec};
use slant::sim::Outputs;
use slant::study::{aggregate, merge_rows, parse_rows, Pipeline, SweepSpec};

/// A target: its name (the name of its corpus and regression directories) and its body.
pub type Target = (&'static str, fn(&[u8]));

/// The targets.
pub const TARGETS: &[Target] = &[
    ("circuit", circuit),
    ("model", model),
    ("noise", noise),
    ("spec", spec),
    ("store", store),
];

/// Limits small enough that one input costs milliseconds: the expansion's own budget is what
/// keeps a mutated loop bound from running for minutes.
fn limits() -> Limits {
    Limits { max_items: 200_000 }
}

fn source(name: &str, data: &[u8]) -> Option<Arc<Source>> {
    source_from_bytes(name.to_string(), data.to_vec()).ok()
}

/// A small circuit with every kind of operation the noise compilers handle.
fn host() -> Circuit {
    let text = "qubit a\nqubit b\nqubit c\nlayer { h a }\nlayer { cx a b }\nlayer { cz b c }\n\
                measure z a -> ma, z b -> mb\nreset z a\nmeasure z c -> mc\n\
                detector = ma ^ mb\nobservable o = mc\n";
    slant::ir::load_source(&Source::new("host.slant", text), &[]).expect("host circuit loads")
}

/// Exercises the noisy stages on a small circuit: graph, matching graph and a few shots.
fn study(circuit: Circuit, noise: &NoiseSpec) {
    if circuit.op_count() > 2_000 || circuit.qubits.len() > 200 {
        return;
    }
    let Ok(noisy) = slant::noise::apply(&circuit, noise) else {
        return;
    };
    let pipeline = Pipeline::from_circuit(noisy);
    let graph = pipeline.graph(&Default::default());
    let _ = graph.matching_graph();
    if let Ok(sampler) = pipeline.sampler() {
        sampler.sample(64, 1, Outputs::syndromes(), |_| {});
    }
}

/// Circuit text: parse, expand and check under small limits; an accepted circuit prints in
/// canonical form, which parses again to the same text, and small ones are studied under
/// circuit-level noise.
pub fn circuit(data: &[u8]) {
    let Some(src) = source("fuzz.slant", data) else {
        return;
    };
    for d in slant::ir::load_source_with(&src, &[], &limits())
        .err()
        .unwrap_or_default()
    {
        let _ = d.render();
    }
    let Ok(ast) = slant::lang::parse(&src) else {
        return;
    };
    let text = slant::lang::print(&ast);
    let again = slant::lang::parse(&Source::new("printed.slant", text.clone()))
        .expect("the canonical form of a parsed circuit parses");
    assert_eq!(
        slant::lang::print(&again),
        text,
        "printing is not idempotent"
    );
    if let Ok(c) = slant::ir::load_source_with(&src, &[], &limits()) {
        let noise = NoiseSpec::parse("circuit p=0.01 bias=10").expect("preset parses");
        study(c, &noise);
    }
}

/// A noise-model file: read, then compiled onto a small circuit and studied.
pub fn model(data: &[u8]) {
    let Some(src) = source("fuzz.toml", data) else {
        return;
    };
    match NoiseModel::parse(&src) {
        Ok(m) => study(host(), &NoiseSpec::Model(Box::new(m))),
        Err(d) => {
            let _ = d.render();
        }
    }
}

/// A `--noise` text (preset with keys, or `cx=` implementation).
pub fn noise(data: &[u8]) {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    match NoiseSpec::parse(text) {
        Ok(spec) => study(host(), &spec),
        Err(d) => {
            let _ = d.render();
        }
    }
}

/// A sweep spec: parsed and expanded into tasks (nothing is sampled).
pub fn spec(data: &[u8]) {
    let Some(src) = source("fuzz-spec.toml", data) else {
        return;
    };
    if let Err(d) = SweepSpec::parse(&src) {
        let _ = d.render();
    }
}

/// A results store: rows read, merged with themselves and summed per task.
pub fn store(data: &[u8]) {
    let Some(src) = source("fuzz.jsonl", data) else {
        return;
    };
    match parse_rows(&src) {
        Ok((rows, _)) => {
            // A store may disagree with itself (two rows of one chunk); merged with a copy of
            // itself it disagrees exactly twice as often, never in new ways.
            let (_, own) = merge_rows([rows.clone()]);
            let (merged, both) = merge_rows([rows.clone(), rows]);
            assert_eq!(both.len(), 2 * own.len(), "merging a store with itself");
            let _ = aggregate(&merged);
        }
        Err(d) => {
            let _ = d.render();
        }
    }
}
