//! Reaction equations as written in a case ("2 A + B -> P + HBr"): parsed into species and
//! stoichiometric coefficients.

/// One side's term: a species and its coefficient.
#[derive(Debug, Clone, PartialEq)]
pub struct Term {
    pub species: String,
    pub coefficient: f64,
}

/// A parsed reaction equation.
#[derive(Debug, Clone, PartialEq)]
pub struct Equation {
    pub text: String,
    pub reactants: Vec<Term>,
    pub products: Vec<Term>,
}

impl Equation {
    /// Net stoichiometric coefficient of `species`: products minus reactants.
    pub fn net_coefficient(&self, species: &str) -> f64 {
        let sum = |terms: &[Term]| -> f64 {
            terms
                .iter()
                .filter(|t| t.species == species)
                .map(|t| t.coefficient)
                .sum()
        };
        sum(&self.products) - sum(&self.reactants)
    }

    /// Every species named, reactants first, each once.
    pub fn species(&self) -> Vec<&str> {
        let mut names: Vec<&str> = Vec::new();
        for term in self.reactants.iter().chain(&self.products) {
            if !names.contains(&term.species.as_str()) {
                names.push(&term.species);
            }
        }
        names
    }
}

const ARROWS: [&str; 3] = ["->", "=>", "→"];

/// Parses `text`; the error says what is wrong in plain words.
pub fn parse_equation(text: &str) -> Result<Equation, String> {
    let (left, right) = split_at_arrow(text)?;
    let reactants = parse_side(left, "left")?;
    let products = parse_side(right, "right")?;
    Ok(Equation {
        text: text.trim().to_string(),
        reactants,
        products,
    })
}

fn split_at_arrow(text: &str) -> Result<(&str, &str), String> {
    let found: Vec<(usize, &str)> = ARROWS
        .iter()
        .flat_map(|arrow| text.match_indices(arrow).collect::<Vec<_>>())
        .collect();
    match found.as_slice() {
        [(at, arrow)] => Ok((&text[..*at], &text[at + arrow.len()..])),
        [] => Err(format!(
            "no arrow in \"{text}\": write the reaction as \"A + B -> P\""
        )),
        _ => Err(format!(
            "more than one arrow in \"{text}\": one reaction per equation"
        )),
    }
}

fn parse_side(side: &str, which: &str) -> Result<Vec<Term>, String> {
    if side.trim().is_empty() {
        return Err(format!("the {which} side of the equation is empty"));
    }
    let mut terms: Vec<Term> = Vec::new();
    for raw in side.split('+') {
        let term = parse_term(raw.trim())?;
        match terms.iter_mut().find(|t| t.species == term.species) {
            Some(existing) => existing.coefficient += term.coefficient,
            None => terms.push(term),
        }
    }
    Ok(terms)
}

fn parse_term(raw: &str) -> Result<Term, String> {
    if raw.is_empty() {
        return Err("a '+' with nothing beside it".to_string());
    }
    let number_end = raw
        .char_indices()
        .find(|(_, c)| !(c.is_ascii_digit() || *c == '.'))
        .map_or(raw.len(), |(i, _)| i);
    let (number, name) = raw.split_at(number_end);
    let coefficient = if number.is_empty() {
        1.0
    } else {
        number
            .parse::<f64>()
            .map_err(|_| format!("\"{number}\" is not a coefficient"))?
    };
    if !(coefficient.is_finite() && coefficient > 0.0) {
        return Err(format!(
            "the coefficient of \"{raw}\" must be a positive number"
        ));
    }
    let name = name.trim();
    check_species_name(name, raw)?;
    Ok(Term {
        species: name.to_string(),
        coefficient,
    })
}

fn check_species_name(name: &str, raw: &str) -> Result<(), String> {
    let starts_well = name
        .chars()
        .next()
        .is_some_and(|c| c.is_alphabetic() || c == '_' || c == '(' || c == '[');
    let allowed = |c: char| c.is_alphanumeric() || "_()[]',".contains(c);
    if !starts_well || !name.chars().all(allowed) {
        return Err(format!(
            "\"{raw}\" is not a species: a name starts with a letter and holds letters, digits, _ ( ) [ ] ' or , (an optional coefficient comes first: \"2 A\")"
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn coefficients_and_species_are_read() {
        let eq = parse_equation("2 A + B -> P + HBr").unwrap();
        assert_eq!(
            eq.reactants[0],
            Term {
                species: "A".into(),
                coefficient: 2.0
            }
        );
        assert_eq!(eq.reactants[1].species, "B");
        assert_eq!(eq.products.len(), 2);
        assert_eq!(eq.net_coefficient("A"), -2.0);
        assert_eq!(eq.net_coefficient("HBr"), 1.0);
        assert_eq!(eq.species(), vec!["A", "B", "P", "HBr"]);
    }

    #[test]
    fn compact_spelling_and_other_arrows() {
        let eq = parse_equation("2A+Br2=>2ABr").unwrap();
        assert_eq!(eq.reactants[0].coefficient, 2.0);
        assert_eq!(eq.products[0].species, "ABr");
        assert!(parse_equation("A → B").is_ok());
    }

    #[test]
    fn a_species_on_both_sides_nets_out() {
        let eq = parse_equation("A + B -> 2 B").unwrap();
        assert_eq!(eq.net_coefficient("B"), 1.0);
    }

    #[test]
    fn broken_equations_say_why() {
        for bad in [
            "A + B",
            "A -> B -> C",
            "-> B",
            "A + -> B",
            "A -> 0 B",
            "A -> #",
            "",
        ] {
            assert!(parse_equation(bad).is_err(), "{bad} should not parse");
        }
    }
}
