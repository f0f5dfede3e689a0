//! Arbitrary bytes through the case loader (YAML, positions, schema, validation). A case that
//! loads is dropped at once: running the model is far too slow for fuzzing.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    // Invalid UTF-8 becomes U+FFFD rather than being skipped, so byte-level mutations that
    // break a sequence still reach the loader.
    let text = String::from_utf8_lossy(data);
    let _ = exoscreen::case::load::load_case_text(&text, "fuzz.yaml");
});
