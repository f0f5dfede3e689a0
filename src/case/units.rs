//! Quantity strings ("75 kJ/mol", "20 degC") parsed into an SI value and a dimension.
//!
//! A quantity is a number followed by an optional unit expression. Unit
//! expressions are products and quotients of unit symbols with optional
//! exponents; the result is a scale factor to SI base units plus, for a lone
//! Celsius or Fahrenheit temperature, an offset to kelvin.

use std::fmt;

/// Deepest parenthesis nesting accepted in a unit expression.
const MAX_NESTING: usize = 32;
/// Largest exponent magnitude accepted after a symbol or group.
const MAX_EXPONENT: f64 = 100.0;
/// Longest piece of input quoted back in an error message.
const MAX_QUOTED_CHARS: usize = 24;
/// Symbol list quoted in the "unknown unit symbol" message.
const KNOWN_SYMBOLS: &str =
    "m, L, g, t, mol, s, min, h, d, K, degC, degF, J, cal, W, N, Pa, bar, atm, with SI prefixes";

/// Kelvin value of 0 degC (NIST SP 811).
const CELSIUS_OFFSET: f64 = 273.15;
/// Size of one degree Fahrenheit in kelvin (NIST SP 811: T/K = (t/°F + 459.67)/1.8).
const FAHRENHEIT_STEP: f64 = 5.0 / 9.0;
/// Kelvin value of 0 degF (NIST SP 811).
const FAHRENHEIT_OFFSET: f64 = 459.67 * 5.0 / 9.0;

/// Exponents of the five base dimensions used by the case file.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Dimension {
    pub length: f64,
    pub mass: f64,
    pub time: f64,
    pub temperature: f64,
    pub amount: f64,
}

impl Dimension {
    pub const NONE: Dimension = Dimension::new(0.0, 0.0, 0.0, 0.0, 0.0);
    pub const LENGTH: Dimension = Dimension::new(1.0, 0.0, 0.0, 0.0, 0.0);
    pub const MASS: Dimension = Dimension::new(0.0, 1.0, 0.0, 0.0, 0.0);
    pub const TIME: Dimension = Dimension::new(0.0, 0.0, 1.0, 0.0, 0.0);
    pub const TEMPERATURE: Dimension = Dimension::new(0.0, 0.0, 0.0, 1.0, 0.0);
    pub const AMOUNT: Dimension = Dimension::new(0.0, 0.0, 0.0, 0.0, 1.0);

    const VOLUME: Dimension = Dimension::new(3.0, 0.0, 0.0, 0.0, 0.0);
    const FORCE: Dimension = Dimension::new(1.0, 1.0, -2.0, 0.0, 0.0);
    const ENERGY: Dimension = Dimension::new(2.0, 1.0, -2.0, 0.0, 0.0);
    const POWER: Dimension = Dimension::new(2.0, 1.0, -3.0, 0.0, 0.0);
    const PRESSURE: Dimension = Dimension::new(-1.0, 1.0, -2.0, 0.0, 0.0);

    pub const fn new(length: f64, mass: f64, time: f64, temperature: f64, amount: f64) -> Self {
        Dimension {
            length,
            mass,
            time,
            temperature,
            amount,
        }
    }

    fn exponents(&self) -> [f64; 5] {
        [
            self.length,
            self.mass,
            self.time,
            self.temperature,
            self.amount,
        ]
    }

    fn from_exponents(e: [f64; 5]) -> Self {
        Dimension::new(e[0], e[1], e[2], e[3], e[4])
    }

    fn combine(self, o: Dimension, op: impl Fn(f64, f64) -> f64) -> Dimension {
        let (a, b) = (self.exponents(), o.exponents());
        Dimension::from_exponents(std::array::from_fn(|i| op(a[i], b[i])))
    }

    /// Dimension of a product.
    #[allow(clippy::should_implement_trait)] // plain method name is part of the case-file API
    pub fn mul(self, o: Dimension) -> Dimension {
        self.combine(o, |a, b| a + b)
    }

    /// Dimension of a quotient.
    #[allow(clippy::should_implement_trait)] // plain method name is part of the case-file API
    pub fn div(self, o: Dimension) -> Dimension {
        self.combine(o, |a, b| a - b)
    }

    /// Dimension raised to a power.
    pub fn powf(self, e: f64) -> Dimension {
        Dimension::from_exponents(self.exponents().map(|x| x * e))
    }

    /// True when every exponent matches within 1e-9.
    pub fn approx_eq(&self, o: &Dimension) -> bool {
        let (a, b) = (self.exponents(), o.exponents());
        a.iter().zip(b.iter()).all(|(x, y)| (x - y).abs() <= 1e-9)
    }

    fn is_finite(&self) -> bool {
        self.exponents().iter().all(|x| x.is_finite())
    }

    /// SI base-unit spelling, e.g. "kg·m^2·s^-2·mol^-1"; "dimensionless" for NONE.
    pub fn describe(&self) -> String {
        let parts: Vec<String> = [
            ("kg", self.mass),
            ("m", self.length),
            ("s", self.time),
            ("K", self.temperature),
            ("mol", self.amount),
        ]
        .iter()
        .filter(|(_, e)| e.abs() > 1e-9)
        .map(|(symbol, e)| describe_power(symbol, *e))
        .collect();
        if parts.is_empty() {
            "dimensionless".to_string()
        } else {
            parts.join("·")
        }
    }
}

fn describe_power(symbol: &str, exponent: f64) -> String {
    let rounded = exponent.round();
    if (exponent - 1.0).abs() <= 1e-9 {
        symbol.to_string()
    } else if (exponent - rounded).abs() <= 1e-9 {
        format!("{symbol}^{}", rounded as i64)
    } else {
        format!("{symbol}^{exponent}")
    }
}

/// A parsed unit expression: value_si = number * factor + offset.
#[derive(Debug, Clone, PartialEq)]
pub struct Unit {
    pub factor: f64,
    pub offset: f64,
    pub dimension: Dimension,
    pub affine: bool,
}

/// A parsed quantity string.
#[derive(Debug, Clone, PartialEq)]
pub struct Quantity {
    pub number: f64,
    pub value_si: f64,
    pub dimension: Dimension,
    pub affine: bool,
    pub unit_text: String,
}

/// Why a quantity or unit string was rejected.
#[derive(Debug, Clone, PartialEq)]
pub struct UnitError {
    pub message: String,
    /// Char offset in the input where the problem is.
    pub offset: usize,
}

impl UnitError {
    fn new(message: impl Into<String>, offset: usize) -> Self {
        UnitError {
            message: message.into(),
            offset,
        }
    }

    fn shifted(mut self, by: usize) -> Self {
        self.offset += by;
        self
    }
}

impl fmt::Display for UnitError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} (at character {})", self.message, self.offset)
    }
}

impl std::error::Error for UnitError {}

/// A scale factor to SI together with its dimension.
#[derive(Debug, Clone, Copy)]
struct Scaled {
    factor: f64,
    dimension: Dimension,
}

impl Scaled {
    const ONE: Scaled = Scaled {
        factor: 1.0,
        dimension: Dimension::NONE,
    };

    fn times(self, o: Scaled) -> Scaled {
        Scaled {
            factor: self.factor * o.factor,
            dimension: self.dimension.mul(o.dimension),
        }
    }

    fn over(self, o: Scaled) -> Scaled {
        Scaled {
            factor: self.factor / o.factor,
            dimension: self.dimension.div(o.dimension),
        }
    }

    fn power(self, e: f64) -> Scaled {
        Scaled {
            factor: self.factor.powf(e),
            dimension: self.dimension.powf(e),
        }
    }
}

/// An unprefixed unit symbol: its SI factor, dimension and whether SI prefixes apply.
struct BaseUnit {
    factor: f64,
    dimension: Dimension,
    prefixable: bool,
}

const fn base(factor: f64, dimension: Dimension, prefixable: bool) -> Option<BaseUnit> {
    Some(BaseUnit {
        factor,
        dimension,
        prefixable,
    })
}

/// Exact symbol table. Sources: NIST SP 811 (calorie_th = 4.184 J, atm = 101 325 Pa,
/// bar = 1e5 Pa, litre = 1e-3 m^3, degree Fahrenheit interval = 5/9 K).
fn base_unit(symbol: &str) -> Option<BaseUnit> {
    match symbol {
        "m" => base(1.0, Dimension::LENGTH, true),
        "L" | "l" => base(1e-3, Dimension::VOLUME, true),
        "g" => base(1e-3, Dimension::MASS, true),
        "t" => base(1e3, Dimension::MASS, false),
        "mol" => base(1.0, Dimension::AMOUNT, true),
        "s" => base(1.0, Dimension::TIME, true),
        "min" => base(60.0, Dimension::TIME, false),
        "h" => base(3600.0, Dimension::TIME, false),
        "d" => base(86400.0, Dimension::TIME, false),
        "K" | "degC" | "°C" | "℃" => base(1.0, Dimension::TEMPERATURE, false),
        "degF" | "°F" => base(FAHRENHEIT_STEP, Dimension::TEMPERATURE, false),
        "J" => base(1.0, Dimension::ENERGY, true),
        "cal" => base(4.184, Dimension::ENERGY, true),
        "W" => base(1.0, Dimension::POWER, true),
        "N" => base(1.0, Dimension::FORCE, true),
        "Pa" => base(1.0, Dimension::PRESSURE, true),
        "bar" => base(1e5, Dimension::PRESSURE, true),
        "atm" => base(101_325.0, Dimension::PRESSURE, false),
        "%" => base(0.01, Dimension::NONE, false),
        _ => None,
    }
}

/// SI prefixes; "da" comes before "d" so the two-letter prefix is tried first.
const PREFIXES: [(&str, f64); 20] = [
    ("Y", 1e24),
    ("Z", 1e21),
    ("E", 1e18),
    ("P", 1e15),
    ("T", 1e12),
    ("G", 1e9),
    ("M", 1e6),
    ("k", 1e3),
    ("h", 1e2),
    ("da", 1e1),
    ("d", 1e-1),
    ("c", 1e-2),
    ("m", 1e-3),
    ("u", 1e-6),
    ("µ", 1e-6),
    ("μ", 1e-6),
    ("n", 1e-9),
    ("p", 1e-12),
    ("f", 1e-15),
    ("a", 1e-18),
];

/// Exact match first, then prefix + prefixable symbol.
fn resolve_symbol(symbol: &str) -> Option<Scaled> {
    if let Some(unit) = base_unit(symbol) {
        return Some(Scaled {
            factor: unit.factor,
            dimension: unit.dimension,
        });
    }
    PREFIXES.iter().find_map(|(prefix, scale)| {
        let unit = base_unit(symbol.strip_prefix(prefix)?)?;
        unit.prefixable.then(|| Scaled {
            factor: scale * unit.factor,
            dimension: unit.dimension,
        })
    })
}

/// A lone Celsius or Fahrenheit symbol is an absolute (affine) temperature.
fn affine_temperature(text: &str) -> Option<Unit> {
    let (factor, offset) = match text {
        "degC" | "°C" | "℃" => (1.0, CELSIUS_OFFSET),
        "degF" | "°F" => (FAHRENHEIT_STEP, FAHRENHEIT_OFFSET),
        _ => return None,
    };
    Some(Unit {
        factor,
        offset,
        dimension: Dimension::TEMPERATURE,
        affine: true,
    })
}

fn is_multiply_operator(c: char) -> bool {
    matches!(c, '*' | '·' | '⋅' | '×')
}

fn is_symbol_char(c: char) -> bool {
    (c.is_alphabetic() && !is_multiply_operator(c)) || matches!(c, '°' | '℃' | '%')
}

fn starts_operand(c: char) -> bool {
    is_symbol_char(c) || c == '(' || c.is_ascii_digit()
}

fn superscript_value(c: char) -> Option<char> {
    let plain = match c {
        '⁰' => '0',
        '¹' => '1',
        '²' => '2',
        '³' => '3',
        '⁴' => '4',
        '⁵' => '5',
        '⁶' => '6',
        '⁷' => '7',
        '⁸' => '8',
        '⁹' => '9',
        '⁻' => '-',
        '⁺' => '+',
        _ => return None,
    };
    Some(plain)
}

/// Quotes a piece of input for an error message, shortened if long.
fn quote(chars: &[char]) -> String {
    let shown: String = chars.iter().take(MAX_QUOTED_CHARS).collect();
    let ellipsis = if chars.len() > MAX_QUOTED_CHARS {
        "…"
    } else {
        ""
    };
    format!("\"{shown}{ellipsis}\"")
}

/// Recursive-descent parser over the chars of a unit expression.
struct UnitParser {
    chars: Vec<char>,
    pos: usize,
    depth: usize,
}

impl UnitParser {
    fn new(text: &str) -> Self {
        UnitParser {
            chars: text.chars().collect(),
            pos: 0,
            depth: 0,
        }
    }

    fn peek(&self) -> Option<char> {
        self.chars.get(self.pos).copied()
    }

    /// Skips whitespace and reports whether any was skipped.
    fn skip_spaces(&mut self) -> bool {
        let start = self.pos;
        while self.peek().is_some_and(char::is_whitespace) {
            self.pos += 1;
        }
        self.pos > start
    }

    fn error_here(&self, message: impl Into<String>) -> UnitError {
        UnitError::new(message, self.pos)
    }

    fn parse_whole(&mut self) -> Result<Scaled, UnitError> {
        self.skip_spaces();
        let value = self.parse_product()?;
        self.skip_spaces();
        match self.peek() {
            None => Ok(value),
            Some(_) => Err(self.error_here("unbalanced parenthesis")),
        }
    }

    /// product := term (operator term)*, evaluated left to right.
    fn parse_product(&mut self) -> Result<Scaled, UnitError> {
        let mut acc = self.parse_term()?;
        let mut after_division = false;
        loop {
            let had_space = self.skip_spaces();
            let Some(c) = self.peek() else { break };
            if c == ')' {
                break;
            }
            if is_multiply_operator(c) || c == '/' {
                self.pos += 1;
                self.skip_spaces();
                let rhs = self.parse_term()?;
                after_division |= c == '/';
                acc = if c == '/' {
                    acc.over(rhs)
                } else {
                    acc.times(rhs)
                };
            } else if had_space && starts_operand(c) {
                if after_division {
                    return Err(self.error_here(
                        "ambiguous space after \"/\"; use parentheses, e.g. \"kJ/(kg K)\"",
                    ));
                }
                acc = acc.times(self.parse_term()?);
            } else {
                return Err(self.error_here(format!(
                    "unexpected \"{c}\" (accepted: unit symbols, *, ·, /, ^, parentheses)"
                )));
            }
        }
        Ok(acc)
    }

    /// term := primary exponent?
    fn parse_term(&mut self) -> Result<Scaled, UnitError> {
        let primary = self.parse_primary()?;
        match self.peek() {
            Some('^') => Ok(primary.power(self.parse_caret_exponent()?)),
            Some(c) if superscript_value(c).is_some() => {
                Ok(primary.power(self.parse_superscript_exponent()?))
            }
            _ => Ok(primary),
        }
    }

    fn parse_primary(&mut self) -> Result<Scaled, UnitError> {
        match self.peek() {
            Some('(') => self.parse_group(),
            Some(')') => Err(self.error_here("unbalanced parenthesis")),
            Some(c) if c.is_ascii_digit() => self.parse_one(),
            Some(c) if is_symbol_char(c) => self.parse_symbol(),
            Some(c) => Err(self.error_here(format!(
                "expected a unit symbol, found \"{c}\" (known: {KNOWN_SYMBOLS})"
            ))),
            None => Err(self.error_here("expected a unit symbol at the end of the unit")),
        }
    }

    fn parse_group(&mut self) -> Result<Scaled, UnitError> {
        let open = self.pos;
        if self.depth >= MAX_NESTING {
            return Err(self.error_here(format!(
                "parentheses nested deeper than {MAX_NESTING} levels"
            )));
        }
        self.depth += 1;
        self.pos += 1;
        self.skip_spaces();
        let inner = self.parse_product()?;
        self.skip_spaces();
        if self.peek() != Some(')') {
            return Err(UnitError::new("unbalanced parenthesis", open));
        }
        self.pos += 1;
        self.depth -= 1;
        Ok(inner)
    }

    /// A bare number may stand as a factor only when it is 1 ("1/s").
    fn parse_one(&mut self) -> Result<Scaled, UnitError> {
        let start = self.pos;
        while self.peek().is_some_and(|c| c.is_ascii_digit() || c == '.') {
            self.pos += 1;
        }
        let literal: String = self.chars[start..self.pos].iter().collect();
        match literal.parse::<f64>() {
            Ok(1.0) => Ok(Scaled::ONE),
            _ => Err(UnitError::new(
                format!(
                    "found number \"{literal}\" inside the unit; only 1 is accepted there (as in \"1/s\")"
                ),
                start,
            )),
        }
    }

    fn parse_symbol(&mut self) -> Result<Scaled, UnitError> {
        let start = self.pos;
        while self.peek().is_some_and(is_symbol_char) {
            self.pos += 1;
        }
        let symbol: String = self.chars[start..self.pos].iter().collect();
        resolve_symbol(&symbol).ok_or_else(|| {
            UnitError::new(
                format!(
                    "unknown unit symbol {} (known: {KNOWN_SYMBOLS})",
                    quote(&self.chars[start..self.pos])
                ),
                start,
            )
        })
    }

    /// "^2", "^-1", "^0.5", "^(-1)", "^(1/2)".
    fn parse_caret_exponent(&mut self) -> Result<f64, UnitError> {
        let caret = self.pos;
        self.pos += 1;
        let value = if self.peek() == Some('(') {
            self.parse_exponent_group()?
        } else {
            self.parse_signed_decimal()?
        };
        check_exponent(value, caret)
    }

    fn parse_exponent_group(&mut self) -> Result<f64, UnitError> {
        let open = self.pos;
        self.pos += 1;
        self.skip_spaces();
        let mut value = self.parse_signed_decimal()?;
        self.skip_spaces();
        if self.peek() == Some('/') {
            self.pos += 1;
            self.skip_spaces();
            let denominator_at = self.pos;
            let denominator = self.parse_signed_decimal()?;
            if denominator == 0.0 {
                return Err(UnitError::new("exponent divides by zero", denominator_at));
            }
            value /= denominator;
            self.skip_spaces();
        }
        if self.peek() != Some(')') {
            return Err(UnitError::new("unbalanced parenthesis in exponent", open));
        }
        self.pos += 1;
        Ok(value)
    }

    fn parse_signed_decimal(&mut self) -> Result<f64, UnitError> {
        let start = self.pos;
        if matches!(self.peek(), Some('+' | '-')) {
            self.pos += 1;
        }
        let digits_start = self.pos;
        while self.peek().is_some_and(|c| c.is_ascii_digit() || c == '.') {
            self.pos += 1;
        }
        let literal: String = self.chars[start..self.pos].iter().collect();
        let has_digit = self.chars[digits_start..self.pos]
            .iter()
            .any(char::is_ascii_digit);
        match literal.parse::<f64>() {
            Ok(v) if has_digit => Ok(v),
            _ => Err(UnitError::new(
                "expected an exponent number after \"^\" (e.g. ^2, ^-1, ^0.5, ^(1/2))",
                start,
            )),
        }
    }

    /// "²", "³", "⁻¹" and the other superscript digits.
    fn parse_superscript_exponent(&mut self) -> Result<f64, UnitError> {
        let start = self.pos;
        let mut literal = String::new();
        while let Some(plain) = self.peek().and_then(superscript_value) {
            literal.push(plain);
            self.pos += 1;
        }
        match literal.parse::<i64>() {
            Ok(v) => check_exponent(v as f64, start),
            Err(_) => Err(UnitError::new(
                "superscript exponent must be a whole number such as ², ³, ⁻¹",
                start,
            )),
        }
    }
}

fn check_exponent(value: f64, at: usize) -> Result<f64, UnitError> {
    if value.is_finite() && value.abs() <= MAX_EXPONENT {
        Ok(value)
    } else {
        Err(UnitError::new(
            format!("exponent must be a finite number between -{MAX_EXPONENT} and {MAX_EXPONENT}"),
            at,
        ))
    }
}

/// Parses a unit expression such as "kJ/(kg*K)", "W/m^2/K", "m³" or "degC".
pub fn parse_unit(text: &str) -> Result<Unit, UnitError> {
    let trimmed = text.trim();
    if trimmed.is_empty() {
        return Err(UnitError::new(
            format!("empty unit (known: {KNOWN_SYMBOLS})"),
            0,
        ));
    }
    if let Some(unit) = affine_temperature(trimmed) {
        return Ok(unit);
    }
    let scaled = UnitParser::new(text).parse_whole()?;
    if !scaled.factor.is_finite() || scaled.factor <= 0.0 || !scaled.dimension.is_finite() {
        return Err(UnitError::new("unit scale factor out of range", 0));
    }
    Ok(Unit {
        factor: scaled.factor,
        offset: 0.0,
        dimension: scaled.dimension,
        affine: false,
    })
}

fn skip_whitespace(chars: &[char], from: usize) -> usize {
    let skipped = chars[from..]
        .iter()
        .take_while(|c| c.is_whitespace())
        .count();
    from + skipped
}

fn count_digits(chars: &[char], from: usize) -> usize {
    chars[from..]
        .iter()
        .take_while(|c| c.is_ascii_digit())
        .count()
}

fn skip_sign(chars: &[char], at: usize) -> usize {
    match chars.get(at) {
        Some('+' | '-') => at + 1,
        _ => at,
    }
}

/// End of the numeric literal starting at `start`, or None without any digits.
fn scan_number(chars: &[char], start: usize) -> Option<usize> {
    let mut end = skip_sign(chars, start);
    let integer_digits = count_digits(chars, end);
    end += integer_digits;
    let mut fraction_digits = 0;
    if chars.get(end) == Some(&'.') {
        fraction_digits = count_digits(chars, end + 1);
        end += 1 + fraction_digits;
    }
    if integer_digits + fraction_digits == 0 {
        return None;
    }
    if matches!(chars.get(end), Some('e' | 'E')) {
        let exponent_start = skip_sign(chars, end + 1);
        let exponent_digits = count_digits(chars, exponent_start);
        if exponent_digits > 0 {
            end = exponent_start + exponent_digits;
        }
    }
    Some(end)
}

fn not_a_number_error(chars: &[char], start: usize) -> UnitError {
    let word_start = skip_sign(chars, start);
    let word_len = chars[word_start..]
        .iter()
        .take_while(|c| c.is_alphabetic())
        .count();
    let word: String = chars[word_start..word_start + word_len]
        .iter()
        .collect::<String>()
        .to_lowercase();
    if matches!(word.as_str(), "nan" | "inf" | "infinity") {
        return not_finite_error(chars, start);
    }
    let token_len = chars[start..]
        .iter()
        .take_while(|c| !c.is_whitespace())
        .count();
    UnitError::new(
        format!(
            "expected a number at the start, found {} (accepted: e.g. 75, -95, 3.0e-4, .5)",
            quote(&chars[start..start + token_len])
        ),
        start,
    )
}

fn not_finite_error(chars: &[char], start: usize) -> UnitError {
    let token_len = chars[start..]
        .iter()
        .take_while(|c| !c.is_whitespace())
        .count();
    UnitError::new(
        format!(
            "only finite numbers are accepted, found {}",
            quote(&chars[start..start + token_len])
        ),
        start,
    )
}

/// Reads the leading number; returns it and the char index just after it.
fn parse_leading_number(chars: &[char], start: usize) -> Result<(f64, usize), UnitError> {
    let end = scan_number(chars, start).ok_or_else(|| not_a_number_error(chars, start))?;
    let literal: String = chars[start..end].iter().collect();
    match literal.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok((v, end)),
        Ok(_) => Err(not_finite_error(chars, start)),
        Err(_) => Err(not_a_number_error(chars, start)),
    }
}

/// Parses "<number> <unit>", e.g. "75 kJ/mol", "20 degC", "0.8".
pub fn parse_quantity(text: &str) -> Result<Quantity, UnitError> {
    let chars: Vec<char> = text.chars().collect();
    let start = skip_whitespace(&chars, 0);
    if start == chars.len() {
        return Err(UnitError::new(
            "empty quantity: expected a number with an optional unit, e.g. \"75 kJ/mol\"",
            0,
        ));
    }
    let (number, after_number) = parse_leading_number(&chars, start)?;
    let unit_start = skip_whitespace(&chars, after_number);
    let unit_text: String = chars[unit_start..].iter().collect();
    let unit_text = unit_text.trim_end().to_string();
    if unit_text.is_empty() {
        return Ok(Quantity {
            number,
            value_si: number,
            dimension: Dimension::NONE,
            affine: false,
            unit_text,
        });
    }
    let unit = parse_unit(&unit_text).map_err(|e| e.shifted(unit_start))?;
    let value_si = number * unit.factor + unit.offset;
    if !value_si.is_finite() {
        return Err(UnitError::new(
            "value out of range after conversion to SI units",
            start,
        ));
    }
    Ok(Quantity {
        number,
        value_si,
        dimension: unit.dimension,
        affine: unit.affine,
        unit_text,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn q(text: &str) -> Quantity {
        parse_quantity(text).unwrap_or_else(|e| panic!("{text:?} failed: {e}"))
    }

    fn u(text: &str) -> Unit {
        parse_unit(text).unwrap_or_else(|e| panic!("{text:?} failed: {e}"))
    }

    fn err(text: &str) -> UnitError {
        match parse_quantity(text) {
            Ok(v) => panic!("{text:?} should fail, got {v:?}"),
            Err(e) => e,
        }
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * a.abs().max(b.abs()).max(1e-300)
    }

    fn dim(length: f64, mass: f64, time: f64, temperature: f64, amount: f64) -> Dimension {
        Dimension::new(length, mass, time, temperature, amount)
    }

    const MOLAR_ENERGY: Dimension = Dimension::new(2.0, 1.0, -2.0, 0.0, -1.0);

    #[test]
    fn kilocalorie_per_mole() {
        // NIST SP 811: thermochemical calorie = 4.184 J exactly.
        let v = q("1 kcal/mol");
        assert!(close(v.value_si, 4184.0));
        assert!(v.dimension.approx_eq(&MOLAR_ENERGY));
        assert!(!v.affine);
    }

    #[test]
    fn heat_transfer_coefficient() {
        // SI definition: W = kg m^2 s^-3, so W/(m^2 K) = kg s^-3 K^-1.
        let v = q("280 W/(m^2*K)");
        assert!(close(v.value_si, 280.0));
        assert!(v.dimension.approx_eq(&dim(0.0, 1.0, -3.0, -1.0, 0.0)));
        assert_eq!(v.dimension.describe(), "kg·s^-3·K^-1");
    }

    #[test]
    fn rate_constant_litre_per_mole_minute() {
        // NIST SP 811: L = 1e-3 m^3, min = 60 s; 3.0e-4 * 1e-3 / 60 = 5e-9.
        let v = q("3.0e-4 L/(mol*min)");
        assert!(close(v.value_si, 5e-9));
        assert!(v.dimension.approx_eq(&dim(3.0, 0.0, -1.0, 0.0, -1.0)));
    }

    #[test]
    fn activation_energy() {
        // SI prefix k = 1e3.
        let v = q("75 kJ/mol");
        assert!(close(v.value_si, 75_000.0));
        assert_eq!(v.dimension.describe(), "kg·m^2·s^-2·mol^-1");
        assert_eq!(v.unit_text, "kJ/mol");
    }

    #[test]
    fn specific_heat() {
        // SI prefix k = 1e3; kg is the SI base unit of mass.
        let v = q("1.75 kJ/(kg*K)");
        assert!(close(v.value_si, 1750.0));
        assert!(v.dimension.approx_eq(&dim(2.0, 0.0, -2.0, -1.0, 0.0)));
    }

    #[test]
    fn specific_heat_with_space_and_celsius_interval() {
        // NIST SP 811: a degree Celsius interval equals a kelvin interval.
        let spaced = u("kJ/(kg K)");
        let starred = u("kJ/(kg*K)");
        let celsius = u("kJ/(kg*degC)");
        assert_eq!(spaced, starred);
        assert_eq!(celsius, starred);
        assert!(!celsius.affine);
        assert_eq!(celsius.offset, 0.0);
    }

    #[test]
    fn fahrenheit_interval_in_compound() {
        // NIST SP 811: 1 °F interval = 5/9 K.
        let unit = u("J/(kg*degF)");
        assert!(close(unit.factor, 1.8));
        assert!(!unit.affine);
    }

    #[test]
    fn density() {
        // SI base units: kg/m^3 has factor 1.
        let v = q("1050 kg/m^3");
        assert!(close(v.value_si, 1050.0));
        assert!(v.dimension.approx_eq(&dim(-3.0, 1.0, 0.0, 0.0, 0.0)));
    }

    #[test]
    fn celsius_absolute() {
        // NIST SP 811: T/K = t/°C + 273.15.
        let v = q("20 degC");
        assert!(close(v.value_si, 293.15));
        assert!(v.affine);
        assert!(v.dimension.approx_eq(&Dimension::TEMPERATURE));
        assert!(close(q("20°C").value_si, 293.15));
        assert!(close(q("20 ℃").value_si, 293.15));
        assert!(close(q("20degC").value_si, 293.15));
        assert!(close(q("0 degC").value_si, 273.15));
    }

    #[test]
    fn fahrenheit_absolute() {
        // NIST SP 811: T/K = (t/°F + 459.67)/1.8.
        assert!(close(q("68 degF").value_si, 293.15));
        assert!(close(q("68 °F").value_si, 293.15));
        let minus_forty = q("-40 degF");
        assert!(close(minus_forty.value_si, 233.15));
        assert!(close(minus_forty.value_si, q("-40 degC").value_si));
        assert!(minus_forty.affine);
    }

    #[test]
    fn kelvin_is_not_affine() {
        let unit = u("K");
        assert!(!unit.affine);
        assert_eq!(unit.offset, 0.0);
        assert!(!u("degC^2").affine);
        assert!(!u("(degC)").affine);
    }

    #[test]
    fn chained_division_is_left_to_right() {
        assert_eq!(u("W/m^2/K"), u("W/(m^2*K)"));
        assert_eq!(u("W·m⁻²·K⁻¹"), u("W/(m^2*K)"));
        assert_eq!(u("W⋅m^(-2)×K^-1"), u("W/(m^2*K)"));
    }

    #[test]
    fn superscripts_and_fractional_exponents() {
        // NIST SP 811: 1 m^3 = 1000 L.
        assert!(u("m³").dimension.approx_eq(&dim(3.0, 0.0, 0.0, 0.0, 0.0)));
        assert!(close(u("dm³").factor, 1e-3));
        let root_metre = dim(0.5, 0.0, 0.0, 0.0, 0.0);
        assert!(u("m^0.5").dimension.approx_eq(&root_metre));
        assert!(u("m^(1/2)").dimension.approx_eq(&root_metre));
        assert_eq!(u("(kg*m)^2"), u("kg^2*m^2"));
        assert_eq!(u("m^2").dimension.describe(), "m^2");
        assert_eq!(u("m^0.5").dimension.describe(), "m^0.5");
    }

    #[test]
    fn prefixes_and_exact_symbols() {
        // SI prefixes (SI Brochure / NIST SP 811); exact symbols win over prefixes.
        assert!(close(u("µm").factor, 1e-6));
        assert!(close(u("μm").factor, 1e-6));
        assert!(close(u("um").factor, 1e-6));
        assert!(close(u("hPa").factor, 100.0));
        assert!(close(u("mm").factor, 1e-3));
        assert!(close(u("ms").factor, 1e-3));
        assert!(close(u("min").factor, 60.0));
        assert!(close(u("h").factor, 3600.0));
        assert!(close(u("d").factor, 86400.0));
        assert!(close(u("t").factor, 1000.0));
        assert!(close(u("kmol").factor, 1000.0));
        assert!(close(u("mol").factor, 1.0));
        assert!(close(u("mbar").factor, 100.0));
        assert!(close(u("MW").factor, 1e6));
        assert!(close(u("mL").factor, 1e-6));
        assert!(close(u("ml").factor, 1e-6));
        assert!(close(u("cm").factor, 1e-2));
        assert!(close(u("dam").factor, 10.0));
        assert!(close(u("kg").factor, 1.0));
    }

    #[test]
    fn pressures() {
        // NIST SP 811: 1 atm = 101 325 Pa, 1 bar = 1e5 Pa.
        assert!(close(q("1 atm").value_si, 101_325.0));
        assert!(close(q("2 bar").value_si, 2e5));
        assert!(u("Pa").dimension.approx_eq(&dim(-1.0, 1.0, -2.0, 0.0, 0.0)));
    }

    #[test]
    fn per_time_and_mass_flow() {
        // NIST SP 811: h = 3600 s.
        let per_second = q("0.1 1/s");
        assert!(close(per_second.value_si, 0.1));
        let frequency = dim(0.0, 0.0, -1.0, 0.0, 0.0);
        assert!(per_second.dimension.approx_eq(&frequency));
        assert!(close(q("3600 1/h").value_si, 1.0));
        let flow = q("36 kg/h");
        assert!(close(flow.value_si, 0.01));
        assert!(flow.dimension.approx_eq(&dim(0.0, 1.0, -1.0, 0.0, 0.0)));
    }

    #[test]
    fn specific_power_and_zero_values() {
        // SI: W/kg = m^2 s^-3.
        let power = q("2.0 W/kg");
        assert!(close(power.value_si, 2.0));
        assert!(power.dimension.approx_eq(&dim(2.0, 0.0, -3.0, 0.0, 0.0)));
        let zero = q("0 kJ/K");
        assert_eq!(zero.value_si, 0.0);
        assert!(zero.dimension.approx_eq(&dim(2.0, 1.0, -2.0, -1.0, 0.0)));
    }

    #[test]
    fn dimensionless_numbers() {
        let v = q("0.8");
        assert_eq!(v.value_si, 0.8);
        assert_eq!(v.unit_text, "");
        assert_eq!(v.dimension, Dimension::NONE);
        assert_eq!(v.dimension.describe(), "dimensionless");
        assert_eq!(q("1").value_si, 1.0);
        assert!(close(q("50 %").value_si, 0.5));
    }

    #[test]
    fn number_forms() {
        assert_eq!(q("-95").number, -95.0);
        assert_eq!(q("+5").number, 5.0);
        assert_eq!(q(".5").number, 0.5);
        assert_eq!(q("1E3").number, 1000.0);
        assert_eq!(q("  3.0e-4 s ").number, 3.0e-4);
        assert_eq!(q("2EJ").value_si, 2e18);
    }

    #[test]
    fn dimension_arithmetic() {
        let energy = Dimension::MASS
            .mul(Dimension::LENGTH.powf(2.0))
            .div(Dimension::TIME.powf(2.0));
        assert!(energy.approx_eq(&u("J").dimension));
        assert!(energy.div(Dimension::AMOUNT).approx_eq(&MOLAR_ENERGY));
        assert!(!energy.approx_eq(&Dimension::NONE));
    }

    #[test]
    fn rejects_words_and_unknown_symbols() {
        let e = err("abc");
        let expected = "expected a number at the start, found \"abc\"";
        assert!(e.message.contains(expected));
        assert_eq!(e.offset, 0);
        let e = err("75 kJ/mo");
        assert!(e.message.contains("unknown unit symbol \"mo\""), "{e}");
        assert!(e.message.contains("known: m, L, g"));
        assert_eq!(e.offset, 6);
        assert_eq!(err("1 kgg").offset, 2);
    }

    #[test]
    fn rejects_non_finite_numbers() {
        for text in ["NaN K", "inf kg", "-Infinity", "1e400 kg"] {
            let e = err(text);
            assert!(e.message.contains("only finite numbers"), "{text}: {e}");
            assert_eq!(e.offset, 0);
        }
    }

    #[test]
    fn rejects_unbalanced_parentheses() {
        let e = err("10 (kg");
        assert_eq!(e.message, "unbalanced parenthesis");
        assert_eq!(e.offset, 3);
        let e = err("10 kg)");
        assert_eq!(e.message, "unbalanced parenthesis");
        assert_eq!(e.offset, 5);
    }

    #[test]
    fn rejects_empty_and_blank() {
        assert!(err("").message.contains("empty"));
        assert!(err("  ").message.contains("empty"));
        assert!(parse_unit("").is_err());
    }

    #[test]
    fn rejects_dangling_exponent_and_operators() {
        let e = err("10 kg^");
        assert!(e.message.contains("exponent"), "{e}");
        assert_eq!(e.offset, 6);
        assert!(parse_unit("kg/").is_err());
        assert!(parse_unit("*kg").is_err());
        assert!(parse_unit("m^2^3").is_err());
        assert!(parse_unit("m^(1/0)").is_err());
        assert!(parse_unit("2/s").is_err());
        assert!(parse_unit("⁻").is_err());
        assert!(parse_unit("m^1000").is_err());
    }

    #[test]
    fn rejects_ambiguous_space_after_division() {
        let e = parse_unit("kJ/kg K").unwrap_err();
        assert!(e.message.contains("ambiguous"));
        assert_eq!(e.offset, 6);
    }

    #[test]
    fn rejects_out_of_range_scale() {
        assert!(parse_unit("Ym^50").is_err());
        assert!(parse_quantity("1e300 Ym^3").is_err());
    }

    #[test]
    fn deep_nesting_does_not_panic() {
        let deep = format!("1 {}kg", "(".repeat(1000));
        let e = err(&deep);
        assert!(e.message.contains("nested"), "{e}");
        let balanced = format!("1 {}kg{}", "(".repeat(1000), ")".repeat(1000));
        assert!(parse_quantity(&balanced).is_err());
        let ok = format!("1 {}kg{}", "(".repeat(30), ")".repeat(30));
        assert!(close(q(&ok).value_si, 1.0));
    }

    #[test]
    fn long_input_does_not_panic() {
        let long = format!("1 {}", "m*".repeat(50_000));
        assert!(parse_quantity(&long).is_err());
        let word = "x".repeat(10_000);
        let e = err(&word);
        assert!(e.message.len() < 200);
    }

    /// Linear congruential generator (Knuth MMIX constants) for repeatable noise.
    struct Lcg(u64);

    impl Lcg {
        fn next(&mut self) -> u64 {
            self.0 = self
                .0
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            self.0 >> 33
        }
    }

    #[test]
    fn random_strings_never_panic() {
        let alphabet: Vec<char> = "0123456789.eE+- kgmolJ/()*^²³⁻¹°CFdegK·⋅×hPaLtsnµμ%Nax\t"
            .chars()
            .collect();
        let mut rng = Lcg(0x5eed);
        for _ in 0..5000 {
            let len = (rng.next() % 24) as usize;
            let text: String = (0..len)
                .map(|_| alphabet[(rng.next() % alphabet.len() as u64) as usize])
                .collect();
            let _ = parse_quantity(&text);
            let _ = parse_unit(&text);
        }
    }

    #[test]
    fn random_bytes_never_panic() {
        let mut rng = Lcg(42);
        for _ in 0..3000 {
            let len = (rng.next() % 32) as usize;
            let bytes: Vec<u8> = (0..len).map(|_| (rng.next() & 0xff) as u8).collect();
            let text = String::from_utf8_lossy(&bytes);
            let _ = parse_quantity(&text);
            let _ = parse_unit(&text);
        }
    }
}
