//! The command line: `exoscreen check CASE`, its options, and what each outcome exits with.

use crate::assess::{AssessError, assess_within};
use crate::case::{CaseError, load_case_file};
use crate::report::atomic::{DirectoryError, write_atomically, write_directory_atomically};
use crate::report::csv::envelope_csv;
use crate::report::json::JsonExporter;
use crate::report::table::TableExporter;
use crate::report::{Exporter, Source};
use clap::{Parser, Subcommand, ValueEnum};
use std::io::Write;
use std::path::PathBuf;

const EXIT_CODES: &str = "Exit status:
  0  the figures were computed (whatever the verdict)
  1  the computation itself failed (the message says which scenario and why)
  2  bad input or usage (the message names file, line, column and key)
  3  with --fail-at-class N: the criticality class is N or above, or there is no class";

#[derive(Debug, Parser)]
#[command(name = "exoscreen", version, about = "Thermal-runaway screening of an exothermic recipe in a jacketed vessel", after_help = EXIT_CODES)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Compute the screening figures of one case: adiabatic rise, accumulation, MTSR,
    /// simulated MTSR, MTT, TD24, TMRad, criticality class, cooling.
    #[command(after_help = EXIT_CODES)]
    Check(CheckArgs),
    /// Find the shortest constant-rate feed duration (the fastest dosing) that meets the
    /// cooling, temperature and off-gas criteria at once, and the coolant the case needs.
    #[command(after_help = LIMIT_EXIT_CODES)]
    Limit(LimitArgs),
    /// Write the stage-gate report of one case into a new directory: report.html (one
    /// self-contained file that prints on A4), report.md, timeseries.csv and the plots as SVG.
    #[command(after_help = REPORT_EXIT_CODES)]
    Report(ReportArgs),
}

const REPORT_EXIT_CODES: &str = "Exit status:
  0  the report was written (whatever the verdict)
  1  the computation or the writing failed (nothing is left half-written)
  2  bad input or usage, or DIR exists without --force (nothing is written)";

#[derive(Debug, clap::Args)]
pub struct ReportArgs {
    /// The case file (YAML, format 1).
    pub case: PathBuf,
    /// The directory to create; it appears complete or not at all.
    #[arg(long, value_name = "DIR")]
    pub out: PathBuf,
    /// Replace DIR if it exists and holds an earlier report (and nothing else).
    #[arg(long)]
    pub force: bool,
    /// Wall-clock budget of the whole computation (figures, then the dosing-limit search),
    /// seconds; figures past it end the run with exit status 1 and nothing written, a
    /// dosing-limit search past it is reported as not completed.
    #[arg(long, value_name = "SECONDS", default_value_t = crate::assess::limit::LIMIT_TIME_BUDGET.as_secs_f64(), value_parser = positive_seconds)]
    pub time_budget: f64,
    /// Leave out the dosing-limit search (about a second on the demo cases, longer on slow
    /// ones); the report then says it was not computed.
    #[arg(long)]
    pub no_limit: bool,
}

const LIMIT_EXIT_CODES: &str = "Exit status:
  0  the search ran (whether or not a feasible feed duration exists)
  1  the computation itself failed (the message says which scenario and why)
  2  bad input or usage (the message names file, line, column and key)";

#[derive(Debug, clap::Args)]
pub struct LimitArgs {
    /// The case file (YAML, format 1).
    pub case: PathBuf,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    /// Wall-clock budget of the whole search, seconds; past it the search ends with exit
    /// status 1.
    #[arg(long, value_name = "SECONDS", default_value_t = crate::assess::limit::LIMIT_TIME_BUDGET.as_secs_f64(), value_parser = positive_seconds)]
    pub time_budget: f64,
}

/// A budget in seconds: a positive finite number, at most a day.
fn positive_seconds(text: &str) -> Result<f64, String> {
    match text.trim().parse::<f64>() {
        Ok(s) if s.is_finite() && s > 0.0 && s <= 86_400.0 => Ok(s),
        _ => Err(format!(
            "expected a number of seconds above 0 and at most 86400, found {text:?}"
        )),
    }
}

#[derive(Debug, clap::Args)]
pub struct CheckArgs {
    /// The case file (YAML, format 1).
    pub case: PathBuf,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    /// Wall-clock budget of the whole computation, seconds; past it the run ends with exit
    /// status 1 and a message naming the scenario.
    #[arg(long, value_name = "SECONDS", default_value_t = crate::assess::TIME_BUDGET.as_secs_f64(), value_parser = positive_seconds)]
    pub time_budget: f64,
    /// Exit with status 3 when the criticality class is N or above (or cannot be given).
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u8).range(1..=5))]
    pub fail_at_class: Option<u8>,
    /// Also write the failure envelope (failure times over the whole process, decomposition
    /// on) to FILE as CSV; written only once everything has been computed.
    #[arg(long, value_name = "FILE")]
    pub envelope_csv: Option<PathBuf>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Format {
    Table,
    Json,
}

/// Everything that can end a run without figures.
#[derive(Debug, thiserror::Error)]
pub enum AppError {
    #[error("{0}")]
    Case(#[from] CaseError),
    #[error("computation failed: {0}")]
    Assess(#[from] AssessError),
    #[error("cannot write the report: {0}")]
    Output(#[from] std::io::Error),
    #[error("cannot write the envelope to {0}: {1}")]
    EnvelopeFile(String, std::io::Error),
    #[error("cannot read {0}: {1}")]
    CaseBytes(String, std::io::Error),
    #[error("cannot write the report: {0}")]
    ReportDirectory(#[from] DirectoryError),
    #[error("computation failed: the report's time series: {0}")]
    Series(#[from] crate::report::series::SeriesError),
}

impl AppError {
    pub fn exit_code(&self) -> u8 {
        match self {
            AppError::Case(_) | AppError::CaseBytes(..) => 2,
            AppError::ReportDirectory(DirectoryError::Exists(_))
            | AppError::ReportDirectory(DirectoryError::NotReplaceable(..)) => 2,
            AppError::Assess(_)
            | AppError::Output(_)
            | AppError::EnvelopeFile(..)
            | AppError::Series(_)
            | AppError::ReportDirectory(DirectoryError::Io(..)) => 1,
        }
    }
}

/// What a successful run found, for the exit status.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Outcome {
    Computed,
    GateFailed,
}

pub fn run(cli: Cli) -> Result<Outcome, AppError> {
    match cli.command {
        Command::Check(args) => check(&args),
        Command::Limit(args) => limit(&args),
        Command::Report(args) => report(&args),
    }
}

fn limit(args: &LimitArgs) -> Result<Outcome, AppError> {
    use crate::assess::limit::{LimitSettings, dosing_limit_with_progress};
    use crate::report::limit::{TerminalProgress, render_json, render_table};
    let case = load_case_file(&args.case)?;
    let plant = crate::model::plant::Plant::from_case(&case)
        .map_err(|e| AssessError::Geometry(e.to_string()))?;
    let settings = LimitSettings::from_case(&case);
    let deadline = std::time::Instant::now() + std::time::Duration::from_secs_f64(args.time_budget);
    let mut progress = TerminalProgress::new();
    let found = dosing_limit_with_progress(&plant, &settings, Some(deadline), &mut |p| {
        progress.update(p)
    });
    progress.finish();
    let found = found.map_err(AssessError::from)?;
    let source = Source {
        file: args.case.display().to_string(),
    };
    let text = match args.format {
        Format::Table => render_table(&found, &case.title, &source),
        Format::Json => render_json(&found, &case.title, &source),
    };
    std::io::stdout().lock().write_all(text.as_bytes())?;
    Ok(Outcome::Computed)
}

fn report(args: &ReportArgs) -> Result<Outcome, AppError> {
    use crate::assess::limit::{LimitSettings, dosing_limit};
    use crate::report::document::provenance::Provenance;
    use crate::report::document::{LimitPart, Parts, build, files::report_files};
    use crate::report::plot::all_plots;
    use crate::report::series::sample;
    let out = args.out.display().to_string();
    // Fail before the computation when DIR is in the way (checked again when writing).
    if args.out.symlink_metadata().is_ok() && !args.force {
        return Err(DirectoryError::Exists(out).into());
    }
    let case = load_case_file(&args.case)?;
    let case_file = args.case.display().to_string();
    let bytes = std::fs::read(&args.case).map_err(|e| AppError::CaseBytes(case_file.clone(), e))?;
    let budget = std::time::Duration::from_secs_f64(args.time_budget);
    let deadline = std::time::Instant::now() + budget;
    let limit_settings = LimitSettings::from_case(&case);
    let assessment = assess_within(case, budget)?;
    let found = if args.no_limit {
        None
    } else {
        Some(dosing_limit(
            &assessment.plant,
            &limit_settings,
            Some(deadline),
        ))
    };
    let limit = match &found {
        None => LimitPart::Skipped,
        Some(Ok(l)) => LimitPart::Found(l),
        Some(Err(e)) => LimitPart::Failed(e.to_string()),
    };
    let series = sample(&assessment, REPORT_SERIES_POINTS)?;
    let plots = all_plots(&assessment, &series);
    let provenance = Provenance::new(
        case_file,
        &bytes,
        format!(
            "time budget {} s; dosing limit {}",
            args.time_budget,
            if args.no_limit {
                "not computed (--no-limit)"
            } else {
                "computed"
            }
        ),
    );
    let doc = build(
        &assessment,
        &Parts {
            limit,
            plots: &plots,
            provenance: &provenance,
        },
    );
    let files = report_files(&doc, &series, &plots);
    write_directory_atomically(&args.out, &files, args.force)?;
    eprintln!(
        "exoscreen: wrote the report to {out} ({} files)",
        files.len()
    );
    Ok(Outcome::Computed)
}

/// Points of each sampled series in timeseries.csv and the plots.
const REPORT_SERIES_POINTS: usize = 400;

fn check(args: &CheckArgs) -> Result<Outcome, AppError> {
    let case = load_case_file(&args.case)?;
    let assessment = assess_within(case, std::time::Duration::from_secs_f64(args.time_budget))?;
    let source = Source {
        file: args.case.display().to_string(),
    };
    let text = match args.format {
        Format::Table => TableExporter.render(&assessment, &source),
        Format::Json => JsonExporter.render(&assessment, &source),
    };
    if let Some(path) = &args.envelope_csv {
        if let Some(e) = &assessment.envelope_error {
            return Err(AssessError::from(e.clone()).into());
        }
        write_atomically(path, &envelope_csv(&assessment.envelope))
            .map_err(|e| AppError::EnvelopeFile(path.display().to_string(), e))?;
    }
    std::io::stdout().lock().write_all(text.as_bytes())?;
    Ok(gate(args.fail_at_class, assessment.figures.class))
}

fn gate(fail_at: Option<u8>, class: Option<u8>) -> Outcome {
    match (fail_at, class) {
        (None, _) => Outcome::Computed,
        (Some(limit), Some(c)) if c < limit => Outcome::Computed,
        (Some(limit), found) => {
            let why = found.map_or(
                "there is no criticality class (no decomposition data)".to_string(),
                |c| format!("criticality class {c} is at or above {limit}"),
            );
            eprintln!("exoscreen: stage gate failed: {why}");
            Outcome::GateFailed
        }
    }
}
