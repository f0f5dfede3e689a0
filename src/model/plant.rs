//! The recipe in its vessel as plain SI numbers: what the heat balance needs, taken once
//! from the checked case.

use super::network::Network;
use super::vessel::VesselGeometry;
use crate::case::{Case, Dosing};
use std::collections::BTreeMap;
use uom::si::f64::AmountOfSubstance;
use uom::si::{
    amount_of_substance::mole, available_energy::joule_per_kilogram,
    heat_capacity::joule_per_kelvin, heat_transfer::watt_per_square_meter_kelvin, length::meter,
    mass::kilogram, mass_density::kilogram_per_cubic_meter, molar_energy::joule_per_mole,
    molar_mass::kilogram_per_mole, power::watt, specific_heat_capacity::joule_per_kilogram_kelvin,
    specific_power::watt_per_kilogram, thermodynamic_temperature::kelvin, time::second,
    volume::cubic_meter,
};

/// A liquid stream: mass (kg), specific heat (J/(kg K)), density (kg/m^3), amounts (mol).
#[derive(Debug, Clone)]
pub struct Stream {
    pub mass: f64,
    pub specific_heat: f64,
    pub density: f64,
    pub amounts: Vec<f64>,
}

#[derive(Debug, Clone)]
pub struct FeedPlan {
    pub stream: Stream,
    pub temperature: f64,
    pub start: f64,
    pub duration: f64,
}

impl FeedPlan {
    pub fn end(&self) -> f64 {
        self.start + self.duration
    }
    pub fn mass_rate(&self) -> f64 {
        self.stream.mass / self.duration
    }
    /// Mass fed by time t as planned, kg.
    pub fn fed_by(&self, t: f64) -> f64 {
        self.mass_rate() * (t - self.start).clamp(0.0, self.duration)
    }
    pub fn is_on_at(&self, t: f64) -> bool {
        t >= self.start && t < self.end()
    }
}

/// Secondary decomposition in SI: J/kg, W/kg at the reference temperature (K), J/mol.
#[derive(Debug, Clone, Copy)]
pub struct DecompositionLaw {
    pub energy: f64,
    pub q_ref: f64,
    pub reference_temperature: f64,
    pub activation_energy: f64,
    pub order: f64,
}

impl DecompositionLaw {
    /// Specific heat-release rate of the fresh mass at `temperature`, W/kg.
    pub fn fresh_rate(&self, temperature: f64) -> f64 {
        super::network::arrhenius(
            self.q_ref,
            self.activation_energy,
            self.reference_temperature,
            temperature,
        )
    }
    /// Specific heat-release rate at conversion `alpha`, W/kg.
    pub fn rate(&self, temperature: f64, alpha: f64) -> f64 {
        let remaining = (1.0 - alpha).clamp(0.0, 1.0);
        let factor = if self.order == 0.0 {
            1.0
        } else {
            remaining.powf(self.order)
        };
        self.fresh_rate(temperature) * factor
    }
}

/// How the jacket temperature is set.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Jacket {
    /// One coolant temperature all along (the contract model), K.
    Constant(f64),
    /// Adjusted to hold Tp within [minimum, maximum] (K), following its set value with a
    /// first-order lag (s; zero for an ideal jacket); `initial` K or NaN (then: the set value).
    Hold {
        minimum: f64,
        maximum: f64,
        lag: f64,
        initial: f64,
    },
}

/// Heat lost to the surroundings, UA_amb (T - T_amb): conductance W/K, temperature K.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Ambient {
    pub conductance: f64,
    pub temperature: f64,
}

/// The boiling barrier: the solvent boils at `boiling_point` (K) once cooling is lost.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoilingBarrier {
    pub boiling_point: f64,
    /// J/mol
    pub heat_of_vaporisation: f64,
    /// kg/mol
    pub molar_mass: f64,
    /// W; None where no condenser is given.
    pub condenser_capacity: Option<f64>,
}

#[derive(Debug, Clone)]
pub struct Plant {
    pub network: Network,
    pub geometry: VesselGeometry,
    pub jacket_height: f64,
    /// Overall heat-transfer coefficient, W/(m^2 K).
    pub u: f64,
    /// The resistances U comes from, where the case gives them (`vessel.heat_transfer`).
    pub film: Option<super::film::FilmModel>,
    /// Heat lost to the surroundings in normal operation (none after a cooling failure).
    pub ambient: Option<Ambient>,
    /// Wall and inserts, J/K.
    pub vessel_heat_capacity: f64,
    pub charge: Stream,
    pub feed: Option<FeedPlan>,
    /// The constant coolant temperature, or in hold mode the initial jacket temperature, K.
    pub coolant_temperature: f64,
    pub jacket: Jacket,
    /// Dosing interlock: the feed stops whenever T is above this, K.
    pub stop_feed_above: Option<f64>,
    pub boiling: Option<BoilingBarrier>,
    pub process_temperature: f64,
    pub process_duration: f64,
    pub dosing_after_failure: Dosing,
    pub failure_horizon: f64,
    pub decomposition: Option<DecompositionLaw>,
    pub mtt: f64,
}

fn jacket_of(case: &Case) -> Jacket {
    match &case.jacket_control {
        None => Jacket::Constant(case.coolant_temperature.get::<kelvin>()),
        Some(c) => Jacket::Hold {
            minimum: c.minimum.get::<kelvin>(),
            maximum: c.maximum.get::<kelvin>(),
            lag: c.time_constant.get::<second>(),
            initial: case.coolant_temperature.get::<kelvin>(),
        },
    }
}

fn amounts_vector(network: &Network, amounts: &BTreeMap<String, AmountOfSubstance>) -> Vec<f64> {
    let mut out = vec![0.0; network.species_count()];
    for (name, amount) in amounts {
        if let Some(i) = network.index_of(name) {
            out[i] = amount.get::<mole>();
        }
    }
    out
}

impl Plant {
    /// Builds the plant from a checked case (validation guarantees the geometry exists).
    pub fn from_case(case: &Case) -> Result<Plant, super::vessel::GeometryError> {
        let network = Network::from_case(case);
        let v = &case.vessel;
        let geometry = VesselGeometry::new(
            v.bottom,
            v.diameter.get::<meter>(),
            v.nominal_volume.get::<cubic_meter>(),
        )?;
        let charge = Stream {
            mass: case.charge.mass.get::<kilogram>(),
            specific_heat: case.charge.specific_heat.get::<joule_per_kilogram_kelvin>(),
            density: case.charge.density.get::<kilogram_per_cubic_meter>(),
            amounts: amounts_vector(&network, &case.charge.amounts),
        };
        let feed = case.feed.as_ref().map(|f| FeedPlan {
            stream: Stream {
                mass: f.mass.get::<kilogram>(),
                specific_heat: f.specific_heat.get::<joule_per_kilogram_kelvin>(),
                density: f.density.get::<kilogram_per_cubic_meter>(),
                amounts: amounts_vector(&network, &f.amounts),
            },
            temperature: f.temperature.get::<kelvin>(),
            start: f.start.get::<second>(),
            duration: f.duration.get::<second>(),
        });
        let decomposition = case.decomposition.as_ref().map(|d| DecompositionLaw {
            energy: d.energy.get::<joule_per_kilogram>(),
            q_ref: d.heat_release_rate.get::<watt_per_kilogram>(),
            reference_temperature: d.reference_temperature.get::<kelvin>(),
            activation_energy: d.activation_energy.get::<joule_per_mole>(),
            order: d.order,
        });
        Ok(Plant {
            network,
            geometry,
            jacket_height: v.jacket_height.get::<meter>(),
            u: v.heat_transfer_coefficient
                .get::<watt_per_square_meter_kelvin>(),
            film: v.film.as_ref().map(|f| f.model.clone()),
            ambient: v.ambient.map(|a| Ambient {
                conductance: a.conductance,
                temperature: a.temperature,
            }),
            vessel_heat_capacity: v.heat_capacity.get::<joule_per_kelvin>(),
            charge,
            feed,
            coolant_temperature: case.coolant_temperature.get::<kelvin>(),
            jacket: jacket_of(case),
            stop_feed_above: case.failure.stop_above.map(|t| t.get::<kelvin>()),
            boiling: case.solvent.as_ref().map(|s| BoilingBarrier {
                boiling_point: s.boiling_point.get::<kelvin>(),
                heat_of_vaporisation: s.heat_of_vaporisation.get::<joule_per_mole>(),
                molar_mass: s.molar_mass.get::<kilogram_per_mole>(),
                condenser_capacity: case.condenser.as_ref().map(|c| c.capacity.get::<watt>()),
            }),
            process_temperature: case.process_temperature.get::<kelvin>(),
            process_duration: case.process_duration.get::<second>(),
            dosing_after_failure: case.failure.dosing,
            failure_horizon: case.failure.horizon.get::<second>(),
            decomposition,
            mtt: case.mtt.get::<kelvin>(),
        })
    }

    /// Amounts of the whole recipe, charge plus feed, mol.
    pub fn recipe_amounts(&self) -> Vec<f64> {
        let mut total = self.charge.amounts.clone();
        if let Some(feed) = &self.feed {
            total
                .iter_mut()
                .zip(&feed.stream.amounts)
                .for_each(|(t, f)| *t += f);
        }
        total
    }

    /// The liquid volume once everything is fed (volumes add), m^3.
    pub fn final_volume(&self) -> f64 {
        let fed = self
            .feed
            .as_ref()
            .map_or(0.0, |f| f.stream.mass / f.stream.density);
        self.charge.mass / self.charge.density + fed
    }

    pub fn final_mass(&self) -> f64 {
        self.charge.mass + self.feed.as_ref().map_or(0.0, |f| f.stream.mass)
    }

    /// C_final = m_charge cp_charge + m_feed cp_feed + C_vessel, J/K.
    pub fn final_heat_capacity(&self) -> f64 {
        self.charge.mass * self.charge.specific_heat
            + self
                .feed
                .as_ref()
                .map_or(0.0, |f| f.stream.mass * f.stream.specific_heat)
            + self.vessel_heat_capacity
    }

    pub fn feed_end(&self) -> f64 {
        self.feed.as_ref().map_or(0.0, |f| f.end())
    }

    /// The coldest the jacket can be: the coolant temperature, or the minimum in hold mode.
    pub fn coldest_coolant_temperature(&self) -> f64 {
        match self.jacket {
            Jacket::Constant(t) => t,
            Jacket::Hold { minimum, .. } => minimum,
        }
    }

    /// How far the normal-operation reference run is followed: the process, and the whole feed.
    pub fn normal_horizon(&self) -> f64 {
        self.process_duration.max(self.feed_end())
    }
}
