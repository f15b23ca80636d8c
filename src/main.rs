//! The `slant` binary: parse the arguments, run the subcommand, map the outcome to an exit code.

/// Stack of the thread that runs the subcommand. The parser, the expander and the printer
/// recurse over nesting that the language bounds (64 levels of brackets, 1000 operators or
/// `else if` links in a chain); the default 8 MiB main stack leaves too little margin for the
/// deepest inputs those bounds allow. Untouched stack pages cost no memory.
const STACK_BYTES: usize = 256 << 20;

fn main() {
    // Writing to a closed pipe (`slant new … | head`) should end the process quietly, as it does
    // for other Unix tools, instead of failing the write and panicking in `print!`.
    #[cfg(unix)]
    // SAFETY: restoring the default disposition of one signal before any thread exists.
    unsafe {
        libc::signal(libc::SIGPIPE, libc::SIG_DFL);
    }
    let code = std::thread::Builder::new()
        .name("slant".into())
        .stack_size(STACK_BYTES)
        .spawn(slant::cli::main)
        .map(|worker| worker.join().unwrap_or(slant::cli::EXIT_INTERNAL))
        .unwrap_or_else(|e| {
            eprintln!("slant: internal error: cannot start the worker thread: {e}");
            slant::cli::EXIT_INTERNAL
        });
    std::process::exit(code);
}
