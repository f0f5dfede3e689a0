//! The command line: `exoscreen check CASE`, its options, and what each outcome exits with.

use crate::assess::{AssessError, assess};
use crate::case::{CaseError, load_case_file};
use crate::report::atomic::write_atomically;
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
    /// The same recipe in geometrically similar vessels from lab to plant: cooling area and
    /// capacity per volume, U, time constant, peak power, temperatures, class and the coolant
    /// each scale needs.
    #[command(after_help = SCALE_EXIT_CODES)]
    Scale(ScaleArgs),
}

const SCALE_EXIT_CODES: &str = "Exit status:
  0  every scale was computed
  1  the computation at one of the scales failed (the message names the volume and why)
  2  bad input or usage (a --volumes item that is not a volume; the case's file, line and key)";

#[derive(Debug, clap::Args)]
pub struct ScaleArgs {
    /// The case file (YAML, format 1).
    pub case: PathBuf,
    /// Nominal volumes of the vessels, with units, separated by commas.
    #[arg(long, default_value = "1 L, 100 L, 1 m^3, 4 m^3, 16 m^3")]
    pub volumes: String,
    /// How the impeller speed follows the scale (with vessel.heat_transfer).
    #[arg(long, value_enum, default_value_t = SpeedRuleArg::PowerPerVolume)]
    pub speed_rule: SpeedRuleArg,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum SpeedRuleArg {
    /// Constant power per volume (N ∝ d^(-2/3)).
    PowerPerVolume,
    /// Constant tip speed (N ∝ 1/d).
    TipSpeed,
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
}

#[derive(Debug, clap::Args)]
pub struct CheckArgs {
    /// The case file (YAML, format 1).
    pub case: PathBuf,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
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
    #[error("{0}")]
    Scale(#[from] crate::assess::scale::ScaleError),
}

impl AppError {
    pub fn exit_code(&self) -> u8 {
        match self {
            AppError::Case(_) => 2,
            AppError::Assess(_) | AppError::Output(_) | AppError::EnvelopeFile(..) => 1,
            AppError::Scale(e) => e.exit_code(),
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
        Command::Scale(args) => scale(&args),
    }
}

fn scale(args: &ScaleArgs) -> Result<Outcome, AppError> {
    use crate::assess::scale::{parse_volumes, scale_ladder};
    use crate::model::film::SpeedRule;
    use crate::report::scale::{render_json, render_table};
    let volumes = parse_volumes(&args.volumes)?;
    let case = load_case_file(&args.case)?;
    let plant = crate::model::plant::Plant::from_case(&case)
        .map_err(|e| AssessError::Geometry(e.to_string()))?;
    let rule = match args.speed_rule {
        SpeedRuleArg::PowerPerVolume => SpeedRule::PowerPerVolume,
        SpeedRuleArg::TipSpeed => SpeedRule::TipSpeed,
    };
    let deadline = std::time::Instant::now() + crate::assess::TIME_BUDGET;
    let ladder = scale_ladder(&plant, &volumes, rule, Some(deadline))?;
    let source = Source {
        file: args.case.display().to_string(),
    };
    let text = match args.format {
        Format::Table => render_table(&case, &ladder, &source),
        Format::Json => render_json(&case, &ladder, &source),
    };
    std::io::stdout().lock().write_all(text.as_bytes())?;
    Ok(Outcome::Computed)
}

fn limit(args: &LimitArgs) -> Result<Outcome, AppError> {
    use crate::assess::limit::{LIMIT_TIME_BUDGET, LimitSettings, dosing_limit_with_progress};
    use crate::report::limit::{TerminalProgress, render_json, render_table};
    let case = load_case_file(&args.case)?;
    let plant = crate::model::plant::Plant::from_case(&case)
        .map_err(|e| AssessError::Geometry(e.to_string()))?;
    let settings = LimitSettings::from_case(&case);
    let deadline = std::time::Instant::now() + LIMIT_TIME_BUDGET;
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

fn check(args: &CheckArgs) -> Result<Outcome, AppError> {
    let case = load_case_file(&args.case)?;
    let assessment = assess(case)?;
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
