//! Any text as a board description: read, resolve, and (when it is a
//! board) mesh coarsely. Errors are fine; panics are bugs.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    if let Ok(text) = std::str::from_utf8(data) {
        if let Ok(board) = blanksmith::description::board_from_str(text, "fuzz.yaml") {
            let _ = blanksmith::meshing::mesher::mesh_board(&board, 1.0);
        }
    }
});
