"""The Python module against the CLI: the same reader, the same numbers and
the same text, byte for byte (issue 14 item 1)."""

import json

import astropy.units as u
import numpy as np
import pytest
from astropy.table import QTable

import nivalis

DEMO = "demo_disks/young_sun.json"


@pytest.fixture(scope="module")
def disk(root):
    return nivalis.Disk.from_file(root / DEMO)


@pytest.fixture(scope="module")
def model(disk):
    return disk.run()


def test_problems_are_the_readers_every_one(cli, tmp_path):
    bad = {"star": {"mass_msun": 0, "luminosity_lsun": -1}, "disk": {"gass_mass_msun": 1}}
    with pytest.raises(nivalis.DiskError) as e:
        nivalis.Disk(bad)
    problems = e.value.problems
    path = tmp_path / "bad.json"
    path.write_text(json.dumps(bad))
    done = cli("check", path, check=False)
    assert done.returncode == 2
    prefix = f"error: {path}: "
    expected = [line[len(prefix):] for line in done.stderr.decode().splitlines()]
    assert [f"{p['path']}: {p['message']}" for p in problems] == expected
    assert len(problems) == 3
    by_path = {p["path"]: p for p in problems}
    assert by_path["star.luminosity_lsun"]["value"] == "-1"
    assert by_path["star.luminosity_lsun"]["allowed"] == "in [1e-5, 10000000]"
    assert by_path["disk.gass_mass_msun"]["message"] == "unknown field; did you mean gas_mass_msun?"


def test_from_file_equals_the_dict(root, disk):
    same = nivalis.Disk(json.loads((root / DEMO).read_text()))
    assert same.to_json() == disk.to_json()


def test_with_values_is_a_validated_copy(disk, cli, root):
    bright = disk.with_values({"star.luminosity_lsun": 3, "grid.radial_cells": 64})
    assert bright.resolved()["star"]["luminosity_lsun"] == 3
    assert disk.resolved()["star"]["luminosity_lsun"] == 1
    # The same disk as `--set`: the same provenance hash.
    out = cli("snowlines", DEMO, "--set", "star.luminosity_lsun=3", "--set", "grid.radial_cells=64").stdout
    assert json.loads(out)["disk_hash"] == bright.run().disk_hash
    with pytest.raises(nivalis.DiskError) as e:
        disk.with_values({"star.luminosity_lsn": 3})
    assert str(e.value) == "star.luminosity_lsn: unknown field; did you mean luminosity_lsun?"
    with pytest.raises(nivalis.DiskError) as e:
        disk.with_values({"star.luminosity_lsun": 1e9})
    assert e.value.problems[0]["allowed"] == "in [1e-5, 10000000]"


def test_arrays_and_tables_carry_units_and_provenance(model, cli):
    t = model.profile()
    assert isinstance(t, QTable)
    assert t["radius_au"].unit == u.AU
    assert t["midplane_temperature_k"].unit == u.K
    assert t.meta["disk_hash"] == model.disk_hash
    assert t.meta["program"] == nivalis.program_version()
    s = model.structure()
    assert s["surface_density_g_cm2"].unit == u.g / u.cm**2
    assert isinstance(model.radius_au, np.ndarray) and model.radius_au.dtype == np.float64
    np.testing.assert_array_equal(model.radius_au, s["radius_au"].to_value(u.AU))
    # The numbers are the CLI's JSON export's, exactly.
    exported = json.loads(cli("model", DEMO, "--format", "json").stdout)
    assert exported["disk_hash"] == model.disk_hash
    assert [c["name"] for c in exported["columns"]] == list(t.colnames)
    for c in exported["columns"]:
        unit = t[c["name"]].unit
        assert (unit == u.dimensionless_unscaled) if c["unit"] == "" else unit == u.Unit(c["unit"])
        ours = t[c["name"]]
        mask = np.asarray(getattr(ours, "mask", np.zeros(len(t), bool)))
        values = np.asarray(getattr(ours, "unmasked", ours).value, dtype=float)
        for a, m, b in zip(exported["data"][c["name"]], mask, values):
            # Undefined (null in the CLI's JSON) is masked here; every number equal to the last bit.
            assert (a is None and m) or (a == b and not m), (c["name"], a, b)
    m = model.map("ice_fraction:CO")
    assert m["height_au"].unit == u.AU and m.meta["quantity"] == "ice_fraction:CO"
    with pytest.raises(ValueError, match="quantity: unknown quantity"):
        model.map("nonsense")


@pytest.mark.parametrize(
    "kind,fmt,args",
    [
        ("profile", "csv", ["model"]),
        ("structure", "ecsv", ["structure", "--format", "ecsv"]),
        ("elements", "json", ["elements", "--format", "json"]),
    ],
)
def test_tables_as_text_equal_the_cli(model, cli, kind, fmt, args):
    assert model.table_text(kind, fmt).encode() == cli(*args[:1], DEMO, *args[1:]).stdout


def test_map_text_equals_the_cli(model, cli):
    text = model.table_text("map", "csv", quantity="temperature_k")
    assert text.encode() == cli("map", DEMO, "--quantity", "temperature_k").stdout


def test_snowlines_planet_fit_methods_bibtex_equal_the_cli(model, cli, tmp_path):
    assert model.snowlines(text=True).encode() == cli("snowlines", DEMO).stdout
    assert model.snowlines()["snowlines"]["H2O"] == json.loads(cli("snowlines", DEMO).stdout)["snowlines"]["H2O"]
    assert (
        model.planet(5, 0.01, text=True).encode()
        == cli("planet", DEMO, "--radius-au", "5", "--solid-to-gas", "0.01").stdout
    )
    assert (
        model.planet(2, 0.1, to_radius_au=10, weighting="log_radius", mix=0.5, format="csv").encode()
        == cli(
            "planet", DEMO, "--radius-au", "2", "--to-radius-au", "10", "--weighting", "log_radius",
            "--solid-to-gas", "0.1", "--mix", "0.5", "--format", "csv",
        ).stdout
    )
    fit = model.fit(c_to_o=0.8, c_to_o_sigma=0.1, o_to_h_dex=0.2, o_to_h_sigma=0.15, text=True)
    assert fit.encode() == cli(
        "fit", DEMO, "--c-to-o", "0.8", "--c-to-o-sigma", "0.1", "--o-to-h-dex", "0.2",
        "--o-to-h-sigma", "0.15", "--format", "json",
    ).stdout
    best = model.fit(c_to_o=0.8, c_to_o_sigma=0.1)["fit"]["best_fit"]
    assert best["radius_au"] > 0 and best["chi2"] >= 0
    bib = tmp_path / "refs.bib"
    assert model.methods().encode() == cli("methods", DEMO, "--bibtex", bib).stdout
    assert model.bibtex().encode() == bib.read_bytes()


def test_bad_requests_name_the_option(model):
    with pytest.raises(nivalis.DiskError) as e:
        model.planet(1e6, 0.01)
    assert e.value.problems[0]["path"] == "radius_au"
    with pytest.raises(nivalis.DiskError) as e:
        model.fit(c_to_o=0.8)
    assert e.value.problems[0]["path"] == "c_to_o_sigma"
