//! The one integration-test binary: runs the real `slant` executable, one module per subcommand.
mod lang;
mod graph;
mod decode;
mod distance;
mod estimate;
mod shots;
mod support;
mod codes;
mod gen;
mod noise;
