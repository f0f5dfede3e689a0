//! Where each key path of a YAML document stands (line and column), for error messages.
//!
//! serde_yaml reports positions for structural errors only; an error found later, while
//! checking a value, needs the position of that value. This walks the document's event
//! stream once (yaml-rust2 keeps markers) and records the position of every value by its
//! key path, written as the error messages write it: `reactions[0].activation_energy`.
//! The same walk notes what serde would not tell: keys written twice, a second document,
//! the shape of the top-level value, and where a syntax error left the document.

use std::collections::HashMap;
use yaml_rust2::parser::{Event, MarkedEventReceiver, Parser};
use yaml_rust2::scanner::{Marker, TScalarStyle};

/// A 1-based line and column in the case file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub struct Position {
    pub line: usize,
    pub column: usize,
}

impl Position {
    /// The start of the file, where whole-file errors are placed.
    pub const START: Position = Position { line: 1, column: 1 };
}

impl Default for Position {
    fn default() -> Self {
        Position::START
    }
}

/// What the document holds at its top level.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub enum RootShape {
    /// Nothing but comments, blank lines or an explicit null.
    #[default]
    Empty,
    Mapping,
    List,
    /// A single value such as a word or a number.
    Scalar(String),
}

/// Positions of the values of a document, by key path.
#[derive(Debug, Default, Clone)]
pub struct PositionMap {
    values: HashMap<String, Position>,
    keys: HashMap<String, Position>,
    root: RootShape,
    duplicates: Vec<(String, Position)>,
    second_document: Option<Position>,
    /// Set when the document does not parse: the innermost key path open at that point.
    broken_at: Option<String>,
}

impl PositionMap {
    /// Reads the positions of `text`. A document that does not parse keeps the positions
    /// read before the problem and notes the key path that was open there (serde_yaml
    /// reports the syntax error itself, with its own position).
    pub fn of_document(text: &str) -> PositionMap {
        let mut walker = Walker::default();
        let mut parser = Parser::new_from_str(text);
        let broken_at = match parser.load(&mut walker, true) {
            Ok(()) => None,
            Err(error) => {
                let line = text.lines().nth(error.marker().line().saturating_sub(1));
                Some(walker.open_path(line.and_then(leading_key)))
            }
        };
        PositionMap {
            values: walker.values,
            keys: walker.keys,
            root: walker.root,
            duplicates: walker.duplicates,
            second_document: walker.second_document,
            broken_at,
        }
    }

    /// The position of the value at `path`, or of its nearest enclosing value.
    pub fn find(&self, path: &str) -> Position {
        let mut probe = path.to_string();
        loop {
            if let Some(position) = self.values.get(&probe) {
                return *position;
            }
            match parent_path(&probe) {
                Some(parent) => probe = parent,
                None => return self.values.get("").copied().unwrap_or_default(),
            }
        }
    }

    /// The position of the key that ends `path`, if the document writes that key.
    pub fn key(&self, path: &str) -> Option<Position> {
        self.keys.get(path).copied()
    }

    /// What the top level of the document holds.
    pub fn root(&self) -> &RootShape {
        &self.root
    }

    /// Keys written twice in one mapping: the key path and the second occurrence.
    pub fn duplicates(&self) -> &[(String, Position)] {
        &self.duplicates
    }

    /// Where a second YAML document starts, if the file holds more than one.
    pub fn second_document(&self) -> Option<Position> {
        self.second_document
    }

    /// For a document that does not parse: the key path open where parsing stopped
    /// (empty at the top level).
    pub fn broken_at(&self) -> Option<&str> {
        self.broken_at.as_deref()
    }
}

/// `a.b[2].c` -> `a.b[2]` -> `a.b` -> `a` -> `` -> none.
fn parent_path(path: &str) -> Option<String> {
    if path.is_empty() {
        return None;
    }
    let cut = path.rfind(['.', '[']).unwrap_or(0);
    Some(path[..cut].to_string())
}

/// One open collection while walking the events.
#[derive(Debug)]
enum Frame {
    Mapping {
        path: String,
        pending_key: Option<String>,
        /// No key seen yet: a block mapping's start marker stands at the first key's colon,
        /// so the first key's own position replaces it.
        first_key: bool,
    },
    Sequence {
        path: String,
        next_index: usize,
    },
}

impl Frame {
    fn path(&self) -> &str {
        match self {
            Frame::Mapping { path, .. } | Frame::Sequence { path, .. } => path,
        }
    }
}

/// Where the walk is in the stream of documents.
#[derive(Debug, Default, PartialEq)]
enum Stage {
    #[default]
    Before,
    InFirst,
    AfterFirst,
}

#[derive(Debug, Default)]
struct Walker {
    stack: Vec<Frame>,
    values: HashMap<String, Position>,
    keys: HashMap<String, Position>,
    root: RootShape,
    duplicates: Vec<(String, Position)>,
    second_document: Option<Position>,
    stage: Stage,
}

fn position_of(mark: Marker) -> Position {
    Position {
        line: mark.line(),
        column: mark.col() + 1,
    }
}

/// A collection used as a mapping key has no path of its own; it gets one nothing looks up.
const COMPLEX_KEY: &str = "<key>";

impl Walker {
    /// The path the next value takes, or None when the next scalar is a mapping key.
    fn next_value_path(&mut self) -> Option<String> {
        match self.stack.last_mut() {
            None => Some(String::new()),
            Some(Frame::Mapping {
                path, pending_key, ..
            }) => pending_key.take().map(|key| join_key(path, &key)),
            Some(Frame::Sequence { path, next_index }) => {
                let item = format!("{path}[{next_index}]");
                *next_index += 1;
                Some(item)
            }
        }
    }

    /// The innermost open key path: the pending key if there is one; else, in a block
    /// mapping whose keys stand in the column of `line_key` (the key the broken line starts
    /// with, and its column), that key; else the collection.
    fn open_path(&self, line_key: Option<(&str, usize)>) -> String {
        let line_key = line_key.and_then(|(key, column)| {
            let path = self.stack.last()?.path();
            let start = self.values.get(path)?;
            (start.column == column).then_some(key)
        });
        match (self.stack.last(), line_key) {
            (None, _) => String::new(),
            (
                Some(Frame::Mapping {
                    path,
                    pending_key: Some(key),
                    ..
                }),
                _,
            ) => join_key(path, key),
            (Some(Frame::Mapping { path, .. }), Some(key)) => join_key(path, key),
            (Some(frame), _) => frame.path().to_string(),
        }
    }

    fn record(&mut self, path: &str, mark: Marker) {
        self.values.insert(path.to_string(), position_of(mark));
    }

    fn on_key(&mut self, text: String, mark: Marker) {
        let position = position_of(mark);
        let Some(Frame::Mapping {
            path,
            pending_key,
            first_key,
        }) = self.stack.last_mut()
        else {
            return;
        };
        let key_path = join_key(path, &text);
        if std::mem::take(first_key) {
            let start = self.values.entry(path.clone()).or_insert(position);
            if position < *start {
                *start = position;
            }
        }
        *pending_key = Some(text);
        if key_path.contains(COMPLEX_KEY) {
            return;
        }
        if self.keys.contains_key(&key_path) {
            self.duplicates.push((key_path, position));
        } else {
            self.keys.insert(key_path.clone(), position);
            self.values.entry(key_path).or_insert(position);
        }
    }

    fn on_scalar(&mut self, text: String, style: Option<TScalarStyle>, mark: Marker) {
        if self.stack.is_empty() {
            self.root = match (style, text.as_str()) {
                (Some(TScalarStyle::Plain) | None, "" | "~" | "null" | "Null" | "NULL") => {
                    RootShape::Empty
                }
                _ => RootShape::Scalar(text.clone()),
            };
        }
        match self.next_value_path() {
            Some(path) => self.record(&path, mark),
            None => self.on_key(text, mark),
        }
    }

    fn on_collection_start(&mut self, mark: Marker, is_mapping: bool) {
        if self.stack.is_empty() {
            self.root = if is_mapping {
                RootShape::Mapping
            } else {
                RootShape::List
            };
        }
        let path = match self.next_value_path() {
            Some(path) => path,
            None => {
                // A collection as a mapping key: take its place as the pending key.
                if let Some(Frame::Mapping { pending_key, .. }) = self.stack.last_mut() {
                    *pending_key = Some(COMPLEX_KEY.to_string());
                }
                COMPLEX_KEY.to_string()
            }
        };
        self.record(&path, mark);
        self.stack.push(if is_mapping {
            Frame::Mapping {
                path,
                pending_key: None,
                first_key: true,
            }
        } else {
            Frame::Sequence {
                path,
                next_index: 0,
            }
        });
    }
}

/// The plain key a line starts with and its column (`  title: x` -> `title`, 3).
fn leading_key(line: &str) -> Option<(&str, usize)> {
    let body = line.trim_start_matches(' ');
    let end = body.find(':')?;
    let key = &body[..end];
    let plain = !key.is_empty()
        && key
            .chars()
            .all(|c| c.is_alphanumeric() || c == '_' || c == '-');
    plain.then_some((key, line.len() - body.len() + 1))
}

fn join_key(parent: &str, key: &str) -> String {
    if parent.is_empty() {
        key.to_string()
    } else {
        format!("{parent}.{key}")
    }
}

impl MarkedEventReceiver for Walker {
    fn on_event(&mut self, event: Event, mark: Marker) {
        match (&self.stage, &event) {
            (Stage::Before, Event::DocumentStart) => {
                self.stage = Stage::InFirst;
                return;
            }
            (Stage::InFirst, Event::DocumentEnd) => {
                self.stage = Stage::AfterFirst;
                return;
            }
            (Stage::AfterFirst, Event::DocumentStart) => {
                self.second_document.get_or_insert(position_of(mark));
                return;
            }
            (Stage::AfterFirst, _) => return,
            _ => {}
        }
        match event {
            Event::Scalar(text, style, ..) => self.on_scalar(text, Some(style), mark),
            Event::Alias(_) => self.on_scalar("*".to_string(), None, mark),
            Event::MappingStart(..) => self.on_collection_start(mark, true),
            Event::SequenceStart(..) => self.on_collection_start(mark, false),
            Event::MappingEnd | Event::SequenceEnd => {
                self.stack.pop();
            }
            _ => {}
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const DOC: &str = "title: x\nvessel:\n  diameter: 1.6 m\n  bottom: flat\nreactions:\n  - equation: A -> B\n    enthalpy: -95 kJ/mol\n  - equation: B -> C\n";

    #[test]
    fn nested_keys_and_list_items_have_their_lines() {
        let map = PositionMap::of_document(DOC);
        assert_eq!(map.find("vessel.diameter").line, 3);
        assert_eq!(map.find("vessel.diameter").column, 13);
        assert_eq!(map.find("reactions[0].enthalpy").line, 7);
        assert_eq!(map.find("reactions[1].equation").line, 8);
        assert_eq!(map.root(), &RootShape::Mapping);
        assert_eq!(map.broken_at(), None);
    }

    #[test]
    fn a_block_mapping_starts_at_its_first_key() {
        let map = PositionMap::of_document(DOC);
        assert_eq!(map.find(""), Position { line: 1, column: 1 });
        assert_eq!(map.find("vessel"), Position { line: 3, column: 3 });
        assert_eq!(map.find("reactions[0]"), Position { line: 6, column: 5 });
        assert_eq!(
            map.key("vessel.bottom"),
            Some(Position { line: 4, column: 3 })
        );
        assert_eq!(map.key("vessel.heat_capacity"), None);
    }

    #[test]
    fn an_unknown_path_falls_back_to_its_parent() {
        let map = PositionMap::of_document(DOC);
        assert_eq!(map.find("vessel.missing_key").line, 3);
        assert_eq!(map.find("reactions[1].orders.A").line, 8);
    }

    #[test]
    fn a_broken_document_keeps_what_came_before_and_the_open_path() {
        let map = PositionMap::of_document("a: 1\nb: { c: 2\nd: 3\n");
        assert_eq!(map.find("a"), Position { line: 1, column: 4 });
        assert_eq!(map.broken_at(), Some("b"));
        let colon = PositionMap::of_document("a: 1\ntitle: Step: two\n");
        assert_eq!(colon.broken_at(), Some("title"));
        let empty = PositionMap::of_document("a: [1, 2\nb: {");
        assert_eq!(empty.find("zzz"), Position::START);
    }

    #[test]
    fn duplicate_keys_are_noted_at_their_second_place() {
        let map = PositionMap::of_document("a:\n  b: 1\n  c: 2\n  b: 3\n");
        assert_eq!(
            map.duplicates(),
            &[("a.b".to_string(), Position { line: 4, column: 3 })]
        );
    }

    #[test]
    fn the_shape_of_the_top_level_is_known() {
        assert_eq!(
            PositionMap::of_document("# only\n").root(),
            &RootShape::Empty
        );
        assert_eq!(PositionMap::of_document("~\n").root(), &RootShape::Empty);
        assert_eq!(PositionMap::of_document("- a\n").root(), &RootShape::List);
        assert_eq!(
            PositionMap::of_document("hello\n").root(),
            &RootShape::Scalar("hello".to_string())
        );
    }

    #[test]
    fn a_second_document_is_noted() {
        let map = PositionMap::of_document("a: 1\n---\nb: 2\n");
        assert_eq!(map.second_document().map(|p| p.line), Some(2));
        assert_eq!(map.key("b"), None);
        assert_eq!(
            PositionMap::of_document("---\na: 1\n").second_document(),
            None
        );
    }
}
