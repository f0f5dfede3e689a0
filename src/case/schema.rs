//! The case file as written: serde structs that mirror the YAML keys one to one.
//!
//! Every quantity is kept as its text (`"75 kJ/mol"`) here; `validate` turns the text into
//! checked SI quantities. Unknown keys are rejected by serde (`deny_unknown_fields`); a
//! missing required key is reported by `validate`, so that several can be named at once.

use serde::Deserialize;
use serde::de::{self, Deserializer, Visitor};
use std::collections::BTreeMap;
use std::fmt;

/// A scalar value kept as text: a quantity string, a bare number or a word.
#[derive(Debug, Clone, PartialEq)]
pub struct Scalar(pub String);

impl<'de> Deserialize<'de> for Scalar {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        deserializer.deserialize_any(ScalarVisitor)
    }
}

struct ScalarVisitor;

impl<'de> Visitor<'de> for ScalarVisitor {
    type Value = Scalar;

    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("a single value such as \"75 kJ/mol\", a number or a word")
    }
    fn visit_str<E: de::Error>(self, v: &str) -> Result<Scalar, E> {
        Ok(Scalar(v.to_string()))
    }
    fn visit_bool<E: de::Error>(self, v: bool) -> Result<Scalar, E> {
        Ok(Scalar(v.to_string()))
    }
    fn visit_i64<E: de::Error>(self, v: i64) -> Result<Scalar, E> {
        Ok(Scalar(v.to_string()))
    }
    fn visit_u64<E: de::Error>(self, v: u64) -> Result<Scalar, E> {
        Ok(Scalar(v.to_string()))
    }
    fn visit_f64<E: de::Error>(self, v: f64) -> Result<Scalar, E> {
        Ok(Scalar(format!("{v:?}")))
    }
}

/// A map of species name to a scalar (amounts, orders).
pub type ScalarMap = BTreeMap<String, Scalar>;

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawCase {
    pub format: Option<Scalar>,
    pub title: Option<Scalar>,
    pub species: Option<BTreeMap<String, RawSpecies>>,
    pub charge: Option<RawStream>,
    pub feed: Option<RawFeed>,
    pub reactions: Option<Vec<RawReaction>>,
    pub vessel: Option<RawVessel>,
    pub coolant: Option<RawCoolant>,
    pub process: Option<RawProcess>,
    pub failure: Option<RawFailure>,
    pub decomposition: Option<RawDecomposition>,
    pub limits: Option<RawLimits>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawSpecies {
    pub molar_mass: Option<Scalar>,
    pub gas: Option<bool>,
}

/// The initial charge (all keys required).
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawStream {
    pub mass: Option<Scalar>,
    pub specific_heat: Option<Scalar>,
    pub density: Option<Scalar>,
    pub amounts: Option<ScalarMap>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawFeed {
    pub mass: Option<Scalar>,
    pub specific_heat: Option<Scalar>,
    pub density: Option<Scalar>,
    pub temperature: Option<Scalar>,
    pub amounts: Option<ScalarMap>,
    pub start: Option<Scalar>,
    pub duration: Option<Scalar>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawReaction {
    pub equation: Option<Scalar>,
    pub enthalpy: Option<Scalar>,
    pub rate_constant: Option<Scalar>,
    pub reference_temperature: Option<Scalar>,
    pub activation_energy: Option<Scalar>,
    pub orders: Option<ScalarMap>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawVessel {
    pub diameter: Option<Scalar>,
    pub bottom: Option<Scalar>,
    pub nominal_volume: Option<Scalar>,
    pub jacket_height: Option<Scalar>,
    pub heat_transfer_coefficient: Option<Scalar>,
    pub heat_capacity: Option<Scalar>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawCoolant {
    pub temperature: Option<Scalar>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawProcess {
    pub temperature: Option<Scalar>,
    pub duration: Option<Scalar>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawFailure {
    pub dosing: Option<Scalar>,
    pub horizon: Option<Scalar>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawDecomposition {
    pub energy: Option<Scalar>,
    pub heat_release_rate: Option<Scalar>,
    pub reference_temperature: Option<Scalar>,
    pub activation_energy: Option<Scalar>,
    pub order: Option<Scalar>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawLimits {
    pub mtt: Option<Scalar>,
}
