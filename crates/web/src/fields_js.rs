//! The disk file's field table for the page (issue 9 item 2): a second
//! `#[wasm_bindgen] impl` block of `Explorer`, so `web/app.js` builds its
//! controls from `Explorer.fieldTable()` and keeps no copy of the schema, the
//! defaults or the species list of its own.

use wasm_bindgen::prelude::*;

use crate::explorer::{to_js, Explorer};

#[wasm_bindgen]
impl Explorer {
    /// Every field of the disk file as `nivalis_disk_files::fields_json` lists
    /// it: `[{path, key, parent, kind, label, unit, allowed, range, reason,
    /// constraint, options, default, default_note, source, slider, page,
    /// optional}]`, objects before their fields, in the writer's order.
    #[wasm_bindgen(js_name = fieldTable)]
    pub fn field_table() -> JsValue {
        to_js(&nivalis_disk_files::fields_json())
    }
}
