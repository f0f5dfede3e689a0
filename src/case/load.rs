//! Reading a case file: YAML into the raw schema, structural errors placed in the file, then
//! the whole case checked by `validate`. serde_yaml stays behind this one module.

use super::Case;
use super::error::{CaseError, InputError};
use super::positions::{Position, PositionMap};
use super::schema::RawCase;
use super::validate::validate;
use std::path::Path;

/// Largest case file accepted: far above any real case, small enough to read at once.
const MAX_CASE_BYTES: u64 = 4 * 1024 * 1024;

/// Loads and checks the case at `path`.
pub fn load_case_file(path: &Path) -> Result<Case, CaseError> {
    let file = path.display().to_string();
    let text = read_text(path, &file)?;
    load_case_text(&text, &file)
}

/// Loads and checks a case given as text; `file` names it in messages.
pub fn load_case_text(text: &str, file: &str) -> Result<Case, CaseError> {
    if text.trim().is_empty() {
        return Err(whole_file_error(file, "the case file is empty"));
    }
    let raw: RawCase = serde_yaml::from_str(text)
        .map_err(|e| CaseError::Invalid(vec![structural_error(&e, file)]))?;
    let positions = PositionMap::of_document(text);
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

fn whole_file_error(file: &str, message: &str) -> CaseError {
    CaseError::Invalid(vec![InputError {
        file: file.to_string(),
        position: Position { line: 1, column: 1 },
        path: String::new(),
        message: message.to_string(),
        accepted: "a YAML case file, format 1 (see the README's case reference)".to_string(),
    }])
}

/// Turns a serde_yaml error into an input error with its path and position.
fn structural_error(error: &serde_yaml::Error, file: &str) -> InputError {
    let position = error
        .location()
        .map(|l| Position {
            line: l.line(),
            column: l.column(),
        })
        .unwrap_or(Position { line: 1, column: 1 });
    let text = strip_location(&error.to_string());
    let (path, message) = split_path(&text);
    let (path, accepted) = match unknown_field(message) {
        Some((field, expected)) => (join(path, field), expected),
        None => (path.to_string(), String::new()),
    };
    InputError {
        file: file.to_string(),
        position,
        path,
        message: tidy_message(message),
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

/// From "unknown field `x`, expected one of `a`, `b`" take the field and the list.
fn unknown_field(message: &str) -> Option<(&str, String)> {
    let rest = message.strip_prefix("unknown field `")?;
    let (field, tail) = rest.split_once('`')?;
    let expected = tail
        .trim_start_matches(", ")
        .trim_start_matches("expected one of ")
        .trim_start_matches("expected ")
        .replace('`', "");
    Some((field, format!("one of the keys {expected}")))
}

fn join(parent: &str, key: &str) -> String {
    if parent.is_empty() || parent == "." {
        key.to_string()
    } else {
        format!("{parent}.{key}")
    }
}

fn tidy_message(message: &str) -> String {
    if let Some(rest) = message.strip_prefix("unknown field `") {
        let field = rest.split('`').next().unwrap_or("");
        return format!("unknown key \"{field}\"");
    }
    message.replace('`', "\"")
}
