//! Bringing a computed [`Model`] to edited parameters by re-running only the
//! stages whose inputs changed (issue 9 item 7): the page's edit path, and any
//! front end that recomputes one disk many times (sweeps, uncertainty runs).
//!
//! Which stage reads which inputs (docs/model.md sections 3-8):
//! - the structure ([`crate::DiskStructure::compute`]) reads the star, the disk and the grid;
//! - the composition ([`crate::Composition::uniform`]) reads the star's abundances and the
//!   composition parameters (and, for the irreversible soot line, the structure);
//! - the ice balance reads the structure, the composition and the ice parameters.
//!
//! So an edit of the ice parameters alone keeps the structure and the composition
//! ([`Model::set_ices`]); an edit of the composition alone keeps the structure
//! ([`Model::set_composition`]); anything else (any star, disk or grid field) runs
//! the whole model. Each staged path is equal bit for bit to [`Model::run`] of the
//! edited parameters (the core's contract, checked by the tests below).

use crate::error::PhysicsError;
use crate::finite::check_finite;
use crate::model::Model;
use crate::params::ModelParameters;

/// The stages an edit re-ran.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Rerun {
    /// The parameters were equal: nothing was recomputed.
    Nothing,
    /// Only the ice balance ([`Model::set_ices`]).
    Ices,
    /// The composition and the ice balance ([`Model::set_composition`], then
    /// [`Model::set_ices`] when the ice parameters changed as well).
    Composition,
    /// The whole model ([`Model::run`]).
    Everything,
}

impl Rerun {
    /// Whether the disk structure (grid, temperature, density, radiation) was recomputed.
    pub fn structure_changed(self) -> bool {
        self == Rerun::Everything
    }

    /// Whether anything was recomputed.
    pub fn anything_changed(self) -> bool {
        self != Rerun::Nothing
    }

    /// A short name: `nothing`, `ices`, `composition` or `everything`.
    pub fn key(self) -> &'static str {
        match self {
            Rerun::Nothing => "nothing",
            Rerun::Ices => "ices",
            Rerun::Composition => "composition",
            Rerun::Everything => "everything",
        }
    }
}

/// The stages that must re-run to bring a model of `old` parameters to `new` ones.
pub fn stages_to_rerun(old: &ModelParameters, new: &ModelParameters) -> Rerun {
    if old == new {
        Rerun::Nothing
    } else if old.star != new.star || old.disk != new.disk || old.grid != new.grid {
        Rerun::Everything
    } else if old.composition != new.composition {
        Rerun::Composition
    } else {
        Rerun::Ices
    }
}

/// Brings `model` to `parameters`, re-running only the stages whose inputs changed
/// (see [`stages_to_rerun`]), and returns what it re-ran. The result equals
/// `Model::run(parameters)` bit for bit. On an error (a composition the star cannot
/// fill, a non-finite result, a failed run) `model` is left as it was.
pub fn rerun(model: &mut Model, parameters: &ModelParameters) -> Result<Rerun, PhysicsError> {
    let stages = stages_to_rerun(model.parameters(), parameters);
    match stages {
        Rerun::Nothing => {}
        Rerun::Everything => model.run_into(parameters)?,
        Rerun::Ices => {
            let previous = model.parameters().ices.clone();
            model.set_ices(&parameters.ices);
            if let Err(e) = check_ices_finite(model) {
                model.set_ices(&previous);
                return Err(e);
            }
        }
        Rerun::Composition => {
            let previous = model.parameters().clone();
            // Leaves the model as it was on an error.
            model.set_composition(&parameters.composition)?;
            if previous.ices != parameters.ices {
                model.set_ices(&parameters.ices);
            }
            if let Err(e) = check_ices_finite(model) {
                model.set_ices(&previous.ices);
                // Restoring the composition that ran before cannot fail.
                let _ = model.set_composition(&previous.composition);
                return Err(e);
            }
        }
    }
    Ok(stages)
}

/// [`check_finite`] after a staged edit: the structure it checks is the one the
/// model already passed with, so only the re-solved ice fractions are looked at
/// (a pass over plain slices); on a non-finite value the full check names it.
fn check_ices_finite(model: &Model) -> Result<(), PhysicsError> {
    let ices = model.ices();
    let all_finite = crate::species::Species::ALL
        .iter()
        .all(|&s| ices.ice_fraction(s).iter().all(|v| v.is_finite()));
    if all_finite {
        Ok(())
    } else {
        check_finite(model)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::params::SootLine;

    fn small() -> ModelParameters {
        let mut p = ModelParameters::defaults();
        p.grid.radial_cells = 40;
        p.grid.vertical_cells = 16;
        p
    }

    #[test]
    fn an_ice_edit_reruns_only_the_ices_and_equals_a_full_run() {
        let p = small();
        let mut model = Model::run(&p).unwrap();
        let mut edited = p.clone();
        edited.ices.sticking = 0.5;
        edited.ices.photodesorption = false;
        assert_eq!(rerun(&mut model, &edited).unwrap(), Rerun::Ices);
        assert_eq!(model, Model::run(&edited).unwrap());
    }

    #[test]
    fn a_composition_edit_keeps_the_structure_and_equals_a_full_run() {
        let p = small();
        let mut model = Model::run(&p).unwrap();
        let mut edited = p.clone();
        edited.composition.carbon.co = 0.25;
        edited.composition.carbon.co2 = 0.15;
        edited.composition.soot_line = SootLine::Reversible;
        edited.ices.sticking = 0.7;
        assert_eq!(rerun(&mut model, &edited).unwrap(), Rerun::Composition);
        assert_eq!(model, Model::run(&edited).unwrap());
    }

    #[test]
    fn a_structure_edit_runs_everything_and_no_edit_runs_nothing() {
        let p = small();
        let mut model = Model::run(&p).unwrap();
        assert_eq!(rerun(&mut model, &p).unwrap(), Rerun::Nothing);
        let mut edited = p.clone();
        edited.star.luminosity_lsun = 2.0;
        assert_eq!(rerun(&mut model, &edited).unwrap(), Rerun::Everything);
        assert!(Rerun::Everything.structure_changed());
        assert_eq!(model, Model::run(&edited).unwrap());
    }

    #[test]
    fn a_failed_composition_edit_leaves_the_model_as_it_was() {
        let p = small();
        let mut model = Model::run(&p).unwrap();
        let before = model.clone();
        let mut edited = p.clone();
        // More HCN than the star's nitrogen allows (PhysicsError::NitrogenExhausted).
        edited.composition.carbon.hcn = 0.5;
        edited.composition.carbon.refractory = 0.0;
        edited.composition.carbon.co = 0.2;
        edited.composition.carbon.co2 = 0.1;
        edited.composition.carbon.ch4 = 0.1;
        edited.composition.carbon.ch3oh = 0.1;
        assert!(rerun(&mut model, &edited).is_err());
        assert_eq!(model, before);
    }
}
