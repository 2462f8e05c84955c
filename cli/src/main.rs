//! The `finespike` command: see the `finespike_cli` crate (`src/lib.rs`) and `finespike --help`.

fn main() -> std::process::ExitCode {
    finespike_cli::main()
}
