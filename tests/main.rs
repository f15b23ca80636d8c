//! The one integration-test binary: runs the real `slant` executable, one module per subcommand.
mod decode;
mod graph;
mod lang;
mod codes;
mod gen;
