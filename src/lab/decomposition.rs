//! The `decomposition:` block of a case drawn from DSC scans, and the TD24 it implies.
//!
//! * Two or more heating rates: order 1 (the first-order assumption of Kissinger and E698),
//!   activation energy from Kissinger, energy = the mean specific energy of the scans,
//!   reference temperature = the lowest extrapolated onset, and there
//!   heat_release_rate q_ref = A * energy * exp(-E/(R T_ref)) (the first-order rate of the
//!   fresh mass).
//! * One heating rate: zero order at an assumed activation energy of 50 kJ/mol (a low value
//!   taken as conservative in common practice: it extrapolates the rate down to lower
//!   temperatures more slowly than a higher one would, so it gives a lower TD24). The rate is
//!   this program's conservative rule: reference temperature = the lowest extrapolated onset,
//!   q_ref = the net heat flow where the signal first reaches 5 % of the peak height, a point
//!   that lies above the onset, credited at the lower onset temperature (higher rate at a
//!   lower temperature than measured, so a lower TD24).

use super::dsc::Scan;
use super::kinetics::ArrheniusFit;
use crate::assess::decomposition::td24;
use crate::model::network::GAS_CONSTANT;
use crate::model::plant::DecompositionLaw;

/// Activation energy assumed with a single heating rate, J/mol (common practice).
pub const SINGLE_SCAN_ACTIVATION_ENERGY: f64 = 50e3;
/// Specific heat assumed for TD24 when none is given, J/(kg K) (a typical organic reaction
/// mass; an assumption, flagged in the report).
pub const DEFAULT_SPECIFIC_HEAT: f64 = 1800.0;

/// Where the block's kinetics come from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Basis {
    /// First order, activation energy and A from the Kissinger fit.
    Kissinger,
    /// Zero order at the assumed 50 kJ/mol, rate from the detection point (one heating rate).
    SingleRateZeroOrder,
}

/// The block, in SI.
#[derive(Debug, Clone, Copy)]
pub struct Block {
    pub law: DecompositionLaw,
    pub basis: Basis,
}

/// The block from the scans (at least one) and, with two or more rates, the Kissinger fit.
pub fn decomposition_block(scans: &[Scan], kissinger: Option<&ArrheniusFit>) -> Option<Block> {
    let energy = scans.iter().map(|s| s.energy).sum::<f64>() / scans.len() as f64;
    let lowest = scans.iter().min_by(|a, b| a.onset.total_cmp(&b.onset))?;
    let reference_temperature = lowest.onset;
    let (law, basis) = match kissinger {
        Some(fit) => (
            DecompositionLaw {
                energy,
                q_ref: fit.pre_exponential
                    * energy
                    * (-fit.activation_energy / (GAS_CONSTANT * reference_temperature)).exp(),
                reference_temperature,
                activation_energy: fit.activation_energy,
                order: 1.0,
            },
            Basis::Kissinger,
        ),
        None => (
            DecompositionLaw {
                energy,
                q_ref: lowest.detection.0,
                reference_temperature,
                activation_energy: SINGLE_SCAN_ACTIVATION_ENERGY,
                order: 0.0,
            },
            Basis::SingleRateZeroOrder,
        ),
    };
    let usable = law.energy > 0.0 && law.q_ref > 0.0 && law.q_ref.is_finite();
    usable.then_some(Block { law, basis })
}

/// TD24 (K) of the block at the specific heat cp (J/(kg K)), by the project's TMRad.
pub fn block_td24(block: &Block, specific_heat: f64) -> Option<f64> {
    td24(&block.law, specific_heat)
}

/// The block as YAML ready to paste into a case (the keys of the case format).
pub fn block_yaml(block: &Block) -> String {
    let law = &block.law;
    format!(
        "decomposition:\n  energy: {} kJ/kg\n  heat_release_rate: {} W/kg\n  reference_temperature: {} degC\n  activation_energy: {} kJ/mol\n  order: {}\n",
        significant(law.energy / 1e3, 4),
        significant(law.q_ref, 4),
        format_args!("{:.1}", law.reference_temperature - 273.15),
        significant(law.activation_energy / 1e3, 4),
        law.order
    )
}

/// A number to `digits` significant digits, plain or in e-notation for very small/large.
pub fn significant(value: f64, digits: usize) -> String {
    if value == 0.0 || !value.is_finite() {
        return format!("{value}");
    }
    let magnitude = value.abs().log10().floor() as i32;
    if !(-3..6).contains(&magnitude) {
        return format!("{:.*e}", digits.saturating_sub(1), value);
    }
    let decimals = (digits as i32 - 1 - magnitude).max(0) as usize;
    format!("{value:.decimals$}")
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::case::units::parse_quantity;

    fn scan(onset_c: f64, energy_j_g: f64, detection_w_kg: f64) -> Scan {
        Scan {
            file: "s.csv".into(),
            heating_rate: 10.0 / 60.0,
            rate_given: false,
            onset: onset_c + 273.15,
            peak: onset_c + 293.15,
            energy: energy_j_g * 1e3,
            limits: (0.0, 0.0),
            limits_automatic: true,
            peak_height: 1e3,
            detection: (detection_w_kg, onset_c + 278.15),
            points: 100,
            warnings: vec![],
        }
    }

    /// q_ref = A Q exp(-E/(R T)) by hand: A = 1e12 1/s, Q = 500 kJ/kg, E = 120 kJ/mol,
    /// T = 150 degC: exp(-120000/(8.314462618*423.15)) = 1.539e-15, q = 769.4 W/kg.
    #[test]
    fn first_order_block_from_kissinger() {
        let fit = ArrheniusFit {
            activation_energy: 120e3,
            pre_exponential: 1e12,
            r2: 1.0,
            points: 2,
        };
        let block = decomposition_block(
            &[scan(150.0, 400.0, 5.0), scan(160.0, 600.0, 5.0)],
            Some(&fit),
        )
        .unwrap();
        assert_eq!(block.basis, Basis::Kissinger);
        assert!((block.law.energy - 500e3).abs() < 1e-6);
        let by_hand = 1e12 * 500e3 * (-120e3 / (GAS_CONSTANT * 423.15_f64)).exp();
        assert!((block.law.q_ref / by_hand - 1.0).abs() < 1e-12);
        assert!((block.law.q_ref - 769.4).abs() < 0.1, "{}", block.law.q_ref);
        assert_eq!(block.law.order, 1.0);
    }

    /// The printed block parses back through the case's unit parser to the same values.
    #[test]
    fn the_yaml_block_reads_back() {
        let block = decomposition_block(&[scan(150.0, 650.0, 12.5)], None).unwrap();
        assert_eq!(block.basis, Basis::SingleRateZeroOrder);
        let yaml = block_yaml(&block);
        let value = |key: &str| {
            let line = yaml
                .lines()
                .find(|l| l.trim_start().starts_with(key))
                .unwrap();
            parse_quantity(line.split_once(':').unwrap().1)
                .unwrap()
                .value_si
        };
        assert!((value("energy") - 650e3).abs() < 1.0);
        assert!((value("heat_release_rate") - 12.5).abs() < 1e-9);
        assert!((value("reference_temperature") - 423.15).abs() < 0.06);
        assert!((value("activation_energy") - 50e3).abs() < 1e-6);
        assert_eq!(value("order"), 0.0);
        // A 1e-5 W/kg rate prints in e-notation the parser reads.
        assert_eq!(significant(1.2345e-5, 4), "1.234e-5");
        assert!((parse_quantity("1.234e-5 W/kg").unwrap().value_si - 1.234e-5).abs() < 1e-18);
    }

    /// With the reference's TD24 table (methods-and-check-values.md §2 [D]: q' = 10 W/kg at
    /// 150 degC, cp 1.8 kJ/(kg K), Ea 50 kJ/mol gives TD24 = 72.5 degC), through this block.
    #[test]
    fn single_rate_td24_uses_the_projects_tmr() {
        let block = decomposition_block(&[scan(150.0, 650.0, 10.0)], None).unwrap();
        let t24 = block_td24(&block, DEFAULT_SPECIFIC_HEAT).unwrap();
        assert!((t24 - 273.15 - 72.5).abs() < 0.06, "{}", t24 - 273.15);
    }
}
