//! The `wearout` binary: all the work is in the library.

fn main() -> std::process::ExitCode {
    wearout::cli::main()
}
