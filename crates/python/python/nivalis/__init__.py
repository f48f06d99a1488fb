"""Nivalis: protoplanetary-disk structure, ice lines and C/O ratios in Python.

The same Rust core as the ``nivalis`` command-line tool and the page: a disk
is read by the same validating reader, the model run by the same code, and
every table and text built by the same export code, so the numbers are the
CLI's to the last digit.

>>> import nivalis
>>> disk = nivalis.Disk({"star": {"luminosity_lsun": 2}})
>>> model = disk.run()
>>> model.profile()                 # astropy QTable, units on every column
>>> model.snowlines()["snowlines"]["H2O"]   # radii in AU
>>> bright = disk.with_values({"star.luminosity_lsun": 3})

Units: the unit is in every name (``radius_au`` [AU], ``midplane_temperature_k``
[K], ``surface_density_g_cm2`` [g cm-2], ``midplane_density_h_cm3`` [H nuclei
cm-3]); ratios (C/O, ice fractions) are dimensionless. See docs/python.md.
"""

from ._core import program_version
from .disk import Disk, DiskError, Model
from .sweep import SweepError, sweep, sweep_frame, sweep_info

__version__ = "0.1.0"

__all__ = [
    "Disk",
    "DiskError",
    "Model",
    "SweepError",
    "program_version",
    "sweep",
    "sweep_frame",
    "sweep_info",
]
