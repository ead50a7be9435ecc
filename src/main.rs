//! The `telltale` binary: the command-line front end. It parses flags and
//! hands over to the library's public API (`telltale::pipeline` and friends).

mod cli;

fn main() -> std::process::ExitCode {
    cli::run()
}
