//! Several DSC scans together: each scan's figures, Kissinger and Flynn–Wall–Ozawa kinetics
//! when there are two or more heating rates, the `decomposition:` block and its TD24.

use super::decomposition::{Basis, Block, block_td24, decomposition_block};
use super::dsc::{Scan, ScanOptions, analyse_scan};
use super::error::LabError;
use super::kinetics::{ArrheniusFit, PeakPoint, kissinger, ozawa};
use super::table::Table;
use crate::warning::Warning;

/// Everything `exoscreen dsc` reports.
#[derive(Debug, Clone)]
pub struct DscStudy {
    pub scans: Vec<Scan>,
    pub kissinger: Option<ArrheniusFit>,
    pub ozawa: Option<ArrheniusFit>,
    pub block: Option<Block>,
    /// K.
    pub td24: Option<f64>,
    /// J/(kg K), and whether it is the default assumption.
    pub specific_heat: f64,
    pub specific_heat_assumed: bool,
    pub warnings: Vec<Warning>,
}

/// Analyses the tables, one options set per table.
pub fn study(
    tables: &[Table],
    options: &[ScanOptions],
    specific_heat: Option<f64>,
) -> Result<DscStudy, LabError> {
    let mut scans = Vec::with_capacity(tables.len());
    for (table, option) in tables.iter().zip(options) {
        scans.push(analyse_scan(table, option)?);
    }
    if scans.is_empty() {
        return Err(LabError::analysis("(none)", "no scan given"));
    }
    let mut warnings: Vec<Warning> = scans.iter().flat_map(|s| s.warnings.clone()).collect();
    let points: Vec<PeakPoint> = scans
        .iter()
        .map(|s| PeakPoint {
            heating_rate: s.heating_rate,
            peak: s.peak,
        })
        .collect();
    let several_rates = distinct_rates(&scans) >= 2;
    let (kissinger_fit, ozawa_fit) = if several_rates {
        (
            fit_or_warn(kissinger(&points), "Kissinger", &mut warnings),
            fit_or_warn(ozawa(&points), "Flynn–Wall–Ozawa", &mut warnings),
        )
    } else {
        warnings.push(Warning::new(
            "dsc.single_rate",
            "one heating rate only: no Kissinger or Ozawa kinetics; the decomposition block is the zero-order estimate at an assumed activation energy of 50 kJ/mol (common practice), from the lowest onset",
        ));
        (None, None)
    };
    let block = decomposition_block(&scans, kissinger_fit.as_ref());
    if let Some(b) = &block
        && b.basis == Basis::SingleRateZeroOrder
        && several_rates
    {
        warnings.push(Warning::new(
            "dsc.fallback_zero_order",
            "the Kissinger fit failed, so the decomposition block falls back to the zero-order estimate at an assumed 50 kJ/mol",
        ));
    }
    let cp = specific_heat.unwrap_or(super::decomposition::DEFAULT_SPECIFIC_HEAT);
    if specific_heat.is_none() {
        warnings.push(Warning::new(
            "dsc.specific_heat_assumed",
            format!(
                "TD24 uses an assumed specific heat of {:.1} kJ/(kg K); give --specific-heat for the real reaction mass",
                cp / 1e3
            ),
        ));
    }
    let td24 = block.as_ref().and_then(|b| block_td24(b, cp));
    Ok(DscStudy {
        scans,
        kissinger: kissinger_fit,
        ozawa: ozawa_fit,
        block,
        td24,
        specific_heat: cp,
        specific_heat_assumed: specific_heat.is_none(),
        warnings,
    })
}

fn distinct_rates(scans: &[Scan]) -> usize {
    let mut rates: Vec<f64> = scans.iter().map(|s| s.heating_rate).collect();
    rates.sort_by(f64::total_cmp);
    rates.dedup_by(|a, b| (*a - *b).abs() <= 0.01 * b.abs());
    rates.len()
}

fn fit_or_warn(
    fit: Result<ArrheniusFit, super::kinetics::NoFit>,
    method: &str,
    warnings: &mut Vec<Warning>,
) -> Option<ArrheniusFit> {
    match fit {
        Ok(f) => Some(f),
        Err(why) => {
            warnings.push(Warning::new(
                "dsc.no_kinetics",
                format!("no {method} kinetics: {}", why.0),
            ));
            None
        }
    }
}
