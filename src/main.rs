//! The `sheaf` command: parses arguments, calls the library, prints
//! diagnostics, maps outcomes to exit codes (0 success, 1 error, 2 usage).

use clap::{Parser, Subcommand, ValueEnum};
use sheaf::compile::{DiskWorld, compile};
use sheaf::output::write_outputs;
use sheaf::render::Format;
use std::path::PathBuf;
use std::process::ExitCode;

#[derive(Parser)]
#[command(
    name = "sheaf",
    version,
    about = "Compile a Markdown document with analysis blocks into a reproducible statistical report"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Build the report and its results file.
    Build {
        /// The Markdown document.
        document: PathBuf,
        /// Output folder (created if needed).
        #[arg(short = 'o', long = "out", value_name = "DIR")]
        out: PathBuf,
        /// Report format.
        #[arg(long = "to", value_enum, default_value_t = To::Html)]
        to: To,
        /// Print errors as one line each (file:line:col: error: message).
        #[arg(long)]
        short_errors: bool,
    },
}

#[derive(Clone, Copy, ValueEnum)]
enum To {
    Html,
    Md,
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli.command {
        Command::Build {
            document,
            out,
            to,
            short_errors,
        } => {
            let format = match to {
                To::Html => Format::Html,
                To::Md => Format::Markdown,
            };
            let display = document.display().to_string();
            let fail = |d: sheaf::diag::Diagnostic| {
                if short_errors {
                    eprintln!("{}", d.short());
                } else {
                    eprint!("{d}");
                }
                ExitCode::from(1)
            };
            let bytes = match std::fs::read(&document) {
                Ok(b) => b,
                Err(e) => {
                    return fail(
                        sheaf::diag::Diagnostic::new(format!("cannot read {display}: {e}"))
                            .hint("give the path of a Markdown document"),
                    );
                }
            };
            let base = document.parent().map(PathBuf::from).unwrap_or_default();
            let built = match compile(&display, &bytes, &DiskWorld { base }, format) {
                Ok(b) => b,
                Err(d) => return fail(d),
            };
            for w in &built.warnings {
                eprintln!("warning: {w}");
            }
            match write_outputs(&out, &built) {
                Ok(paths) => {
                    for p in paths {
                        eprintln!("wrote {}", p.display());
                    }
                    ExitCode::SUCCESS
                }
                Err(d) => fail(d),
            }
        }
    }
}
