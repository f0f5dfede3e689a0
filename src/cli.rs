//! The command line: `exoscreen check CASE`, its options, and what each outcome exits with.

use crate::assess::{AssessError, assess_within};
use crate::case::{CaseError, load_case_file};
use crate::estimate::EstimateError;
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
    /// Estimate the enthalpy of a reaction before any experiment, from standard enthalpies of
    /// formation (bundled table or your own) or from bond dissociation enthalpies; always an
    /// estimate to be confirmed by reaction calorimetry.
    #[command(after_help = ENTHALPY_HELP)]
    Enthalpy(EnthalpyArgs),
    /// Figures of an adiabatic (accelerating-rate) run corrected to phi = 1: onset, adiabatic
    /// rise, activation energy, TMRad curve, and a `decomposition:` entry.
    #[command(after_help = LAB_EXIT_CODES)]
    Arc(ArcArgs),
    /// Reaction-calorimeter runs: enthalpy per mole of the dosed reagent, thermal conversion,
    /// accumulation, and (isothermal runs at two or more temperatures) k_ref and Ea.
    #[command(after_help = LAB_EXIT_CODES)]
    Calorimetry(CalorimetryArgs),
    /// Analyse DSC scans (CSV with units in the header): onset, peak, energy of each; with two
    /// or more heating rates Kissinger and Flynn–Wall–Ozawa kinetics; a decomposition block
    /// for a case and the TD24 it implies.
    #[command(after_help = DSC_EXIT_CODES)]
    Dsc(DscArgs),
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

/// The ladder of `scale` when neither the command line nor the case's `scale_up` gives one.
pub const DEFAULT_SCALE_VOLUMES: &str = "1 L, 100 L, 1 m^3, 4 m^3, 16 m^3";

#[derive(Debug, clap::Args)]
pub struct ScaleArgs {
    /// The case file (YAML, format 1).
    pub case: PathBuf,
    /// Nominal volumes of the vessels, with units, separated by commas [default: the case's
    /// scale_up.volumes, else "1 L, 100 L, 1 m^3, 4 m^3, 16 m^3"].
    #[arg(long)]
    pub volumes: Option<String>,
    /// How the impeller speed follows the scale (with vessel.heat_transfer) [default: the
    /// case's scale_up.speed_rule, else power-per-volume].
    #[arg(long, value_enum)]
    pub speed_rule: Option<SpeedRuleArg>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    /// Wall-clock budget of the whole ladder, seconds; past it the run ends with exit status 1.
    #[arg(long, value_name = "SECONDS", default_value_t = crate::assess::TIME_BUDGET.as_secs_f64(), value_parser = positive_seconds)]
    pub time_budget: f64,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum SpeedRuleArg {
    /// Constant power per volume (N ∝ d^(-2/3)).
    PowerPerVolume,
    /// Constant tip speed (N ∝ 1/d).
    TipSpeed,
}

const ENTHALPY_HELP: &str =
    "Species may carry a phase: Br2(l), HCl(g), NBS(s), HCl(aq); without one, the only
phase in the table or the standard state at 298.15 K is used (the report says which).
Examples:
  exoscreen enthalpy \"CH4 + Cl2 -> CH3Cl + HCl\"
  exoscreen enthalpy \"C6H6 + Br2(l) -> PhBr + HBr\" --absorb-hx --format json
  exoscreen enthalpy \"CH4 + Cl2 -> CH3Cl + HCl\" --method bonds
  exoscreen enthalpy \"A + Cl2 -> B + HCl\" --data own.csv
Exit status:
  0  the estimate was computed
  1  a bundled table is broken
  2  bad input or usage (the message names the species, file, line and column)";

/// How `exoscreen enthalpy` estimates.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum EnthalpyMethod {
    /// Standard enthalpies of formation at 298.15 K.
    Formation,
    /// Bond dissociation enthalpies D298 (gas phase).
    Bonds,
}

#[derive(Debug, clap::Args)]
pub struct EnthalpyArgs {
    /// The reaction, e.g. "CH4 + Cl2 -> CH3Cl + HCl" (coefficients as in a case file).
    pub equation: String,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    /// How to estimate.
    #[arg(long, value_enum, default_value_t = EnthalpyMethod::Formation)]
    pub method: EnthalpyMethod,
    /// Your own enthalpies of formation: CSV with the header
    /// `species,phase,formula,dHf [kJ/mol],source` (any molar-energy unit in the brackets);
    /// they add species or are used before the bundled values.
    #[arg(long, value_name = "FILE")]
    pub data: Option<PathBuf>,
    /// Bond route: the bonds broken, e.g. "CH3-H, Cl-Cl" ("2 C-H", own value "C-H=413").
    #[arg(long, value_name = "BONDS", requires = "formed")]
    pub broken: Option<String>,
    /// Bond route: the bonds formed, e.g. "CH3-Cl, H-Cl".
    #[arg(long, value_name = "BONDS", requires = "broken")]
    pub formed: Option<String>,
    /// Add the heat of absorbing the gaseous HCl, HBr or HI formed in water (infinite
    /// dilution; concentrated acid releases less).
    #[arg(long)]
    pub absorb_hx: bool,
    /// Sources to prefer, in order, before the default ATcT > JANAF > CRC > NASA > Yaws
    /// (each a prefix of a source tag), e.g. "CRC,JANAF".
    #[arg(long, value_name = "SOURCES", value_delimiter = ',')]
    pub prefer: Vec<String>,
}

const LAB_EXIT_CODES: &str = "Exit status:
  0  the figures were computed
  1  the analysis failed on well-formed data (the message says why)
  2  bad input or usage (the message names file, row and column)";

#[derive(Debug, clap::Args)]
pub struct ArcArgs {
    /// The data file (CSV, `name [unit]` header: time, temperature, optional pressure).
    pub file: PathBuf,
    /// The phi factor of the cell (overrides `# phi` and the masses in the file).
    #[arg(long, value_parser = parse_phi)]
    pub phi: Option<f64>,
    /// Self-heat rate from which the exotherm counts, e.g. "0.02 K/min" (the default).
    #[arg(long, value_name = "RATE", value_parser = parse_heat_rate)]
    pub threshold: Option<f64>,
    /// Apparent reaction order n in (1 - X)^n of the Arrhenius fit (default 1).
    #[arg(long, value_parser = parse_order)]
    pub order: Option<f64>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
}

#[derive(Debug, clap::Args)]
pub struct CalorimetryArgs {
    /// One or more runs (CSV: time, reactor_temperature, optional jacket_temperature,
    /// heat_flow, dosed in kg or mol; kinetics metadata `# charge_amount`, `# volume`,
    /// `# feed_volume`).
    #[arg(required = true)]
    pub files: Vec<PathBuf>,
    /// Molar amount of the whole feed, when `dosed` is a mass (overrides `# feed_amount`).
    #[arg(long, value_name = "AMOUNT", value_parser = parse_amount)]
    pub feed_amount: Option<f64>,
    /// Baseline windows: the signal before START and after END, e.g. "0.4 h,6 h" (default:
    /// the first and last 5 % of each run).
    #[arg(long, value_name = "START,END", value_parser = parse_baseline)]
    pub baseline: Option<(f64, f64)>,
    /// Order of the rate in the charged reactant A.
    #[arg(long, default_value_t = 1.0, value_parser = parse_order)]
    pub order_charged: f64,
    /// Order of the rate in the dosed reactant B.
    #[arg(long, default_value_t = 1.0, value_parser = parse_order)]
    pub order_dosed: f64,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
}

fn parse_phi(text: &str) -> Result<f64, String> {
    match text.trim().parse::<f64>() {
        Ok(v) if v.is_finite() && v >= 1.0 => Ok(v),
        _ => Err(format!(
            "`{text}` is not a phi factor (accepted: a number >= 1, e.g. 1.8)"
        )),
    }
}

fn parse_order(text: &str) -> Result<f64, String> {
    match text.trim().parse::<f64>() {
        Ok(v) if v.is_finite() && (0.0..=5.0).contains(&v) => Ok(v),
        _ => Err(format!(
            "`{text}` is not a reaction order (accepted: a number from 0 to 5)"
        )),
    }
}

fn parse_si(
    text: &str,
    dimension: crate::case::units::Dimension,
    example: &str,
) -> Result<f64, String> {
    let bad = || format!("`{text}` is not accepted (accepted: e.g. \"{example}\")");
    let q = crate::case::units::parse_quantity(text)
        .map_err(|e| format!("{}; {}", e.message, bad()))?;
    if q.dimension.approx_eq(&dimension) && !q.affine && q.value_si.is_finite() {
        Ok(q.value_si)
    } else {
        Err(bad())
    }
}

fn parse_heat_rate(text: &str) -> Result<f64, String> {
    use crate::case::units::Dimension;
    let v = parse_si(
        text,
        Dimension::TEMPERATURE.div(Dimension::TIME),
        "0.02 K/min",
    )?;
    if v > 0.0 {
        Ok(v)
    } else {
        Err(format!("`{text}`: the threshold must be positive"))
    }
}

fn parse_amount(text: &str) -> Result<f64, String> {
    let v = parse_si(text, crate::case::units::Dimension::AMOUNT, "2.5 mol")?;
    if v > 0.0 {
        Ok(v)
    } else {
        Err(format!("`{text}`: the feed amount must be positive"))
    }
}

fn parse_baseline(text: &str) -> Result<(f64, f64), String> {
    use crate::case::units::Dimension;
    let Some((a, b)) = text.split_once(',') else {
        return Err(format!(
            "`{text}` is not START,END (accepted: e.g. \"0.4 h,6 h\")"
        ));
    };
    let (a, b) = (
        parse_si(a, Dimension::TIME, "0.4 h")?,
        parse_si(b, Dimension::TIME, "6 h")?,
    );
    if a < b {
        Ok((a, b))
    } else {
        Err(format!("`{text}`: START must be before END"))
    }
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
    #[error("{0}")]
    Estimate(#[from] EstimateError),
    /// Lab data (`crate::lab`): exit 2 for bad input, 1 for an analysis that failed.
    #[error("{0}")]
    Lab(#[from] crate::lab::LabError),
    #[error("{0}")]
    Scale(#[from] crate::assess::scale::ScaleError),
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
            AppError::Estimate(e) if e.is_bad_input() => 2,
            AppError::Estimate(_) => 1,
            AppError::Lab(e) => e.exit_code(),
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
        Command::Report(args) => report(&args),
        Command::Enthalpy(args) => enthalpy(&args),
        Command::Arc(args) => arc(&args),
        Command::Calorimetry(args) => calorimetry(&args),
        Command::Dsc(args) => dsc(&args),
        Command::Scale(args) => scale(&args),
    }
}

fn scale(args: &ScaleArgs) -> Result<Outcome, AppError> {
    use crate::assess::scale::{parse_volumes, scale_ladder};
    use crate::model::film::SpeedRule;
    use crate::report::scale::{render_json, render_table};
    use uom::si::volume::cubic_meter;
    // The command line's volumes first, so that a bad item is named before the case is read.
    let given = args.volumes.as_deref().map(parse_volumes).transpose()?;
    let case = load_case_file(&args.case)?;
    let plant = crate::model::plant::Plant::from_case(&case)
        .map_err(|e| AssessError::Geometry(e.to_string()))?;
    let asked = case.scale_up.as_ref();
    let volumes = match (given, asked) {
        (Some(given), _) => given,
        (None, Some(asked)) => asked
            .volumes
            .iter()
            .map(|v| v.get::<cubic_meter>())
            .collect(),
        (None, None) => parse_volumes(DEFAULT_SCALE_VOLUMES)?,
    };
    let rule = match (args.speed_rule, asked) {
        (Some(SpeedRuleArg::PowerPerVolume), _) => SpeedRule::PowerPerVolume,
        (Some(SpeedRuleArg::TipSpeed), _) => SpeedRule::TipSpeed,
        (None, Some(asked)) => asked.speed_rule,
        (None, None) => SpeedRule::PowerPerVolume,
    };
    let deadline = std::time::Instant::now() + std::time::Duration::from_secs_f64(args.time_budget);
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

fn enthalpy(args: &EnthalpyArgs) -> Result<Outcome, AppError> {
    use crate::estimate::{EnthalpyRequest, Method, estimate_enthalpy};
    use crate::report::enthalpy::{render_json, render_table};
    let method = match args.method {
        EnthalpyMethod::Formation => Method::Formation,
        EnthalpyMethod::Bonds => Method::Bonds,
    };
    if method == Method::Formation && args.broken.is_some() {
        return Err(EstimateError::Bonds(
            "--broken and --formed belong to the bond route: add --method bonds".to_string(),
        )
        .into());
    }
    let request = EnthalpyRequest {
        data_file: args.data.clone(),
        broken: args.broken.clone(),
        formed: args.formed.clone(),
        absorb_hx: args.absorb_hx,
        prefer: args
            .prefer
            .iter()
            .map(|p| p.trim().to_string())
            .filter(|p| !p.is_empty())
            .collect(),
        ..EnthalpyRequest::new(&args.equation, method)
    };
    let estimate = estimate_enthalpy(&request)?;
    let text = match args.format {
        Format::Table => render_table(&estimate),
        Format::Json => render_json(&estimate),
    };
    std::io::stdout().lock().write_all(text.as_bytes())?;
    Ok(Outcome::Computed)
}

fn arc(args: &ArcArgs) -> Result<Outcome, AppError> {
    use crate::lab::arc::input::{ArcOptions, analyse_table};
    let table = crate::lab::Table::read(&args.file)?;
    let options = ArcOptions {
        phi: args.phi,
        threshold: args.threshold,
        order: args.order,
    };
    let run = analyse_table(&table, &options)?;
    let source = Source {
        file: args.file.display().to_string(),
    };
    let text = match args.format {
        Format::Table => crate::report::arc::render_table(&run, &source),
        Format::Json => crate::report::arc::render_json(&run, &source),
    };
    std::io::stdout().lock().write_all(text.as_bytes())?;
    Ok(Outcome::Computed)
}

fn calorimetry(args: &CalorimetryArgs) -> Result<Outcome, AppError> {
    use crate::lab::calorimetry::input::{CalorimetryOptions, analyse_files};
    let tables = args
        .files
        .iter()
        .map(|f| crate::lab::Table::read(f))
        .collect::<Result<Vec<_>, _>>()?;
    let options = CalorimetryOptions {
        feed_amount: args.feed_amount,
        baseline: args.baseline,
        order_charged: args.order_charged,
        order_dosed: args.order_dosed,
    };
    let study = analyse_files(&tables, &options)?;
    let text = match args.format {
        Format::Table => crate::report::calorimetry::render_table(&study),
        Format::Json => crate::report::calorimetry::render_json(&study),
    };
    std::io::stdout().lock().write_all(text.as_bytes())?;
    Ok(Outcome::Computed)
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
    use crate::report::document::{LimitPart, Parts, ScalePart, build, files::report_files};
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
    let ladder = crate::report::scale_section::scale_section(
        &assessment.case,
        &assessment.plant,
        Some(deadline),
    );
    let scale = match &ladder {
        Ok(Some(s)) => ScalePart::Found(s),
        Ok(None) => ScalePart::Absent,
        Err(e) => ScalePart::Failed(e.to_string()),
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
            scale,
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

const DSC_EXIT_CODES: &str = "Exit status:
  0  the scans were analysed
  1  an analysis failed (no exotherm, no onset; the message names the file)
  2  bad input or usage (the message names file, row and column, and what would be accepted)

A scan file: `# key: value` lines at the top (e.g. `# sample_mass: 4.2 mg`), then a header of
`name [unit]` cells: `time [min]`, `temperature [degC]`, `heat_flow [mW]` or `heat_flow [W/g]`.";

#[derive(Debug, clap::Args)]
pub struct DscArgs {
    /// The scans, one CSV file each.
    #[arg(required = true, value_name = "FILE")]
    pub files: Vec<PathBuf>,
    /// Heating rate (e.g. "10 K/min") instead of the one fitted from the time and temperature
    /// columns: once for every file, or once per file in order.
    #[arg(long, value_name = "RATE", value_parser = parse_rate)]
    pub rate: Vec<f64>,
    /// Baseline limits as two temperatures (e.g. "120 degC, 260 degC") instead of the automatic
    /// baseline: once for every file, or once per file in order.
    #[arg(long, value_name = "T1, T2", value_parser = parse_limits)]
    pub baseline: Vec<(f64, f64)>,
    /// Sample mass (e.g. "4.2 mg") for absolute heat flows, instead of `# sample_mass:`.
    #[arg(long, value_name = "MASS", value_parser = parse_mass)]
    pub sample_mass: Option<f64>,
    /// The heat flow is endotherm-up (exotherms negative); the default is exotherm-up.
    #[arg(long)]
    pub endo_up: bool,
    /// Specific heat of the reaction mass for TD24 (e.g. "1.8 kJ/(kg*K)"); 1.8 kJ/(kg K)
    /// assumed when not given (said in the report).
    #[arg(long, value_name = "CP", value_parser = parse_specific_heat)]
    pub specific_heat: Option<f64>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
}

fn dsc(args: &DscArgs) -> Result<Outcome, AppError> {
    use crate::lab::dsc::ScanOptions;
    use crate::lab::{LabError, Table};
    let n = args.files.len();
    let rates = per_file(&args.rate, n, "--rate")?;
    let limits = per_file(&args.baseline, n, "--baseline")?;
    let mut tables = Vec::with_capacity(n);
    let mut errors = Vec::new();
    for path in &args.files {
        match Table::read(path) {
            Ok(t) => tables.push(t),
            Err(LabError::Invalid(list)) => errors.extend(list),
            Err(e) => return Err(e.into()),
        }
    }
    if !errors.is_empty() {
        return Err(LabError::Invalid(errors).into());
    }
    let options: Vec<ScanOptions> = (0..n)
        .map(|i| ScanOptions {
            rate: rates[i],
            baseline: limits[i],
            sample_mass: args.sample_mass,
            endo_up: args.endo_up,
        })
        .collect();
    let study = crate::lab::study::study(&tables, &options, args.specific_heat)?;
    let text = match args.format {
        Format::Table => crate::report::dsc::render_table(&study),
        Format::Json => crate::report::dsc::render_json(&study),
    };
    std::io::stdout().lock().write_all(text.as_bytes())?;
    Ok(Outcome::Computed)
}

/// An option given never, once (for every file) or once per file.
fn per_file<T: Copy>(values: &[T], files: usize, option: &str) -> Result<Vec<Option<T>>, AppError> {
    match values.len() {
        0 => Ok(vec![None; files]),
        1 => Ok(vec![Some(values[0]); files]),
        k if k == files => Ok(values.iter().map(|v| Some(*v)).collect()),
        k => Err(crate::lab::LabError::at(
            "command line",
            0,
            0,
            format!("{k} {option} values for {files} files"),
            format!("{option} once for every file, or once per file ({files})"),
        )
        .into()),
    }
}

/// A quantity of one dimension from an option, in SI.
fn option_quantity(
    text: &str,
    dimension: crate::case::units::Dimension,
    example: &str,
) -> Result<f64, String> {
    let q = crate::case::units::parse_quantity(text)
        .map_err(|e| format!("`{text}`: {}; accepted: e.g. \"{example}\"", e.message))?;
    if !q.dimension.approx_eq(&dimension) || q.unit_text.is_empty() {
        return Err(format!(
            "`{text}` is not a quantity of the right kind; accepted: e.g. \"{example}\""
        ));
    }
    Ok(q.value_si)
}

fn positive_option(value: f64, text: &str, example: &str) -> Result<f64, String> {
    if value > 0.0 {
        Ok(value)
    } else {
        Err(format!(
            "`{text}` must be above zero; accepted: e.g. \"{example}\""
        ))
    }
}

fn parse_rate(text: &str) -> Result<f64, String> {
    use crate::case::units::Dimension;
    let rate = Dimension::TEMPERATURE.div(Dimension::TIME);
    positive_option(option_quantity(text, rate, "10 K/min")?, text, "10 K/min")
}

fn parse_mass(text: &str) -> Result<f64, String> {
    let mass = crate::case::units::Dimension::MASS;
    positive_option(option_quantity(text, mass, "4.2 mg")?, text, "4.2 mg")
}

fn parse_specific_heat(text: &str) -> Result<f64, String> {
    use crate::case::units::Dimension;
    let cp = Dimension::new(2.0, 0.0, -2.0, -1.0, 0.0);
    let example = "1.8 kJ/(kg*K)";
    positive_option(option_quantity(text, cp, example)?, text, example)
}

fn parse_limits(text: &str) -> Result<(f64, f64), String> {
    use crate::case::units::Dimension;
    let example = "120 degC, 260 degC";
    let parts: Vec<&str> = text.split([',', ';']).collect();
    let [low, high] = parts.as_slice() else {
        return Err(format!(
            "`{text}` is not two temperatures; accepted: e.g. \"{example}\""
        ));
    };
    let low = option_quantity(low.trim(), Dimension::TEMPERATURE, example)?;
    let high = option_quantity(high.trim(), Dimension::TEMPERATURE, example)?;
    if low < high {
        Ok((low, high))
    } else {
        Err(format!(
            "`{text}`: the first limit must be the lower; accepted: e.g. \"{example}\""
        ))
    }
}
