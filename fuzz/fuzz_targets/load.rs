//! The entry of every file: format detection and `io::load`, without and
//! with a column map.
#![no_main]
use libfuzzer_sys::fuzz_target;
use mortise::io::{self, ImportOptions};
mod common;

fuzz_target!(|data: &[u8]| {
    common::check(io::detect(data, common::FILE));
    common::check(io::load(data, common::FILE, &ImportOptions::default()));
    let with_map = ImportOptions {
        column_map: Some(common::pressure_map()),
        ..ImportOptions::default()
    };
    common::check(io::load(data, common::FILE, &with_map));
});
