//! The one integration-test binary: one module per area (front end, noise, graphs, shots,
//! estimates, distances, pictures, decoders, codes, generators), golden outputs of every subcommand, and
//! the import rules of the sources.
mod architecture;
mod codes;
mod decode;
mod distance;
mod draw;
mod estimate;
mod gen;
mod golden;
mod graph;
mod implement;
mod lang;
mod noise;
mod printer;
mod shots;
mod support;
