//! The planet-formation argument (docs/model.md section 9) and the snowline
//! anchor: envelope C/O and metallicity from accreted gas and solids, the
//! chi-square map of formation places, and anchoring a disk to an observed
//! snowline.
//!
//! Sources: the mixing formula and the derived zone table of
//! docs/check-values.md (section 5a, D and C), the step-model picture of
//! Oberg, Murray-Clay & Bergin 2011 (ApJL 743, L16; docs/check-values.md sections 5
//! and 6, V qualitative, M for the figure values), and round trips through the
//! model itself (internal consistency, named as such). Each check names its
//! source and tolerance. Run with `cargo test -p nivalis-tests --test planet`.

use nivalis_physics::anchor::{
    anchor_to_snowline, first_freeze_out_snowline, AnchorParameter, AnchorRequest, SnowlinePosition,
};
use nivalis_physics::params::{Element, ModelParameters};
use nivalis_physics::planet::{
    chi_square_map, planet, AccretedPhases, ConfidenceConvention, MapSettings, Observable,
    ObservedEnvelope, PlanetRequest, RadialWeighting, SigmaLevel,
};
use nivalis_physics::units::{ATOMIC_MASS_UNIT_G, AU_CM, HYDROGEN_MASS_G};
use nivalis_physics::{CrossingDirection, Model, Species};
use nivalis_tests::{assert_abs, assert_rel, small_default};

const C: usize = Element::C as usize;
const O: usize = Element::O as usize;

/// The docs/check-values.md section 5a inputs in the step model (tests/lib.rs `step_model_5a`). Nitrogen and
/// sulfur carry no C or O; to keep each zone's solids the same per gram (not only per H), all N is
/// N2 (which freezes beyond the CO line) and all S is FeS, so no NH3 or H2S line falls inside a zone.
fn step_model_5a() -> ModelParameters {
    let mut p = nivalis_tests::step_model_5a();
    p.composition.nitrogen.n2 = 1.0;
    p.composition.nitrogen.nh3 = 0.0;
    p.composition.sulfur.h2s = 0.0;
    p.composition.sulfur.refractory = 1.0;
    p
}

fn first_freeze_out_au(model: &Model, species: Species) -> f64 {
    model
        .snowlines(species)
        .iter()
        .find(|s| s.direction == CrossingDirection::FreezeOut)
        .expect("a freeze-out snowline")
        .radius_cm
        / AU_CM
}

/// Radii [au] in each step-model zone: (soot line to H2O), (H2O to CO2), (CO2 to CO), (beyond CO), geometric midpoints.
fn zone_radii(model: &Model) -> [f64; 4] {
    let st = &model.structure();
    let soot = nivalis_physics::snowlines::crossings(
        st.radius_cm(),
        st.midplane_temperature_k(),
        500.0,
        true,
        false,
    );
    let r_soot = soot
        .first()
        .map_or(model.parameters().disk.inner_radius_au, |s| {
            s.radius_cm / AU_CM
        });
    let (w, d, c) = (
        first_freeze_out_au(model, Species::H2O),
        first_freeze_out_au(model, Species::CO2),
        first_freeze_out_au(model, Species::CO),
    );
    [
        (r_soot * w).sqrt(),
        (w * d).sqrt(),
        (d * c).sqrt(),
        (c * model.parameters().disk.outer_radius_au).sqrt(),
    ]
}

#[test]
fn pure_gas_accretion_has_the_local_gas_c_to_o() {
    // docs/check-values.md section 5a "Planet C/O by mixing" with no solids (f_s = 0): C/O_p = C_g/O_g, exact (C).
    // Tolerance 1e-12 relative (rounding only). Kinetic default disk and the 5a step model.
    for p in [small_default(), step_model_5a()] {
        let model = Model::run(&p).unwrap();
        for r_au in [0.3, 0.8, 2.5, 9.0, 30.0, 45.0, 150.0] {
            let planet = planet(&model, &PlanetRequest::at(r_au, 0.0)).unwrap();
            let local = model.midplane_at(r_au).unwrap();
            let gas = model.ratios(&local.phases).c_to_o_gas;
            let what = format!("gas-only envelope at {r_au} au ({:?})", p.ices.desorption);
            match gas {
                Some(g) => assert_rel(planet.envelope.c_to_o.unwrap(), g, 1e-12, &what),
                None => assert_eq!(planet.envelope.c_to_o, None, "{what}"),
            }
            // H comes from the gas only, so X/H of a gas-only envelope is the local gas X/H.
            for e in Element::ALL {
                let entry = planet.envelope.element(e);
                assert_eq!(entry.from_solids_atoms, 0.0);
                // Below 1e-9 of the star's X/H the envelope holds exactly 0 (zero up to rounding,
                // docs/model.md section 8).
                let x = local.phases.gas[e as usize];
                let x = if x < 1e-9 * model.stellar_per_h()[e as usize] {
                    0.0
                } else {
                    x
                };
                assert!(
                    (entry.per_h - x).abs() <= 1e-12 * x,
                    "{what}: {e:?}/H {} vs {x}",
                    entry.per_h
                );
            }
        }
    }
}

#[test]
fn pure_solid_accretion_tends_to_the_local_solid_c_to_o() {
    // docs/check-values.md section 5a mixing formula in the limit f_g -> 0: C/O_p -> C_s/O_s (C). The accreted solids'
    // own C/O equals the model's solid (ice + refractory) C/O to 1e-12; a solid-to-gas ratio of 1e12
    // leaves a gas contribution of order 1e-12 x 100 (solids per gram / gas per gram), so 1e-8.
    let model = Model::run(&small_default()).unwrap();
    for r_au in [0.8, 2.5, 9.0, 30.0, 80.0, 150.0] {
        let local = model.midplane_at(r_au).unwrap();
        let solid = model.ratios(&local.phases).c_to_o_solid.unwrap();
        let phases = AccretedPhases::at(&model, r_au).unwrap();
        if solid == 0.0 {
            // Inside the soot line the solids carry no carbon (below 1e-9 of the star's: zero).
            assert_eq!(
                phases.solid_c_to_o(),
                Some(0.0),
                "accreted solids' C/O at {r_au} au"
            );
            continue;
        }
        assert_rel(
            phases.solid_c_to_o().unwrap(),
            solid,
            1e-12,
            &format!("accreted solids' C/O at {r_au} au"),
        );
        let env = planet(&model, &PlanetRequest::at(r_au, 1e12))
            .unwrap()
            .envelope;
        // Absolute scale max(solid C/O, 1): inside the irreversible soot line the solids hold almost no
        // carbon (C/O near 1e-9), where a relative tolerance would only compare rounding noise.
        assert_abs(
            env.c_to_o.unwrap(),
            solid,
            1e-8 * solid.max(1.0),
            &format!("solid-dominated envelope at {r_au} au"),
        );
        assert!(env.element(Element::O).solid_share.unwrap() > 1.0 - 1e-8);
    }
}

#[test]
fn mixtures_lie_between_gas_and_solids_and_move_monotonically() {
    // docs/check-values.md section 5a "Planet C/O by mixing" (C, tested exactly): C/O_p = (f_g C_g + f_s C_s)/(f_g O_g + f_s O_s),
    // f_g = M_gas/(1.4 m_H) and f_s = f_mix M_solid/m_solid_per_H. Recomputed here from the raw local state,
    // to 1e-12; the result lies between the gas and solid C/O and moves monotonically from one to the other
    // as the solid-to-gas ratio grows.
    let model = Model::run(&small_default()).unwrap();
    let ratios: Vec<f64> = (0..=50)
        .map(|k| 10f64.powf(-5.0 + 0.12 * k as f64))
        .collect();
    for r_au in [0.8, 2.5, 9.0, 30.0, 80.0] {
        for f_mix in [1.0, 0.3] {
            let local = model.midplane_at(r_au).unwrap();
            let ph = &local.phases;
            let (cg, og) = (ph.gas[C], ph.gas[O]);
            let (cs, os) = (ph.solid(Element::C), ph.solid(Element::O));
            // Zero up to rounding (issue 11 item 4): below 1e-9 of the star's abundance a phase's
            // element counts as none, as the envelope does (the solids inside the soot line).
            let x = model.stellar_per_h();
            let cs = if cs < 1e-9 * x[C] { 0.0 } else { cs };
            let (gas, solid) = (cg / og, cs / os);
            let mut previous = gas;
            for &q in &ratios {
                let mut req = PlanetRequest::at(r_au, q);
                req.solid_mixing_fraction = f_mix;
                let c_to_o = planet(&model, &req).unwrap().envelope.c_to_o.unwrap();
                let f_g = 1.0 / (1.4 * HYDROGEN_MASS_G);
                let f_s = f_mix * q / (local.solid_mass_per_h_amu * ATOMIC_MASS_UNIT_G);
                let formula = (f_g * cg + f_s * cs) / (f_g * og + f_s * os);
                let what = format!("r = {r_au} au, q = {q:.3e}, f_mix = {f_mix}");
                assert_rel(c_to_o, formula, 1e-12, &format!("mixing formula, {what}"));
                let (lo, hi) = (gas.min(solid), gas.max(solid));
                assert!(
                    c_to_o >= lo * (1.0 - 1e-12) && c_to_o <= hi * (1.0 + 1e-12),
                    "between gas {gas} and solid {solid}: {c_to_o}, {what}"
                );
                let step = (c_to_o - previous) * (solid - gas).signum();
                assert!(
                    step >= -1e-12 * gas,
                    "monotonic toward the solids: {previous} -> {c_to_o}, {what}"
                );
                previous = c_to_o;
            }
        }
    }
}

#[test]
fn oberg_2011_step_model_envelopes() {
    // Oberg, Murray-Clay & Bergin 2011 (ApJL 743, L16), docs/check-values.md section 5 and 6: envelopes accreted from gas
    // outside the H2O snowline have C/O ~ 1, solid-polluted envelopes have stellar or substellar C/O (V,
    // qualitative). The zone values are the 5a derived table (D): gas C/O 0.796 (H2O-CO2), 1.000 (CO2-CO),
    // solid C/O 0.420, 0.434, 0.550 (beyond CO); gas C/H = O/H = 1.000e-4 between the CO2 and CO lines.
    let p = step_model_5a();
    let model = Model::run(&p).unwrap();
    for (s, t) in [
        (Species::H2O, 135.0),
        (Species::CO2, 47.0),
        (Species::CO, 20.0),
    ] {
        assert_eq!(
            model.species_properties()[s.index()].condensation_temperature_k,
            t,
            "Oberg 2011 condensation temperature of {}",
            s.key()
        );
    }
    let [_, r_w_d, r_d_c, r_out] = zone_radii(&model);
    let envelope = |r: f64, q: f64| planet(&model, &PlanetRequest::at(r, q)).unwrap().envelope;
    let star = 10f64.powf(8.43 - 8.69);

    // Between the CO2 and CO lines: a pure-gas envelope has C/O = 1 exactly (CO is the only gas carrier).
    let gas_only = envelope(r_d_c, 0.0);
    assert_rel(
        gas_only.c_to_o.unwrap(),
        1.0,
        1e-12,
        "gas-only envelope between the CO2 and CO lines (5a: 1.000)",
    );
    // [C/H] = log10(1.000e-4 / 2.692e-4) = -0.430 and [O/H] = log10(1.000e-4 / 4.898e-4) = -0.690 (D from 5a).
    assert_abs(
        gas_only.c_to_h_dex().unwrap(),
        -0.430,
        5e-4,
        "[C/H] of the gas-only envelope (5a, D)",
    );
    assert_abs(
        gas_only.o_to_h_dex().unwrap(),
        -0.690,
        5e-4,
        "[O/H] of the gas-only envelope (5a, D)",
    );
    // Gas-dominated (solid-to-gas 1e-4, a hundredth of the disk's own dust-to-gas): C/O stays near 1.
    let gas_dominated = envelope(r_d_c, 1e-4).c_to_o.unwrap();
    assert!(
        gas_dominated > 0.95 && gas_dominated < 1.0,
        "gas-dominated envelope C/O ~ 1 (Oberg 2011): {gas_dominated}"
    );
    // Solid enrichment pulls C/O down toward the solids' 0.434, to stellar or substellar values.
    let mut previous = 1.0;
    for q in [1e-3, 1e-2, 0.1, 1.0] {
        let c_to_o = envelope(r_d_c, q).c_to_o.unwrap();
        assert!(
            c_to_o < previous && c_to_o > 0.434 - 5e-4,
            "q = {q}: {c_to_o} falls toward the solids' 0.434"
        );
        previous = c_to_o;
    }
    assert!(
        previous < star,
        "a solid-dominated envelope (q = 1) is substellar: {previous} < {star}"
    );
    assert_abs(
        previous,
        0.434,
        0.01,
        "q = 1 envelope near the solids' C/O 0.434 (5a)",
    );

    // Between the H2O and CO2 lines the gas C/O is 0.796 (5a; Oberg 2011 Fig. 1 about 0.8, M +- 0.1).
    assert_abs(
        envelope(r_w_d, 0.0).c_to_o.unwrap(),
        0.796,
        5e-4,
        "gas-only envelope between the H2O and CO2 lines",
    );
    assert!(
        envelope(r_w_d, 0.1).c_to_o.unwrap() < star,
        "solid-polluted envelope inside the CO2 line is substellar"
    );

    // Beyond the CO line the gas holds no C or O: a gas-only envelope has undefined C/O (None, not a number),
    // and any solid accretion gives the solids' C/O 0.550 = stellar (5a).
    let cold = envelope(r_out, 0.0);
    assert_eq!(cold.c_to_o, None, "C/O undefined with no oxygen");
    assert_eq!(cold.c_to_h_dex(), None, "[C/H] undefined with no carbon");
    assert_abs(
        envelope(r_out, 0.01).c_to_o.unwrap(),
        0.550,
        5e-4,
        "envelope C/O beyond the CO line (5a: 0.550)",
    );
}

#[test]
fn migration_across_a_snowline_is_the_midpoint_rule_average() {
    // docs/model.md section 9: atoms per gram averaged uniformly in radius, midpoint rule, 200 points. In the step
    // model each phase is constant on either side of the CO2 line, so the average is the count-weighted mean
    // of the two zone values over the 200 midpoints (D: arithmetic), to 1e-12.
    let model = Model::run(&step_model_5a()).unwrap();
    let [_, r_w_d, r_d_c, _] = zone_radii(&model);
    let (r1, r2) = (r_w_d, r_d_c);
    let inside = AccretedPhases::at(&model, r1).unwrap();
    let outside = AccretedPhases::at(&model, r2).unwrap();
    // Each midpoint is on the warm side where its own midplane temperature is at least CO2's 47 K.
    let n_inside = (0..200)
        .filter(|k| {
            model
                .midplane_at(r1 + (*k as f64 + 0.5) * (r2 - r1) / 200.0)
                .unwrap()
                .temperature_k
                >= 47.0
        })
        .count() as f64;
    assert!(
        n_inside > 10.0 && n_inside < 190.0,
        "both zones sampled: {n_inside}"
    );
    let avg = AccretedPhases::averaged(&model, r1, r2, RadialWeighting::Uniform).unwrap();
    for e in [C, O] {
        let expected = (n_inside * inside.gas_atoms_per_g[e]
            + (200.0 - n_inside) * outside.gas_atoms_per_g[e])
            / 200.0;
        assert_rel(
            avg.gas_atoms_per_g[e],
            expected,
            1e-12,
            "gas atoms per gram averaged across the CO2 line",
        );
        let (si, so) = (
            inside.solid_atoms_per_g.unwrap()[e],
            outside.solid_atoms_per_g.unwrap()[e],
        );
        let expected = (n_inside * si + (200.0 - n_inside) * so) / 200.0;
        assert_rel(
            avg.solid_atoms_per_g.unwrap()[e],
            expected,
            1e-12,
            "solid atoms per gram averaged across the CO2 line",
        );
    }
    // The migrating planet's gas-only C/O lies between the two zones' 0.796 and 1.000.
    let env = planet(&model, &PlanetRequest::migrating(r1, r2, 0.0))
        .unwrap()
        .envelope;
    let c_to_o = env.c_to_o.unwrap();
    assert!(c_to_o > 0.796 && c_to_o < 1.0, "{c_to_o}");
}

#[test]
fn inverse_map_recovers_a_synthetic_planet() {
    // Round trip (internal consistency): make a planet with the forward model, observe its C/O and [O/H]
    // (errors 0.02 and 0.05 dex), and the map's best fit must recover its place.
    //
    // On the grid (a cell centre and a grid ratio) the best fit is that very row, chi2 = 0 to rounding.
    // Between two cells (at a grid ratio) it is one of the two neighbouring cells, wherever the composition
    // changes with radius; the radii below were picked from a scan of the default disk as places where it
    // does (between the water and CO2 lines, around the CH4 and CO lines). Ratios between grid values are
    // not used: one ratio step (16 %) moves [O/H] by more than its error where solids dominate, and in zones
    // of flat composition another radius then fits as well. That is the real degeneracy, which the map
    // reports (see `a_degenerate_place_is_reported_as_split_ranges`). (The laboratory-matched default
    // binding energies moved the CO line onto cell 147, where the planet between cells 146 and 147 now
    // matches the outer, photodesorbed CO line as well; that pair became (142, 30).)
    let model = Model::run(&small_default()).unwrap();
    let settings = MapSettings::defaults();
    let probe = chi_square_map(&model, &ObservedEnvelope::c_to_o(0.5, 0.1), &settings).unwrap();
    let (radii, ratios) = (probe.radius_au.clone(), probe.solid_to_gas.clone());
    let observe = |r_au: f64, q: f64| {
        let truth = planet(&model, &PlanetRequest::at(r_au, q))
            .unwrap()
            .envelope;
        ObservedEnvelope::c_to_o(truth.c_to_o.unwrap(), 0.02).with(
            Observable::OToH,
            truth.o_to_h_dex().unwrap(),
            0.05,
        )
    };
    for (j, k) in [(30, 5), (75, 20), (86, 40), (130, 10), (160, 30)] {
        let map = chi_square_map(&model, &observe(radii[j], ratios[k]), &settings).unwrap();
        let best = map.best.unwrap();
        let what = format!(
            "grid planet at {:.4} au, q = {:.4e}; best {:.4} au, q = {:.4e}",
            radii[j], ratios[k], best.radius_au, best.solid_to_gas
        );
        assert_eq!((best.radial_cell, best.ratio_index), (j, k), "{what}");
        assert!(best.chi2 < 1e-20, "chi2 = {}, {what}", best.chi2);
    }
    for (j, k) in [
        (74, 5),
        (77, 30),
        (86, 5),
        (89, 30),
        (143, 5),
        (142, 30),
        (158, 5),
        (161, 30),
    ] {
        let r_au = (radii[j] * radii[j + 1]).sqrt();
        let map = chi_square_map(&model, &observe(r_au, ratios[k]), &settings).unwrap();
        let best = map.best.unwrap();
        let what = format!("planet at {r_au:.4} au (between cells {j} and {}), q = {:.4e}; best {:.4} au, q = {:.4e}", j + 1, ratios[k], best.radius_au, best.solid_to_gas);
        assert!(
            best.radial_cell == j || best.radial_cell == j + 1,
            "radius within one cell: {what}"
        );
        assert_eq!(best.ratio_index, k, "{what}");
        assert!(
            map.row(j, k).within_2sigma && map.row(j + 1, k).within_2sigma,
            "both neighbours within 2 sigma: {what}"
        );
    }
}

#[test]
fn a_degenerate_place_is_reported_as_split_ranges() {
    // Round trip at the water snowline of the default disk (internal consistency): a planet just inside the
    // line (gas C/O rising steeply through the line) has a twin in the outer disk, where starlight
    // photodesorbs water again at the tapered edge and the gas C/O falls through the same values. The
    // best fit may be either; the map must then report the 1-sigma region at the planet's ratio as split,
    // with one range at the planet and one far out. The reversible soot line keeps the solids inside the
    // water line carbon-rich, as when this twin was found; with the irreversible default the inner solids
    // are carbon-poor and this particular twin is gone (the check is of the map's reporting, not of the soot line).
    let mut p = small_default();
    p.composition.soot_line = nivalis_physics::params::SootLine::Reversible;
    let model = Model::run(&p).unwrap();
    let settings = MapSettings::defaults();
    let ratios = nivalis_physics::planet::map_solid_to_gas_values(settings.ratio_count);
    let r_water = first_freeze_out_au(&model, Species::H2O);
    let r_au = r_water * 0.93;
    let k = 30;
    let truth = planet(&model, &PlanetRequest::at(r_au, ratios[k]))
        .unwrap()
        .envelope;
    let observed = ObservedEnvelope::c_to_o(truth.c_to_o.unwrap(), 0.02).with(
        Observable::OToH,
        truth.o_to_h_dex().unwrap(),
        0.05,
    );
    let map = chi_square_map(&model, &observed, &settings).unwrap();
    let split = map.degeneracies(SigmaLevel::One);
    let at_k = split
        .iter()
        .find(|d| d.solid_to_gas == ratios[k])
        .unwrap_or_else(|| panic!("a split region at q = {}: {:?}", ratios[k], map.allowed[k]));
    let contains = |lo: f64, hi: f64, r: f64| lo <= r && r <= hi;
    assert!(
        at_k.ranges
            .iter()
            .any(|g| contains(g.inner_edge_au, g.outer_edge_au, r_au)),
        "a range at the planet: {}",
        at_k.text()
    );
    assert!(
        at_k.ranges.iter().any(|g| g.inner_edge_au > 100.0),
        "a range in the outer disk: {}",
        at_k.text()
    );
    assert!(
        at_k.text()
            .starts_with(&format!("at solid-to-gas {:.3}, ", ratios[k])),
        "{}",
        at_k.text()
    );
    println!("{}", at_k.text());
    for line in map.degeneracy_summary() {
        println!("{line}");
    }
}

#[test]
fn c_to_o_alone_is_degenerate_and_the_map_says_so() {
    // docs/check-values.md section 5a zone table (D) in the step model: beyond the CO line the gas holds no C or O, so any
    // envelope there has the solids' C/O 0.550 at every ratio. Between the CO2 and CO lines the gas C/O is
    // 1.000, so at small ratios the envelope C/O there lies well above 0.55, while further in (gas 0.343
    // inside the water line rising toward its solids' 1.374, gas 0.796 between the H2O and CO2 lines falling
    // toward 0.420) solid enrichment brings C/O to 0.55. So C/O = 0.550 +- 0.02 alone fits an inner range and
    // the outer disk, separated by the CO2-CO zone: the description must say so.
    let model = Model::run(&step_model_5a()).unwrap();
    let observed = ObservedEnvelope::c_to_o(0.550, 0.02);
    let map = chi_square_map(&model, &observed, &MapSettings::defaults()).unwrap();
    assert_eq!(
        (map.thresholds.one_sigma, map.thresholds.two_sigma),
        (2.30, 6.18),
        "docs/model.md section 9 default"
    );
    let split = map.degeneracies(SigmaLevel::One);
    assert!(
        !split.is_empty(),
        "a split 1-sigma region: {:?}",
        map.allowed
    );
    let (r_w, r_co) = (
        first_freeze_out_au(&model, Species::H2O),
        first_freeze_out_au(&model, Species::CO),
    );
    for d in &split {
        let text = d.text();
        assert!(
            text.contains(" radius ranges give the same C/O within 1 sigma: "),
            "{text}"
        );
        let (first, last) = (d.ranges[0], d.ranges[d.ranges.len() - 1]);
        assert!(
            first.outer_edge_au < r_co && first.inner_edge_au < r_w,
            "an inner range reaching inside the water line ({r_w:.3} au): {text}"
        );
        assert!(
            last.inner_edge_au >= r_co / 1.05,
            "a range beyond the CO line ({r_co:.3} au): {text}"
        );
    }
    let summary = map.degeneracy_summary();
    assert!(
        summary
            .iter()
            .any(|s| s.starts_with("at 1 sigma, for solid-to-gas ")),
        "{summary:?}"
    );
    println!("{}", split[0].text());
    // With one fitted quantity the other convention gives the 1 and 4 thresholds, and a smaller region.
    let s = MapSettings {
        convention: ConfidenceConvention::FittedQuantities,
        ..MapSettings::defaults()
    };
    let narrow = chi_square_map(&model, &observed, &s).unwrap();
    assert_eq!(
        (
            narrow.thresholds.degrees_of_freedom,
            narrow.thresholds.one_sigma
        ),
        (1, 1.0)
    );
    let count = |m: &nivalis_physics::planet::ChiSquareMap| {
        m.rows.iter().filter(|r| r.within_1sigma).count()
    };
    assert!(
        count(&narrow) < count(&map),
        "{} < {}",
        count(&narrow),
        count(&map)
    );
}

#[test]
fn inverse_map_covers_every_cell_and_ratio() {
    // The map's shape (its speed is measured in `cargo xtask bench`, never in a test: these machines
    // are shared and noisy): 200 radii x 48 ratios, one row each.
    let model = Model::run(&ModelParameters::defaults()).unwrap();
    let observed = ObservedEnvelope::c_to_o(0.7, 0.05).with(Observable::CToH, 0.2, 0.1);
    let map = chi_square_map(&model, &observed, &MapSettings::defaults()).unwrap();
    assert_eq!(map.rows.len(), 200 * 48);
}

fn full_run_first_freeze_out_au(p: &ModelParameters, s: Species) -> f64 {
    first_freeze_out_au(&Model::run(p).unwrap(), s)
}

#[test]
fn anchoring_to_the_models_own_snowline_returns_the_original_parameter() {
    // Round trip (internal consistency), both adjust modes: the radius the model itself produced must give back
    // the parameter it was made with (root tolerance 1e-12 in ln p; 1e-9 relative allowed), and a full
    // Model::run with the anchored parameters puts the snowline at the achieved radius (equal to 1e-12).
    let cases = [
        (Species::CO, AnchorParameter::FlaringAngle, 0.03),
        (Species::H2O, AnchorParameter::FlaringAngle, 0.08),
        (
            Species::CO2,
            AnchorParameter::MidplaneTemperatureScale,
            1.25,
        ),
        (Species::H2O, AnchorParameter::MidplaneTemperatureScale, 0.8),
    ];
    for (species, parameter, value) in cases {
        let base = parameter.with_value(&small_default(), value);
        let r = full_run_first_freeze_out_au(&base, species);
        // Start from the defaults, so the solver has to find `value`.
        let start = small_default();
        let a = anchor_to_snowline(&start, &AnchorRequest::new(species, r, 0.1 * r, parameter))
            .unwrap();
        let what = format!(
            "{} snowline at {r:.4} au via {}",
            species.key(),
            parameter.name()
        );
        assert_rel(a.value, value, 1e-9, &format!("anchored value, {what}"));
        assert_rel(
            a.achieved_radius_au,
            r,
            1e-9,
            &format!("achieved radius, {what}"),
        );
        assert_eq!(parameter.value(&a.parameters), a.value);
        let full = full_run_first_freeze_out_au(&a.parameters, species);
        assert_rel(
            full,
            a.achieved_radius_au,
            1e-12,
            &format!("full run with the anchored parameters, {what}"),
        );
        // A warmer disk (larger angle or scale) pushes the snowline outward, so the +-sigma radii map to
        // values on either side (C: physical expectation).
        let (lo, hi) = (
            a.at_minus_sigma.value.unwrap(),
            a.at_plus_sigma.value.unwrap(),
        );
        assert!(
            lo < a.value && a.value < hi,
            "{what}: {lo} < {} < {hi}",
            a.value
        );
        for end in [&a.at_minus_sigma, &a.at_plus_sigma] {
            let p = parameter.with_value(&start, end.value.unwrap());
            assert_rel(
                full_run_first_freeze_out_au(&p, species),
                end.radius_au,
                1e-9,
                &format!("sigma end, {what}"),
            );
        }
        println!("{what}: {} evaluations", a.snowline_evaluations);
    }
}

#[test]
fn anchoring_in_the_step_model_and_out_of_reach() {
    // Step model: the snowline is where T_mid = T_cond (Oberg 2011 CO2 at 47 K). With the temperature scale
    // T_mid -> s T_mid, the round trip returns the scale (internal consistency, 1e-9).
    let p = step_model_5a();
    let scaled = AnchorParameter::MidplaneTemperatureScale.with_value(&p, 1.4);
    let r = full_run_first_freeze_out_au(&scaled, Species::CO2);
    let a = anchor_to_snowline(
        &p,
        &AnchorRequest::new(
            Species::CO2,
            r,
            0.0,
            AnchorParameter::MidplaneTemperatureScale,
        ),
    )
    .unwrap();
    assert_rel(a.value, 1.4, 1e-9, "step-model temperature scale");
    assert_eq!(
        first_freeze_out_snowline(&a.parameters, Species::CO2).unwrap(),
        SnowlinePosition::Radius(a.achieved_radius_au)
    );
    // A radius no flaring angle in (0, 1] reaches: the water line cannot move to 400 au around a 1 Lsun star
    // (T_irr at 400 au is at most 278 K / 20 x (1/0.5)^(1/4) = 17 K for phi = 1, below 135 K).
    let err = anchor_to_snowline(
        &p,
        &AnchorRequest::new(Species::H2O, 400.0, 0.0, AnchorParameter::FlaringAngle),
    )
    .unwrap_err();
    let text = err.to_string();
    assert!(text.starts_with("disk.flaring_angle: no disk.flaring_angle in [0.0001, 1] puts the H2O snowline at 400 au; the range puts it between "), "{text}");
}

// ---------------------------------------------------------------------------
// Goodness of fit, feasibility, the observables retrievals give, numbers without noise
// (docs/model.md section 9; issue 11 items 1-4).

use nivalis_physics::planet::{
    gas_mass_in_annulus_g, MetallicityReference, ACCEPTABLE_P_VALUE, EARTH_MASS_G, JUPITER_MASS_G,
};
use nivalis_physics::statistics::chi_square_survival;

#[test]
fn an_impossible_c_to_o_is_reported_unacceptable_with_no_allowed_radii() {
    // An envelope's C/O lies between its gas's and its solids' (a mixture), so no place gives more
    // than the largest local C/O of either phase. An observation at twice that plus 0.5, +- 0.05,
    // is out of reach by more than 10 sigma. The fit must say so: p < 0.01 (common practice, no
    // source), no allowed radius at any ratio, a reason in words.
    let model = Model::run(&small_default()).unwrap();
    let profile = model.midplane_profile();
    let highest = profile
        .c_to_o_gas
        .iter()
        .chain(&profile.c_to_o_solid)
        .flatten()
        .fold(0.0f64, |a, &b| a.max(b));
    let map = chi_square_map(
        &model,
        &ObservedEnvelope::c_to_o(2.0 * highest + 0.5, 0.05),
        &MapSettings::defaults(),
    )
    .unwrap();
    let g = &map.goodness;
    assert!(!g.acceptable, "{g:?}");
    let (chi2, p) = (g.chi2_min.unwrap(), g.p_value.unwrap());
    assert_eq!(
        g.degrees_of_freedom, 1,
        "one observable minus two parameters, floored at 1"
    );
    assert!(g.degrees_of_freedom_floored);
    assert_eq!(Some(p), chi_square_survival(chi2, 1));
    assert!(p < ACCEPTABLE_P_VALUE && chi2 > 6.63, "chi2 {chi2}, p {p}");
    assert!(map
        .allowed
        .iter()
        .all(|a| a.one_sigma.is_empty() && a.two_sigma.is_empty()));
    assert!(map
        .rows
        .iter()
        .all(|r| !r.within_1sigma && !r.within_2sigma));
    let reason = g.reason.as_deref().unwrap();
    assert!(
        reason.starts_with("no place in the disk reproduces the observed C/O"),
        "{reason}"
    );
    // The best fit is still reported (the closest place), and here it sits on the largest ratio.
    assert!(g.best_on_ratio_grid_edge, "{:?}", map.best);
    println!("{reason}");
}

#[test]
fn a_reachable_c_to_o_is_acceptable() {
    // Round trip (internal consistency): the C/O of a planet the model itself places at 20 au with
    // solid-to-gas 0.05 is reproduced with chi2 ~ 0, p ~ 1, allowed radii present.
    let model = Model::run(&small_default()).unwrap();
    let truth = planet(&model, &PlanetRequest::at(20.0, 0.05))
        .unwrap()
        .envelope;
    let map = chi_square_map(
        &model,
        &ObservedEnvelope::c_to_o(truth.c_to_o.unwrap(), 0.05),
        &MapSettings::defaults(),
    )
    .unwrap();
    assert!(
        map.goodness.acceptable && map.goodness.reason.is_none(),
        "{:?}",
        map.goodness
    );
    assert!(map.goodness.p_value.unwrap() > 0.9);
    assert!(map.allowed.iter().any(|a| !a.one_sigma.is_empty()));
}

#[test]
fn gas_in_an_annulus_is_the_closed_form_integral() {
    // Derived (D): for Sigma = Sigma_c (r/R_c)^-gamma exp[-(r/R_c)^(2-gamma)] the mass inside r is
    // M_tot [1 - exp(-(r/R_c)^(2-gamma))] (Lynden-Bell & Pringle 1974; Andrews et al. 2009), so the
    // annulus [r1, r2] holds M_tot [exp(-(r1/R_c)^(2-g)) - exp(-(r2/R_c)^(2-g))], M_tot = 2 pi Sigma_c R_c^2 / (2 - g).
    let model = Model::run(&small_default()).unwrap();
    let c = &model.structure().constants();
    let m_tot = 2.0 * std::f64::consts::PI * c.sigma_c_g_cm2 * c.characteristic_radius_cm.powi(2)
        / (2.0 - c.gamma);
    let cum = |r_au: f64| (-(r_au * AU_CM / c.characteristic_radius_cm).powf(2.0 - c.gamma)).exp();
    for (a, b) in [(1.0, 10.0), (30.0, 90.0), (290.0, 470.0), (380.0, 500.0)] {
        let expected = m_tot * (cum(a) - cum(b));
        assert_rel(
            gas_mass_in_annulus_g(&model, a * AU_CM, b * AU_CM),
            expected,
            1e-4,
            &format!("gas in {a}-{b} au"),
        );
    }
    let beyond = gas_mass_in_annulus_g(&model, 380.0 * AU_CM, 1e4 * AU_CM) / EARTH_MASS_G;
    println!("gas beyond 380 au: {beyond:.2} Earth masses");
    assert!(beyond < 5.0, "{beyond}");
}

#[test]
fn a_jupiter_is_never_allowed_where_the_disk_lacks_its_gas() {
    // A 1 M_Jup planet (318 Earth masses; IAU 2015 nominal GM_J) needs ~318/(1 + q) Earth masses of gas
    // in its feeding zone (2 sqrt 3 Hill radii each side, Lissauer 1993, M). The default disk holds a few
    // Earth masses beyond 380 au, so no place there may be allowed, and every cell there is infeasible.
    let model = Model::run(&small_default()).unwrap();
    let outer = planet(&model, &PlanetRequest::at(420.0, 0.01))
        .unwrap()
        .envelope;
    let observed = ObservedEnvelope::c_to_o(outer.c_to_o.unwrap(), 0.05);
    let free = chi_square_map(&model, &observed, &MapSettings::defaults()).unwrap();
    assert!(
        free.rows
            .iter()
            .any(|r| r.radius_au > 380.0 && r.within_1sigma),
        "without a mass the outer disk fits"
    );
    let settings = MapSettings {
        planet_mass_mjup: Some(1.0),
        ..MapSettings::defaults()
    };
    let map = chi_square_map(&model, &observed, &settings).unwrap();
    assert!(map
        .rows
        .iter()
        .filter(|r| r.radius_au > 380.0)
        .all(|r| !r.feasible && !r.within_2sigma));
    // The outer infeasible run (the inner disk is infeasible too: its feeding zones are narrow).
    let outer_run = map.infeasible.last().unwrap();
    let first_infeasible = outer_run.inner_edge_au;
    assert!(
        first_infeasible < 380.0 && outer_run.outer_edge_au == map.cell_edges_au[200],
        "{:?}",
        map.infeasible
    );
    assert!(map.best.unwrap().row.feasible);
    // The test of each row is exactly the envelope's gas against the feeding zone's.
    for (j, k) in [(100, 0), (150, 20), (190, 47)] {
        let row = map.row(j, k);
        let need = JUPITER_MASS_G / (1.0 + row.solid_to_gas);
        assert_eq!(row.feasible, map.feeding_zone_gas_g[j] >= need, "cell {j}");
    }
    println!(
        "1 M_Jup infeasible from {first_infeasible:.0} au outward on the default disk; runs {:?}",
        map.infeasible
            .iter()
            .map(|i| (i.inner_edge_au, i.outer_edge_au))
            .collect::<Vec<_>>()
    );
}

#[test]
fn migration_weighted_by_accreted_mass_is_the_hand_integral() {
    // Derived (D) in the step model: across the CO2 line the gas carries two constant compositions
    // (docs/check-values.md section 5a zones), so the mass-weighted average of the gas's C per gram over [r1, r2] is
    // (M_in x_in + M_out x_out) / (M_in + M_out) with M from the closed-form annulus masses above.
    let model = Model::run(&step_model_5a()).unwrap();
    let r_d = first_freeze_out_au(&model, Species::CO2);
    let (r1, r2) = (r_d / 1.5, r_d * 1.5);
    let x_in = AccretedPhases::at(&model, r_d / 1.2)
        .unwrap()
        .gas_atoms_per_g[C];
    let x_out = AccretedPhases::at(&model, r_d * 1.2)
        .unwrap()
        .gas_atoms_per_g[C];
    assert!(x_in > 1.2 * x_out, "a real step: {x_in:e} vs {x_out:e}");
    let c = &model.structure().constants();
    let cum = |r_au: f64| (-(r_au * AU_CM / c.characteristic_radius_cm).powf(2.0 - c.gamma)).exp();
    let (m_in, m_out) = (cum(r1) - cum(r_d), cum(r_d) - cum(r2));
    let expected = (m_in * x_in + m_out * x_out) / (m_in + m_out);
    let avg = AccretedPhases::averaged(&model, r1, r2, RadialWeighting::AccretedMass).unwrap();
    // One of 200 midpoints straddles the step: tolerance 1/200 of the jump.
    assert_abs(
        avg.gas_atoms_per_g[C],
        expected,
        (x_in - x_out) / 200.0,
        "mass-weighted gas C per gram",
    );
    let uniform = AccretedPhases::averaged(&model, r1, r2, RadialWeighting::Uniform).unwrap();
    let expected_uniform = ((r_d - r1) * x_in + (r2 - r_d) * x_out) / (r2 - r1);
    assert_abs(
        uniform.gas_atoms_per_g[C],
        expected_uniform,
        (x_in - x_out) / 200.0,
        "uniform gas C per gram",
    );
    assert!(
        avg.gas_atoms_per_g[C] > uniform.gas_atoms_per_g[C],
        "the inner, denser annuli weigh more"
    );
    // The default of a migrating planet is the accreted-mass weighting.
    assert_eq!(RadialWeighting::default(), RadialWeighting::AccretedMass);
}

#[test]
fn several_observables_fit_together_against_the_named_reference() {
    // The map's metallicities relative to the Sun differ from those relative to the star by exactly the
    // star's offsets (definition, docs/model.md section 1: X/H_star = X/H_sun 10^offset).
    let mut p = small_default();
    p.star.offset_dex = [0.2, 0.1, 0.0, 0.0, 0.0, 0.0, 0.0];
    let model = Model::run(&p).unwrap();
    let truth = planet(&model, &PlanetRequest::at(8.0, 0.03))
        .unwrap()
        .envelope;
    let star = ObservedEnvelope::c_to_o(truth.c_to_o.unwrap(), 0.05)
        .with(Observable::CToH, truth.c_to_h_dex().unwrap(), 0.1)
        .with(Observable::OToH, truth.o_to_h_dex().unwrap(), 0.1)
        .with(Observable::MToH, 0.0, 0.5);
    let sun = ObservedEnvelope {
        relative_to: MetallicityReference::Sun,
        ..star.clone()
    };
    let a = chi_square_map(&model, &star, &MapSettings::defaults()).unwrap();
    let b = chi_square_map(&model, &sun, &MapSettings::defaults()).unwrap();
    assert_eq!(a.observed.fitted_label(), "C/O, [C/H], [O/H] and [M/H]");
    assert_eq!(
        a.goodness.degrees_of_freedom, 2,
        "4 observables - 2 parameters"
    );
    for (ra, rb) in a
        .rows
        .iter()
        .zip(&b.rows)
        .filter(|(r, _)| r.chi2.is_some())
        .step_by(97)
    {
        assert_abs(
            rb.c_to_h_dex.unwrap() - ra.c_to_h_dex.unwrap(),
            0.2,
            1e-10,
            "[C/H]_sun - [C/H]_star",
        );
        assert_abs(
            rb.o_to_h_dex.unwrap() - ra.o_to_h_dex.unwrap(),
            0.1,
            1e-10,
            "[O/H]_sun - [O/H]_star",
        );
        assert_eq!(ra.c_to_o, rb.c_to_o, "C/O has no reference");
    }
    // [M/H] = log10 of (C+O+N+S)/H over the reference's sum, by hand at one row.
    let row = a.row(120, 10);
    let env = planet(&model, &PlanetRequest::at(row.radius_au, row.solid_to_gas))
        .unwrap()
        .envelope;
    let sum: f64 = [Element::C, Element::O, Element::N, Element::S]
        .iter()
        .map(|&e| env.element(e).per_h)
        .sum();
    let sum_ref: f64 = [0, 1, 2, 3].iter().map(|&i| model.stellar_per_h()[i]).sum();
    assert_abs(
        row.m_to_h_dex.unwrap(),
        (sum / sum_ref).log10(),
        1e-12,
        "[M/H]",
    );
}

#[test]
fn a_covariance_matrix_weighs_the_residuals() {
    // chi2 = r^T C^-1 r (e.g. Press et al. 2007, section 15.4); for a diagonal C it equals the sum of
    // squared residuals over sigma^2, and for a 2 x 2 C = [[a, b], [b, d]] the inverse is
    // [[d, -b], [-b, a]] / (a d - b^2), by hand.
    let model = Model::run(&small_default()).unwrap();
    let diag = ObservedEnvelope::c_to_o(0.6, 0.05).with(Observable::OToH, 0.3, 0.2);
    let with_cov = ObservedEnvelope {
        covariance: Some(vec![0.0025, 0.0, 0.0, 0.04]),
        ..diag.clone()
    };
    let (a, b) = (
        chi_square_map(&model, &diag, &MapSettings::defaults()).unwrap(),
        chi_square_map(&model, &with_cov, &MapSettings::defaults()).unwrap(),
    );
    for (x, y) in a
        .rows
        .iter()
        .zip(&b.rows)
        .filter(|(x, _)| x.chi2.is_some())
        .step_by(53)
    {
        assert_rel(
            y.chi2.unwrap(),
            x.chi2.unwrap(),
            1e-12,
            "diagonal covariance = sigmas",
        );
    }
    let (ca, cb, cd) = (0.0025, 0.006, 0.04);
    let corr = ObservedEnvelope {
        covariance: Some(vec![ca, cb, cb, cd]),
        ..diag.clone()
    };
    let m = chi_square_map(&model, &corr, &MapSettings::defaults()).unwrap();
    let row = m.row(110, 20);
    let (r1, r2) = (row.c_to_o.unwrap() - 0.6, row.o_to_h_dex.unwrap() - 0.3);
    let det = ca * cd - cb * cb;
    let expected = (cd * r1 * r1 - 2.0 * cb * r1 * r2 + ca * r2 * r2) / det;
    assert_rel(row.chi2.unwrap(), expected, 1e-10, "correlated chi2");
    let bad = ObservedEnvelope {
        covariance: Some(vec![0.0025, 0.1, 0.1, 0.04]),
        ..diag
    };
    let err = chi_square_map(&model, &bad, &MapSettings::defaults()).unwrap_err();
    assert!(
        err.to_string()
            .starts_with("covariance: must be positive definite"),
        "{err}"
    );
}

#[test]
fn priors_ratio_range_and_the_oxygen_correction() {
    let model = Model::run(&small_default()).unwrap();
    let observed = ObservedEnvelope::c_to_o(0.5, 0.1);
    let settings = MapSettings {
        ratio_min: 1e-4,
        ratio_max: 3.0,
        ratio_count: 60,
        radius_prior_au: Some((2.0, 50.0)),
        solid_to_gas_prior: Some((1e-3, 0.1)),
        ..MapSettings::defaults()
    };
    let map = chi_square_map(&model, &observed, &settings).unwrap();
    assert_eq!(
        (
            map.solid_to_gas[0],
            map.solid_to_gas[59],
            map.solid_to_gas.len()
        ),
        (1e-4, 3.0, 60)
    );
    for r in &map.rows {
        let inside = (2.0..=50.0).contains(&r.radius_au) && (1e-3..=0.1).contains(&r.solid_to_gas);
        assert_eq!(r.in_prior, inside);
        assert!(
            inside || !r.within_2sigma,
            "an allowed row outside the priors: {r:?}"
        );
    }
    let b = map.best.unwrap();
    assert!((2.0..=50.0).contains(&b.radius_au) && (1e-3..=0.1).contains(&b.solid_to_gas));
    // Burrows & Sharp 1999: ~20 % of O hidden in condensates, so the observable C/O is the bulk C/O / 0.8
    // and [O/H] is lower by log10(0.8).
    let o = ObservedEnvelope::c_to_o(0.5, 0.1).with(Observable::OToH, 0.0, 0.3);
    let plain = chi_square_map(&model, &o, &MapSettings::defaults()).unwrap();
    let s = MapSettings {
        oxygen_sequestered_fraction: nivalis_physics::planet::BURROWS_SHARP_OXYGEN_SEQUESTERED,
        ..MapSettings::defaults()
    };
    let corrected = chi_square_map(&model, &o, &s).unwrap();
    let (x, y) = (plain.row(100, 10), corrected.row(100, 10));
    assert_rel(
        y.c_to_o.unwrap(),
        x.c_to_o.unwrap() / 0.8,
        1e-12,
        "C/O after hiding 20 % of O",
    );
    assert_abs(
        y.o_to_h_dex.unwrap() - x.o_to_h_dex.unwrap(),
        0.8f64.log10(),
        1e-12,
        "[O/H] shift",
    );
    assert_eq!(x.c_to_h_dex, y.c_to_h_dex);
}

#[test]
fn a_gas_only_planet_inside_the_soot_line_has_exactly_stellar_carbon() {
    // docs/model.md section 8: inside the soot line (T > 500 K) every carbon carrier is gas, so a
    // gas-only envelope has C/H equal to the star's: [C/H] exactly 0 dex, C/H / (C/H)_star exactly 1,
    // no 1e-13 rounding noise, and nothing from solids.
    let model = Model::run(&small_default()).unwrap();
    let local = model.midplane_at(0.15).unwrap();
    assert!(local.temperature_k > 500.0, "{}", local.temperature_k);
    let env = planet(&model, &PlanetRequest::at(0.15, 0.0))
        .unwrap()
        .envelope;
    let c = env.element(Element::C);
    assert_eq!(c.dex, Some(0.0));
    assert_eq!(c.relative_to_star, 1.0);
    assert_eq!(c.from_solids_atoms, 0.0);
    assert_eq!(c.solid_share, Some(0.0));
    // Solids there (silicates only, if any) carry no carbon: their C/O is exactly 0, never 1e-12.
    if let Some(s) = AccretedPhases::at(&model, 0.3).unwrap().solid_c_to_o() {
        let t = model.midplane_at(0.3).unwrap().temperature_k;
        if t > 500.0 {
            assert_eq!(s, 0.0, "solid C/O inside the soot line");
        }
    }
}
