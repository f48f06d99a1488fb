//! Fuzz target: the disk-file reader must never panic on any input, must
//! report at least one problem for every rejected file, and every file it
//! accepts must write back to a resolved file that reads back identically.
//! Accepted files with small grids are also run through the model, which must
//! not panic and must give finite temperatures.
#![no_main]

use libfuzzer_sys::fuzz_target;
use nivalis_disk_files::{parse_disk_json, to_json_string};

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else { return };
    match parse_disk_json(text) {
        Err(problems) => assert!(!problems.0.is_empty()),
        Ok(file) => {
            let again = parse_disk_json(&to_json_string(&file)).expect("resolved file reads back");
            assert_eq!(again, file);
            let g = &file.parameters.grid;
            if g.radial_cells * g.vertical_cells <= 4096 {
                if let Ok(model) = nivalis_physics::Model::run(&file.parameters) {
                    assert!(model.structure().samples.temperature_k.iter().all(|t| t.is_finite() && *t > 0.0));
                }
            }
        }
    }
});
