//! The `wearout` binary: the command line (`cli`) over the library.

mod cli;

fn main() -> std::process::ExitCode {
    cli::main()
}
