//! Helpers shared by the tests that run the exoscreen binary.
#![allow(dead_code)]

use assert_cmd::Command;
use std::path::Path;

pub const DEMO: &str = "cases/bromination-semibatch.yaml";

pub fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// The binary, run from the project root.
pub fn exoscreen() -> Command {
    let mut command = Command::cargo_bin("exoscreen").expect("the exoscreen binary is built");
    command.current_dir(root());
    command
}

/// What one run of the binary printed and exited with.
pub struct Run {
    pub code: Option<i32>,
    pub stdout: String,
    pub stderr: String,
}

/// Runs the binary with `args`.
pub fn run(args: &[&str]) -> Run {
    let output = exoscreen().args(args).output().expect("exoscreen runs");
    Run {
        code: output.status.code(),
        stdout: String::from_utf8_lossy(&output.stdout).into_owned(),
        stderr: String::from_utf8_lossy(&output.stderr).into_owned(),
    }
}
