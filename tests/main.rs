//! The one integration-test binary: runs the real `slant` executable, one module per subcommand.
mod graph;
mod lang;
