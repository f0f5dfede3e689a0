//! The case: one recipe in one vessel, loaded from YAML, with units checked and carried as
//! `uom` quantities at this boundary.

pub mod equation;
pub mod error;
pub mod load;
pub mod positions;
pub mod schema;
pub mod units;
pub mod validate;

pub use error::{CaseError, InputError};
pub use load::load_case_file;

pub use crate::model::vessel::Bottom;
use crate::warning::Warning;
use equation::Equation;
use std::collections::BTreeMap;
use uom::si::f64::{
    AmountOfSubstance, AvailableEnergy, HeatCapacity, HeatTransfer, Length, Mass, MassDensity,
    MassRate, MolarEnergy, MolarMass, Power, SpecificHeatCapacity, SpecificPower,
    TemperatureInterval, ThermodynamicTemperature, Time, Volume,
};

/// A checked case, ready for the model.
#[derive(Debug, Clone)]
pub struct Case {
    pub title: String,
    pub species: BTreeMap<String, SpeciesData>,
    pub charge: Charge,
    pub feed: Option<Feed>,
    pub reactions: Vec<Reaction>,
    pub vessel: Vessel,
    pub coolant_temperature: ThermodynamicTemperature,
    pub process_temperature: ThermodynamicTemperature,
    pub process_duration: Time,
    pub failure: Failure,
    pub decomposition: Option<Decomposition>,
    pub mtt: ThermodynamicTemperature,
    /// `coolant.control: hold`: the jacket temperature follows what holds Tp.
    pub jacket_control: Option<JacketControl>,
    /// The boiling barrier after a cooling failure (`solvent`, `condenser`).
    pub solvent: Option<Solvent>,
    pub condenser: Option<Condenser>,
    pub limit_settings: LimitSettings,
    /// Questionable but possible inputs, found while checking the case.
    pub input_warnings: Vec<Warning>,
}

#[derive(Debug, Clone, Default)]
pub struct SpeciesData {
    pub molar_mass: Option<MolarMass>,
    pub gas: bool,
}

#[derive(Debug, Clone)]
pub struct Charge {
    pub mass: Mass,
    pub specific_heat: SpecificHeatCapacity,
    pub density: MassDensity,
    pub amounts: BTreeMap<String, AmountOfSubstance>,
}

#[derive(Debug, Clone)]
pub struct Feed {
    pub mass: Mass,
    pub specific_heat: SpecificHeatCapacity,
    pub density: MassDensity,
    pub temperature: ThermodynamicTemperature,
    pub amounts: BTreeMap<String, AmountOfSubstance>,
    pub start: Time,
    pub duration: Time,
}

/// A rate constant in SI (m^3/mol)^(order - 1) / s, with the overall order it belongs to.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RateConstant {
    pub si_value: f64,
    pub overall_order: f64,
}

#[derive(Debug, Clone)]
pub struct Reaction {
    pub equation: Equation,
    pub enthalpy: MolarEnergy,
    pub rate_constant: RateConstant,
    pub reference_temperature: ThermodynamicTemperature,
    pub activation_energy: MolarEnergy,
    /// Order in each species' concentration (defaults: the reactants' coefficients).
    pub orders: BTreeMap<String, f64>,
}

#[derive(Debug, Clone)]
pub struct Vessel {
    pub diameter: Length,
    pub bottom: Bottom,
    pub nominal_volume: Volume,
    pub jacket_height: Length,
    /// Given (`heat_transfer_coefficient`), or from `heat_transfer` in this vessel.
    pub heat_transfer_coefficient: HeatTransfer,
    pub heat_capacity: HeatCapacity,
    /// `vessel.heat_transfer`: U from resistances in series (SI, in the model's types).
    pub film: Option<FilmData>,
    /// `vessel.ambient_loss`: heat lost to the surroundings in normal operation.
    pub ambient: Option<AmbientLoss>,
}

/// The resistances of `vessel.heat_transfer`, checked, in SI.
#[derive(Debug, Clone)]
pub struct FilmData {
    pub model: crate::model::film::FilmModel,
    /// The impeller type named in the case, if any.
    pub impeller_type: Option<crate::model::film::ImpellerType>,
    /// The Wilson plot the process film comes from, when it comes from lab data.
    pub lab: Option<LabFit>,
}

/// A Wilson plot of lab data and the lab vessel it was measured in (m).
#[derive(Debug, Clone)]
pub struct LabFit {
    pub fit: crate::model::wilson::WilsonFit,
    pub vessel_diameter: f64,
    pub impeller_diameter: f64,
}

/// Heat lost to the surroundings: UA_amb (W/K) and the ambient temperature (K).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AmbientLoss {
    pub conductance: f64,
    pub temperature: f64,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Dosing {
    Continues,
    Stops,
}

#[derive(Debug, Clone)]
pub struct Failure {
    pub dosing: Dosing,
    pub horizon: Time,
    /// Dosing interlock: the feed stops whenever T is above this.
    pub stop_above: Option<ThermodynamicTemperature>,
}

/// A jacket whose temperature is adjusted to hold Tp within [minimum, maximum], following
/// its set value with a first-order lag (`time_constant`, zero for an ideal jacket).
#[derive(Debug, Clone)]
pub struct JacketControl {
    pub minimum: ThermodynamicTemperature,
    pub maximum: ThermodynamicTemperature,
    pub time_constant: Time,
}

#[derive(Debug, Clone)]
pub struct Solvent {
    pub boiling_point: ThermodynamicTemperature,
    pub heat_of_vaporisation: MolarEnergy,
    pub molar_mass: MolarMass,
}

#[derive(Debug, Clone)]
pub struct Condenser {
    pub capacity: Power,
}

/// Settings of the dosing-limit criteria (`limits`).
#[derive(Debug, Clone)]
pub struct LimitSettings {
    /// Share of the jacket's capacity at Tp the peak reaction power may use (common practice 0.8).
    pub cooling_use: f64,
    pub mtsr_margin: TemperatureInterval,
    pub off_gas_capacity: Option<MassRate>,
}

/// Common-practice margin on the jacket's capacity.
pub const DEFAULT_COOLING_USE: f64 = 0.8;

#[derive(Debug, Clone)]
pub struct Decomposition {
    pub energy: AvailableEnergy,
    pub heat_release_rate: SpecificPower,
    pub reference_temperature: ThermodynamicTemperature,
    pub activation_energy: MolarEnergy,
    pub order: f64,
}
