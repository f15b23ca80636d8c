//! The one integration-test binary: one module per area (front end, noise, graphs, shots,
//! estimates, distances, pictures, decoders, codes, generators), golden outputs of every
//! subcommand, and the import rules of the sources, the README examples and the file-format
//! reference.
mod architecture;
mod codes;
mod decode;
mod decode_events;
mod device;
mod distance;
mod draw;
mod estimate;
mod fuzz;
mod gen;
mod golden;
mod graph;
mod implement;
mod lang;
mod noise;
mod printer;
mod readme;
mod reference;
mod robust;
mod scaling;
mod shots;
mod support;
