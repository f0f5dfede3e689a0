//! Reaction equations whose species may carry a phase ("Br2(l) + C6H6 -> PhBr(l) + HBr(g)"):
//! the case file's equation parser, then the phase split off each species.

use crate::case::equation::parse_equation;
use crate::estimate::error::EstimateError;
use serde::Serialize;
use std::fmt;

/// The phases a species may be spelled with.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Phase {
    G,
    L,
    S,
    Aq,
}

impl Phase {
    pub const ALL: [Phase; 4] = [Phase::G, Phase::L, Phase::S, Phase::Aq];

    /// Reads "g", "l", "s" or "aq" (any case).
    pub fn parse(text: &str) -> Option<Phase> {
        match text.trim().to_ascii_lowercase().as_str() {
            "g" => Some(Phase::G),
            "l" => Some(Phase::L),
            "s" | "cr" => Some(Phase::S),
            "aq" => Some(Phase::Aq),
            _ => None,
        }
    }

    pub fn code(self) -> &'static str {
        match self {
            Phase::G => "g",
            Phase::L => "l",
            Phase::S => "s",
            Phase::Aq => "aq",
        }
    }
}

impl fmt::Display for Phase {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.code())
    }
}

/// Which side of the arrow a species stands on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Side {
    Reactant,
    Product,
}

/// One species of the equation as written.
#[derive(Debug, Clone, PartialEq)]
pub struct PhasedTerm {
    pub name: String,
    pub phase: Option<Phase>,
    pub coefficient: f64,
    pub side: Side,
}

impl PhasedTerm {
    /// The coefficient with the sign of its side: + for products, − for reactants.
    pub fn signed(&self) -> f64 {
        match self.side {
            Side::Reactant => -self.coefficient,
            Side::Product => self.coefficient,
        }
    }
}

/// A parsed equation with phases.
#[derive(Debug, Clone, PartialEq)]
pub struct PhasedEquation {
    pub text: String,
    pub terms: Vec<PhasedTerm>,
}

/// Parses `text`: coefficients as in the case file (`2 A + B -> P`), a phase in parentheses
/// at the end of a species (`Br2(l)`), arrows `->`, `=>` or `→`.
pub fn parse_phased_equation(text: &str) -> Result<PhasedEquation, EstimateError> {
    let equation = parse_equation(text).map_err(|message| EstimateError::Equation {
        text: text.trim().to_string(),
        message,
    })?;
    let mut terms = Vec::new();
    for (side, list) in [
        (Side::Reactant, &equation.reactants),
        (Side::Product, &equation.products),
    ] {
        for term in list {
            let (name, phase) = split_phase(&term.species);
            terms.push(PhasedTerm {
                name: name.to_string(),
                phase,
                coefficient: term.coefficient,
                side,
            });
        }
    }
    Ok(PhasedEquation {
        text: equation.text,
        terms,
    })
}

/// "Br2(l)" -> ("Br2", Some(l)); a name whose last parentheses hold no phase is kept whole.
pub fn split_phase(species: &str) -> (&str, Option<Phase>) {
    let Some(inner) = species.strip_suffix(')') else {
        return (species, None);
    };
    match inner.rfind('(') {
        Some(open) if open > 0 => match Phase::parse(&inner[open + 1..]) {
            Some(phase) => (&species[..open], Some(phase)),
            None => (species, None),
        },
        _ => (species, None),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn phases_are_split_off() {
        let eq = parse_phased_equation("C6H6(l) + Br2(l) -> PhBr(l) + HBr(g)").unwrap();
        assert_eq!(eq.terms[0].name, "C6H6");
        assert_eq!(eq.terms[1].phase, Some(Phase::L));
        assert_eq!(eq.terms[3].phase, Some(Phase::G));
        assert_eq!(eq.terms[3].side, Side::Product);
    }

    #[test]
    fn no_phase_and_coefficients() {
        let eq = parse_phased_equation("2 HI -> H2 + I2(s)").unwrap();
        assert_eq!(eq.terms[0].coefficient, 2.0);
        assert_eq!(eq.terms[0].signed(), -2.0);
        assert_eq!(eq.terms[0].phase, None);
        assert_eq!(eq.terms[2].phase, Some(Phase::S));
    }

    #[test]
    fn parentheses_that_are_no_phase_stay_in_the_name() {
        assert_eq!(split_phase("Ca(OH)2"), ("Ca(OH)2", None));
        assert_eq!(split_phase("X(foo)"), ("X(foo)", None));
        assert_eq!(split_phase("(g)"), ("(g)", None));
        assert_eq!(split_phase("HCl(aq)"), ("HCl", Some(Phase::Aq)));
    }

    #[test]
    fn a_broken_equation_is_an_error() {
        assert!(matches!(
            parse_phased_equation("CH4 + Cl2"),
            Err(EstimateError::Equation { .. })
        ));
    }
}
