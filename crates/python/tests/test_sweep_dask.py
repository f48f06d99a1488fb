"""The same sweep through the CLI (Parquet shards, merged) and on a Dask
distributed LocalCluster with 2 worker processes: the same rows, to the last
bit, and the same failed points (issue 14 item 4)."""

import json

import numpy as np
import pandas as pd
import pytest

import nivalis

# 20 x 12 = 240 disks on a coarse grid (16 x 8 cells) so the test is quick;
# the last luminosity is out of range (1e8 Lsun > 1e7), so 12 points fail validation.
SWEEP = {
    "schema": "nivalis-sweep/1",
    "base": {"grid": {"radial_cells": 16, "vertical_cells": 8}},
    "axes": [
        {"path": "star.luminosity_lsun", "values": [0.3 * 1.3**k for k in range(19)] + [1e8]},
        {"path": "disk.gas_mass_msun", "log": {"from": 0.002, "to": 0.1, "count": 12}},
    ],
    "planets": [{"name": "p", "radius_au": 3, "solid_to_gas": 0.02}],
}


@pytest.fixture(scope="module")
def cli_result(cli, tmp_path_factory):
    d = tmp_path_factory.mktemp("sweep")
    f = d / "sweep.json"
    f.write_text(json.dumps(SWEEP))
    for i in (1, 2, 3):
        cli("sweep", f, "--out", d / "out", "--shard", f"{i}/3")
    cli("sweep", "merge", d / "out")
    frame = pd.read_parquet(d / "out" / "sweep.parquet")
    manifest = json.loads((d / "out" / "manifest.json").read_text())
    return frame, manifest


def assert_same(ours: pd.DataFrame, theirs: pd.DataFrame):
    assert list(ours.columns) == list(theirs.columns)
    assert len(ours) == len(theirs)
    for name in ours.columns:
        a = ours[name].to_numpy()
        b = theirs[name].to_numpy()
        if a.dtype.kind == "f":
            b = b.astype(float)
            same = (a == b) | (np.isnan(a) & np.isnan(b))
            assert same.all(), name
        else:
            assert [str(x) for x in a] == [str(x) for x in b], name


def test_sweep_on_a_local_dask_cluster_equals_the_cli(cli_result):
    from dask.distributed import Client, LocalCluster

    theirs, manifest = cli_result
    assert len(theirs) == 228 and manifest["points"] == 240
    with LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None) as cluster:
        with Client(cluster) as client:
            frame, failed = nivalis.sweep(SWEEP, client=client, partitions=6, with_failures=True)
            ours = frame.compute().reset_index(drop=True)
            failed = failed.compute()
    assert_same(ours, theirs)
    assert sorted(f["point"] for f in failed) == sorted(f["point"] for f in manifest["failed_points"])
    assert failed == sorted(manifest["failed_points"], key=lambda f: f["point"])
    assert failed[0]["problems"][0]["path"] == "star.luminosity_lsun"


def test_local_frame_equals_the_cli(cli_result):
    theirs, _ = cli_result
    frame, failed = nivalis.sweep_frame(SWEEP)
    assert_same(frame, theirs)
    assert len(failed) == 12
    assert frame.attrs["units"]["star.luminosity_lsun"] == "solLum"
    assert frame.attrs["units"]["snowline_au_H2O"] == "AU"


def test_bad_sweeps_list_every_problem():
    bad = dict(SWEEP, axes=[{"path": "star.luminosity", "values": [1]}, {"path": "disk.gas_mass_msun", "values": []}])
    with pytest.raises(nivalis.SweepError) as e:
        nivalis.sweep_info(bad)
    paths = [p["path"] for p in e.value.problems]
    assert paths == ["axes[1].values", "axes[0].path"]
    assert "did you mean luminosity_lsun?" in str(e.value)
