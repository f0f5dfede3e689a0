//! An adiabatic run from a data table: columns time, temperature (pressure optional), the phi
//! factor from `--phi`, `# phi` or the masses and specific heats of sample and cell.

use super::{ArcFigures, ArcProblem, ArcSettings, analyse, phi_factor};
use crate::case::units::Dimension;
use crate::lab::{Column, LabError, Table, Wanted};

const PRESSURE: Dimension = Dimension::new(-1.0, 1.0, -2.0, 0.0, 0.0);
const SPECIFIC_HEAT: Dimension = Dimension::new(2.0, 0.0, -2.0, -1.0, 0.0);
const CP_UNITS: &str = "J/(kg*K), kJ/(kg*K), J/(g*K)";

/// What the command line adds to the file.
#[derive(Debug, Clone, Copy, Default)]
pub struct ArcOptions {
    pub phi: Option<f64>,
    /// K/s; the default when None.
    pub threshold: Option<f64>,
    pub order: Option<f64>,
}

/// The figures of one file and what the report needs besides.
#[derive(Debug, Clone)]
pub struct ArcRun {
    pub figures: ArcFigures,
    /// Where phi came from, said in the report.
    pub phi_source: String,
    pub threshold: f64,
    /// J/(kg K) of the sample, when given: needed for the `decomposition:` entry.
    pub sample_specific_heat: Option<f64>,
    /// Pa, the highest pressure of an optional `pressure` column.
    pub max_pressure: Option<f64>,
}

pub fn analyse_table(table: &Table, options: &ArcOptions) -> Result<ArcRun, LabError> {
    let time = table.require(&Wanted {
        name: "time",
        dimensions: &[Dimension::TIME],
        accepted_units: "s, min, h",
    })?;
    let temperature = table.require(&Wanted {
        name: "temperature",
        dimensions: &[Dimension::TEMPERATURE],
        accepted_units: "degC, K",
    })?;
    let (phi, phi_source) = phi_of(table, options)?;
    let sample_specific_heat =
        table.metadata_si("sample_specific_heat", &[SPECIFIC_HEAT], CP_UNITS)?;
    let mut settings = ArcSettings::with_phi(phi);
    if let Some(t) = options.threshold {
        settings.threshold = t;
    }
    if let Some(n) = options.order {
        settings.order = n;
    }
    let figures = analyse(&time.values, &temperature.values, &settings)
        .map_err(|p| placed(table, time, p))?;
    Ok(ArcRun {
        figures,
        phi_source,
        threshold: settings.threshold,
        sample_specific_heat,
        max_pressure: max_pressure(table)?,
    })
}

fn placed(table: &Table, time: &Column, problem: ArcProblem) -> LabError {
    match problem {
        ArcProblem::TimeNotIncreasing { index } => table.error_at_row(
            index,
            time,
            format!("time does not increase at data row {}", index + 1),
            "strictly increasing time",
        ),
        ArcProblem::TooFewPoints { .. } => {
            LabError::at(&table.file, table.header_row, 0, problem.to_string(), "")
        }
        other => LabError::analysis(&table.file, other.to_string()),
    }
}

fn phi_of(table: &Table, options: &ArcOptions) -> Result<(f64, String), LabError> {
    let (phi, source) = if let Some(phi) = options.phi {
        (phi, "--phi".to_string())
    } else if let Some(phi) = table.metadata_si("phi", &[Dimension::NONE], "a plain number")? {
        (phi, "`# phi`".to_string())
    } else {
        (
            phi_from_masses(table)?,
            "masses and specific heats of sample and cell".to_string(),
        )
    };
    if phi.is_nan() || phi < 1.0 {
        return Err(LabError::at(
            &table.file,
            0,
            0,
            format!("phi {phi} from {source} is below 1"),
            "phi >= 1 (1 + m_cell cp_cell / (m_sample cp_sample))",
        ));
    }
    Ok((phi, source))
}

fn phi_from_masses(table: &Table) -> Result<f64, LabError> {
    let mass = |key| table.metadata_si(key, &[Dimension::MASS], "g, mg, kg");
    let cp = |key| table.metadata_si(key, &[SPECIFIC_HEAT], CP_UNITS);
    match (
        mass("sample_mass")?,
        cp("sample_specific_heat")?,
        mass("cell_mass")?,
        cp("cell_specific_heat")?,
    ) {
        (Some(ms), Some(cs), Some(mc), Some(cc)) if ms > 0.0 && cs > 0.0 => {
            Ok(phi_factor(ms, cs, mc, cc))
        }
        _ => Err(LabError::at(
            &table.file,
            1,
            0,
            "no phi factor: give --phi, `# phi: 1.8`, or all four of `# sample_mass`, `# sample_specific_heat`, `# cell_mass`, `# cell_specific_heat` (positive sample values)",
            "e.g. `# sample_mass: 4.0 g`, `# sample_specific_heat: 1.8 J/(g*K)`, `# cell_mass: 18 g`, `# cell_specific_heat: 0.42 J/(g*K)`",
        )),
    }
}

fn max_pressure(table: &Table) -> Result<Option<f64>, LabError> {
    let Some(column) = table.column("pressure") else {
        return Ok(None);
    };
    table.check_dimension(column, &[PRESSURE], "bar, kPa, Pa, atm")?;
    Ok(column.values.iter().cloned().reduce(f64::max))
}
