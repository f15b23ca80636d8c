//! slant: syndrome-extraction circuits under biased noise.
//!
//! The crate has the shape of a compiler. Each stage has one entry function taking the previous
//! stage's type:
//!
//! ```text
//! text ──lang::parse──▶ Ast ──ir::expand──▶ Circuit ──ir::check──▶ checked Circuit
//!                                              │
//!                         noise::apply (presets, model files) writes explicit channels
//!                                              │
//!             ┌────────────────────────────────┤
//!             ▼                                ▼
//!   sim (tableau reference,          faults (backward sweep ──▶      gen (code families,
//!        Pauli-frame sampler)         FaultGraph ──▶ exports)          language text via lang)
//!             │                                │
//!             │                 ┌──────────────┴──────────────┐
//!             │                 ▼                             ▼
//!             │     analysis (bias, distance)     decode (graphs and detection events:
//!             │                 │                        MWPM, union-find)
//!             └─────────────────┴──────────────┬──────────────┘
//!                                              ▼
//!        study (the one pipeline circuit + noise → graph / samples → decoder → estimates;
//!               Monte Carlo, comparison, sweeps, threshold fits, plots)
//!                                              ▼
//!                                cli (one file per subcommand)
//! ```
//!
//! Below every stage, [`base`] holds the words they share: [`base::Source`] and
//! [`base::Span`], [`base::Diagnostic`], [`base::Pauli`], [`base::Gate`] with its semantics,
//! [`base::ChannelKind`], and small helpers (probabilities, parity sets, `.npy`, atomic output).
//!
//! Imports go one way, to lower ranks only: `base` 0 < `lang` 1 < {`ir`, `gen`} 2 < `noise` 3 <
//! {`sim`, `faults`} 4 < {`analysis`, `decode`} 5 < `study` 6 < `cli` 7; stages of equal rank do
//! not import each other. Each stage's `mod.rs` re-exports what other stages may use and keeps
//! its files private; `tests/architecture.rs` checks the order and that no files of a module
//! import each other in a cycle. nom types stay inside `lang`. Library modules never print or
//! exit: they return values, diagnostics and warnings as data, and `cli` renders them and picks
//! the exit code.
//!
//! Results of the simulators and the fault graph are estimates under the stated noise model:
//! Pauli channels (twirled where the hardware is not Pauli), independent between locations.
//!
//! ```
//! let src = slant::base::Source::new("bell.slant", "qubit a\nqubit b\nh a\ncx a b\n\
//!     measure z a -> ma\nmeasure z b -> mb\ndetector = ma ^ mb\n");
//! let circuit = slant::ir::load_source(&src, &[]).unwrap();
//! assert_eq!(circuit.detectors.len(), 1);
//! let noisy = slant::study::Pipeline::from_circuit(circuit)
//!     .noised(Some("circuit p=0.001"))
//!     .unwrap();
//! assert!(noisy.warnings().is_empty());
//! assert!(!noisy.graph(&Default::default()).edges.is_empty());
//! ```

pub mod analysis;
pub mod base;
pub mod cli;
pub mod decode;
pub mod faults;
pub mod gen;
pub mod ir;
pub mod lang;
pub mod noise;
pub mod sim;
pub mod study;
