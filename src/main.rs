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
use std::path::{Path, PathBuf};
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
    Build(Target),
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
        #[command(flatten)]
        target: Target,
        /// Serve the output folder on 127.0.0.1 and reload the page after each rebuild.
        #[arg(long)]
        serve: bool,
        /// Port for --serve (0 picks a free one).
        #[arg(long, default_value_t = sheaf::watch::DEFAULT_PORT)]
        port: u16,
    },
    /// Start a new study folder from a small invented example.
    #[command(after_help = SYNTAX)]
    New {
        /// The folder to create (must not exist, or be empty).
        folder: PathBuf,
    },
    /// Print the SQL that computes a block's cell summaries on a database
    /// engine, for `input: summary`.
    #[command(after_help = SQL_HELP)]
    Sql {
        /// The Markdown document holding the block.
        document: PathBuf,
        /// The block's id (needed when the document has several anova blocks).
        #[arg(long, value_name = "ID")]
        block: Option<String>,
        /// A table or view the engine knows, holding the raw rows.
        #[arg(long, value_name = "NAME")]
        table: Option<String>,
        /// A Parquet file or folder holding the raw rows (with `--engine`).
        #[arg(long, value_name = "PATH")]
        parquet: Option<String>,
        /// The engine that reads `--parquet` (only the FROM clause changes).
        #[arg(long, value_parser = ["duckdb", "datafusion", "spark"])]
        engine: Option<String>,
        /// Digits after the point the response keeps (default: what the
        /// block's local raw data show, or what its `query` file records).
        #[arg(long, value_name = "DIGITS")]
        scale: Option<u32>,
        /// The decimal subtracted from every value (default: the smallest value).
        #[arg(long, value_name = "DECIMAL")]
        origin: Option<String>,
        /// Write the query to this file instead of standard output.
        #[arg(short = 'o', long = "out", value_name = "FILE")]
        out: Option<PathBuf>,
    },
    /// Run the built-in accuracy suite and write a validation report.
    #[command(after_help = SYNTAX)]
    Validate {
        /// Where to write validation.html and validation.results.json.
        #[arg(short = 'o', long = "out", value_name = "DIR")]
        out: Option<PathBuf>,
    },
}

/// What `build` and `watch` compile, into which folder and format.
#[derive(clap::Args)]
struct Target {
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
}

/// Shown under `sheaf sql --help`.
const SQL_HELP: &str = "The query runs unchanged on DuckDB, Apache DataFusion and Apache Spark SQL; save \
its result as CSV beside the document, name that file in the block's `data` with `input: summary`, \
and the query file in `query`. README.md, section \"Cell summaries from a database engine\".";

/// `--to`: the registered output formats, each with its writer's help.
fn format_parser() -> impl clap::builder::TypedValueParser<Value = Format> {
    use clap::builder::TypedValueParser;
    let names = FORMATS
        .iter()
        .map(|f| clap::builder::PossibleValue::new(f.name()).help(f.writer().about().help));
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
    let outcome = match cli.command {
        Command::Build(t) => build(&t.document, &t.out, t.to, t.confine),
        Command::Verify {
            document,
            out,
            to,
            confine,
        } => verify(&document, &out, to, confine),
        Command::Watch {
            target,
            serve,
            port,
        } => sheaf::watch::run(sheaf::watch::WatchOptions {
            document: target.document,
            out: target.out,
            format: target.to,
            serve: serve.then_some(port),
            short_errors: short,
            confine: target.confine,
        })
        .map(|()| ExitCode::SUCCESS),
        Command::New { folder } => new(&folder),
        Command::Validate { out } => validate(out.as_deref()),
        Command::Sql {
            document,
            block,
            table,
            parquet,
            engine,
            scale,
            origin,
            out,
        } => sql(
            sheaf::query::QueryRequest {
                document,
                block,
                table,
                parquet,
                engine: engine.as_deref().and_then(sheaf::query::Engine::named),
                scale,
                origin,
            },
            out.as_deref(),
        ),
    };
    outcome.unwrap_or_else(|d| report(&d, short))
}

/// `sheaf build`: compile, show the warnings, write the outputs.
fn build(document: &Path, out: &Path, to: Format, confine: bool) -> Result<ExitCode, Diagnostic> {
    let built = build_file(document, to, Some(&out.join(CACHE_DIR)), confine)?;
    eprintln!(
        "{} block(s): {} computed, {} from the cache",
        built.blocks,
        built.recomputed,
        built.blocks - built.recomputed
    );
    for w in &built.warnings {
        eprintln!("warning: {w}");
    }
    for p in write_outputs(out, &built)? {
        eprintln!("wrote {}", p.display());
    }
    Ok(ExitCode::SUCCESS)
}

/// `sheaf verify`: recompute everything (never trusting the cache) and
/// compare with the files in `out`; drift exits with 1.
fn verify(
    document: &Path,
    out: &Path,
    to: Option<Format>,
    confine: bool,
) -> Result<ExitCode, Diagnostic> {
    let format = to
        .or_else(|| sheaf::verify::format_on_disk(document, out))
        .unwrap_or(FORMATS[0]);
    let built = build_file(document, format, None, confine)?;
    let drift = sheaf::verify::verify(&built, out)?;
    let report_path = out.join(&built.report_name);
    if drift.is_clean() {
        eprintln!("{} is up to date with its sources", report_path.display());
        eprint!("{}", drift.account());
        return Ok(ExitCode::SUCCESS);
    }
    eprintln!("{} has drifted from its sources:", report_path.display());
    eprint!("{}", drift.account());
    eprintln!(
        "rebuild with `{}` and review the changes",
        sheaf::verify::rebuild_command(document, out, format, confine)
    );
    Ok(ExitCode::from(1))
}

/// `sheaf new`: a study folder from the invented example.
fn new(folder: &Path) -> Result<ExitCode, Diagnostic> {
    for f in sheaf::scaffold::create(folder)? {
        eprintln!("wrote {}", f.display());
    }
    eprintln!(
        "next: sheaf build {} -o {}",
        folder.join("report.md").display(),
        folder.join("out").display()
    );
    Ok(ExitCode::SUCCESS)
}

/// `sheaf sql`: the block's cell query, printed or written to a file.
fn sql(request: sheaf::query::QueryRequest, out: Option<&Path>) -> Result<ExitCode, Diagnostic> {
    let text = request.run()?;
    match out {
        Some(path) => {
            std::fs::write(path, &text)
                .map_err(|e| Diagnostic::new(format!("cannot write {}: {e}", path.display())))?;
            eprintln!("wrote {}", path.display());
        }
        None => print!("{text}"),
    }
    Ok(ExitCode::SUCCESS)
}

/// `sheaf validate`: the accuracy suite, optionally written as a report;
/// any failed check exits with 1.
fn validate(out: Option<&Path>) -> Result<ExitCode, Diagnostic> {
    let v = sheaf::validate::run();
    print!("{}", sheaf::validate::text(&v));
    if let Some(dir) = out {
        for p in sheaf::validate::write(&v, dir)? {
            eprintln!("wrote {}", p.display());
        }
    }
    Ok(if v.failed() == 0 {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    })
}
