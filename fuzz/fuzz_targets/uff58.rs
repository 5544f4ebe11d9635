//! UFF dataset 58 ASCII and 58b binary: the reader with components from the
//! entity names, and the dataset scanner on its own.
#![no_main]
use libfuzzer_sys::fuzz_target;
mod common;

fuzz_target!(|data: &[u8]| {
    common::check(mortise::io::uff58::read_with(data, common::FILE, None));
    common::check(mortise::io::uff58::parse_datasets(data, common::FILE));
});
