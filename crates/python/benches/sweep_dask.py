"""Sweep throughput through the Python module, for `cargo xtask bench`.

The same 64 disks as a native comparison (the default disk with the
luminosity stepped over 1.00 to 1.10 Lsun) run (1) in this process with
``nivalis.sweep_frame`` and (2) on a Dask distributed LocalCluster with 2
single-threaded worker processes (cluster start-up and a warm-up task
excluded). Prints one JSON line: time per model [ns] in-process, wall time
[ns] of the Dask run, and the worker count.
"""

import json
import statistics
import time

import nivalis

POINTS = 64


def sweep(n):
    return {"axes": [{"path": "star.luminosity_lsun", "linear": {"from": 1.0, "to": 1.1, "count": n}}]}


def main():
    local = []
    for _ in range(3):
        t = time.perf_counter()
        frame, _ = nivalis.sweep_frame(sweep(16))
        local.append((time.perf_counter() - t) / 16)
        assert len(frame) == 16
    from dask.distributed import Client, LocalCluster

    with LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None) as cluster:
        with Client(cluster) as client:
            nivalis.sweep(sweep(4), client=client, partitions=2).compute()  # warm-up: imports in the workers
            walls = []
            for _ in range(3):
                t = time.perf_counter()
                rows = len(nivalis.sweep(sweep(POINTS), client=client, partitions=8).compute())
                walls.append(time.perf_counter() - t)
                assert rows == POINTS
    print(json.dumps({
        "local_ns": statistics.median(local) * 1e9,
        "dask_wall_ns": statistics.median(walls) * 1e9,
        "points": POINTS,
        "workers": 2,
    }))


if __name__ == "__main__":
    main()
