//! The model-file loader (`models::file::model_from_bytes`) and a first use of what it loads.
#![no_main]

#[path = "../../tests/common/fuzz_checks.rs"]
mod fuzz_checks;

libfuzzer_sys::fuzz_target!(|data: &[u8]| {
    let _ = fuzz_checks::run_model(data);
});
