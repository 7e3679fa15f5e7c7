//! Any bytes as a G-code program: read it, and simulate what reads on a
//! small block. Errors are fine; panics are bugs.
#![no_main]

use blanksmith::model::job::Block;
use blanksmith::profiles::machine as profile;
use blanksmith::model::machine::Cutter;
use blanksmith::toolpath::setup::Side;
use blanksmith::verify::setting::{ProgramSource, Setting, VerifyOptions};
use blanksmith::verify::simulate as verify;
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let machine = profile::generic_machine();
    let setting = Setting {
        table_zero_after_flip: false,
        machine: &machine,
        block: Block::flat(60.0, 40.0, 20.0),
        table_position: [0.0, 0.0],
        default_tool: Some(Cutter::ball(6.0)),
        design: None,
        keep: vec![],
        floor: None,
        pockets: vec![],
        prepared: [None, None],
    };
    let sources = vec![ProgramSource { name: "fuzz.nc".into(), side: Side::Deck, reader: Box::new(data), loaded: None }];
    let _ = verify::verify(sources, &setting, VerifyOptions { cell: 1.0, ..Default::default() }, &|_| {});
});
