//! Any bytes as STL: read, weld and inspect. Errors are fine; panics are bugs.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    if let Ok(soup) = blanksmith::stl::read(data) {
        let _ = blanksmith::inspect::check::inspect_soup(&soup, None);
    }
});
