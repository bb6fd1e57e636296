//! The `remanent` command line: parses arguments and hands each subcommand to its module.

mod cli;

fn main() -> std::process::ExitCode {
    cli::main()
}
