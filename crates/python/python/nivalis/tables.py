"""astropy tables from the columns the core's export code builds."""

from __future__ import annotations

import numpy as np


def _unit(text: str):
    import astropy.units as u

    return u.dimensionless_unscaled if text == "" else u.Unit(text)


def qtable(columns, arrays, provenance, kind=None, quantity=None):
    """A QTable: one column per exported column with its unit and description;
    undefined values (NaN from the core) are masked. ``meta`` holds the
    provenance (program, disk_hash, disk) and which table it is."""
    from astropy.table import QTable
    from astropy.utils.masked import Masked

    table = QTable()
    for c, values in zip(columns, arrays):
        q = np.asarray(values) * _unit(c["unit"])
        missing = np.isnan(values)
        if missing.any():
            q = Masked(q, mask=missing)
        table[c["name"]] = q
        table[c["name"]].info.description = c["description"]
    table.meta["program"] = provenance["program"]
    table.meta["disk_hash"] = provenance["disk_hash"]
    table.meta["disk"] = provenance["disk"]
    table.meta["table"] = kind
    if quantity is not None:
        table.meta["quantity"] = quantity
    return table
