//! The one integration-test binary: runs the real `slant` executable, one module per subcommand.
mod architecture;
mod codes;
mod decode;
mod distance;
mod estimate;
mod gen;
mod golden;
mod graph;
mod lang;
mod noise;
mod shots;
mod support;
