//! Calorimeter runs from data tables: the columns and metadata of each file, the heat figures
//! of each run, and the kinetic fit across the isothermal ones.

use super::kinetics::{
    ArrheniusFit, FitRun, ISOTHERMAL_BAND, RateModel, fit_arrhenius, fit_rate_constant,
};
use super::{BaselineLimits, HeatFigures, HeatProblem, RunSeries, analyse_heat};
use crate::case::units::Dimension;
use crate::lab::{Column, LabError, Table, Wanted};
use crate::warning::Warning;

const POWER: Dimension = Dimension::new(2.0, 1.0, -3.0, 0.0, 0.0);
const VOLUME: Dimension = Dimension::new(3.0, 0.0, 0.0, 0.0, 0.0);
/// Below this maximum accumulation a run is close to feed-controlled and says little about k
/// (a screening choice of this program).
const LOW_ACCUMULATION: f64 = 0.05;

/// What the command line adds to the files.
#[derive(Debug, Clone, Copy)]
pub struct CalorimetryOptions {
    /// mol of the whole feed when `dosed` is a mass.
    pub feed_amount: Option<f64>,
    /// (head end, tail start), s.
    pub baseline: Option<(f64, f64)>,
    pub order_charged: f64,
    pub order_dosed: f64,
}

/// One run: its file, series in SI and heat figures.
#[derive(Debug, Clone)]
pub struct RunResult {
    pub file: String,
    pub time: Vec<f64>,
    pub reactor_temperature: Vec<f64>,
    pub dosed: Vec<f64>,
    pub mean_temperature: f64,
    pub temperature_span: f64,
    pub mean_jacket_temperature: Option<f64>,
    pub heat: HeatFigures,
    pub model: Option<RateModel>,
    /// (k, RMS of X_th) of this run alone, when it is isothermal and has kinetics metadata.
    pub rate_constant: Option<(f64, f64)>,
}

impl RunResult {
    pub fn isothermal(&self) -> bool {
        self.temperature_span <= ISOTHERMAL_BAND
    }
}

/// Every run and the kinetics fitted across them.
#[derive(Debug, Clone)]
pub struct Study {
    pub runs: Vec<RunResult>,
    pub kinetics: Option<ArrheniusFit>,
    pub order_charged: f64,
    pub order_dosed: f64,
    pub charged_species: String,
    pub dosed_species: String,
    pub warnings: Vec<Warning>,
}

impl Study {
    /// Mean enthalpy over the runs, J/mol of the dosed reagent.
    pub fn enthalpy(&self) -> f64 {
        self.runs.iter().map(|r| r.heat.enthalpy).sum::<f64>() / self.runs.len().max(1) as f64
    }

    pub fn max_accumulation(&self) -> f64 {
        self.runs
            .iter()
            .map(|r| r.heat.max_accumulation)
            .fold(f64::NEG_INFINITY, f64::max)
    }
}

pub fn analyse_files(tables: &[Table], options: &CalorimetryOptions) -> Result<Study, LabError> {
    let mut warnings = Vec::new();
    let mut runs = Vec::new();
    for table in tables {
        let run = analyse_run(table, options)?;
        for w in &run.heat.warnings {
            warnings.push(Warning::new(
                &w.code,
                format!("{}: {}", run.file, w.message),
            ));
        }
        runs.push(run);
    }
    let kinetics = fit_across(&runs, &mut warnings);
    let name = |key: &str, default: &str| {
        tables
            .first()
            .and_then(|t| t.metadata(key))
            .map_or(default.to_string(), |m| m.text.clone())
    };
    Ok(Study {
        runs,
        kinetics,
        order_charged: options.order_charged,
        order_dosed: options.order_dosed,
        charged_species: name("charged_species", "A"),
        dosed_species: name("dosed_species", "B"),
        warnings,
    })
}

fn analyse_run(table: &Table, options: &CalorimetryOptions) -> Result<RunResult, LabError> {
    let time = table.require(&Wanted {
        name: "time",
        dimensions: &[Dimension::TIME],
        accepted_units: "s, min, h",
    })?;
    let reactor = table.require(&Wanted {
        name: "reactor_temperature",
        dimensions: &[Dimension::TEMPERATURE],
        accepted_units: "degC, K",
    })?;
    let jacket = table.column("jacket_temperature");
    if let Some(j) = jacket {
        table.check_dimension(j, &[Dimension::TEMPERATURE], "degC, K")?;
    }
    let heat_flow = table.require(&Wanted {
        name: "heat_flow",
        dimensions: &[POWER],
        accepted_units: "W, mW, kW",
    })?;
    let dosed_column = table.require(&Wanted {
        name: "dosed",
        dimensions: &[Dimension::MASS, Dimension::AMOUNT],
        accepted_units: "kg, g (with `# feed_amount`) or mol",
    })?;
    let dosed = dosed_moles(table, dosed_column, options)?;
    let limits = match options.baseline {
        Some((a, b)) => BaselineLimits {
            head_end: a,
            tail_start: b,
        },
        None if time.values.len() >= 2 => BaselineLimits::default_for(&time.values),
        None => BaselineLimits {
            head_end: 0.0,
            tail_start: 1.0,
        },
    };
    let series = RunSeries {
        time: &time.values,
        reactor_temperature: &reactor.values,
        heat_flow: &heat_flow.values,
        dosed: &dosed,
    };
    let heat = analyse_heat(&series, limits).map_err(|p| placed(table, time, p))?;
    let model = rate_model(table, options)?;
    let n = reactor.values.len() as f64;
    let mean_temperature = reactor.values.iter().sum::<f64>() / n;
    let (lo, hi) = reactor
        .values
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &t| {
            (a.min(t), b.max(t))
        });
    let mut run = RunResult {
        file: table.file.clone(),
        time: time.values.clone(),
        reactor_temperature: reactor.values.clone(),
        dosed,
        mean_temperature,
        temperature_span: hi - lo,
        mean_jacket_temperature: jacket
            .map(|j| j.values.iter().sum::<f64>() / j.values.len().max(1) as f64),
        heat,
        model,
        rate_constant: None,
    };
    if let (Some(m), true) = (model, run.isothermal()) {
        run.rate_constant = Some(fit_rate_constant(&fit_run(&run, m)));
    }
    Ok(run)
}

fn placed(table: &Table, time: &Column, problem: HeatProblem) -> LabError {
    match problem {
        HeatProblem::TimeNotIncreasing { index } => table.error_at_row(
            index,
            time,
            format!("time does not increase at data row {}", index + 1),
            "strictly increasing time",
        ),
        HeatProblem::NoHeat { .. } => LabError::analysis(&table.file, problem.to_string()),
        other => LabError::at(&table.file, table.header_row, 0, other.to_string(), ""),
    }
}

/// The cumulative dosed amount in mol: the column itself, or its mass share of the feed times
/// `--feed-amount` / `# feed_amount` (the whole feed is dosed within the run).
fn dosed_moles(
    table: &Table,
    column: &Column,
    options: &CalorimetryOptions,
) -> Result<Vec<f64>, LabError> {
    if column.dimension().approx_eq(&Dimension::AMOUNT) {
        return Ok(column.values.clone());
    }
    let amount = match options.feed_amount {
        Some(a) => a,
        None => table
            .metadata_si("feed_amount", &[Dimension::AMOUNT], "mol, kmol")?
            .ok_or_else(|| {
                LabError::at(
                    &table.file,
                    table.header_row,
                    column.field,
                    format!(
                        "`{}` is a mass, and the molar amount of the feed is not given",
                        column.label()
                    ),
                    "`# feed_amount: 1.0 mol` above the header, --feed-amount, or `dosed [mol]`",
                )
            })?,
    };
    let (first, last) = (
        column.values[0],
        column.values[column.values.len().saturating_sub(1)],
    );
    let span = last - first;
    if span.is_nan() || span <= 0.0 {
        return Err(LabError::at(
            &table.file,
            table.header_row,
            column.field,
            "the dosed mass does not grow",
            "a cumulative dosed mass",
        ));
    }
    Ok(column
        .values
        .iter()
        .map(|m| (m - first) / span * amount)
        .collect())
}

/// The rate model from `# charge_amount` (when the order in A is not 0), `# volume` and
/// `# feed_volume`; None when `# volume` is absent (no kinetic fit for this run).
fn rate_model(table: &Table, options: &CalorimetryOptions) -> Result<Option<RateModel>, LabError> {
    let Some(volume) = table.metadata_si("volume", &[VOLUME], "L, mL, m^3")? else {
        return Ok(None);
    };
    let feed_volume = table
        .metadata_si("feed_volume", &[VOLUME], "L, mL, m^3")?
        .unwrap_or(0.0);
    let charge = table.metadata_si("charge_amount", &[Dimension::AMOUNT], "mol, kmol")?;
    let charge_amount = match (charge, options.order_charged > 0.0) {
        (Some(c), _) => c,
        (None, false) => f64::INFINITY,
        (None, true) => {
            return Err(LabError::at(
                &table.file,
                1,
                0,
                "the rate depends on the charged reactant but `# charge_amount` is not given",
                "`# charge_amount: 3 mol` above the header, or --order-charged 0",
            ));
        }
    };
    if volume <= 0.0 || feed_volume < 0.0 || charge_amount <= 0.0 {
        return Err(LabError::at(
            &table.file,
            1,
            0,
            "`# volume` and `# charge_amount` must be positive, `# feed_volume` not negative",
            "e.g. `# volume: 1.0 L`",
        ));
    }
    Ok(Some(RateModel {
        order_charged: options.order_charged,
        order_dosed: options.order_dosed,
        charge_amount,
        volume_start: volume,
        feed_volume,
    }))
}

fn fit_run(run: &RunResult, model: RateModel) -> FitRun<'_> {
    FitRun {
        time: &run.time,
        reactor_temperature: &run.reactor_temperature,
        dosed: &run.dosed,
        thermal_conversion: &run.heat.thermal_conversion,
        model,
    }
}

/// Ea and k_ref across the isothermal runs with kinetics metadata, with warnings for the runs
/// left out and the runs that say little about k.
fn fit_across(runs: &[RunResult], warnings: &mut Vec<Warning>) -> Option<ArrheniusFit> {
    let mut usable = Vec::new();
    for run in runs {
        match (run.model, run.isothermal()) {
            (None, _) => warnings.push(Warning::new(
                "no_kinetics_metadata",
                format!("{}: no `# volume` (and `# charge_amount`): left out of the kinetic fit", run.file),
            )),
            (Some(_), false) => warnings.push(Warning::new(
                "not_isothermal",
                format!(
                    "{}: the reactor temperature spans {:.1} K (more than {ISOTHERMAL_BAND} K): left out of the kinetic fit",
                    run.file, run.temperature_span
                ),
            )),
            (Some(m), true) => {
                if run.heat.max_accumulation < LOW_ACCUMULATION {
                    warnings.push(Warning::new(
                        "feed_controlled",
                        format!(
                            "{}: the maximum accumulation is {:.1} %: the run is close to feed-controlled and determines k poorly",
                            run.file,
                            100.0 * run.heat.max_accumulation
                        ),
                    ));
                }
                usable.push(fit_run(run, m));
            }
        }
    }
    let fit = fit_arrhenius(&usable);
    if fit.is_none() && !usable.is_empty() {
        warnings.push(Warning::new(
            "one_temperature",
            "isothermal runs at two or more temperatures are needed for Ea and k_ref; only the rate constant of each run is given",
        ));
    }
    fit
}
