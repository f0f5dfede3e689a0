//! Arbitrary text through the unit and quantity parsers. Both must return Ok or Err for any
//! input, never panic.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let _ = exoscreen::case::units::parse_unit(text);
    let _ = exoscreen::case::units::parse_quantity(text);
});
