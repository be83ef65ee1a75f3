//! The JSON Lines events importer.
#![no_main]

#[path = "../../tests/common/fuzz_checks.rs"]
mod fuzz_checks;

libfuzzer_sys::fuzz_target!(|data: &[u8]| {
    fuzz_checks::run_jsonl(data);
});
