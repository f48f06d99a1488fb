"""Parameter sweeps (docs/sweep.md) from Python, locally or on Dask distributed.

Each task runs a contiguous block of grid points through the same Rust code
as ``nivalis sweep`` (``nivalis._core.sweep_points``, the GIL released), so
its rows equal the CLI's Parquet rows to the last bit.
"""

from __future__ import annotations

import json
import os
from typing import Any, Mapping, Optional, Tuple, Union

import numpy as np

from . import _core

SweepLike = Union[str, "os.PathLike[str]", Mapping[str, Any]]


class SweepError(ValueError):
    """Every problem of a sweep file, as ``{path, value, allowed, message}`` dicts in ``problems``."""

    def __init__(self, problems: list):
        self.problems = problems
        super().__init__("\n".join(f"{p['path']}: {p['message']}" for p in problems))


def _text_and_dir(sweep: SweepLike, base_dir: Optional[str]) -> Tuple[str, str]:
    if isinstance(sweep, Mapping):
        return json.dumps(dict(sweep), allow_nan=False), base_dir or os.getcwd()
    path = os.fspath(sweep)
    with open(path, encoding="utf-8") as f:
        text = f.read()
    return text, base_dir or os.path.dirname(os.path.abspath(path))


def sweep_info(sweep: SweepLike, base_dir: Optional[str] = None) -> dict:
    """Read and check a sweep (a file path or a dict): ``{points, hash, columns, sweep}``
    with ``columns`` as ``{name, unit, description, kind}`` and ``sweep`` the sweep with
    its base disk inlined. Raises :class:`SweepError` listing every problem."""
    text, folder = _text_and_dir(sweep, base_dir)
    ok, payload = _core.sweep_info(text, folder)
    if not ok:
        raise SweepError(json.loads(payload))
    return json.loads(payload)


def _frame(columns: list, arrays: list):
    import pandas as pd

    data = {}
    for c, a in zip(columns, arrays):
        if c["kind"] == "text":
            data[c["name"]] = pd.Series(a, dtype=object)
        elif c["kind"] == "index":
            data[c["name"]] = pd.Series(np.asarray(a, dtype=np.uint64))
        else:
            data[c["name"]] = pd.Series(np.asarray(a, dtype=np.float64))
    frame = pd.DataFrame(data)
    frame.attrs["units"] = {c["name"]: c["unit"] for c in columns}
    return frame


def _run_block(text: str, columns: list, start: int, end: int):
    """Grid points ``start..end`` as (pandas DataFrame, failed points). Runs in a worker."""
    arrays, failed = _core.sweep_points(text, os.getcwd(), start, end)
    return _frame(columns, arrays), json.loads(failed)


def sweep_frame(sweep: SweepLike, start: int = 0, end: Optional[int] = None, base_dir: Optional[str] = None):
    """Run grid points ``start..end`` here: ``(pandas.DataFrame, failed_points)``, the rows
    and columns of ``nivalis sweep`` (units in ``frame.attrs["units"]``); failed points as
    ``{point, values, problems}``."""
    info = sweep_info(sweep, base_dir)
    end = info["points"] if end is None else end
    return _run_block(json.dumps(info["sweep"]), info["columns"], start, end)


def _blocks(points: int, partitions: int):
    return [(i * points // partitions, (i + 1) * points // partitions) for i in range(partitions)]


def sweep(
    sweep: SweepLike,
    client=None,
    partitions: Optional[int] = None,
    base_dir: Optional[str] = None,
    with_failures: bool = False,
):
    """Run a sweep on Dask: a ``dask.dataframe.DataFrame`` with the columns of
    ``nivalis sweep`` (one row per grid point that ran, in point order).

    ``client``: a ``dask.distributed.Client`` (local or a cluster's scheduler); without
    one, Dask's current scheduler runs it. Each of ``partitions`` tasks (default: about
    64 points each) runs a contiguous block of points in a worker through the Rust core;
    workers need the same ``nivalis`` wheel installed. The base disk is read here and sent
    inline, so workers need no shared file system. With ``with_failures=True`` returns
    ``(frame, failed)`` where ``failed`` is a ``dask.delayed`` list of the points that
    failed validation, each ``{point, values, problems}``.
    """
    import dask
    import dask.dataframe as dd

    info = sweep_info(sweep, base_dir)
    text = json.dumps(info["sweep"])
    columns = info["columns"]
    points = info["points"]
    n = partitions or max(1, -(-points // 64))
    n = max(1, min(n, points))
    meta = _frame(columns, [[] for _ in columns])
    blocks = _blocks(points, n)
    if client is not None:
        import operator

        pairs = client.map(
            _run_block,
            [text] * n,
            [columns] * n,
            [a for a, _ in blocks],
            [b for _, b in blocks],
            pure=True,
            key=[f"nivalis-sweep-{info['hash'][:12]}-{a}-{b}" for a, b in blocks],
        )
        frames = client.map(operator.getitem, pairs, [0] * n)
        fails = client.map(operator.getitem, pairs, [1] * n)
        frame = dd.from_delayed(frames, meta=meta, verify_meta=False)
        failed = dask.delayed(lambda *parts: [f for p in parts for f in p])(*fails)
    else:
        pairs = [dask.delayed(_run_block, pure=True)(text, columns, a, b) for a, b in blocks]
        frame = dd.from_delayed([p[0] for p in pairs], meta=meta, verify_meta=False)
        failed = dask.delayed(lambda *parts: [f for p in parts for f in p])(*[p[1] for p in pairs])
    return (frame, failed) if with_failures else frame
