//! Checking a whole raw case before any computation: units against the dimension each key
//! needs, physically impossible values and relations (errors), questionable ones (warnings).

use super::equation::{Equation, parse_equation};
use super::error::InputError;
use super::positions::PositionMap;
use super::schema::{
    Keys, RawCase, RawCondenser, RawCoolant, RawDecomposition, RawFailure, RawFeed, RawLimits,
    RawProcess, RawReaction, RawSolvent, RawSpecies, RawStream, RawVessel, Scalar, ScalarMap,
    Shape, UnknownKeys,
};
use super::units::{Dimension, parse_quantity};
use super::{
    Bottom, Case, Charge, Condenser, DEFAULT_COOLING_USE, Decomposition, Dosing, Failure, Feed,
    JacketControl, LimitSettings, RateConstant, Reaction, Solvent, SpeciesData, Vessel,
};
use crate::model::network::{Network, releasable_heat_is_bounded};
use crate::model::plant::Plant;
use crate::model::vessel::VesselGeometry;
use crate::warning::Warning;
use std::collections::BTreeMap;
use uom::si::f64::*;

mod film;
use uom::si::{
    amount_of_substance::mole, available_energy::joule_per_kilogram,
    heat_capacity::joule_per_kelvin, heat_transfer::watt_per_square_meter_kelvin, length::meter,
    mass::kilogram, mass_density::kilogram_per_cubic_meter, mass_rate::kilogram_per_second,
    molar_energy::joule_per_mole, molar_mass::kilogram_per_mole, power::watt,
    specific_heat_capacity::joule_per_kilogram_kelvin, specific_power::watt_per_kilogram,
    temperature_interval, thermodynamic_temperature::kelvin, time::second, volume::cubic_meter,
};

/// What a key holds: its dimension, an example unit and the values that make sense.
#[derive(Debug, Clone, Copy)]
struct Kind {
    dimension: Dimension,
    example: &'static str,
    sign: Sign,
    absolute_temperature: bool,
    /// What the value is, where its dimension alone does not say it (a plain number).
    name: Option<&'static str>,
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum Sign {
    Any,
    NonNegative,
    Positive,
}

const fn kind(dimension: Dimension, example: &'static str, sign: Sign) -> Kind {
    Kind {
        dimension,
        example,
        sign,
        absolute_temperature: false,
        name: None,
    }
}

const MASS: Kind = kind(
    Dimension::new(0., 1., 0., 0., 0.),
    "2400 kg",
    Sign::Positive,
);
const SPECIFIC_HEAT: Kind = kind(
    Dimension::new(2., 0., -2., -1., 0.),
    "1.75 kJ/(kg*K)",
    Sign::Positive,
);
const DENSITY: Kind = kind(
    Dimension::new(-3., 1., 0., 0., 0.),
    "1050 kg/m^3",
    Sign::Positive,
);
const AMOUNT: Kind = kind(
    Dimension::new(0., 0., 0., 0., 1.),
    "9.0 kmol",
    Sign::NonNegative,
);
const DURATION: Kind = kind(Dimension::new(0., 0., 1., 0., 0.), "5 h", Sign::Positive);
const START_TIME: Kind = kind(Dimension::new(0., 0., 1., 0., 0.), "0 h", Sign::NonNegative);
const LENGTH: Kind = kind(Dimension::new(1., 0., 0., 0., 0.), "1.6 m", Sign::Positive);
const VOLUME: Kind = kind(Dimension::new(3., 0., 0., 0., 0.), "4 m^3", Sign::Positive);
const HEAT_TRANSFER: Kind = kind(
    Dimension::new(0., 1., -3., -1., 0.),
    "280 W/(m^2*K)",
    Sign::NonNegative,
);
const HEAT_CAPACITY: Kind = kind(
    Dimension::new(2., 1., -2., -1., 0.),
    "0 kJ/K",
    Sign::NonNegative,
);
const ENTHALPY: Kind = kind(
    Dimension::new(2., 1., -2., 0., -1.),
    "-95 kJ/mol",
    Sign::Any,
);
const ACTIVATION: Kind = kind(
    Dimension::new(2., 1., -2., 0., -1.),
    "75 kJ/mol",
    Sign::NonNegative,
);
const SPECIFIC_ENERGY: Kind = kind(
    Dimension::new(2., 0., -2., 0., 0.),
    "650 kJ/kg",
    Sign::Positive,
);
const SPECIFIC_POWER: Kind = kind(
    Dimension::new(2., 0., -3., 0., 0.),
    "2.0 W/kg",
    Sign::Positive,
);
const MOLAR_MASS: Kind = kind(
    Dimension::new(0., 1., 0., 0., -1.),
    "80.91 g/mol",
    Sign::Positive,
);
const ORDER: Kind = Kind {
    name: Some("an order"),
    ..kind(Dimension::NONE, "1", Sign::NonNegative)
};
const TEMPERATURE: Kind = Kind {
    dimension: Dimension::new(0., 0., 0., 1., 0.),
    example: "75 degC (or K, degF)",
    sign: Sign::Positive,
    absolute_temperature: true,
    name: None,
};

const TEMPERATURE_DIFFERENCE: Kind =
    kind(Dimension::new(0., 0., 0., 1., 0.), "5 K", Sign::NonNegative);
const TIME_CONSTANT: Kind = kind(
    Dimension::new(0., 0., 1., 0., 0.),
    "5 min",
    Sign::NonNegative,
);
const FRACTION: Kind = kind(Dimension::NONE, "0.8", Sign::Positive);
const MASS_RATE: Kind = kind(
    Dimension::new(0., 1., -1., 0., 0.),
    "60 kg/h",
    Sign::Positive,
);
const POWER: Kind = kind(
    Dimension::new(2., 1., -3., 0., 0.),
    "250 kW",
    Sign::Positive,
);
const HEAT_OF_VAPORISATION: Kind = kind(
    Dimension::new(2., 1., -2., 0., -1.),
    "36.5 kJ/mol",
    Sign::Positive,
);

/// Highest temperature accepted in a case, K (1000 degC): far above any liquid-phase process.
const MAX_LIQUID_TEMPERATURE_K: f64 = 1273.15;

/// The activation energies outside this range are questionable (kJ/mol).
const PLAUSIBLE_ACTIVATION_KJ_MOL: (f64, f64) = (20.0, 400.0);

/// Longest piece of the file quoted back in a message; longer text is cut with "…".
const MAX_QUOTED_CHARS: usize = 60;

/// `text` in double quotes (cut later, with every quote of a message: `shorten_quotes`).
fn quoted(text: &str) -> String {
    format!("\"{text}\"")
}

/// `text` cut to `MAX_QUOTED_CHARS` characters, with "…" and the full length when cut.
fn shortened(text: &str) -> String {
    let count = text.chars().count();
    if count <= MAX_QUOTED_CHARS {
        return text.to_string();
    }
    let head: String = text.chars().take(MAX_QUOTED_CHARS).collect();
    format!("{head}… ({count} characters)")
}

/// `message` with every quoted piece longer than `MAX_QUOTED_CHARS` cut (see `shortened`).
fn shorten_quotes(message: &str) -> String {
    message
        .split('"')
        .enumerate()
        .map(|(i, piece)| {
            if i % 2 == 1 {
                shortened(piece)
            } else {
                piece.to_string()
            }
        })
        .collect::<Vec<_>>()
        .join("\"")
}

/// YAML reads these as floats that are not finite numbers (see `schema::Scalar`).
fn yaml_non_finite(text: &str) -> Option<&'static str> {
    match text {
        ".nan" => Some("not-a-number"),
        ".inf" => Some("infinity"),
        "-.inf" => Some("minus infinity"),
        _ => None,
    }
}

/// Checks `raw` whole and returns the typed case, or every error found.
pub fn validate(
    raw: RawCase,
    positions: &PositionMap,
    file: &str,
) -> Result<Case, Vec<InputError>> {
    let mut checker = Checker {
        file,
        positions,
        errors: Vec::new(),
        warnings: Vec::new(),
    };
    let case = checker.case(raw);
    match case {
        Some(case) if checker.errors.is_empty() => Ok(case),
        _ => {
            // In the order of the file; a stable sort keeps the order of errors at one place.
            let mut errors = checker.errors;
            errors.sort_by_key(|e| e.position);
            Err(errors)
        }
    }
}

struct Checker<'a> {
    file: &'a str,
    positions: &'a PositionMap,
    errors: Vec<InputError>,
    warnings: Vec<Warning>,
}

impl Checker<'_> {
    fn error(&mut self, path: &str, message: impl Into<String>, accepted: impl Into<String>) {
        let position = self.positions.find(path);
        self.error_at(position, path, message, accepted);
    }

    fn warn(&mut self, code: &str, message: impl Into<String>) {
        self.warnings.push(Warning::new(code, message));
    }

    /// An error placed at a given position instead of the position of `path`.
    fn error_at(
        &mut self,
        position: super::positions::Position,
        path: &str,
        message: impl Into<String>,
        accepted: impl Into<String>,
    ) {
        self.errors.push(InputError {
            file: self.file.to_string(),
            position,
            path: path.to_string(),
            message: shorten_quotes(&message.into()),
            accepted: accepted.into(),
        });
    }

    fn required<'v, T: ?Sized>(
        &mut self,
        path: &str,
        value: Option<&'v T>,
        example: &str,
    ) -> Option<&'v T> {
        if value.is_none() {
            self.missing(path, &format!("{path}: {example}"));
        }
        value
    }

    /// The text of a single value; a list, a mapping or a tagged value is an error.
    fn single<'s>(&mut self, path: &str, scalar: &'s Scalar, example: &str) -> Option<&'s str> {
        let found = match scalar.1 {
            Shape::Single => return Some(&scalar.0),
            Shape::List => "a list".to_string(),
            Shape::Mapping => "a mapping".to_string(),
            Shape::Tagged => format!("a value with the YAML tag {}", quoted(&scalar.0)),
        };
        self.error(
            path,
            format!("found {found} where a single value belongs"),
            format!("a single value like \"{example}\""),
        );
        None
    }

    /// A required key that is not there, or is there without a value (YAML null).
    fn missing(&mut self, path: &str, accepted: &str) {
        let key = path.rsplit('.').next().unwrap_or(path);
        match self.positions.key(path) {
            Some(position) => self.error_at(
                position,
                path,
                format!("the key \"{key}\" has no value (YAML reads an empty value as null)"),
                accepted,
            ),
            None => {
                let place = match path.rfind('.') {
                    Some(cut) => {
                        let parent = &path[..cut];
                        let written = parent.ends_with(']') || self.positions.key(parent).is_some();
                        if written {
                            format!("in {parent}")
                        } else {
                            format!("(there is no {parent} section)")
                        }
                    }
                    None => "at the top level".to_string(),
                };
                self.error(
                    path,
                    format!("the required key \"{key}\" is missing {place}"),
                    accepted,
                )
            }
        }
    }

    /// Reports each key of `unknown` as unknown in the section at `base`.
    fn unknown_keys(&mut self, base: &str, unknown: &UnknownKeys, known: &[&str]) {
        for key in &unknown.0 {
            let path = if base.is_empty() {
                key.clone()
            } else {
                format!("{base}.{key}")
            };
            let position = self
                .positions
                .key(&path)
                .unwrap_or_else(|| self.positions.find(base));
            let shown_path = if base.is_empty() {
                shortened(key)
            } else {
                format!("{base}.{}", shortened(key))
            };
            let section = if base.is_empty() {
                "the top level of a case".to_string()
            } else {
                base.to_string()
            };
            if key == "<<" {
                self.error_at(
                    position,
                    &shown_path,
                    "YAML merge keys (<<) are not supported in a case file",
                    format!("the keys of {section} written out: {}; an alias (*name) may stand for a single value", known.join(", ")),
                );
                continue;
            }
            let hint = nearest_key(key, known)
                .map(|k| format!("did you mean \"{k}\"? "))
                .unwrap_or_default();
            self.error_at(
                position,
                &shown_path,
                format!("unknown key {} in {section}", quoted(key)),
                format!("{hint}the keys of {section}: {}", known.join(", ")),
            );
        }
    }

    /// A required quantity, in SI.
    fn quantity(&mut self, path: &str, value: Option<&Scalar>, kind: Kind) -> Option<f64> {
        let scalar = self.required(path, value, kind.example)?;
        self.parse(path, scalar, kind)
    }

    /// An optional quantity with a default in SI.
    fn quantity_or(
        &mut self,
        path: &str,
        value: Option<&Scalar>,
        kind: Kind,
        default: f64,
    ) -> Option<f64> {
        match value {
            Some(scalar) => self.parse(path, scalar, kind),
            None => Some(default),
        }
    }

    fn parse(&mut self, path: &str, scalar: &Scalar, kind: Kind) -> Option<f64> {
        self.single(path, scalar, kind.example)?;
        if let Some(what) = yaml_non_finite(&scalar.0) {
            self.error(
                path,
                format!(
                    "\"{}\" is YAML's {what}; only finite numbers are accepted",
                    scalar.0
                ),
                format!("a value like \"{}\"", kind.example),
            );
            return None;
        }
        let parsed = match parse_quantity(&scalar.0) {
            Ok(q) => q,
            Err(e) => {
                self.error(
                    path,
                    format!("{}: {e}", quoted(&scalar.0)),
                    format!("a value like \"{}\"", kind.example),
                );
                return None;
            }
        };
        if !parsed.dimension.approx_eq(&kind.dimension) {
            let found = if parsed.unit_text.is_empty() {
                "a bare number without a unit".to_string()
            } else {
                format!(
                    "the unit {} is {}",
                    quoted(&parsed.unit_text),
                    dimension_in_words(&parsed.dimension)
                )
            };
            self.error(
                path,
                format!(
                    "{}: {found}, but this key takes {}",
                    quoted(&scalar.0),
                    dimension_in_words(&kind.dimension)
                ),
                format!("a value like \"{}\"", kind.example),
            );
            return None;
        }
        if parsed.affine && !kind.absolute_temperature {
            self.error(
                path,
                format!("{}: degC and degF name absolute temperatures; a temperature difference takes K", quoted(&scalar.0)),
                "a difference in K, e.g. \"10 K\"",
            );
            return None;
        }
        self.check_sign(path, scalar, parsed.value_si, kind)
    }

    fn check_sign(&mut self, path: &str, scalar: &Scalar, value: f64, kind: Kind) -> Option<f64> {
        let (ok, needed) = match kind.sign {
            Sign::Any => (true, ""),
            Sign::NonNegative => (value >= 0.0, "zero or more"),
            Sign::Positive => (value > 0.0, "more than zero"),
        };
        if ok && kind.absolute_temperature && value > MAX_LIQUID_TEMPERATURE_K {
            self.error(
                path,
                format!(
                    "{} is above 1000 degC: no liquid-phase process this model follows runs there",
                    quoted(&scalar.0)
                ),
                format!("a temperature up to 1000 degC, e.g. \"{}\"", kind.example),
            );
            return None;
        }
        if ok {
            return Some(value);
        }
        let (problem, what) = if kind.absolute_temperature {
            (
                "is at or below absolute zero (0 K, -273.15 degC)".to_string(),
                "a temperature above absolute zero".to_string(),
            )
        } else {
            let name = kind.name.unwrap_or_else(|| {
                NAMED_DIMENSIONS
                    .iter()
                    .find(|(d, _)| d.approx_eq(&kind.dimension))
                    .map_or("this value", |(_, name)| name)
            });
            (
                format!("is not physically possible here: {name} must be {needed}"),
                format!("a value {needed}, e.g. \"{}\"", kind.example),
            )
        };
        self.error(path, format!("{} {problem}", quoted(&scalar.0)), what);
        None
    }

    fn word<'w>(
        &mut self,
        path: &str,
        value: Option<&Scalar>,
        words: &[&'w str],
        default: Option<&'w str>,
    ) -> Option<&'w str> {
        let text = match (value, default) {
            (Some(scalar), _) => self.single(path, scalar, words[0])?.trim().to_string(),
            (None, Some(word)) => return Some(word),
            (None, None) => {
                self.missing(path, &format!("one of {}", words.join(", ")));
                return None;
            }
        };
        let found = words.iter().find(|w| **w == text).copied();
        if found.is_none() {
            self.error(
                path,
                format!("{} is not a choice here", quoted(&text)),
                format!("one of {}", words.join(", ")),
            );
        }
        found
    }

    /// Unknown keys of every section, wherever they are.
    fn all_unknown_keys(&mut self, raw: &RawCase) {
        self.unknown_keys("", &raw.unknown, RawCase::KEYS);
        for (name, species) in raw.species.iter().flatten() {
            self.unknown_keys(
                &format!("species.{name}"),
                &species.unknown,
                RawSpecies::KEYS,
            );
        }
        if let Some(charge) = &raw.charge {
            self.unknown_keys("charge", &charge.unknown, RawStream::KEYS);
        }
        if let Some(feed) = &raw.feed {
            self.unknown_keys("feed", &feed.unknown, RawFeed::KEYS);
        }
        for (index, reaction) in raw.reactions.iter().flatten().enumerate() {
            self.unknown_keys(
                &format!("reactions[{index}]"),
                &reaction.unknown,
                RawReaction::KEYS,
            );
        }
        let sections: [(&str, Option<&UnknownKeys>, &[&str]); 8] = [
            (
                "solvent",
                raw.solvent.as_ref().map(|r| &r.unknown),
                RawSolvent::KEYS,
            ),
            (
                "condenser",
                raw.condenser.as_ref().map(|r| &r.unknown),
                RawCondenser::KEYS,
            ),
            (
                "vessel",
                raw.vessel.as_ref().map(|r| &r.unknown),
                RawVessel::KEYS,
            ),
            (
                "coolant",
                raw.coolant.as_ref().map(|r| &r.unknown),
                RawCoolant::KEYS,
            ),
            (
                "process",
                raw.process.as_ref().map(|r| &r.unknown),
                RawProcess::KEYS,
            ),
            (
                "failure",
                raw.failure.as_ref().map(|r| &r.unknown),
                RawFailure::KEYS,
            ),
            (
                "decomposition",
                raw.decomposition.as_ref().map(|r| &r.unknown),
                RawDecomposition::KEYS,
            ),
            (
                "limits",
                raw.limits.as_ref().map(|r| &r.unknown),
                RawLimits::KEYS,
            ),
        ];
        for (base, unknown, known) in sections {
            if let Some(unknown) = unknown {
                self.unknown_keys(base, unknown, known);
            }
        }
    }

    fn case(&mut self, raw: RawCase) -> Option<Case> {
        self.all_unknown_keys(&raw);
        self.format(raw.format.as_ref());
        let title = self
            .required(
                "title",
                raw.title.as_ref(),
                "Side-chain bromination, 4 m3 vessel",
            )
            .and_then(|s| self.single("title", s, "Side-chain bromination, 4 m3 vessel"))
            .map(str::to_string);
        let species = self.species(raw.species.as_ref());
        let charge = self.charge(raw.charge.as_ref());
        let feed = raw.feed.as_ref().map(|f| self.feed(f));
        let reactions = self.reactions(raw.reactions.as_deref(), &species);
        let vessel = self.vessel(raw.vessel.as_ref(), charge.as_ref());
        let (coolant_temperature, jacket_control) = self.coolant(raw.coolant.as_ref());
        let process = raw.process.as_ref();
        let process_temperature = self.quantity(
            "process.temperature",
            process.and_then(|p| p.temperature.as_ref()),
            TEMPERATURE,
        );
        let process_duration = self.quantity(
            "process.duration",
            process.and_then(|p| p.duration.as_ref()),
            DURATION,
        );
        let failure = self.failure(raw.failure.as_ref());
        let decomposition = raw
            .decomposition
            .as_ref()
            .and_then(|d| self.decomposition(d));
        let limit_settings = self.limit_settings(raw.limits.as_ref());
        let solvent = raw.solvent.as_ref().and_then(|r| self.solvent(r));
        let condenser = raw.condenser.as_ref().and_then(|r| self.condenser(r));
        let mtt = self.quantity(
            "limits.mtt",
            raw.limits.as_ref().and_then(|l| l.mtt.as_ref()),
            Kind {
                example: "132 degC (or K, degF)",
                ..TEMPERATURE
            },
        );

        let feed = match feed {
            Some(None) => None?,
            Some(Some(f)) => Some(f),
            None => None,
        };
        let case = Case {
            title: title?,
            species: species?,
            charge: charge?,
            feed,
            reactions: reactions?,
            vessel: vessel?,
            coolant_temperature: ThermodynamicTemperature::new::<kelvin>(coolant_temperature?),
            jacket_control: jacket_control?,
            solvent: match (raw.solvent.is_some(), solvent) {
                (true, None) => return None,
                (_, found) => found,
            },
            condenser: match (raw.condenser.is_some(), condenser) {
                (true, None) => return None,
                (_, found) => found,
            },
            limit_settings: limit_settings?,
            process_temperature: ThermodynamicTemperature::new::<kelvin>(process_temperature?),
            process_duration: Time::new::<second>(process_duration?),
            failure: failure?,
            decomposition,
            mtt: ThermodynamicTemperature::new::<kelvin>(mtt?),
            input_warnings: Vec::new(),
        };
        self.relations(&case);
        let mut case = case;
        case.input_warnings = std::mem::take(&mut self.warnings);
        Some(case)
    }

    fn format(&mut self, value: Option<&Scalar>) {
        let text = self
            .required("format", value, "1")
            .and_then(|scalar| self.single("format", scalar, "1"));
        if let Some(text) = text {
            if text.trim() != "1" {
                self.error(
                    "format",
                    format!(
                        "format {} is not known to this version of exoscreen",
                        quoted(text)
                    ),
                    "format: 1",
                );
            }
        }
    }

    fn species(
        &mut self,
        raw: Option<&BTreeMap<String, RawSpecies>>,
    ) -> Option<BTreeMap<String, SpeciesData>> {
        let mut out = BTreeMap::new();
        let mut ok = true;
        for (name, props) in raw.into_iter().flatten() {
            let path = format!("species.{name}");
            let molar_mass = match &props.molar_mass {
                Some(s) => match self.parse(&format!("{path}.molar_mass"), s, MOLAR_MASS) {
                    Some(v) => Some(MolarMass::new::<kilogram_per_mole>(v)),
                    None => {
                        ok = false;
                        None
                    }
                },
                None => None,
            };
            let gas = self.word(
                &format!("{path}.gas"),
                props.gas.as_ref(),
                &["true", "false"],
                Some("false"),
            );
            ok &= gas.is_some();
            out.insert(
                name.clone(),
                SpeciesData {
                    molar_mass,
                    gas: gas == Some("true"),
                },
            );
        }
        ok.then_some(out)
    }

    fn amounts(
        &mut self,
        path: &str,
        raw: Option<&ScalarMap>,
    ) -> Option<BTreeMap<String, AmountOfSubstance>> {
        let raw = self.required(path, raw, "{ A: 9.0 kmol }")?;
        let mut out = BTreeMap::new();
        let mut ok = true;
        for (name, scalar) in raw {
            match self.parse(&format!("{path}.{name}"), scalar, AMOUNT) {
                Some(v) => {
                    out.insert(name.clone(), AmountOfSubstance::new::<mole>(v));
                }
                None => ok = false,
            }
        }
        ok.then_some(out)
    }

    fn charge(&mut self, raw: Option<&RawStream>) -> Option<Charge> {
        // A missing section is one error, not one per key.
        let raw = Some(self.required(
            "charge",
            raw,
            "{ mass, specific_heat, density, amounts } (all four required)",
        )?);
        let mass = self.quantity("charge.mass", raw.and_then(|r| r.mass.as_ref()), MASS);
        let cp = self.quantity(
            "charge.specific_heat",
            raw.and_then(|r| r.specific_heat.as_ref()),
            SPECIFIC_HEAT,
        );
        let density = self.quantity(
            "charge.density",
            raw.and_then(|r| r.density.as_ref()),
            DENSITY,
        );
        let amounts = self.amounts("charge.amounts", raw.and_then(|r| r.amounts.as_ref()));
        Some(Charge {
            mass: Mass::new::<kilogram>(mass?),
            specific_heat: SpecificHeatCapacity::new::<joule_per_kilogram_kelvin>(cp?),
            density: MassDensity::new::<kilogram_per_cubic_meter>(density?),
            amounts: amounts?,
        })
    }

    fn feed(&mut self, raw: &RawFeed) -> Option<Feed> {
        let mass = self.quantity("feed.mass", raw.mass.as_ref(), MASS);
        let cp = self.quantity(
            "feed.specific_heat",
            raw.specific_heat.as_ref(),
            SPECIFIC_HEAT,
        );
        let density = self.quantity("feed.density", raw.density.as_ref(), DENSITY);
        let temperature = self.quantity(
            "feed.temperature",
            raw.temperature.as_ref(),
            Kind {
                example: "20 degC (or K, degF)",
                ..TEMPERATURE
            },
        );
        let amounts = self.amounts("feed.amounts", raw.amounts.as_ref());
        let start = self.quantity_or("feed.start", raw.start.as_ref(), START_TIME, 0.0);
        let duration = self.quantity("feed.duration", raw.duration.as_ref(), DURATION);
        Some(Feed {
            mass: Mass::new::<kilogram>(mass?),
            specific_heat: SpecificHeatCapacity::new::<joule_per_kilogram_kelvin>(cp?),
            density: MassDensity::new::<kilogram_per_cubic_meter>(density?),
            temperature: ThermodynamicTemperature::new::<kelvin>(temperature?),
            amounts: amounts?,
            start: Time::new::<second>(start?),
            duration: Time::new::<second>(duration?),
        })
    }

    fn reactions(
        &mut self,
        raw: Option<&[RawReaction]>,
        species: &Option<BTreeMap<String, SpeciesData>>,
    ) -> Option<Vec<Reaction>> {
        let raw = self.required("reactions", raw, "a list with one entry per reaction")?;
        if raw.is_empty() {
            self.error(
                "reactions",
                "the list of reactions is empty",
                "at least one reaction",
            );
            return None;
        }
        let gas_species = |name: &str| {
            species
                .as_ref()
                .and_then(|s| s.get(name))
                .is_some_and(|s| s.gas)
        };
        let mut out = Vec::new();
        for (index, reaction) in raw.iter().enumerate() {
            out.push(self.reaction(index, reaction, &gas_species));
        }
        out.into_iter().collect()
    }

    fn reaction(
        &mut self,
        index: usize,
        raw: &RawReaction,
        is_gas: &dyn Fn(&str) -> bool,
    ) -> Option<Reaction> {
        let base = format!("reactions[{index}]");
        let equation = self.equation(&base, raw.equation.as_ref(), is_gas);
        let enthalpy = self.quantity(&format!("{base}.enthalpy"), raw.enthalpy.as_ref(), ENTHALPY);
        let reference_temperature = self.quantity(
            &format!("{base}.reference_temperature"),
            raw.reference_temperature.as_ref(),
            TEMPERATURE,
        );
        let activation = self.quantity(
            &format!("{base}.activation_energy"),
            raw.activation_energy.as_ref(),
            ACTIVATION,
        );
        if let Some(ea) = activation {
            self.check_activation(&format!("{base}.activation_energy"), ea);
        }
        let equation = equation?;
        let orders = self.orders(&base, &equation, raw.orders.as_ref())?;
        let overall_order: f64 = orders.values().sum();
        let order_source = OrderSource {
            base: &base,
            orders: &orders,
            written: raw.orders.is_some(),
        };
        let rate_constant = self.rate_constant(
            &format!("{base}.rate_constant"),
            raw.rate_constant.as_ref(),
            &order_source,
        );
        Some(Reaction {
            equation,
            enthalpy: MolarEnergy::new::<joule_per_mole>(enthalpy?),
            rate_constant: RateConstant {
                si_value: rate_constant?,
                overall_order,
            },
            reference_temperature: ThermodynamicTemperature::new::<kelvin>(reference_temperature?),
            activation_energy: MolarEnergy::new::<joule_per_mole>(activation?),
            orders,
        })
    }

    fn equation(
        &mut self,
        base: &str,
        raw: Option<&Scalar>,
        is_gas: &dyn Fn(&str) -> bool,
    ) -> Option<Equation> {
        let path = format!("{base}.equation");
        let scalar = self.required(&path, raw, "A + B -> P + HBr")?;
        let text = self.single(&path, scalar, "A + B -> P + HBr")?;
        let equation = match parse_equation(text) {
            Ok(eq) => eq,
            Err(message) => {
                self.error(&path, message, "an equation like \"2 A + B -> P + HBr\"");
                return None;
            }
        };
        if equation
            .species()
            .iter()
            .all(|name| equation.net_coefficient(name).abs() < 1e-12)
        {
            self.error(
                &path,
                format!(
                    "{} changes no amount: every species stands on both sides equally",
                    quoted(&equation.text)
                ),
                "an equation that turns reactants into products, like \"A + B -> P\"",
            );
            return None;
        }
        for term in &equation.reactants {
            if is_gas(&term.species) {
                self.error(
                    &path,
                    format!("\"{}\" is a reactant but is marked gas: true, and a gas species leaves the liquid as soon as it forms", term.species),
                    format!("species.{}.gas: false for a reactant that stays dissolved", term.species),
                );
            }
        }
        Some(equation)
    }

    fn orders(
        &mut self,
        base: &str,
        equation: &Equation,
        raw: Option<&ScalarMap>,
    ) -> Option<BTreeMap<String, f64>> {
        let Some(raw) = raw else {
            return Some(
                equation
                    .reactants
                    .iter()
                    .map(|t| (t.species.clone(), t.coefficient))
                    .collect(),
            );
        };
        let mut out = BTreeMap::new();
        let mut ok = true;
        for (name, scalar) in raw {
            let path = format!("{base}.orders.{name}");
            if !equation.species().contains(&name.as_str()) {
                self.error(
                    &path,
                    format!(
                        "\"{name}\" does not appear in the equation \"{}\"",
                        equation.text
                    ),
                    format!(
                        "orders of the species in the equation: {}",
                        equation.species().join(", ")
                    ),
                );
                ok = false;
                continue;
            }
            match self.parse(&path, scalar, ORDER) {
                Some(order) => {
                    out.insert(name.clone(), order);
                }
                None => ok = false,
            }
        }
        ok.then_some(out)
    }

    fn rate_constant(
        &mut self,
        path: &str,
        raw: Option<&Scalar>,
        source: &OrderSource,
    ) -> Option<f64> {
        let order: f64 = source.orders.values().sum();
        let needed = rate_constant_dimension(order);
        let example = rate_constant_example(order);
        let scalar = self.required(path, raw, &example)?;
        self.single(path, scalar, &format!("3.0e-4 {example}"))?;
        if let Some(what) = yaml_non_finite(&scalar.0) {
            self.error(
                path,
                format!(
                    "\"{}\" is YAML's {what}; only finite numbers are accepted",
                    scalar.0
                ),
                format!("a value like \"3.0e-4 {example}\""),
            );
            return None;
        }
        let parsed = match parse_quantity(&scalar.0) {
            Ok(q) => q,
            Err(e) => {
                self.error(
                    path,
                    format!("{}: {e}", quoted(&scalar.0)),
                    format!("a value like \"3.0e-4 {example}\""),
                );
                return None;
            }
        };
        if !parsed.dimension.approx_eq(&needed) {
            let implied = match implied_order(&parsed.dimension) {
                Some(n) => format!("is a unit for overall order {n}"),
                None if parsed.unit_text.is_empty() => {
                    "is a bare number; a rate constant needs a unit".to_string()
                }
                None => format!("({}) is no rate-constant unit", parsed.dimension.describe()),
            };
            let found = if parsed.unit_text.is_empty() {
                String::new()
            } else {
                format!("the unit {} ", quoted(&parsed.unit_text))
            };
            self.error(
                path,
                format!(
                    "{}: {found}{implied}, but the reaction's overall order is {order} ({})",
                    quoted(&scalar.0),
                    source.describe(order)
                ),
                format!(
                    "a unit like \"{example}\" for order {order}, or {}.orders that sum to the order the unit is for",
                    source.base
                ),
            );
            return None;
        }
        if parsed.value_si <= 0.0 {
            self.error(
                path,
                format!(
                    "{}: a rate constant must be more than zero",
                    quoted(&scalar.0)
                ),
                format!("a value like \"3.0e-4 {example}\""),
            );
            return None;
        }
        Some(parsed.value_si)
    }

    fn check_activation(&mut self, path: &str, ea_si: f64) {
        let kj = ea_si / 1000.0;
        let (low, high) = PLAUSIBLE_ACTIVATION_KJ_MOL;
        if kj < low || kj > high {
            self.warn(
                "activation-energy-range",
                format!("{path} = {kj:.1} kJ/mol lies outside the usual {low:.0} to {high:.0} kJ/mol; check the value and its unit"),
            );
        }
    }

    fn vessel(&mut self, raw: Option<&RawVessel>, charge: Option<&Charge>) -> Option<Vessel> {
        // A missing section is one error, not one per key.
        let raw = Some(self.required(
            "vessel",
            raw,
            "{ diameter, bottom, nominal_volume, jacket_height, heat_transfer_coefficient } (heat_capacity optional)",
        )?);
        let diameter = self.quantity(
            "vessel.diameter",
            raw.and_then(|r| r.diameter.as_ref()),
            LENGTH,
        );
        let bottom = self.word(
            "vessel.bottom",
            raw.and_then(|r| r.bottom.as_ref()),
            &["flat", "hemispherical", "elliptical", "torispherical"],
            None,
        );
        let nominal = self.quantity(
            "vessel.nominal_volume",
            raw.and_then(|r| r.nominal_volume.as_ref()),
            VOLUME,
        );
        let jacket = self.quantity(
            "vessel.jacket_height",
            raw.and_then(|r| r.jacket_height.as_ref()),
            LENGTH,
        );
        let (u, film) = self.heat_transfer_choice(raw, diameter, charge);
        let ambient = self.ambient(raw);
        let c = self.quantity_or(
            "vessel.heat_capacity",
            raw.and_then(|r| r.heat_capacity.as_ref()),
            HEAT_CAPACITY,
            0.0,
        );
        Some(Vessel {
            diameter: Length::new::<meter>(diameter?),
            bottom: bottom_of(bottom?),
            nominal_volume: Volume::new::<cubic_meter>(nominal?),
            jacket_height: Length::new::<meter>(jacket?),
            heat_transfer_coefficient: HeatTransfer::new::<watt_per_square_meter_kelvin>(u?),
            heat_capacity: HeatCapacity::new::<joule_per_kelvin>(c?),
            film: film?,
            ambient: ambient?,
        })
    }

    fn failure(&mut self, raw: Option<&RawFailure>) -> Option<Failure> {
        let dosing = self.word(
            "failure.dosing",
            raw.and_then(|r| r.dosing.as_ref()),
            &["continues", "stops"],
            Some("continues"),
        );
        let horizon = self.quantity_or(
            "failure.horizon",
            raw.and_then(|r| r.horizon.as_ref()),
            DURATION,
            24.0 * 3600.0,
        );
        Some(Failure {
            dosing: if dosing? == "stops" {
                Dosing::Stops
            } else {
                Dosing::Continues
            },
            horizon: Time::new::<second>(horizon?),
            stop_above: match raw.and_then(|r| r.stop_above.as_ref()) {
                Some(scalar) => Some(ThermodynamicTemperature::new::<kelvin>(self.parse(
                    "failure.stop_above",
                    scalar,
                    Kind {
                        example: "90 degC",
                        ..TEMPERATURE
                    },
                )?)),
                None => None,
            },
        })
    }

    /// The coolant: a constant temperature, or `control: hold` with its range and lag.
    /// Returns (coolant or initial jacket temperature, K; the control if any).
    fn coolant(
        &mut self,
        raw: Option<&RawCoolant>,
    ) -> (Option<f64>, Option<Option<JacketControl>>) {
        let control = self.word(
            "coolant.control",
            raw.and_then(|r| r.control.as_ref()),
            &["constant", "hold"],
            Some("constant"),
        );
        let temperature_kind = Kind {
            example: "40 degC (or K, degF)",
            ..TEMPERATURE
        };
        let temperature_raw = raw.and_then(|c| c.temperature.as_ref());
        if control != Some("hold") {
            for key in ["minimum", "maximum", "time_constant"] {
                let given = raw.is_some_and(|r| match key {
                    "minimum" => r.minimum.is_some(),
                    "maximum" => r.maximum.is_some(),
                    _ => r.time_constant.is_some(),
                });
                if given && control.is_some() {
                    self.warn(
                        "coolant-key-unused",
                        format!("coolant.{key} is used only with coolant.control: hold"),
                    );
                }
            }
            let temperature =
                self.quantity("coolant.temperature", temperature_raw, temperature_kind);
            return (temperature, control.map(|_| None));
        }
        let minimum = self.quantity(
            "coolant.minimum",
            raw.and_then(|r| r.minimum.as_ref()),
            Kind {
                example: "-10 degC",
                ..TEMPERATURE
            },
        );
        let maximum = self.quantity(
            "coolant.maximum",
            raw.and_then(|r| r.maximum.as_ref()),
            Kind {
                example: "140 degC",
                ..TEMPERATURE
            },
        );
        let lag = self.quantity_or(
            "coolant.time_constant",
            raw.and_then(|r| r.time_constant.as_ref()),
            TIME_CONSTANT,
            0.0,
        );
        let initial = match temperature_raw {
            Some(scalar) => self.parse("coolant.temperature", scalar, temperature_kind),
            None => Some(f64::NAN),
        };
        if let (Some(low), Some(high)) = (minimum, maximum) {
            if low >= high {
                self.error("coolant.minimum", format!("the coolant minimum {:.2} degC is not below the maximum {:.2} degC (coolant.maximum)", low - 273.15, high - 273.15), "a minimum below coolant.maximum");
                return (initial, None);
            }
        }
        let control = match (minimum, maximum, lag) {
            (Some(minimum), Some(maximum), Some(lag)) => Some(Some(JacketControl {
                minimum: ThermodynamicTemperature::new::<kelvin>(minimum),
                maximum: ThermodynamicTemperature::new::<kelvin>(maximum),
                time_constant: Time::new::<second>(lag),
            })),
            _ => None,
        };
        (initial, control)
    }

    fn limit_settings(&mut self, raw: Option<&RawLimits>) -> Option<LimitSettings> {
        let cooling_use = self.quantity_or(
            "limits.cooling_use",
            raw.and_then(|r| r.cooling_use.as_ref()),
            FRACTION,
            DEFAULT_COOLING_USE,
        );
        if cooling_use.is_some_and(|u| u > 1.0) {
            self.warn(
                "cooling-use-above-one",
                "limits.cooling_use above 1 allows more heat than the jacket can remove at Tp",
            );
        }
        let margin = self.quantity_or(
            "limits.mtsr_margin",
            raw.and_then(|r| r.mtsr_margin.as_ref()),
            TEMPERATURE_DIFFERENCE,
            0.0,
        );
        let off_gas = match raw.and_then(|r| r.off_gas_capacity.as_ref()) {
            Some(scalar) => Some(Some(MassRate::new::<kilogram_per_second>(self.parse(
                "limits.off_gas_capacity",
                scalar,
                MASS_RATE,
            )?))),
            None => Some(None),
        };
        Some(LimitSettings {
            cooling_use: cooling_use?,
            mtsr_margin: TemperatureInterval::new::<temperature_interval::kelvin>(margin?),
            off_gas_capacity: off_gas?,
        })
    }

    fn solvent(&mut self, raw: &RawSolvent) -> Option<Solvent> {
        let boiling = self.quantity(
            "solvent.boiling_point",
            raw.boiling_point.as_ref(),
            Kind {
                example: "132 degC",
                ..TEMPERATURE
            },
        );
        let heat = self.quantity(
            "solvent.heat_of_vaporisation",
            raw.heat_of_vaporisation.as_ref(),
            HEAT_OF_VAPORISATION,
        );
        let molar_mass = self.quantity(
            "solvent.molar_mass",
            raw.molar_mass.as_ref(),
            Kind {
                example: "112.6 g/mol",
                ..MOLAR_MASS
            },
        );
        Some(Solvent {
            boiling_point: ThermodynamicTemperature::new::<kelvin>(boiling?),
            heat_of_vaporisation: MolarEnergy::new::<joule_per_mole>(heat?),
            molar_mass: MolarMass::new::<kilogram_per_mole>(molar_mass?),
        })
    }

    fn condenser(&mut self, raw: &RawCondenser) -> Option<Condenser> {
        let capacity = self.quantity("condenser.capacity", raw.capacity.as_ref(), POWER);
        Some(Condenser {
            capacity: Power::new::<watt>(capacity?),
        })
    }

    fn decomposition(&mut self, raw: &RawDecomposition) -> Option<Decomposition> {
        let energy = self.quantity("decomposition.energy", raw.energy.as_ref(), SPECIFIC_ENERGY);
        let rate = self.quantity(
            "decomposition.heat_release_rate",
            raw.heat_release_rate.as_ref(),
            SPECIFIC_POWER,
        );
        let reference = self.quantity(
            "decomposition.reference_temperature",
            raw.reference_temperature.as_ref(),
            TEMPERATURE,
        );
        let ea = self.quantity(
            "decomposition.activation_energy",
            raw.activation_energy.as_ref(),
            ACTIVATION,
        );
        if let Some(ea) = ea {
            self.check_activation("decomposition.activation_energy", ea);
        }
        let order = self.quantity_or("decomposition.order", raw.order.as_ref(), ORDER, 0.0);
        Some(Decomposition {
            energy: AvailableEnergy::new::<joule_per_kilogram>(energy?),
            heat_release_rate: SpecificPower::new::<watt_per_kilogram>(rate?),
            reference_temperature: ThermodynamicTemperature::new::<kelvin>(reference?),
            activation_energy: MolarEnergy::new::<joule_per_mole>(ea?),
            order: order?,
        })
    }
}

/// The known key closest to a misspelt one: same letters ignoring case, or at most two
/// edits away (and fewer edits than half its length).
fn nearest_key<'k>(key: &str, known: &[&'k str]) -> Option<&'k str> {
    let key = key.to_lowercase();
    if key.chars().count() > 64 {
        return None;
    }
    known
        .iter()
        .map(|k| (edit_distance(&key, k), *k))
        .filter(|(d, k)| *d <= 2 && 2 * d < k.len())
        .min_by_key(|(d, _)| *d)
        .map(|(_, k)| k)
}

/// Levenshtein distance over chars.
fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut previous: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut current = vec![i + 1; b.len() + 1];
        for (j, cb) in b.iter().enumerate() {
            let substitution = previous[j] + usize::from(ca != *cb);
            current[j + 1] = substitution.min(previous[j + 1] + 1).min(current[j] + 1);
        }
        previous = current;
    }
    previous[b.len()]
}

fn bottom_of(word: &str) -> Bottom {
    match word {
        "flat" => Bottom::Flat,
        "hemispherical" => Bottom::Hemispherical,
        "elliptical" => Bottom::Elliptical,
        _ => Bottom::Torispherical,
    }
}

/// Names of the dimensions a case meets, for messages about a unit that does not fit.
const NAMED_DIMENSIONS: [(Dimension, &str); 28] = [
    (Dimension::NONE, "a plain number"),
    (Dimension::new(0., 1., 0., 0., 0.), "a mass"),
    (Dimension::new(1., 0., 0., 0., 0.), "a length"),
    (Dimension::new(2., 0., 0., 0., 0.), "an area"),
    (Dimension::new(3., 0., 0., 0., 0.), "a volume"),
    (Dimension::new(0., 0., 1., 0., 0.), "a time"),
    (Dimension::new(0., 0., -1., 0., 0.), "a rate per time"),
    (Dimension::new(0., 0., 0., 1., 0.), "a temperature"),
    (Dimension::new(0., 0., 0., 0., 1.), "an amount of substance"),
    (Dimension::new(2., 1., -2., 0., 0.), "an energy"),
    (
        Dimension::new(2., 1., -2., 0., -1.),
        "an energy per amount of substance",
    ),
    (Dimension::new(2., 0., -2., 0., 0.), "an energy per mass"),
    (Dimension::new(2., 1., -3., 0., 0.), "a power"),
    (Dimension::new(2., 0., -3., 0., 0.), "a power per mass"),
    (
        Dimension::new(2., 0., -2., -1., 0.),
        "a heat capacity per mass",
    ),
    (Dimension::new(2., 1., -2., -1., 0.), "a heat capacity"),
    (
        Dimension::new(2., 1., -2., -1., -1.),
        "a heat capacity per amount of substance",
    ),
    (
        Dimension::new(0., 1., -3., -1., 0.),
        "a heat-transfer coefficient",
    ),
    (Dimension::new(-3., 1., 0., 0., 0.), "a density"),
    (Dimension::new(0., 1., 0., 0., -1.), "a molar mass"),
    (Dimension::new(-1., 1., -2., 0., 0.), "a pressure"),
    (Dimension::new(-3., 0., 0., 0., 1.), "a concentration"),
    (Dimension::new(0., 1., -1., 0., 0.), "a mass flow"),
    (Dimension::new(1., 1., -2., 0., 0.), "a force"),
    (
        Dimension::new(1., 1., -3., -1., 0.),
        "a thermal conductivity",
    ),
    (Dimension::new(-1., 1., -1., 0., 0.), "a viscosity"),
    (
        Dimension::new(0., -1., 3., 1., 0.),
        "a thermal resistance per area",
    ),
    (
        Dimension::new(2., 1., -3., -1., 0.),
        "a thermal conductance",
    ),
];

/// "an energy per mass (m^2·s^-2)", or the base units alone for a dimension without a name.
fn dimension_in_words(dimension: &Dimension) -> String {
    let base = dimension.describe();
    match NAMED_DIMENSIONS
        .iter()
        .find(|(d, _)| d.approx_eq(dimension))
    {
        Some((_, name)) if *dimension == Dimension::NONE => name.to_string(),
        Some((_, name)) => format!("{name} ({base})"),
        None => base,
    }
}

/// Where a reaction's orders come from, for messages about its rate constant.
struct OrderSource<'a> {
    base: &'a str,
    orders: &'a BTreeMap<String, f64>,
    /// `orders` is written in the case (else: the reactants' coefficients).
    written: bool,
}

impl OrderSource<'_> {
    /// "the sum of reactions[0].orders: A 1 + B 1 = 2", or the equation's coefficients.
    fn describe(&self, order: f64) -> String {
        let terms: Vec<String> = self
            .orders
            .iter()
            .map(|(name, n)| format!("{name} {n}"))
            .collect();
        let from = if self.written {
            format!("{}.orders", self.base)
        } else {
            format!(
                "the reactant coefficients of {}.equation, as {}.orders is not given",
                self.base, self.base
            )
        };
        format!("the sum of {from}: {} = {order}", terms.join(" + "))
    }
}

/// Dimension of a rate constant of overall order n: (m^3/mol)^(n-1) / s.
fn rate_constant_dimension(order: f64) -> Dimension {
    Dimension::new(3.0 * (order - 1.0), 0.0, -1.0, 0.0, -(order - 1.0))
}

/// The overall order a rate-constant unit belongs to, if it is one.
fn implied_order(found: &Dimension) -> Option<f64> {
    let order = 1.0 - found.amount;
    rate_constant_dimension(order)
        .approx_eq(found)
        .then_some(order)
}

fn rate_constant_example(order: f64) -> String {
    let n = order - 1.0;
    if n.abs() < 1e-9 {
        "1/s".to_string()
    } else if (n + 1.0).abs() < 1e-9 {
        "mol/(L*s)".to_string()
    } else if n.fract() == 0.0 && n > 0.0 {
        if n == 1.0 {
            "L/(mol*s)".to_string()
        } else {
            format!("L^{n}/(mol^{n}*s)")
        }
    } else {
        format!("(L/mol)^{n}/s")
    }
}

impl Checker<'_> {
    /// Relations between keys: species use, fill, jacket, the reaction network.
    fn relations(&mut self, case: &Case) {
        self.species_use(case);
        self.vessel_fit(case);
        self.network_bounded(case);
        self.off_gas_fits(case);
        self.temperature_order(case);
    }

    fn species_use(&mut self, case: &Case) {
        let used: Vec<&str> = case
            .reactions
            .iter()
            .flat_map(|r| r.equation.species())
            .collect();
        let reactants: Vec<&str> = case
            .reactions
            .iter()
            .flat_map(|r| r.equation.reactants.iter().map(|t| t.species.as_str()))
            .collect();
        if let Some(feed) = &case.feed {
            let mut distinct = reactants.clone();
            distinct.sort_unstable();
            distinct.dedup();
            let equations: Vec<String> = case
                .reactions
                .iter()
                .enumerate()
                .take(3)
                .map(|(j, r)| format!("reactions[{j}].equation \"{}\"", r.equation.text))
                .collect();
            let more = if case.reactions.len() > 3 {
                ", ..."
            } else {
                ""
            };
            for name in feed.amounts.keys() {
                if !reactants.contains(&name.as_str()) {
                    self.error(
                        &format!("feed.amounts.{name}"),
                        format!(
                            "the feed holds \"{name}\", but no reaction uses it as a reactant ({}{more})",
                            equations.join(", ")
                        ),
                        format!(
                            "a reactant of the reactions ({}), or \"{name}\" among the reactants of an equation",
                            distinct.join(", ")
                        ),
                    );
                }
            }
        }
        for (stream, amounts) in [
            ("charge", Some(&case.charge.amounts)),
            ("feed", case.feed.as_ref().map(|f| &f.amounts)),
        ] {
            for name in amounts.into_iter().flat_map(|a| a.keys()) {
                if case.species.get(name).is_some_and(|s| s.gas) {
                    self.error(&format!("{stream}.amounts.{name}"), format!("\"{name}\" is marked gas: true and cannot be charged or fed as a liquid"), format!("species.{name}.gas: false"));
                }
                if stream == "charge" && !used.contains(&name.as_str()) {
                    self.warn("species-unused", format!("charge.amounts.{name}: \"{name}\" takes part in no reaction; it counts only through the charge's mass"));
                }
            }
        }
        for (name, data) in &case.species {
            if !used.contains(&name.as_str()) {
                self.warn(
                    "species-unused",
                    format!("species.{name} is named but takes part in no reaction"),
                );
            } else if data.gas && data.molar_mass.is_none() {
                self.warn("gas-without-molar-mass", format!("species.{name} is a gas without a molar mass: its off-gas mass is taken as zero"));
            }
        }
    }

    fn vessel_fit(&mut self, case: &Case) {
        let v = &case.vessel;
        let geometry = match VesselGeometry::new(
            v.bottom,
            v.diameter.get::<meter>(),
            v.nominal_volume.get::<cubic_meter>(),
        ) {
            Ok(g) => g,
            Err(e) => {
                self.error(
                    "vessel.nominal_volume",
                    format!("{e} (with vessel.diameter and vessel.bottom)"),
                    "a nominal volume above the volume of the bottom head",
                );
                return;
            }
        };
        let final_volume = final_liquid_volume(case);
        let nominal = v.nominal_volume.get::<cubic_meter>();
        if final_volume > nominal * (1.0 + 1e-12) {
            let feed_keys = if case.feed.is_some() {
                ", feed.mass, feed.density"
            } else {
                ""
            };
            self.error(
                "vessel.nominal_volume",
                format!("the contents reach {final_volume:.3} m^3, above the nominal volume {nominal:.3} m^3 (from charge.mass, charge.density{feed_keys})"),
                "a larger vessel.nominal_volume, or smaller masses or higher densities",
            );
        }
        let jacket = v.jacket_height.get::<meter>();
        let top = geometry.height();
        if jacket > top * (1.0 + 1e-12) {
            self.error(
                "vessel.jacket_height",
                format!("the jacket reaches {jacket:.3} m, above the top of the vessel at {top:.3} m (from vessel.nominal_volume, vessel.diameter and vessel.bottom)"),
                format!("a jacket height up to {top:.3} m"),
            );
            return;
        }
        let wetted = geometry.wetted_area(final_volume);
        let cooled = geometry.jacketed_area(final_volume, jacket);
        if wetted > 0.0 && cooled < 0.5 * wetted {
            self.warn("jacket-coverage", format!("at the final fill the jacket covers {:.0} % of the wetted wall ({cooled:.2} of {wetted:.2} m^2), less than half", 100.0 * cooled / wetted));
        }
        if geometry.level(case.charge.volume_m3()) < geometry.bottom_depth() {
            self.warn("fill-below-bottom-head", "the initial charge does not fill the bottom head; the wetted area and heat transfer at low fill are uncertain");
        }
    }

    /// The off-gas a single reaction can make at full conversion must leave a positive
    /// heat capacity: otherwise the molar masses cannot all be right.
    fn off_gas_fits(&mut self, case: &Case) {
        let network = Network::from_case(case);
        let [law] = network.reactions.as_slice() else {
            return;
        };
        let totals = Plant::from_case(case)
            .map(|p| p.recipe_amounts())
            .unwrap_or_default();
        let extent = (0..network.species_count())
            .filter(|i| law.nu[*i] < 0.0 && !network.gas[*i])
            .map(|i| totals.get(i).copied().unwrap_or(0.0) / -law.nu[i])
            .fold(f64::INFINITY, f64::min);
        if !extent.is_finite() {
            return;
        }
        let gas_mass: f64 = (0..network.species_count())
            .filter(|i| network.gas[*i] && law.nu[*i] > 0.0)
            .map(|i| law.nu[i] * extent * network.molar_mass[i])
            .sum();
        let charge = &case.charge;
        let cp = charge.specific_heat.get::<joule_per_kilogram_kelvin>();
        let final_mass = charge.mass.get::<kilogram>()
            + case.feed.as_ref().map_or(0.0, |f| f.mass.get::<kilogram>());
        let final_c = charge.mass.get::<kilogram>() * cp
            + case.feed.as_ref().map_or(0.0, |f| {
                f.mass.get::<kilogram>() * f.specific_heat.get::<joule_per_kilogram_kelvin>()
            });
        if gas_mass >= final_mass || final_c - gas_mass * cp <= 0.0 {
            self.error(
                "species",
                format!("at full conversion the off-gas would weigh {gas_mass:.0} kg of the {final_mass:.0} kg of contents and leave no heat capacity: the molar masses of the gas species, the amounts and the masses do not fit together"),
                "molar masses and amounts whose off-gas is a part of the contents' mass",
            );
        }
    }

    fn network_bounded(&mut self, case: &Case) {
        let network = Network::from_case(case);
        if releasable_heat_is_bounded(&network) {
            return;
        }
        let cycle = unbounded_core(&network);
        let named: Vec<String> = cycle
            .iter()
            .map(|&j| {
                let r = &case.reactions[j];
                format!(
                    "reactions[{j}] ({}, enthalpy {} kJ/mol)",
                    r.equation.text,
                    r.enthalpy.get::<joule_per_mole>() / 1000.0
                )
            })
            .collect();
        let enthalpies: Vec<String> = cycle
            .iter()
            .map(|j| format!("reactions[{j}].enthalpy"))
            .collect();
        let first = cycle.first().copied().unwrap_or(0);
        self.error(
            &format!("reactions[{first}]"),
            format!(
                "{} form a cycle that releases heat each time round, so the releasable heat of the network has no bound",
                named.join(" and ")
            ),
            format!(
                "a network in which no cycle of reactions releases heat: check the signs of {}, or drop one of the reactions",
                enthalpies.join(", ")
            ),
        );
    }

    fn temperature_order(&mut self, case: &Case) {
        let tp = case.process_temperature.get::<kelvin>();
        if case.jacket_control.is_none() && case.coolant_temperature.get::<kelvin>() >= tp {
            self.warn("coolant-not-colder", "coolant.temperature is not below process.temperature: the jacket cannot cool at Tp");
        }
        if let Some(control) = &case.jacket_control {
            if control.minimum.get::<kelvin>() >= tp {
                self.warn("coolant-not-colder", "coolant.minimum is not below process.temperature: the held jacket cannot cool at Tp");
            }
        }
        if let Some(limit) = case.failure.stop_above {
            if limit.get::<kelvin>() <= tp {
                self.warn("interlock-below-process", "failure.stop_above is not above process.temperature: the interlock holds the feed from the start");
            }
        }
        if let Some(solvent) = &case.solvent {
            let boiling = solvent.boiling_point.get::<kelvin>();
            if boiling <= tp {
                self.warn("boiling-below-process", "solvent.boiling_point is not above process.temperature: the contents would boil in normal operation, which the model does not follow");
            } else if (boiling - case.mtt.get::<kelvin>()).abs() > 0.5 {
                self.warn("boiling-point-not-mtt", format!("solvent.boiling_point ({:.1} degC) differs from limits.mtt ({:.1} degC): check which is the maximum technical temperature", boiling - 273.15, case.mtt.get::<kelvin>() - 273.15));
            }
        } else if case.condenser.is_some() {
            self.warn(
                "condenser-without-solvent",
                "condenser.capacity is given without solvent data: the condenser is not used",
            );
        }
        if case.mtt.get::<kelvin>() <= tp {
            self.warn("mtt-below-process", "limits.mtt is not above process.temperature: the process runs at or above its maximum technical temperature");
        }
        if let Some(feed) = &case.feed {
            let end = (feed.start + feed.duration).get::<second>();
            if end > case.process_duration.get::<second>() * (1.0 + 1e-12) {
                self.warn("feed-beyond-process", "the feed ends after process.duration: normal operation is reported only up to process.duration");
            }
        }
    }
}

/// The reactions of a smallest sub-network whose releasable heat is still unbounded (the
/// cycle to name), found by dropping each reaction that is not needed for it.
fn unbounded_core(network: &Network) -> Vec<usize> {
    let mut kept: Vec<usize> = (0..network.reactions.len()).collect();
    let mut index = 0;
    while index < kept.len() {
        let without: Vec<usize> = kept.iter().copied().filter(|&j| j != kept[index]).collect();
        let sub = Network {
            reactions: without
                .iter()
                .map(|&j| network.reactions[j].clone())
                .collect(),
            ..network.clone()
        };
        if releasable_heat_is_bounded(&sub) {
            index += 1;
        } else {
            kept = without;
        }
    }
    kept
}

fn final_liquid_volume(case: &Case) -> f64 {
    case.charge.volume_m3()
        + case
            .feed
            .as_ref()
            .map_or(0.0, |f| (f.mass / f.density).get::<cubic_meter>())
}

impl Charge {
    pub fn volume_m3(&self) -> f64 {
        (self.mass / self.density).get::<cubic_meter>()
    }
}

#[cfg(test)]
mod tests {
    use crate::case::error::InputError;
    use crate::case::load::tests::errors;

    fn error_at<'e>(errors: &'e [InputError], path: &str) -> &'e InputError {
        errors
            .iter()
            .find(|e| e.path == path)
            .unwrap_or_else(|| panic!("no error at {path}: {errors:?}"))
    }

    #[test]
    fn a_list_where_a_value_belongs_is_one_error_among_the_others() {
        let e = errors("format: 1\ncharge:\n  mass: [1, 2]\n  density: !kg 3\n");
        let mass = error_at(&e, "charge.mass");
        assert_eq!(mass.position.line, 3);
        assert!(
            mass.message
                .contains("found a list where a single value belongs"),
            "{mass}"
        );
        assert!(mass.accepted.contains("2400 kg"), "{mass}");
        let density = error_at(&e, "charge.density");
        assert!(density.message.contains("YAML tag \"!kg\""), "{density}");
        error_at(&e, "title");
    }

    #[test]
    fn a_key_of_a_missing_section_says_the_section_is_missing() {
        let e = errors("format: 1\nprocess:\n  duration: 8 h\n");
        let mtt = error_at(&e, "limits.mtt");
        assert!(
            mtt.message.contains("(there is no limits section)"),
            "{mtt}"
        );
        assert!(mtt.accepted.contains("132 degC"), "{mtt}");
        let tp = error_at(&e, "process.temperature");
        assert!(tp.message.contains("is missing in process"), "{tp}");
    }

    #[test]
    fn errors_come_in_the_order_of_the_file() {
        let e = errors("vessel:\n  bottom: conical\nformat: 3\n");
        let lines: Vec<usize> = e.iter().map(|e| e.position.line).collect();
        let mut sorted = lines.clone();
        sorted.sort();
        assert_eq!(lines, sorted);
    }

    #[test]
    fn a_misspelt_key_gets_a_suggestion() {
        let e = errors("format: 1\nvessel:\n  diamter: 1 m\n");
        let typo = error_at(&e, "vessel.diamter");
        assert!(
            typo.accepted.starts_with("did you mean \"diameter\"?"),
            "{typo}"
        );
        assert_eq!(super::nearest_key("zzzzzz", &["diameter"]), None);
        assert_eq!(
            super::nearest_key("Bottom", &["diameter", "bottom"]),
            Some("bottom")
        );
    }

    #[test]
    fn long_quotes_are_cut() {
        let long = "x".repeat(500);
        let cut = super::shorten_quotes(&format!("a \"{long}\" b"));
        assert!(cut.len() < 120, "{cut}");
        assert!(cut.contains("(500 characters)"));
        assert_eq!(super::shorten_quotes("\"short\" text"), "\"short\" text");
    }

    #[test]
    fn dimensions_are_named() {
        use crate::case::units::parse_quantity;
        let d = parse_quantity("1 kJ/kg").unwrap().dimension;
        assert_eq!(
            super::dimension_in_words(&d),
            "an energy per mass (m^2·s^-2)"
        );
        let odd = parse_quantity("1 kg^3").unwrap().dimension;
        assert_eq!(super::dimension_in_words(&odd), "kg^3");
    }
}
