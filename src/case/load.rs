//! Reading a case file: YAML into the raw schema, structural errors placed in the file, then
//! the whole case checked by `validate`. serde_yaml stays behind this one module.

use super::Case;
use super::error::{CaseError, InputError};
use super::positions::{Position, PositionMap, RootShape};
use super::schema::RawCase;
use super::validate::validate;
use std::path::Path;

/// Largest case file accepted: far above any real case, small enough to read at once.
const MAX_CASE_BYTES: u64 = 4 * 1024 * 1024;

/// What a whole case looks like, for errors about the file as a whole.
const A_CASE: &str = "a YAML mapping of the case's sections: format: 1, title, charge, reactions, vessel, coolant, process, limits (optional: species, feed, failure, decomposition), as in the README's case reference";

/// Loads and checks the case at `path`.
pub fn load_case_file(path: &Path) -> Result<Case, CaseError> {
    let file = path.display().to_string();
    let text = read_text(path, &file)?;
    load_case_text(&text, &file)
}

/// Loads and checks a case given as text; `file` names it in messages.
pub fn load_case_text(text: &str, file: &str) -> Result<Case, CaseError> {
    // Some editors start UTF-8 files with a byte-order mark; it is not part of the YAML.
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    if text.trim().is_empty() {
        return Err(whole_file_error(file, "the case file is empty"));
    }
    if let Some(error) = control_character(text, file) {
        return Err(CaseError::Invalid(vec![error]));
    }
    let positions = PositionMap::of_document(text);
    if positions.broken_at().is_none() {
        document_errors(&positions, file).map_err(CaseError::Invalid)?;
    }
    let raw: RawCase = serde_yaml::from_str(text)
        .map_err(|e| CaseError::Invalid(vec![structural_error(&e, text, &positions, file)]))?;
    validate(raw, &positions, file).map_err(CaseError::Invalid)
}

fn read_text(path: &Path, file: &str) -> Result<String, CaseError> {
    let read_error = |source| CaseError::Read {
        file: file.to_string(),
        source,
    };
    let size = std::fs::metadata(path).map_err(read_error)?.len();
    if size > MAX_CASE_BYTES {
        return Err(whole_file_error(
            file,
            &format!("the file is {size} bytes; a case file is at most {MAX_CASE_BYTES} bytes"),
        ));
    }
    let bytes = std::fs::read(path).map_err(read_error)?;
    String::from_utf8(bytes).map_err(|e| {
        whole_file_error(
            file,
            &format!(
                "the file is not UTF-8 text (byte {})",
                e.utf8_error().valid_up_to()
            ),
        )
    })
}

/// The first character YAML does not allow in a document (C0 controls other than tab,
/// line feed and carriage return, and DEL), placed by line and column; libyaml names only
/// a byte offset.
fn control_character(text: &str, file: &str) -> Option<InputError> {
    let (line_index, line) = text
        .split('\n')
        .enumerate()
        .find(|(_, line)| line.chars().any(is_forbidden_control))?;
    let (column_index, c) = line
        .chars()
        .enumerate()
        .find(|(_, c)| is_forbidden_control(*c))?;
    Some(input_error(
        file,
        Position {
            line: line_index + 1,
            column: column_index + 1,
        },
        "",
        &format!(
            "the control character U+{:04X} stands here; YAML does not allow it in a document",
            u32::from(c)
        ),
        &format!(
            "printable text: delete the character (an editor may show it as a box or as {})",
            caret_notation(c)
        ),
    ))
}

/// `^A` for U+0001, `^?` for DEL.
fn caret_notation(c: char) -> String {
    match c {
        '\u{7f}' => "^?".to_string(),
        c => format!("^{}", char::from((c as u8) ^ 0x40)),
    }
}

fn is_forbidden_control(c: char) -> bool {
    (c.is_ascii_control() && !matches!(c, '\t' | '\n' | '\r')) || c == '\u{7f}'
}

fn input_error(
    file: &str,
    position: Position,
    path: &str,
    message: &str,
    accepted: &str,
) -> InputError {
    InputError {
        file: file.to_string(),
        position,
        path: path.to_string(),
        message: message.to_string(),
        accepted: accepted.to_string(),
    }
}

fn whole_file_error(file: &str, message: &str) -> CaseError {
    CaseError::Invalid(vec![input_error(
        file,
        Position::START,
        "",
        message,
        A_CASE,
    )])
}

/// Problems of a document that parses but cannot be a case, which serde would report
/// unclearly or not at all: no content, a list or a single value at the top, a second
/// document, keys written twice.
fn document_errors(positions: &PositionMap, file: &str) -> Result<(), Vec<InputError>> {
    let top = |message: String| vec![input_error(file, Position::START, "", &message, A_CASE)];
    match positions.root() {
        RootShape::Mapping => {}
        RootShape::Empty => {
            return Err(top(
                "the case file holds no YAML content (only comments, blank lines or null)"
                    .to_string(),
            ));
        }
        RootShape::List => {
            return Err(top(
                "the file holds a list (lines starting with \"- \") at the top level; a case is a mapping of keys"
                    .to_string(),
            ));
        }
        RootShape::Scalar(text) => {
            return Err(top(format!(
                "the file holds the single value \"{}\" at the top level; a case is a mapping of keys",
                shortened(text)
            )));
        }
    }
    if let Some(position) = positions.second_document() {
        // The line is right; the column of an implicit document start is not its own.
        let position = Position {
            column: 1,
            ..position
        };
        return Err(vec![input_error(
            file,
            position,
            "",
            "a second YAML document starts on this line (after a \"---\" or \"...\" line); a case file holds one document",
            "one case per file: remove the \"---\" or \"...\" line and what follows, or split the file",
        )]);
    }
    let duplicates: Vec<InputError> = positions
        .duplicates()
        .iter()
        .map(|(path, position)| {
            let first = positions.key(path).unwrap_or_default();
            input_error(
                file,
                *position,
                path,
                &format!(
                    "this key is written a second time (first at line {}, column {})",
                    first.line, first.column
                ),
                "each key once in its section",
            )
        })
        .collect();
    if duplicates.is_empty() {
        Ok(())
    } else {
        Err(duplicates)
    }
}

/// Turns a serde_yaml error into an input error with its path and position.
fn structural_error(
    error: &serde_yaml::Error,
    text: &str,
    positions: &PositionMap,
    file: &str,
) -> InputError {
    let position = error
        .location()
        .map(|l| Position {
            line: l.line(),
            column: l.column(),
        })
        .unwrap_or(Position::START);
    let full = error.to_string();
    match positions.broken_at() {
        Some(open) => syntax_error(&full, text, position, open, file),
        None => type_error(&full, position, file),
    }
}

/// A document that does not parse: libyaml's words, a hint at the usual cause, and the
/// key path that was open where the parser stopped.
fn syntax_error(full: &str, text: &str, position: Position, open: &str, file: &str) -> InputError {
    let message = locations_in_words(full);
    if message.starts_with("unknown anchor") {
        return unknown_anchor(text, position, open, file);
    }
    let hint = syntax_hint(&message, text, position);
    InputError {
        file: file.to_string(),
        position,
        path: open.to_string(),
        message: format!("YAML syntax error: {message}{hint}"),
        accepted: "YAML in the case layout: \"key: value\" lines, sections indented by spaces, lists of \"- \" items".to_string(),
    }
}

/// An alias (`*name`) without an anchor (`&name`) before it.
fn unknown_anchor(text: &str, position: Position, open: &str, file: &str) -> InputError {
    let line = text
        .lines()
        .nth(position.line.saturating_sub(1))
        .unwrap_or("");
    let alias: String = line
        .chars()
        .skip(position.column.saturating_sub(1))
        .take_while(|c| !c.is_whitespace() && !",]}".contains(*c))
        .collect();
    let name = alias.trim_start_matches('*');
    InputError {
        file: file.to_string(),
        position,
        path: open.to_string(),
        message: format!(
            "YAML alias \"{}\" names no anchor: an anchor \"&{}\" must mark a value earlier in the file",
            shortened(&alias),
            shortened(name)
        ),
        accepted: format!(
            "\"&{}\" on a value above this line, or quotes around a text that starts with *",
            shortened(name)
        ),
    }
}

/// libyaml ends each part with " at line L column C": the first is the reported position
/// and goes; a later one (where the enclosing construct started) is kept in words.
fn locations_in_words(full: &str) -> String {
    let mut out = String::new();
    let mut rest = full;
    let mut first = true;
    while let Some(at) = rest.find(" at line ") {
        out.push_str(&rest[..at]);
        let tail = &rest[at + " at line ".len()..];
        let (line, after_line) = split_digits(tail);
        let Some(after_column) = after_line.strip_prefix(" column ") else {
            out.push_str(" at line ");
            rest = tail;
            continue;
        };
        let (column, after) = split_digits(after_column);
        if !first {
            out.push_str(&format!(" that starts at line {line}, column {column}"));
        }
        first = false;
        rest = after;
    }
    out.push_str(rest);
    out
}

fn split_digits(text: &str) -> (&str, &str) {
    let end = text
        .find(|c: char| !c.is_ascii_digit())
        .unwrap_or(text.len());
    text.split_at(end)
}

/// The usual cause of a syntax error, when it can be told.
fn syntax_hint(message: &str, text: &str, position: Position) -> String {
    let line = text
        .lines()
        .nth(position.line.saturating_sub(1))
        .unwrap_or("");
    let indent: String = line.chars().take_while(|c| c.is_whitespace()).collect();
    if indent.contains('\t') || message.contains("tab") {
        return " (a tab character: YAML indents with spaces only)".to_string();
    }
    let hint = if message.contains("mapping values are not allowed") {
        "a line indented deeper than the key above it, or a value holding \": \" that needs quotes"
    } else if message.contains("could not find expected ':'") {
        "a line that is neither \"key: value\" nor a list item, or a key longer than 1024 characters"
    } else if message.contains("did not find expected ',' or '}'") {
        "a { ... } mapping whose closing } is missing"
    } else if message.contains("did not find expected ',' or ']'") {
        "a [ ... ] list whose closing ] is missing"
    } else if message.contains("did not find expected key") {
        "a line indented less or more than the other keys of its section"
    } else if message.contains("found undefined tag handle") {
        "a value starting with ! or * that needs quotes"
    } else {
        return String::new();
    };
    format!(" (usually {hint})")
}

/// A document that parses but whose values have the wrong shape for the case layout.
fn type_error(full: &str, position: Position, file: &str) -> InputError {
    let text = strip_location(full);
    let (path, message) = split_path(&text);
    let (message, accepted) = match message.strip_prefix("invalid type: ") {
        Some(rest) => {
            let (found, expected) = rest.split_once(", expected ").unwrap_or((rest, ""));
            (
                format!(
                    "found {} where the case layout has {}",
                    found_in_words(found),
                    shape_of(expected, path)
                ),
                expected_in_words(expected, path),
            )
        }
        None => (tidy_message(message), A_CASE.to_string()),
    };
    InputError {
        file: file.to_string(),
        position,
        path: path.to_string(),
        message,
        accepted,
    }
}

/// serde_yaml appends " at line L column C"; the position is reported separately.
fn strip_location(text: &str) -> String {
    match text.rfind(" at line ") {
        Some(at) => text[..at].to_string(),
        None => text.to_string(),
    }
}

/// serde_yaml writes "path.to.key: message" when the error is inside a mapping.
fn split_path(text: &str) -> (&str, &str) {
    match text.split_once(": ") {
        Some((path, message)) if looks_like_path(path) => (path, message),
        _ => ("", text),
    }
}

fn looks_like_path(text: &str) -> bool {
    !text.is_empty()
        && !text.contains(' ')
        && text
            .chars()
            .all(|c| c.is_alphanumeric() || "_.[]-'\"".contains(c) || !c.is_ascii())
}

/// serde's name of what the file holds, in the words of the case format.
fn found_in_words(found: &str) -> String {
    match found {
        "sequence" => "a list".to_string(),
        "map" => "a mapping".to_string(),
        "unit value" => "an empty value (null)".to_string(),
        "enum" => "a value with a YAML tag (!name)".to_string(),
        other => {
            for kind in ["integer `", "floating point `", "boolean `"] {
                if let Some(value) = other.strip_prefix(kind) {
                    return format!("the value {}", shortened(value.trim_end_matches('`')));
                }
            }
            let other = other.replace('`', "\"");
            match other.strip_prefix("string ") {
                Some(quoted) => format!("the text {}", shortened(quoted)),
                None => shortened(&other),
            }
        }
    }
}

/// The shape the case layout has at a place, from serde's "expected ...".
fn shape_of(expected: &str, path: &str) -> &'static str {
    if expected == "field identifier" {
        "a key"
    } else if expected.starts_with("struct ") || expected.contains("map") {
        "a mapping"
    } else if expected.contains("sequence") {
        "a list"
    } else if expected.contains("boolean") {
        "true or false"
    } else if path.is_empty() {
        "a mapping"
    } else {
        "a single value"
    }
}

/// What would be accepted, from serde's "expected ...".
fn expected_in_words(expected: &str, path: &str) -> String {
    let section = |keys: &str| format!("a mapping of keys: {keys}");
    match expected {
        "struct RawCase" => A_CASE.to_string(),
        "struct RawSpecies" => {
            "a mapping such as { molar_mass: 80.91 g/mol, gas: true }".to_string()
        }
        "struct RawStream" => section("mass, specific_heat, density, amounts"),
        "struct RawFeed" => {
            section("mass, specific_heat, density, temperature, amounts, start, duration")
        }
        "struct RawReaction" => section(
            "equation, enthalpy, rate_constant, reference_temperature, activation_energy, orders",
        ),
        "struct RawVessel" => section(
            "diameter, bottom, nominal_volume, jacket_height, heat_transfer_coefficient, heat_capacity",
        ),
        "struct RawCoolant" => section("temperature"),
        "struct RawProcess" => section("temperature, duration"),
        "struct RawFailure" => section("dosing, horizon"),
        "struct RawDecomposition" => {
            section("energy, heat_release_rate, reference_temperature, activation_energy, order")
        }
        "struct RawLimits" => section("mtt"),
        "a sequence" if path == "reactions" => {
            "a list with one \"- equation: ...\" entry per reaction".to_string()
        }
        "a sequence" => "a list of \"- \" items".to_string(),
        "a map" if path.ends_with("amounts") => {
            "a mapping of species to amounts, such as { A: 9.0 kmol }".to_string()
        }
        "a map" if path.ends_with("orders") => {
            "a mapping of species to orders, such as { A: 1, B: 1 }".to_string()
        }
        "a map" => "a mapping of \"key: value\" entries".to_string(),
        "field identifier" => "a key that is a word, such as \"mass\"".to_string(),
        other => tidy_message(other),
    }
}

fn tidy_message(message: &str) -> String {
    if let Some(rest) = message.strip_prefix("duplicate field `") {
        let field = rest.split('`').next().unwrap_or("");
        return format!("the key \"{field}\" is written twice");
    }
    if message.contains("more than one document") {
        return "the file holds more than one YAML document (\"---\"); a case file holds one"
            .to_string();
    }
    if message.contains("recursion limit exceeded") {
        return "the document nests deeper than any case does".to_string();
    }
    if message.contains("repetition limit exceeded") {
        return "aliases expand the document beyond any case's size".to_string();
    }
    message.replace('`', "\"")
}

/// Long text cut for a message.
fn shortened(text: &str) -> String {
    const MAX: usize = 60;
    if text.chars().count() <= MAX {
        return text.to_string();
    }
    let head: String = text.chars().take(MAX).collect();
    format!("{head}…")
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;

    /// The input errors of a case that must not load (shared by the case layer's tests).
    pub(crate) fn errors(text: &str) -> Vec<InputError> {
        match load_case_text(text, "t.yaml") {
            Err(CaseError::Invalid(errors)) => errors,
            other => panic!("expected input errors, got {other:?}"),
        }
    }

    #[test]
    fn libyaml_positions_become_words() {
        assert_eq!(
            locations_in_words(
                "did not find expected ',' or '}' at line 14 column 5, while parsing a flow mapping at line 12 column 12"
            ),
            "did not find expected ',' or '}', while parsing a flow mapping that starts at line 12, column 12"
        );
        assert_eq!(locations_in_words("plain"), "plain");
    }

    #[test]
    fn a_byte_order_mark_is_not_part_of_the_document() {
        let e = errors("\u{feff}format: 1\n");
        assert!(e.iter().all(|e| !e.message.contains("document")), "{e:?}");
        assert!(e.iter().any(|e| e.path == "title"), "{e:?}");
    }

    #[test]
    fn whole_file_shapes_are_named() {
        assert!(errors("# nothing\n")[0].message.contains("no YAML content"));
        assert!(errors("- a\n- b\n")[0].message.contains("a list"));
        assert!(
            errors("hello\n")[0]
                .message
                .contains("single value \"hello\"")
        );
        let second = &errors("format: 1\n---\nformat: 1\n")[0];
        assert_eq!(second.position.line, 2);
        assert!(second.message.contains("second YAML document"));
        let implicit = &errors("format: 1\n...\nformat: 2\n")[0];
        assert_eq!(implicit.position, Position { line: 3, column: 1 });
    }

    #[test]
    fn duplicate_keys_are_all_named() {
        let e = errors("format: 1\ntitle: a\ntitle: b\ncharge:\n  mass: 1 kg\n  mass: 2 kg\n");
        assert_eq!(e.len(), 2, "{e:?}");
        assert_eq!(e[0].path, "title");
        assert_eq!(e[0].position.line, 3);
        assert_eq!(e[1].path, "charge.mass");
        assert!(e[1].message.contains("first at line 5"));
    }

    #[test]
    fn wrong_shapes_say_what_was_found_and_what_belongs() {
        let e = &errors("format: 1\nspecies:\n  HBr: gas\n")[0];
        assert_eq!(e.path, "species.HBr");
        assert!(
            e.message
                .contains("found the text \"gas\" where the case layout has a mapping"),
            "{e}"
        );
        assert!(e.accepted.contains("molar_mass"), "{e}");
        assert!(!e.to_string().contains("Raw"), "{e}");
        let e = &errors("format: 1\nvessel:\n  [a, b]: 1\n")[0];
        assert!(
            e.message
                .contains("found a list where the case layout has a key"),
            "{e}"
        );
        let e = &errors("format: 1\nreactions:\n  equation: A -> B\n")[0];
        assert_eq!(e.path, "reactions");
        assert!(e.accepted.contains("- equation"), "{e}");
    }

    #[test]
    fn syntax_errors_name_the_open_key_and_a_likely_cause() {
        let e =
            &errors("format: 1\ncharge:\n  amounts: { A: 9 kmol\n\nvessel:\n  bottom: flat\n")[0];
        assert_eq!(e.path, "charge.amounts");
        assert!(e.message.starts_with("YAML syntax error: "), "{e}");
        assert!(e.message.contains("closing }"), "{e}");
        let e = &errors("format: 1\ncharge:\n\tmass: 1 kg\n")[0];
        assert!(e.message.contains("tab"), "{e}");
        let e = &errors("format: 1\ntitle: Step: two\n")[0];
        assert_eq!(e.path, "title");
        assert!(e.message.contains("needs quotes"), "{e}");
        let e = &errors("format: 1\ntitle: a\x01b\n")[0];
        assert_eq!(e.position, Position { line: 2, column: 9 });
        assert!(e.message.contains("U+0001"), "{e}");
        let e = &errors("format: 1\ncharge: 5\n")[0];
        assert!(e.message.contains("found the value 5 where"), "{e}");
        let e = &errors("format: 1\ncharge:\n  mass: *m\n")[0];
        assert_eq!(e.path, "charge.mass");
        assert!(e.message.contains("alias \"*m\" names no anchor"), "{e}");
    }
}
