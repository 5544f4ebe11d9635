//! A supplier CSV through a column map, and the import dialog's preview.
#![no_main]
use libfuzzer_sys::fuzz_target;
mod common;

fuzz_target!(|data: &[u8]| {
    let map = common::pressure_map();
    common::check(mortise::io::csv::read_mapped(data, common::FILE, &map, "c"));
    common::check(mortise::io::csv::preview(data, common::FILE, &map, 5));
});
