//! `timeseries.csv` of the stage-gate report: normal operation and the worst cooling
//! failure, one row a sampled time, in report units.

use crate::report::series::{Series, SeriesPoint};

/// The header; each column's unit in brackets.
pub const HEADER: [&str; 10] = [
    "scenario",
    "time [h]",
    "T [degC]",
    "coolant T [degC]",
    "fill [-]",
    "conversion [-]",
    "accumulation [-]",
    "reaction power [kW]",
    "cooling power [kW]",
    "off-gas [kg/h]",
];

pub fn timeseries_csv(series: &Series) -> Vec<u8> {
    let mut writer = csv::Writer::from_writer(Vec::new());
    let mut rows = vec![HEADER.iter().map(|s| s.to_string()).collect::<Vec<_>>()];
    rows.extend(series.normal.iter().map(|p| row("normal", p)));
    rows.extend(series.failure.iter().map(|p| row("worst failure", p)));
    for r in rows {
        // Writing into a Vec cannot fail.
        let _ = writer.write_record(&r);
    }
    writer.into_inner().unwrap_or_default()
}

fn row(scenario: &str, p: &SeriesPoint) -> Vec<String> {
    vec![
        scenario.to_string(),
        format!("{:.5}", p.time_h),
        format!("{:.3}", p.temperature_C),
        format!("{:.3}", p.coolant_C),
        format!("{:.5}", p.fill),
        format!("{:.6}", p.conversion),
        format!("{:.6}", p.accumulation),
        format!("{:.4}", p.reaction_power_kW),
        format!("{:.4}", p.cooling_power_kW),
        format!("{:.4}", p.off_gas_kg_h),
    ]
}
