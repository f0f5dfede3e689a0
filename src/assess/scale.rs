//! The lab-to-plant ladder: the case's recipe in geometrically similar vessels of other
//! nominal volumes (same bottom shape, fill ratio, masses per volume, dosing time and coolant),
//! each computed with the screening figures, with the cooling per volume at each scale.

use super::figures::compute;
use crate::model::film::{Resistances, SpeedRule};
use crate::model::plant::Plant;
use crate::model::scenario::ScenarioError;
use crate::model::vessel::VesselGeometry;
use crate::warning::Warning;
use std::time::Instant;

/// A length ratio this close to 1 is the case's own vessel (the shell's volume is computed
/// back from the geometry, to rounding).
const SAME_VESSEL: f64 = 1e-9;

/// Common-practice lower end of the turbulent range of the agitated-vessel correlation.
const TURBULENT_REYNOLDS: f64 = 1.0e4;

#[derive(Debug, thiserror::Error)]
pub enum ScaleError {
    #[error("--volumes: {0}")]
    Volumes(String),
    #[error("the vessel of {volume_m3} m^3 could not be built: {why}")]
    Geometry { volume_m3: f64, why: String },
    #[error("at {volume_m3} m^3: {source}")]
    Scenario {
        volume_m3: f64,
        source: ScenarioError,
    },
}

impl ScaleError {
    /// Bad input (2) or a computation that failed (1).
    pub fn exit_code(&self) -> u8 {
        match self {
            ScaleError::Volumes(_) => 2,
            _ => 1,
        }
    }
}

/// One rung of the ladder, SI (m, m^2, W, K, s).
#[derive(Debug, Clone)]
pub struct Rung {
    pub nominal_volume: f64,
    /// Length ratio to the case's vessel, (V / V_case)^(1/3).
    pub length_ratio: f64,
    pub diameter: f64,
    /// Contents' volume at the final fill, m^3.
    pub final_volume: f64,
    pub wetted_area: f64,
    /// Cooled (jacketed) wetted area at the final fill.
    pub cooled_area: f64,
    pub u: f64,
    /// Impeller speed, 1/s, and its process film, where the film model is used.
    pub impeller_speed: Option<f64>,
    pub resistances: Option<Resistances>,
    /// Impeller Reynolds number, where the contents' properties are given.
    pub reynolds: Option<f64>,
    /// U A (Tp - T_coolant) / V at the moment of the peak reaction power, W/m^3.
    pub cooling_capacity_per_volume: f64,
    /// C_final / (U A_final), s.
    pub time_constant: f64,
    /// Peak reaction power over the contents' volume at that moment, W/m^3.
    pub peak_power_per_volume: f64,
    pub max_temperature: f64,
    pub mtsr: f64,
    pub class: Option<u8>,
    /// The warmest constant coolant with U A (Tp - Tc) + UA_amb (Tp - T_amb) = peak power, K.
    pub required_coolant: f64,
}

/// The ladder and what holds for all of it.
#[derive(Debug, Clone)]
pub struct Ladder {
    pub rungs: Vec<Rung>,
    pub speed_rule: SpeedRule,
    /// True where U comes from the film model (else: the case's U at every scale).
    pub film_model: bool,
    pub warnings: Vec<Warning>,
}

/// The plant scaled to nominal volume `volume` (m^3) under geometric similarity.
pub fn scaled_plant(plant: &Plant, volume: f64, rule: SpeedRule) -> Result<Plant, ScaleError> {
    let g = &plant.geometry;
    let case_volume = g.volume_below(g.height());
    let ratio = (volume / case_volume).cbrt();
    if (ratio - 1.0).abs() < SAME_VESSEL {
        // The case's own vessel: the case as it is, bit for bit.
        return Ok(plant.clone());
    }
    let cube = ratio.powi(3);
    let geometry = VesselGeometry::new(g.bottom(), g.diameter() * ratio, volume).map_err(|e| {
        ScaleError::Geometry {
            volume_m3: volume,
            why: e.to_string(),
        }
    })?;
    let mut out = plant.clone();
    out.geometry = geometry;
    out.jacket_height = plant.jacket_height * ratio;
    out.vessel_heat_capacity = plant.vessel_heat_capacity * cube;
    out.charge.mass *= cube;
    out.charge.amounts.iter_mut().for_each(|n| *n *= cube);
    if let Some(feed) = out.feed.as_mut() {
        feed.stream.mass *= cube;
        feed.stream.amounts.iter_mut().for_each(|n| *n *= cube);
    }
    if let Some(ambient) = out.ambient.as_mut() {
        ambient.conductance *= ratio * ratio;
    }
    if let Some(boiling) = out.boiling.as_mut() {
        boiling.condenser_capacity = boiling.condenser_capacity.map(|c| c * cube);
    }
    if let Some(film) = &plant.film {
        let scaled = film.scaled(ratio, rule);
        out.u = scaled.coefficient(out.geometry.diameter());
        out.film = Some(scaled);
    }
    Ok(out)
}

/// Every rung, computed in parallel (one thread per volume).
pub fn scale_ladder(
    plant: &Plant,
    volumes: &[f64],
    rule: SpeedRule,
    deadline: Option<Instant>,
) -> Result<Ladder, ScaleError> {
    if volumes.is_empty() {
        return Err(ScaleError::Volumes("no volume given".into()));
    }
    let results: Vec<Result<Rung, ScaleError>> = std::thread::scope(|scope| {
        let handles: Vec<_> = volumes
            .iter()
            .map(|&v| scope.spawn(move || rung(plant, v, rule, deadline)))
            .collect();
        handles
            .into_iter()
            .map(|h| match h.join() {
                Ok(r) => r,
                Err(_) => Err(ScaleError::Volumes("a scale's computation stopped".into())),
            })
            .collect()
    });
    let rungs = results.into_iter().collect::<Result<Vec<_>, _>>()?;
    let mut warnings = Vec::new();
    if plant.film.is_none() {
        warnings.push(Warning::new(
            "scale-constant-u",
            format!("the case gives U ({:.0} W/(m2 K)) and no vessel.heat_transfer: U is held at that value at every scale, although the process film changes with the vessel and the impeller", plant.u),
        ));
    }
    for r in rungs
        .iter()
        .filter(|r| r.reynolds.is_some_and(|re| re < TURBULENT_REYNOLDS))
    {
        warnings.push(Warning::new(
            "scale-film-not-turbulent",
            format!(
                "at {} m^3 the impeller Reynolds number is {:.0}, below 10^4: the correlation with Re^(2/3) is for turbulent flow (common practice), the process film there is uncertain",
                r.nominal_volume,
                r.reynolds.unwrap_or(0.0)
            ),
        ));
    }
    if plant.ambient.is_some() {
        warnings.push(Warning::new(
            "scale-ambient-area",
            "vessel.ambient_loss is scaled with the outer area (as V^(2/3)); after a cooling failure every scale is taken as adiabatic",
        ));
    }
    Ok(Ladder {
        rungs,
        speed_rule: rule,
        film_model: plant.film.is_some(),
        warnings,
    })
}

fn rung(
    plant: &Plant,
    volume: f64,
    rule: SpeedRule,
    deadline: Option<Instant>,
) -> Result<Rung, ScaleError> {
    let p = scaled_plant(plant, volume, rule)?;
    let computation = compute(&p, deadline).map_err(|source| ScaleError::Scenario {
        volume_m3: volume,
        source,
    })?;
    let f = &computation.figures;
    let (phase, state) = computation.normal_run.state_at(f.normal.peak_time);
    let at_peak = p.snapshot(&phase, f.normal.peak_time, &state);
    let final_volume = p.charge.mass / p.charge.density
        + p.feed
            .as_ref()
            .map_or(0.0, |fd| fd.stream.mass / fd.stream.density);
    let cooled_area = p.geometry.jacketed_area(final_volume, p.jacket_height);
    let tp = p.process_temperature;
    let ua_peak = p.u * at_peak.cooled_area;
    let ambient_at_tp = p
        .ambient
        .map_or(0.0, |a| a.conductance * (tp - a.temperature));
    Ok(Rung {
        nominal_volume: volume,
        length_ratio: p.geometry.diameter() / plant.geometry.diameter(),
        diameter: p.geometry.diameter(),
        final_volume,
        wetted_area: p.geometry.wetted_area(final_volume),
        cooled_area,
        u: p.u,
        impeller_speed: p.film.as_ref().map(|m| m.impeller_speed),
        resistances: p
            .film
            .as_ref()
            .map(|m| m.resistances(p.geometry.diameter())),
        reynolds: p.film.as_ref().and_then(|m| m.reynolds()),
        cooling_capacity_per_volume: ua_peak * (tp - p.coldest_coolant_temperature())
            / at_peak.volume,
        time_constant: p.final_heat_capacity() / (p.u * cooled_area),
        peak_power_per_volume: f.normal.peak_reaction_power / at_peak.volume,
        max_temperature: f.normal.max_temperature,
        mtsr: f.mtsr,
        class: f.class,
        required_coolant: tp - (f.normal.peak_reaction_power - ambient_at_tp) / ua_peak,
    })
}

/// Parses "1 L, 100 L, 1 m^3" with the project's unit parser: nominal volumes in m^3.
pub fn parse_volumes(text: &str) -> Result<Vec<f64>, ScaleError> {
    use crate::case::units::{Dimension, parse_quantity};
    let volume = Dimension::new(3., 0., 0., 0., 0.);
    let mut out = Vec::new();
    for item in text.split(',').map(str::trim) {
        if item.is_empty() {
            continue;
        }
        let q = parse_quantity(item).map_err(|e| {
            ScaleError::Volumes(format!(
                "\"{item}\": {e}; accepted: volumes with units, e.g. \"1 L, 100 L, 4 m^3\""
            ))
        })?;
        if !q.dimension.approx_eq(&volume) || q.affine {
            return Err(ScaleError::Volumes(format!(
                "\"{item}\" is not a volume; accepted: volumes with units, e.g. \"1 L, 100 L, 4 m^3\""
            )));
        }
        if !(q.value_si > 0.0 && q.value_si.is_finite()) {
            return Err(ScaleError::Volumes(format!(
                "\"{item}\": a volume must be more than zero; accepted: e.g. \"1 L, 100 L, 4 m^3\""
            )));
        }
        out.push(q.value_si);
    }
    if out.is_empty() {
        return Err(ScaleError::Volumes(
            "no volume given; accepted: e.g. \"1 L, 100 L, 1 m^3, 4 m^3, 16 m^3\"".into(),
        ));
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::vessel::Bottom;

    /// Geometric similarity: every area scales as L^2 and every volume as L^3, so at the same
    /// fill ratio the wetted A/V goes exactly as V^(-1/3), whatever the bottom (dimensional
    /// analysis; the geometry is computed numerically, hence the tolerance).
    #[test]
    fn the_area_per_volume_of_similar_vessels_goes_as_v_to_the_minus_one_third() {
        for bottom in [
            Bottom::Flat,
            Bottom::Hemispherical,
            Bottom::Elliptical,
            Bottom::Torispherical,
        ] {
            let (d0, v0) = (1.6, 4.0);
            let base = VesselGeometry::new(bottom, d0, v0).unwrap();
            let fill = 0.7;
            let av0 = base.wetted_area(fill * v0) / (fill * v0);
            for v in [1e-3, 0.1, 1.0, 16.0] {
                let ratio: f64 = (v / v0).cbrt();
                let g = VesselGeometry::new(bottom, d0 * ratio, v).unwrap();
                let av = g.wetted_area(fill * v) / (fill * v);
                let expected = av0 * (v / v0).powf(-1.0 / 3.0);
                assert!(
                    (av / expected - 1.0).abs() < 1e-9,
                    "{bottom:?} {v}: {av} vs {expected}"
                );
            }
        }
    }

    #[test]
    fn volumes_are_parsed_with_units_and_refused_without() {
        let v = parse_volumes("1 L, 100 L, 1 m^3, 4 m^3, 16 m^3").unwrap();
        assert_eq!(v.len(), 5);
        assert!((v[0] - 1e-3).abs() < 1e-15 && (v[4] - 16.0).abs() < 1e-12);
        assert!(parse_volumes("1 kg").is_err());
        assert!(parse_volumes("0 L").is_err());
        assert!(parse_volumes(" , ").is_err());
        assert!(parse_volumes("1 furlong").is_err());
    }
}
