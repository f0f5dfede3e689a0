//! Warnings drawn from the figures: where the jacket, the MTT or the decomposition leave no
//! margin, and where a figure needs care in reading.

use super::figures::Figures;
use super::offgas::SpeciesPeak;
use super::runaway::Runaway;
use crate::case::Dosing;
use crate::case::LimitSettings;
use crate::model::network::GAS_CONSTANT;
use crate::model::plant::Plant;
use crate::warning::Warning;

/// A temperature rise in normal operation above this many kelvin is reported, K.
const NORMAL_EXCURSION_K: f64 = 10.0;
/// Conversion below this at the end of normal operation is reported.
const LOW_CONVERSION: f64 = 0.95;

pub fn figure_warnings(plant: &Plant, f: &Figures) -> Vec<Warning> {
    let mut out = Vec::new();
    cooling(plant, f, &mut out);
    limits(plant, f, &mut out);
    normal_operation(plant, f, &mut out);
    model_range(plant, f, &mut out);
    out
}

/// Below this Semenov/Frank-Kamenetskii number B the zero-order TMRad is far from the
/// real time to maximum rate (its consumption correction n/B exceeds 10 %).
const MIN_TOWNSEND_TOU_B: f64 = 10.0;
/// Reaction orders above this are outside what a power-law rate usually describes.
const MAX_PLAUSIBLE_ORDER: f64 = 3.0;
/// Share of the contents' mass leaving as off-gas beyond which the balance's constant
/// properties and instant degassing are doubtful.
const MAX_OFF_GAS_SHARE: f64 = 0.3;

/// Where a model is used outside what it is valid for.
fn model_range(plant: &Plant, f: &Figures, out: &mut Vec<Warning>) {
    if let Some(d) = &plant.decomposition {
        let cp = f.final_heat_capacity / f.final_mass;
        let rise = d.energy / cp;
        let b = d.activation_energy * rise / (GAS_CONSTANT * f.mtsr * f.mtsr);
        if b < MIN_TOWNSEND_TOU_B {
            out.push(Warning::new(
                "tmrad-low-b",
                format!("B = Ea dT_ad,d / (R MTSR^2) = {b:.1} is below {MIN_TOWNSEND_TOU_B:.0}: the zero-order TMRad (Townsend and Tou) is far from the real time to maximum rate here; follow the runaway run instead"),
            ));
        }
        if d.order == 0.0 {
            out.push(Warning::new(
                "decomposition-zero-order",
                "the decomposition is zero order: if it is autocatalytic (an induction time, a rate that grows with conversion), TMRad and TD24 from this model are not valid",
            ));
        }
    }
    for (j, law) in plant.network.reactions.iter().enumerate() {
        let overall: f64 = law.orders.iter().map(|(_, o)| o).sum();
        if overall > MAX_PLAUSIBLE_ORDER {
            out.push(Warning::new(
                "reaction-order-high",
                format!("reactions[{j}] has an overall order {overall} above {MAX_PLAUSIBLE_ORDER:.0}: check the rate law"),
            ));
        }
    }
    let gas_share = f.normal.final_gas_mass / f.final_mass;
    if gas_share > MAX_OFF_GAS_SHARE {
        out.push(Warning::new(
            "off-gas-share-high",
            format!("{:.0} % of the contents' mass leaves as off-gas in normal operation: constant properties and instant degassing are doubtful", 100.0 * gas_share),
        ));
    }
}

fn c(kelvin: f64) -> f64 {
    kelvin - 273.15
}

fn cooling(plant: &Plant, f: &Figures, out: &mut Vec<Warning>) {
    let n = &f.normal;
    if n.peak_reaction_power > n.cooling_capacity_at_tp {
        out.push(Warning::new(
            "cooling-insufficient",
            format!(
                "at the peak reaction power ({:.1} kW at {:.2} h) the jacket can remove only {:.1} kW with the contents at Tp (U A (Tp - T_coolant)): it cannot hold Tp at the planned dosing rate",
                n.peak_reaction_power / 1e3, n.peak_time / 3600.0, n.cooling_capacity_at_tp / 1e3
            ),
        ));
    }
    let _ = plant;
}

fn limits(plant: &Plant, f: &Figures, out: &mut Vec<Warning>) {
    if f.mtsr >= f.mtt {
        out.push(Warning::new("mtsr-above-mtt", format!("MTSR {:.1} degC reaches the MTT {:.1} degC: after a cooling failure the mass boils or the relief opens", c(f.mtsr), c(f.mtt))));
    }
    if f.worst.max_temperature > f.mtsr + 0.5 {
        let has_gas = plant
            .network
            .gas
            .iter()
            .zip(&plant.network.molar_mass)
            .any(|(g, m)| *g && *m > 0.0);
        let why = match (plant.dosing_after_failure, has_gas) {
            (Dosing::Continues, _) => "because the feed goes on after the failure",
            (Dosing::Stops, true) => {
                "because the off-gas formed after the failure takes its heat capacity out of the vessel (MTSR divides by the heat capacity at the failure)"
            }
            (Dosing::Stops, false) => "",
        };
        out.push(Warning::new(
            "simulated-mtsr-above-mtsr",
            format!("the simulated MTSR {:.1} degC (failure at {:.2} h) exceeds the MTSR {:.1} degC {why}; the class follows the MTSR as defined", c(f.worst.max_temperature), f.worst.failure_time / 3600.0, c(f.mtsr)),
        ));
        if let (Some(a), Some(b)) = (f.class, f.class_simulated) {
            if b > a {
                out.push(Warning::new("class-with-simulated-mtsr", format!("with the simulated MTSR in place of MTSR the criticality class would be {b}, not {a}")));
            }
        }
    }
    match (f.td24, f.tmr_ad_at_mtsr) {
        (Some(_), Some(tmr)) if tmr < 24.0 * 3600.0 => out.push(Warning::new(
            "tmrad-under-24h",
            format!("TMRad at MTSR is {:.1} h, under 24 h: a runaway of the decomposition can follow a cooling failure", tmr / 3600.0),
        )),
        (None, Some(_)) => out.push(Warning::new("no-td24", "no temperature was found at which TMRad equals 24 h (searched from 50 K up to Ea/(2R), where TMRad stops falling): check the decomposition data")),
        (_, None) => out.push(Warning::new(
            "no-decomposition-data",
            "no decomposition data (DSC/ARC): TMRad, TD24 and the criticality class cannot be given; this is not a finding of safety, obtain the data",
        )),
        _ => {}
    }
}

fn normal_operation(plant: &Plant, f: &Figures, out: &mut Vec<Warning>) {
    let n = &f.normal;
    if n.max_temperature > plant.process_temperature + NORMAL_EXCURSION_K {
        out.push(Warning::new(
            "normal-excursion",
            format!(
                "in normal operation the contents reach {:.1} degC at {:.2} h, {:.1} K above Tp",
                c(n.max_temperature),
                n.max_temperature_time / 3600.0,
                n.max_temperature - plant.process_temperature
            ),
        ));
    }
    if n.max_temperature >= f.mtt {
        out.push(Warning::new(
            "normal-above-mtt",
            "normal operation itself reaches the MTT".to_string(),
        ));
    }
    if let Some(x) = f.final_conversion {
        if x < LOW_CONVERSION {
            out.push(Warning::new(
                "low-final-conversion",
                format!("conversion at the end of normal operation is only {:.1} %: unreacted material remains, and the accumulation at the end counts toward MTSR", 100.0 * x),
            ));
        }
    }
    if n.final_decomposition_conversion > 0.01 {
        out.push(Warning::new(
            "decomposition-in-normal-operation",
            format!(
                "the decomposition reaches {:.1} % conversion during normal operation",
                100.0 * n.final_decomposition_conversion
            ),
        ));
    }
}

/// Warnings of the coupled runaway: the boiling barrier and the condenser.
pub fn runaway_warnings(plant: &Plant, r: &Runaway, limits: &LimitSettings) -> Vec<Warning> {
    let mut out = Vec::new();
    let after = |s: f64| format!("{:.2} h after the failure", s / 3600.0);
    match &r.boiling {
        Some(b) => {
            if let Some(start) = b.starts_after {
                out.push(Warning::new(
                    "boiling-after-failure",
                    format!("after the worst cooling failure the contents boil at {:.1} degC {}; peak vapour {:.0} kg/h ({:.0} kW to condense)", c(b.boiling_point), after(start), b.peak_vapour_rate_kg_h, b.peak_heat / 1e3),
                ));
            }
            match (b.condenser_capacity, b.condenser_exceeded_after) {
                (Some(capacity), Some(when)) => out.push(Warning::new(
                    "condenser-exceeded",
                    format!("the heat to remove by boiling ({:.0} kW) exceeds the condenser ({:.0} kW) {}: vapour then goes to the vent or the pressure rises, which this model does not follow", b.peak_heat / 1e3, capacity / 1e3, after(when)),
                )),
                (None, Some(_)) | (None, None) if b.starts_after.is_some() => out.push(Warning::new(
                    "no-condenser",
                    "the contents boil after the failure but no condenser capacity is given: the boiling barrier cannot be judged",
                )),
                _ => {}
            }
        }
        None if r.max_temperature >= plant.mtt => out.push(Warning::new(
            "mtt-reached-no-solvent",
            format!("the runaway passes the MTT ({:.1} degC); without `solvent` data the model does not boil, so the temperatures above the MTT are what the heat would do if nothing took it out", c(plant.mtt)),
        )),
        None => {}
    }
    let capacity = limits
        .off_gas_capacity
        .map(|c| c.get::<uom::si::mass_rate::kilogram_per_second>() * 3600.0);
    let after_failure: f64 = r.off_gas.iter().map(|p| p.peak_kg_h).sum();
    if let Some(capacity) = capacity.filter(|c| after_failure > *c) {
        out.push(Warning::new(
            "off-gas-after-failure-above-capacity",
            format!("after the worst cooling failure the off-gas reaches up to {after_failure:.0} kg/h, above the scrubber capacity {capacity:.0} kg/h"),
        ));
    }
    out
}

/// Off-gas above the scrubber's capacity.
pub fn off_gas_warnings(
    normal: &[SpeciesPeak],
    limits: &LimitSettings,
    f: &Figures,
) -> Vec<Warning> {
    let Some(capacity) = limits
        .off_gas_capacity
        .map(|c| c.get::<uom::si::mass_rate::kilogram_per_second>())
    else {
        return Vec::new();
    };
    if f.normal.peak_off_gas <= capacity {
        return Vec::new();
    }
    let species: Vec<String> = normal
        .iter()
        .map(|p| format!("{} {:.1} kg/h", p.species, p.peak_kg_h))
        .collect();
    vec![Warning::new(
        "off-gas-above-capacity",
        format!(
            "peak off-gas in normal operation {:.1} kg/h ({}) exceeds the scrubber capacity {:.1} kg/h",
            f.normal.peak_off_gas * 3600.0,
            species.join(", "),
            capacity * 3600.0
        ),
    )]
}
