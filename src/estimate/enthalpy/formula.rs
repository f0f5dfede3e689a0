//! Chemical formulas ("C4H4BrNO2", "Ca(OH)2"): parsed into element counts, and the element
//! balance of an equation.

use std::collections::BTreeMap;

/// Element symbol -> number of atoms.
pub type Composition = BTreeMap<String, f64>;

/// Parses `text`; the error says where it stopped and what a formula looks like.
pub fn parse_formula(text: &str) -> Result<Composition, String> {
    let chars: Vec<char> = text.trim().chars().collect();
    if chars.is_empty() {
        return Err("empty formula".to_string());
    }
    let mut at = 0;
    let composition = parse_group(&chars, &mut at, text)?;
    if at < chars.len() {
        return Err(unexpected(text, &chars, at));
    }
    Ok(composition)
}

fn parse_group(chars: &[char], at: &mut usize, text: &str) -> Result<Composition, String> {
    let mut composition = Composition::new();
    while *at < chars.len() && chars[*at] != ')' {
        let (part, count) = if chars[*at] == '(' {
            *at += 1;
            let inner = parse_group(chars, at, text)?;
            if chars.get(*at) != Some(&')') {
                return Err(format!("formula \"{text}\": a '(' is not closed"));
            }
            *at += 1;
            (inner, read_count(chars, at))
        } else if chars[*at].is_ascii_uppercase() {
            let symbol = read_symbol(chars, at);
            (Composition::from([(symbol, 1.0)]), read_count(chars, at))
        } else {
            return Err(unexpected(text, chars, *at));
        };
        for (element, n) in part {
            *composition.entry(element).or_insert(0.0) += n * count;
        }
    }
    if composition.is_empty() {
        return Err(format!("formula \"{text}\": an empty group"));
    }
    Ok(composition)
}

fn read_symbol(chars: &[char], at: &mut usize) -> String {
    let mut symbol = chars[*at].to_string();
    *at += 1;
    while *at < chars.len() && chars[*at].is_ascii_lowercase() {
        symbol.push(chars[*at]);
        *at += 1;
    }
    symbol
}

fn read_count(chars: &[char], at: &mut usize) -> f64 {
    let start = *at;
    while *at < chars.len() && chars[*at].is_ascii_digit() {
        *at += 1;
    }
    let digits: String = chars[start..*at].iter().collect();
    digits.parse::<f64>().unwrap_or(1.0)
}

fn unexpected(text: &str, chars: &[char], at: usize) -> String {
    format!(
        "formula \"{text}\": unexpected '{}' at character {}; a formula is element symbols (an upper-case letter, then lower-case ones) each with an optional count, and groups in parentheses, e.g. C4H4BrNO2",
        chars[at],
        at + 1
    )
}

/// Products minus reactants, element by element, from (net coefficient, composition) pairs;
/// only the elements that do not cancel.
pub fn imbalance<'a>(terms: impl IntoIterator<Item = (f64, &'a Composition)>) -> Composition {
    let mut net = Composition::new();
    for (coefficient, composition) in terms {
        for (element, n) in composition {
            *net.entry(element.clone()).or_insert(0.0) += coefficient * n;
        }
    }
    net.retain(|_, n| n.abs() > 1e-9);
    net
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formulas_are_counted() {
        let nbs = parse_formula("C4H4BrNO2").unwrap();
        assert_eq!(nbs["C"], 4.0);
        assert_eq!(nbs["Br"], 1.0);
        assert_eq!(nbs["O"], 2.0);
        let grouped = parse_formula("Ca(OH)2").unwrap();
        assert_eq!(grouped["O"], 2.0);
        assert_eq!(grouped["H"], 2.0);
    }

    #[test]
    fn bad_formulas_say_why() {
        for bad in ["", "c6h6", "C6(H6", "()", "C6H6)", "C-H"] {
            assert!(parse_formula(bad).is_err(), "{bad} should not parse");
        }
    }

    #[test]
    fn methane_chlorination_balances() {
        let ch4 = parse_formula("CH4").unwrap();
        let cl2 = parse_formula("Cl2").unwrap();
        let ch3cl = parse_formula("CH3Cl").unwrap();
        let hcl = parse_formula("HCl").unwrap();
        let terms = [(-1.0, &ch4), (-1.0, &cl2), (1.0, &ch3cl), (1.0, &hcl)];
        assert!(imbalance(terms).is_empty());
        let short = [(-1.0, &ch4), (-1.0, &cl2), (1.0, &ch3cl)];
        let left = imbalance(short);
        assert_eq!(left["H"], -1.0);
        assert_eq!(left["Cl"], -1.0);
    }
}
