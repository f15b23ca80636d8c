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
//!             ┌────────────────────────────────┼────────────────────────────┐
//!             ▼                                ▼                            ▼
//!   sim (tableau reference,          faults (backward sweep ──▶      gen (code families,
//!        Pauli-frame sampler)         FaultGraph ──▶ exports)          emits language text)
//!             │                                │
//!             └──────────────┬─────────────────┘
//!                            ▼
//!              analysis (bias, distance, comparison) · decode (matching, estimates, sweeps)
//!                            ▼
//!                     cli (one file per subcommand)
//! ```
//!
//! Imports go one way: `lang ← ir ← noise ← sim ← faults ← {analysis, decode} ← cli`. Nothing
//! imports `cli`; `gen` only produces text, which tests parse back. nom types stay inside `lang`;
//! the rest of the crate sees [`lang::Ast`] and [`base::Diagnostic`]. Library modules never print
//! or exit: they return values or diagnostics, and `cli` renders them and picks the exit code.
//!
//! Results of the simulators and the fault graph are estimates under the stated noise model:
//! Pauli channels (twirled where the hardware is not Pauli), independent between locations.
//!

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
