//! Where each key path of a YAML document stands (line and column), for error messages.
//!
//! serde_yaml reports positions for structural errors only; an error found later, while
//! checking a value, needs the position of that value. This walks the document's event
//! stream once (yaml-rust2 keeps markers) and records the position of every value by its
//! key path, written as the error messages write it: `reactions[0].activation_energy`.

use std::collections::HashMap;
use yaml_rust2::parser::{Event, MarkedEventReceiver, Parser};
use yaml_rust2::scanner::Marker;

/// A 1-based line and column in the case file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Position {
    pub line: usize,
    pub column: usize,
}

/// Positions of the values of a document, by key path.
#[derive(Debug, Default, Clone)]
pub struct PositionMap {
    values: HashMap<String, Position>,
}

impl PositionMap {
    /// Reads the positions of `text`; a document that does not parse gives an empty map
    /// (serde_yaml then reports the syntax error with its own position).
    pub fn of_document(text: &str) -> PositionMap {
        let mut walker = Walker::default();
        let mut parser = Parser::new_from_str(text);
        if parser.load(&mut walker, false).is_err() {
            return PositionMap::default();
        }
        PositionMap {
            values: walker.values,
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
    },
    Sequence {
        path: String,
        next_index: usize,
    },
}

#[derive(Debug, Default)]
struct Walker {
    stack: Vec<Frame>,
    values: HashMap<String, Position>,
}

impl Walker {
    /// The path the next value takes, or None when the next scalar is a mapping key.
    fn next_value_path(&mut self) -> Option<String> {
        match self.stack.last_mut() {
            None => Some(String::new()),
            Some(Frame::Mapping { path, pending_key }) => {
                pending_key.take().map(|key| join_key(path, &key))
            }
            Some(Frame::Sequence { path, next_index }) => {
                let item = format!("{path}[{next_index}]");
                *next_index += 1;
                Some(item)
            }
        }
    }

    fn record(&mut self, path: &str, mark: Marker) {
        let position = Position {
            line: mark.line(),
            column: mark.col() + 1,
        };
        self.values.insert(path.to_string(), position);
    }

    fn on_scalar(&mut self, text: String, mark: Marker) {
        match self.next_value_path() {
            Some(path) => self.record(&path, mark),
            None => {
                if let Some(Frame::Mapping { path, pending_key }) = self.stack.last_mut() {
                    let key_path = join_key(path, &text);
                    *pending_key = Some(text);
                    let position = Position {
                        line: mark.line(),
                        column: mark.col() + 1,
                    };
                    self.values.entry(key_path).or_insert(position);
                }
            }
        }
    }

    fn on_collection_start(&mut self, mark: Marker, is_mapping: bool) {
        // A collection used as a mapping key has no path of its own; give it one that
        // nothing looks up.
        let path = self
            .next_value_path()
            .unwrap_or_else(|| "<key>".to_string());
        self.record(&path, mark);
        self.stack.push(if is_mapping {
            Frame::Mapping {
                path,
                pending_key: None,
            }
        } else {
            Frame::Sequence {
                path,
                next_index: 0,
            }
        });
    }
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
        match event {
            Event::Scalar(text, ..) => self.on_scalar(text, mark),
            Event::Alias(_) => self.on_scalar(String::new(), mark),
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
    }

    #[test]
    fn an_unknown_path_falls_back_to_its_parent() {
        let map = PositionMap::of_document(DOC);
        assert_eq!(map.find("vessel.missing_key").line, 3);
        assert_eq!(map.find("reactions[1].orders.A").line, 8);
    }

    #[test]
    fn a_broken_document_gives_an_empty_map() {
        let map = PositionMap::of_document("a: [1, 2\nb: {");
        assert_eq!(map.find("a"), Position::default());
    }
}
