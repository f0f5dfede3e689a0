//! Time to maximum rate under adiabatic conditions (TMRad, zero-order approximation of
//! Townsend and Tou, 1980) and TD24, the temperature at which TMRad is 24 h.

use crate::model::network::GAS_CONSTANT;
use crate::model::plant::DecompositionLaw;
use crate::numeric::bisect;

pub const SECONDS_PER_DAY: f64 = 86_400.0;

/// TMRad(T) = cp R T^2 / (q(T, alpha = 0) Ea), s; cp in J/(kg K).
pub fn tmr_ad(law: &DecompositionLaw, specific_heat: f64, temperature: f64) -> f64 {
    ln_tmr_ad(law, specific_heat, temperature).exp()
}

/// ln TMRad, written out so that a rate far below the reference (a large Ea at a low T) does
/// not underflow: ln(cp R T^2 / (q_ref Ea)) + (Ea/R)(1/T - 1/T_ref).
fn ln_tmr_ad(law: &DecompositionLaw, specific_heat: f64, temperature: f64) -> f64 {
    let prefactor = specific_heat * GAS_CONSTANT * temperature * temperature
        / (law.q_ref * law.activation_energy);
    prefactor.ln()
        + (law.activation_energy / GAS_CONSTANT)
            * (1.0 / temperature - 1.0 / law.reference_temperature)
}

/// The temperature (K) at which TMRad equals `time` (s), or None when there is none.
///
/// TMRad falls with T up to T = Ea/(2R), where its logarithmic slope 2/T - Ea/(R T^2) turns
/// positive; the root is searched below that turning point, where it is unique.
pub fn temperature_for_tmr(law: &DecompositionLaw, specific_heat: f64, time: f64) -> Option<f64> {
    if law.activation_energy <= 0.0 {
        return None;
    }
    let turning = law.activation_energy / (2.0 * GAS_CONSTANT);
    let high = turning.min(5000.0);
    let gap = |t: f64| ln_tmr_ad(law, specific_heat, t) - time.ln();
    bisect(&gap, 50.0, high, 1e-9)
}

pub fn td24(law: &DecompositionLaw, specific_heat: f64) -> Option<f64> {
    temperature_for_tmr(law, specific_heat, SECONDS_PER_DAY)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn law(ea_kj: f64) -> DecompositionLaw {
        DecompositionLaw {
            energy: 1e6,
            q_ref: 10.0,
            reference_temperature: 423.15,
            activation_energy: ea_kj * 1e3,
            order: 0.0,
        }
    }

    /// Check values derived in shared/reference/methods-and-check-values.md §2 (q' = 10 W/kg at
    /// 150 degC, cp 1.8 kJ/(kg K)); each is also substituted back into the formula.
    #[test]
    fn td24_matches_the_reference_table_and_substitutes_back() {
        for (ea, tmr_150_h, td24_c, td8_c) in [
            (50.0, 1.489, 72.5, 99.2),
            (75.0, 0.993, 90.5, 108.9),
            (100.0, 0.744, 101.0, 115.2),
            (150.0, 0.496, 113.2, 122.9),
        ] {
            let l = law(ea);
            assert!(
                (tmr_ad(&l, 1800.0, 423.15) / 3600.0 - tmr_150_h).abs() < 0.001,
                "TMRad(150 degC) at Ea {ea}"
            );
            let t24 = td24(&l, 1800.0).unwrap();
            assert!(
                (t24 - 273.15 - td24_c).abs() < 0.06,
                "TD24 at Ea {ea}: {}",
                t24 - 273.15
            );
            assert!((tmr_ad(&l, 1800.0, t24) - SECONDS_PER_DAY).abs() < 1e-6 * SECONDS_PER_DAY);
            let t8 = temperature_for_tmr(&l, 1800.0, 8.0 * 3600.0).unwrap();
            assert!((t8 - 273.15 - td8_c).abs() < 0.06, "TD8 at Ea {ea}");
        }
    }

    /// Self-made check case of the same reference (§11): MTSR 97.5 degC, Ea 50 kJ/mol gives
    /// TMRad(MTSR) = 8.55 h; Ea 100 kJ/mol gives 32.0 h.
    #[test]
    fn tmr_at_the_reference_check_case() {
        let mtsr = 97.5 + 273.15;
        assert!((tmr_ad(&law(50.0), 1800.0, mtsr) / 3600.0 - 8.55).abs() < 0.01);
        assert!((tmr_ad(&law(100.0), 1800.0, mtsr) / 3600.0 - 32.0).abs() < 0.1);
    }
}
