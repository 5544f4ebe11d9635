//! Our own CSV layout, `mortise-frf 1`.
#![no_main]
use libfuzzer_sys::fuzz_target;
mod common;

fuzz_target!(|data: &[u8]| {
    common::check(mortise::io::csv::read_native(data, common::FILE));
});
