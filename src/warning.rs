//! A warning: a stable code for machines and a plain sentence for people.

use serde::Serialize;

#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Warning {
    pub code: String,
    pub message: String,
}

impl Warning {
    pub fn new(code: &str, message: impl Into<String>) -> Warning {
        Warning {
            code: code.to_string(),
            message: message.into(),
        }
    }
}
