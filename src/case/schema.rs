//! The case file as written: serde structs that mirror the YAML keys one to one.
//!
//! Every quantity is kept as its text (`"75 kJ/mol"`) here; `validate` turns the text into
//! checked SI quantities. Unknown keys are collected (`unknown`, through `serde(flatten)`)
//! and a missing required key is left `None`: `validate` reports both, so that one run
//! names every problem of the file at once.

use serde::Deserialize;
use serde::de::{self, Deserializer, Visitor};
use std::collections::BTreeMap;
use std::fmt;

/// A scalar value kept as text: a quantity string, a bare number or a word. A list, a
/// mapping or a tagged value where a single value belongs is kept too (as its `Shape`), so
/// that `validate` reports it with the key's example, among the other errors.
#[derive(Debug, Clone, PartialEq)]
pub struct Scalar(pub String, pub Shape);

/// What the file holds where a single value belongs.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Shape {
    Single,
    List,
    Mapping,
    /// A value with a YAML tag (`!name`); the text is the tag.
    Tagged,
}

impl Scalar {
    /// A single value.
    pub fn single(text: impl Into<String>) -> Scalar {
        Scalar(text.into(), Shape::Single)
    }
}

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
        Ok(Scalar::single(v.to_string()))
    }
    fn visit_bool<E: de::Error>(self, v: bool) -> Result<Scalar, E> {
        Ok(Scalar::single(v.to_string()))
    }
    fn visit_i64<E: de::Error>(self, v: i64) -> Result<Scalar, E> {
        Ok(Scalar::single(v.to_string()))
    }
    fn visit_u64<E: de::Error>(self, v: u64) -> Result<Scalar, E> {
        Ok(Scalar::single(v.to_string()))
    }
    fn visit_f64<E: de::Error>(self, v: f64) -> Result<Scalar, E> {
        // YAML's own spellings, so that a message quotes what the file says.
        let text = if v.is_nan() {
            ".nan".to_string()
        } else if v.is_infinite() {
            if v > 0.0 { ".inf" } else { "-.inf" }.to_string()
        } else {
            format!("{v:?}")
        };
        Ok(Scalar::single(text))
    }
    fn visit_seq<A: de::SeqAccess<'de>>(self, mut seq: A) -> Result<Scalar, A::Error> {
        while seq.next_element::<de::IgnoredAny>()?.is_some() {}
        Ok(Scalar(String::new(), Shape::List))
    }
    fn visit_map<A: de::MapAccess<'de>>(self, mut map: A) -> Result<Scalar, A::Error> {
        while map
            .next_entry::<de::IgnoredAny, de::IgnoredAny>()?
            .is_some()
        {}
        Ok(Scalar(String::new(), Shape::Mapping))
    }
    fn visit_enum<A: de::EnumAccess<'de>>(self, data: A) -> Result<Scalar, A::Error> {
        use de::VariantAccess;
        let (tag, value) = data.variant::<String>()?;
        value.newtype_variant::<de::IgnoredAny>()?;
        Ok(Scalar(format!("!{tag}"), Shape::Tagged))
    }
}

/// The keys of a mapping that its section does not know, as written (a key that is not
/// text, such as a list, is shown as `<complex key>`).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct UnknownKeys(pub Vec<String>);

impl<'de> Deserialize<'de> for UnknownKeys {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        deserializer.deserialize_map(UnknownKeysVisitor)
    }
}

struct UnknownKeysVisitor;

impl<'de> Visitor<'de> for UnknownKeysVisitor {
    type Value = UnknownKeys;

    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("a mapping")
    }
    fn visit_map<A: de::MapAccess<'de>>(self, mut map: A) -> Result<UnknownKeys, A::Error> {
        let mut keys = Vec::new();
        while let Some(KeyText(key)) = map.next_key()? {
            map.next_value::<de::IgnoredAny>()?;
            keys.push(key);
        }
        Ok(UnknownKeys(keys))
    }
}

/// A mapping key of any kind, as text.
struct KeyText(String);

impl<'de> Deserialize<'de> for KeyText {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        deserializer.deserialize_any(KeyTextVisitor)
    }
}

struct KeyTextVisitor;

impl<'de> Visitor<'de> for KeyTextVisitor {
    type Value = KeyText;

    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("a key")
    }
    fn visit_str<E: de::Error>(self, v: &str) -> Result<KeyText, E> {
        Ok(KeyText(v.to_string()))
    }
    fn visit_bool<E: de::Error>(self, v: bool) -> Result<KeyText, E> {
        Ok(KeyText(v.to_string()))
    }
    fn visit_i64<E: de::Error>(self, v: i64) -> Result<KeyText, E> {
        Ok(KeyText(v.to_string()))
    }
    fn visit_u64<E: de::Error>(self, v: u64) -> Result<KeyText, E> {
        Ok(KeyText(v.to_string()))
    }
    fn visit_f64<E: de::Error>(self, v: f64) -> Result<KeyText, E> {
        ScalarVisitor.visit_f64(v).map(|s| KeyText(s.0))
    }
    fn visit_unit<E: de::Error>(self) -> Result<KeyText, E> {
        Ok(KeyText("null".to_string()))
    }
    fn visit_seq<A: de::SeqAccess<'de>>(self, mut seq: A) -> Result<KeyText, A::Error> {
        while seq.next_element::<de::IgnoredAny>()?.is_some() {}
        Ok(KeyText("<complex key>".to_string()))
    }
    fn visit_map<A: de::MapAccess<'de>>(self, mut map: A) -> Result<KeyText, A::Error> {
        while map
            .next_entry::<de::IgnoredAny, de::IgnoredAny>()?
            .is_some()
        {}
        Ok(KeyText("<complex key>".to_string()))
    }
}

/// A map of species name to a scalar (amounts, orders).
pub type ScalarMap = BTreeMap<String, Scalar>;

/// The keys each section accepts, in the order of the struct (the case reference's order).
pub trait Keys {
    const KEYS: &'static [&'static str];
}

/// The key of a field: its name, without the `r#` of a raw identifier (`r#type` is `type`).
const fn key_name(field: &'static str) -> &'static str {
    match field.as_bytes() {
        [b'r', b'#', rest @ ..] => match std::str::from_utf8(rest) {
            Ok(name) => name,
            Err(_) => field,
        },
        _ => field,
    }
}

/// A raw section: the struct as written, with `unknown` for the keys it does not have, and
/// its `Keys` taken from the same field list, so that the two cannot drift apart.
macro_rules! section {
    (
        $(#[$meta:meta])*
        pub struct $name:ident {
            $($(#[$field_meta:meta])* pub $field:ident : $ty:ty,)*
        }
    ) => {
        $(#[$meta])*
        #[derive(Debug, Deserialize)]
        pub struct $name {
            $($(#[$field_meta])* pub $field: $ty,)*
            /// Keys this section does not have, in the order written.
            #[serde(flatten)]
            pub unknown: UnknownKeys,
        }

        impl Keys for $name {
            const KEYS: &'static [&'static str] = &[$(key_name(stringify!($field))),*];
        }
    };
}

section! {
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
        pub solvent: Option<RawSolvent>,
        pub condenser: Option<RawCondenser>,
    }
}

section! {
    pub struct RawSpecies {
        pub molar_mass: Option<Scalar>,
        pub gas: Option<Scalar>,
    }
}

section! {
    /// The initial charge (all keys required).
    pub struct RawStream {
        pub mass: Option<Scalar>,
        pub specific_heat: Option<Scalar>,
        pub density: Option<Scalar>,
        pub amounts: Option<ScalarMap>,
    }
}

section! {
    pub struct RawFeed {
        pub mass: Option<Scalar>,
        pub specific_heat: Option<Scalar>,
        pub density: Option<Scalar>,
        pub temperature: Option<Scalar>,
        pub amounts: Option<ScalarMap>,
        pub start: Option<Scalar>,
        pub duration: Option<Scalar>,
    }
}

section! {
    pub struct RawReaction {
        pub equation: Option<Scalar>,
        pub enthalpy: Option<Scalar>,
        pub rate_constant: Option<Scalar>,
        pub reference_temperature: Option<Scalar>,
        pub activation_energy: Option<Scalar>,
        pub orders: Option<ScalarMap>,
    }
}

section! {
    pub struct RawVessel {
        pub diameter: Option<Scalar>,
        pub bottom: Option<Scalar>,
        pub nominal_volume: Option<Scalar>,
        pub jacket_height: Option<Scalar>,
        pub heat_transfer_coefficient: Option<Scalar>,
        pub heat_capacity: Option<Scalar>,
        pub heat_transfer: Option<RawHeatTransfer>,
        pub ambient_loss: Option<Scalar>,
        pub ambient_temperature: Option<Scalar>,
    }
}

section! {
    /// The overall coefficient from resistances in series (instead of
    /// `heat_transfer_coefficient`): the wall's layers, fouling, the coolant film, and the
    /// process film from the impeller and the contents, or from lab data (Wilson plot).
    pub struct RawHeatTransfer {
        pub wall: Option<Vec<RawWallLayer>>,
        pub fouling: Option<Scalar>,
        pub coolant_film: Option<Scalar>,
        pub impeller: Option<RawImpeller>,
        pub contents: Option<RawContents>,
        pub lab: Option<RawLab>,
    }
}

section! {
    pub struct RawWallLayer {
        pub material: Option<Scalar>,
        pub thickness: Option<Scalar>,
        pub conductivity: Option<Scalar>,
    }
}

section! {
    pub struct RawImpeller {
        pub r#type: Option<Scalar>,
        pub constant: Option<Scalar>,
        pub diameter: Option<Scalar>,
        pub speed: Option<Scalar>,
    }
}

section! {
    /// The contents' transport properties for the process film (density and specific heat:
    /// the charge's).
    pub struct RawContents {
        pub viscosity: Option<Scalar>,
        pub wall_viscosity: Option<Scalar>,
        pub thermal_conductivity: Option<Scalar>,
    }
}

section! {
    /// Lab data for a Wilson plot: the lab vessel and impeller, and U at several speeds.
    pub struct RawLab {
        pub vessel_diameter: Option<Scalar>,
        pub impeller_diameter: Option<Scalar>,
        pub measurements: Option<Vec<RawMeasurement>>,
    }
}

section! {
    pub struct RawMeasurement {
        pub speed: Option<Scalar>,
        pub coefficient: Option<Scalar>,
    }
}

section! {
    pub struct RawCoolant {
        pub temperature: Option<Scalar>,
        pub control: Option<Scalar>,
        pub minimum: Option<Scalar>,
        pub maximum: Option<Scalar>,
        pub time_constant: Option<Scalar>,
    }
}

section! {
    pub struct RawProcess {
        pub temperature: Option<Scalar>,
        pub duration: Option<Scalar>,
    }
}

section! {
    pub struct RawFailure {
        pub dosing: Option<Scalar>,
        pub horizon: Option<Scalar>,
        pub stop_above: Option<Scalar>,
    }
}

section! {
    pub struct RawDecomposition {
        pub energy: Option<Scalar>,
        pub heat_release_rate: Option<Scalar>,
        pub reference_temperature: Option<Scalar>,
        pub activation_energy: Option<Scalar>,
        pub order: Option<Scalar>,
    }
}

section! {
    pub struct RawLimits {
        pub mtt: Option<Scalar>,
        pub cooling_use: Option<Scalar>,
        pub mtsr_margin: Option<Scalar>,
        pub off_gas_capacity: Option<Scalar>,
    }
}

section! {
    /// The boiling barrier: the solvent that boils at the MTT after a cooling failure.
    pub struct RawSolvent {
        pub boiling_point: Option<Scalar>,
        pub heat_of_vaporisation: Option<Scalar>,
        pub molar_mass: Option<Scalar>,
    }
}

section! {
    pub struct RawCondenser {
        pub capacity: Option<Scalar>,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Every listed key is read as its field (not collected as unknown).
    fn listed_keys_are_fields<T: Keys + for<'de> Deserialize<'de> + HasUnknown>() {
        for key in T::KEYS {
            let raw: T = serde_yaml::from_str(&format!("{key}: null\nzzz: 2\n"))
                .unwrap_or_else(|e| panic!("{key}: {e}"));
            assert_eq!(raw.unknown().0, vec!["zzz".to_string()], "{key}");
        }
    }

    trait HasUnknown {
        fn unknown(&self) -> &UnknownKeys;
    }

    macro_rules! has_unknown {
        ($($t:ty),*) => {$(
            impl HasUnknown for $t {
                fn unknown(&self) -> &UnknownKeys {
                    &self.unknown
                }
            }
        )*};
    }
    has_unknown!(
        RawSpecies,
        RawStream,
        RawFeed,
        RawReaction,
        RawVessel,
        RawCoolant,
        RawProcess,
        RawFailure,
        RawDecomposition,
        RawLimits,
        RawSolvent,
        RawCondenser,
        RawHeatTransfer,
        RawWallLayer,
        RawImpeller,
        RawContents,
        RawLab,
        RawMeasurement
    );

    #[test]
    fn key_lists_match_the_structs() {
        listed_keys_are_fields::<RawSpecies>();
        listed_keys_are_fields::<RawStream>();
        listed_keys_are_fields::<RawFeed>();
        listed_keys_are_fields::<RawCoolant>();
        listed_keys_are_fields::<RawProcess>();
        listed_keys_are_fields::<RawFailure>();
        listed_keys_are_fields::<RawDecomposition>();
        listed_keys_are_fields::<RawLimits>();
        listed_keys_are_fields::<RawVessel>();
        listed_keys_are_fields::<RawSolvent>();
        listed_keys_are_fields::<RawCondenser>();
        listed_keys_are_fields::<RawHeatTransfer>();
        listed_keys_are_fields::<RawWallLayer>();
        listed_keys_are_fields::<RawImpeller>();
        listed_keys_are_fields::<RawContents>();
        listed_keys_are_fields::<RawLab>();
        listed_keys_are_fields::<RawMeasurement>();
        assert!(RawImpeller::KEYS.contains(&"type"));
    }

    #[test]
    fn unknown_keys_of_any_kind_are_collected_in_order() {
        let raw: RawVessel = serde_yaml::from_str("diameter: 1 m\nagitator: x\n3: y\n").unwrap();
        assert_eq!(raw.diameter, Some(Scalar::single("1 m")));
        assert_eq!(raw.unknown.0, vec!["agitator", "3"]);
    }

    #[test]
    fn lists_mappings_and_tags_are_kept_as_shapes() {
        let raw: RawStream =
            serde_yaml::from_str("mass: [1, kg]\ndensity: { a: 1 }\nspecific_heat: !kJ 2\n")
                .unwrap();
        assert_eq!(raw.mass, Some(Scalar(String::new(), Shape::List)));
        assert_eq!(raw.density, Some(Scalar(String::new(), Shape::Mapping)));
        assert_eq!(
            raw.specific_heat,
            Some(Scalar("!kJ".to_string(), Shape::Tagged))
        );
    }

    #[test]
    fn non_finite_floats_keep_their_yaml_spelling() {
        let raw: RawDecomposition =
            serde_yaml::from_str("order: .nan\nenergy: -.inf\nheat_release_rate: .inf\n").unwrap();
        assert_eq!(raw.order, Some(Scalar::single(".nan")));
        assert_eq!(raw.energy, Some(Scalar::single("-.inf")));
        assert_eq!(raw.heat_release_rate, Some(Scalar::single(".inf")));
    }
}
