//! The `sheaf` command: parses arguments, calls the library, prints
//! diagnostics, maps outcomes to exit codes (0 success, 1 error or drift,
//! 2 usage).

// Diagnostics travel by value on the cold error path, as in the library.
#![allow(clippy::result_large_err)]

use clap::{Parser, Subcommand};
use sheaf::compile::{CACHE_DIR, build_file};
use sheaf::diag::Diagnostic;
use sheaf::output::write_outputs;
use sheaf::render::{FORMATS, Format};
use std::path::PathBuf;
use std::process::ExitCode;

/// Shown under every subcommand's help.
const SYNTAX: &str = "The document syntax (front matter, `anova` and `power` blocks, {{ }} \
expressions) is described in README.md, section \"A document\".";

#[derive(Parser)]
#[command(
    name = "sheaf",
    version,
    about = "Compile a Markdown document with analysis blocks into a reproducible statistical report",
    after_help = SYNTAX
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
    /// Print errors as one line each (file:line:col: error: message).
    #[arg(long, global = true)]
    short_errors: bool,
}

#[derive(Subcommand)]
enum Command {
    /// Build the report and its results file from a document and its data.
    #[command(after_help = SYNTAX)]
    Build {
        /// The Markdown document to compile.
        document: PathBuf,
        /// Output folder for the report, results file and figures (created if needed).
        #[arg(short = 'o', long = "out", value_name = "DIR")]
        out: PathBuf,
        /// Report format.
        #[arg(long = "to", value_parser = format_parser(), default_value = "html")]
        to: Format,
        /// Read data only from inside the document's folder: no absolute paths,
        /// no `..` escapes, no symbolic links out, no cache read (for untrusted
        /// documents); outputs must resolve inside it too.
        #[arg(long)]
        confine: bool,
    },
    /// Check that the report in DIR is exactly what the sources produce now.
    #[command(after_help = SYNTAX)]
    Verify {
        /// The Markdown document the report was built from.
        document: PathBuf,
        /// The output folder holding the report and results file to check.
        #[arg(short = 'o', long = "out", value_name = "DIR")]
        out: PathBuf,
        /// The format the report was built in (default: the one its results
        /// file records).
        #[arg(long = "to", value_parser = format_parser())]
        to: Option<Format>,
        /// Read data only from inside the document's folder: no absolute paths,
        /// no `..` escapes, no symbolic links out, no cache read (for untrusted
        /// documents).
        #[arg(long)]
        confine: bool,
    },
    /// Rebuild whenever the document or its data change; optionally serve the report.
    #[command(after_help = SYNTAX)]
    Watch {
        /// The Markdown document to compile and follow.
        document: PathBuf,
        /// Output folder for the report, results file and figures (created if needed).
        #[arg(short = 'o', long = "out", value_name = "DIR")]
        out: PathBuf,
        /// Report format.
        #[arg(long = "to", value_parser = format_parser(), default_value = "html")]
        to: Format,
        /// Serve the output folder on 127.0.0.1 and reload the page after each rebuild.
        #[arg(long)]
        serve: bool,
        /// Port for --serve (0 picks a free one).
        #[arg(long, default_value_t = sheaf::watch::DEFAULT_PORT)]
        port: u16,
        /// Read data only from inside the document's folder: no absolute paths,
        /// no `..` escapes, no symbolic links out, no cache read (for untrusted
        /// documents); outputs must resolve inside it too.
        #[arg(long)]
        confine: bool,
    },
    /// Start a new study folder from a small invented example.
    #[command(after_help = SYNTAX)]
    New {
        /// The folder to create (must not exist, or be empty).
        folder: PathBuf,
    },
    /// Run the built-in accuracy suite and write a validation report.
    #[command(after_help = SYNTAX)]
    Validate {
        /// Where to write validation.html and validation.results.json.
        #[arg(short = 'o', long = "out", value_name = "DIR")]
        out: Option<PathBuf>,
    },
}

/// `--to`: the registered output formats, each with its writer's help.
fn format_parser() -> impl clap::builder::TypedValueParser<Value = Format> {
    use clap::builder::TypedValueParser;
    let names = FORMATS
        .iter()
        .map(|f| clap::builder::PossibleValue::new(f.name()).help(f.writer().help()));
    clap::builder::PossibleValuesParser::new(names)
        .map(|name| Format::named(&name).unwrap_or(FORMATS[0]))
}

fn report(d: &Diagnostic, short: bool) -> ExitCode {
    if short {
        eprintln!("{}", d.short());
    } else {
        eprint!("{d}");
    }
    ExitCode::from(1)
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let short = cli.short_errors;
    match cli.command {
        Command::Build {
            document,
            out,
            to,
            confine,
        } => {
            let built = match build_file(&document, to, Some(&out.join(CACHE_DIR)), confine) {
                Ok(b) => b,
                Err(d) => return report(&d, short),
            };
            eprintln!(
                "{} block(s): {} computed, {} from the cache",
                built.blocks,
                built.recomputed,
                built.blocks - built.recomputed
            );
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
                Err(d) => report(&d, short),
            }
        }
        Command::Verify {
            document,
            out,
            to,
            confine,
        } => {
            let format = to
                .or_else(|| sheaf::verify::format_on_disk(&document, &out))
                .unwrap_or(Format::Html);
            // verify recomputes everything: it never trusts the cache.
            let built = match build_file(&document, format, None, confine) {
                Ok(b) => b,
                Err(d) => return report(&d, short),
            };
            let drift = match sheaf::verify::verify(&built, &out) {
                Ok(drift) => drift,
                Err(d) => return report(&d, short),
            };
            let report_path = out.join(&built.report_name);
            if drift.is_clean() {
                eprintln!("{} is up to date with its sources", report_path.display());
                eprint!("{}", drift.account());
                ExitCode::SUCCESS
            } else {
                eprintln!("{} has drifted from its sources:", report_path.display());
                eprint!("{}", drift.account());
                eprintln!(
                    "rebuild with `{}` and review the changes",
                    sheaf::verify::rebuild_command(&document, &out, format, confine)
                );
                ExitCode::from(1)
            }
        }
        Command::Watch {
            document,
            out,
            to,
            serve,
            port,
            confine,
        } => {
            let opts = sheaf::watch::WatchOptions {
                document,
                out,
                format: to,
                serve: serve.then_some(port),
                short_errors: short,
                confine,
            };
            match sheaf::watch::run(opts) {
                Ok(()) => ExitCode::SUCCESS,
                Err(d) => report(&d, short),
            }
        }
        Command::New { folder } => match sheaf::scaffold::create(&folder) {
            Ok(files) => {
                for f in files {
                    eprintln!("wrote {}", f.display());
                }
                eprintln!(
                    "next: sheaf build {} -o {}",
                    folder.join("report.md").display(),
                    folder.join("out").display()
                );
                ExitCode::SUCCESS
            }
            Err(d) => report(&d, short),
        },
        Command::Validate { out } => {
            let v = sheaf::validate::run();
            print!("{}", sheaf::validate::text(&v));
            if let Some(dir) = out {
                match sheaf::validate::write(&v, &dir) {
                    Ok(paths) => {
                        for p in paths {
                            eprintln!("wrote {}", p.display());
                        }
                    }
                    Err(d) => return report(&d, short),
                }
            }
            if v.failed() == 0 {
                ExitCode::SUCCESS
            } else {
                ExitCode::from(1)
            }
        }
    }
}
