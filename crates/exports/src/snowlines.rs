//! The snowline listing (`nivalis snowlines`): every midplane crossing of each
//! species with its direction, and each species' snow surface per radius.

use crate::provenance::Provenance;
use nivalis_physics::units::AU_CM;
use nivalis_physics::{Model, SnowSurface, Species};
use serde_json::{json, Map, Value};

/// JSON `{"snowlines": {...}, "snowline_directions": {...}, "snowline_out_of_equilibrium": {...},
/// "snow_surfaces": {...}}` plus provenance. `snowline_out_of_equilibrium` holds, per species and
/// snowline, whether the ice there has not reached its equilibrium within the disk's age
/// (`Model::snowline_out_of_equilibrium`); `disk_age_myr` and `initial_state` say what was assumed.
/// Snow surfaces per species: arrays over the radial cells of `radius_au`,
/// `height_au` and `z_over_r` (null where there is none) and `status`
/// (`surface`, `midplane_not_frozen` or `above_grid`). `soot_line` gives the
/// soot-line picture, its temperature and, when irreversible, the furthest
/// radius the early phase's soot line reached (`early_phase_radius_au`, null
/// when it never did; docs/model.md section 8).
pub fn snowlines_json(model: &Model, provenance: &Provenance) -> Value {
    let mut lines = Map::new();
    let mut directions = Map::new();
    let mut out_of_equilibrium = Map::new();
    let mut surfaces = Map::new();
    let st = &model.structure();
    for s in Species::ALL {
        let found = model.snowlines(s);
        lines.insert(
            s.key().into(),
            json!(found
                .iter()
                .map(|l| l.radius_cm / AU_CM)
                .collect::<Vec<_>>()),
        );
        directions.insert(
            s.key().into(),
            json!(found.iter().map(|l| l.direction.key()).collect::<Vec<_>>()),
        );
        out_of_equilibrium.insert(
            s.key().into(),
            json!(found
                .iter()
                .map(|l| model.snowline_out_of_equilibrium(s, l))
                .collect::<Vec<_>>()),
        );
        let mut height = Vec::with_capacity(st.radial_cells());
        let mut z_over_r = Vec::with_capacity(st.radial_cells());
        let mut status = Vec::with_capacity(st.radial_cells());
        for j in 0..st.radial_cells() {
            match model.snow_surface(s, j) {
                SnowSurface::Height(z) => {
                    height.push(json!(z / AU_CM));
                    z_over_r.push(json!(z / st.radius_cm()[j]));
                    status.push("surface");
                }
                SnowSurface::MidplaneNotFrozen => {
                    height.push(Value::Null);
                    z_over_r.push(Value::Null);
                    status.push("midplane_not_frozen");
                }
                SnowSurface::AboveGrid => {
                    height.push(Value::Null);
                    z_over_r.push(Value::Null);
                    status.push("above_grid");
                }
            }
        }
        surfaces.insert(
            s.key().into(),
            json!({
                "radius_au": st.radius_cm().iter().map(|r| r / AU_CM).collect::<Vec<_>>(),
                "height_au": height,
                "z_over_r": z_over_r,
                "status": status,
            }),
        );
    }
    json!({
        "program": provenance.program,
        "disk_hash": provenance.disk_hash,
        "snowlines": lines,
        "snowline_directions": directions,
        "snowline_out_of_equilibrium": out_of_equilibrium,
        "disk_age_myr": model.parameters().disk.age_myr,
        "initial_state": model.parameters().ices.initial_state.key(),
        "snow_surfaces": surfaces,
        "soot_line": {
            "kind": model.parameters().composition.soot_line.key(),
            "temperature_k": model.parameters().composition.soot_line_k,
            "early_phase_radius_au": st.early_soot_line_radius_cm().map(|r| r / AU_CM),
        },
    })
}
