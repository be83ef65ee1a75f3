//! The delimited-table importer: events CSV bytes, then (after a NUL byte) outcomes CSV bytes.
#![no_main]

#[path = "../../tests/common/fuzz_checks.rs"]
mod fuzz_checks;

libfuzzer_sys::fuzz_target!(|data: &[u8]| {
    fuzz_checks::run_csv(data);
});
