"""Disks and models: thin wrappers over the compiled core (``nivalis._core``)."""

from __future__ import annotations

import json
import os
from typing import Any, Mapping, Optional

import numpy as np

from . import _core
from .tables import qtable


class DiskError(ValueError):
    """Every problem of a disk, raised at once.

    ``problems`` is a list of dicts ``{path, value, allowed, message}``: the
    field's dotted path, the offending value as short JSON text (or None),
    what is allowed (or None) and the sentence shown to a person, exactly as
    the CLI lists them (``nivalis check``).
    """

    def __init__(self, problems: list):
        self.problems = problems
        super().__init__("\n".join(f"{p['path']}: {p['message']}" for p in problems))


def _problems(err: ValueError) -> list:
    """The problems a core ValueError carries as JSON, else one problem with its text."""
    try:
        found = json.loads(str(err))
        if isinstance(found, list):
            return found
    except ValueError:
        pass
    return [{"path": "(model)", "value": None, "allowed": None, "message": str(err)}]


class Disk:
    """A validated disk description (``nivalis-disk/1``, docs/disk-file.md).

    ``Disk(dict)`` and ``Disk.from_file(path)`` read it with the same reader as
    the CLI; problems raise one :class:`DiskError` listing every one. Units are
    in the field names (``star.luminosity_lsun`` in solar luminosities,
    ``disk.gas_mass_msun`` in solar masses, ``disk.inner_radius_au`` in AU).
    """

    def __init__(self, data: Optional[Mapping[str, Any]] = None):
        try:
            text = json.dumps({} if data is None else data, allow_nan=False)
        except ValueError as e:  # NaN or infinity: not JSON
            raise DiskError(
                [{"path": "(file)", "value": None, "allowed": "finite numbers", "message": str(e)}]
            ) from None
        self._init(text)

    def _init(self, text: str) -> None:
        ok, payload, warnings = _core.read_disk(text)
        if not ok:
            raise DiskError(json.loads(payload))
        self._text = text
        self._resolved = payload
        #: Things worth knowing that do not stop a run, as ``{path, value, allowed, message}``.
        self.warnings = json.loads(warnings)

    @classmethod
    def from_file(cls, path: "str | os.PathLike") -> "Disk":
        """Read a disk file (JSON text, the same checks as ``nivalis check``)."""
        with open(path, encoding="utf-8") as f:
            text = f.read()
        return cls._from_text(text)

    @classmethod
    def from_json(cls, text: str) -> "Disk":
        """Read a disk from JSON text."""
        return cls._from_text(text)

    @classmethod
    def _from_text(cls, text: str) -> "Disk":
        disk = cls.__new__(cls)
        disk._init(text)
        return disk

    def with_values(self, values: Mapping[str, Any]) -> "Disk":
        """A changed copy: ``{"star.luminosity_lsun": 3}`` sets each dotted path
        (as ``nivalis --set``) and validates the result like a file."""
        try:
            text = _core.with_values(self._text, json.dumps(dict(values), allow_nan=False))
        except ValueError as e:
            raise DiskError(_problems(e)) from None
        return Disk._from_text(text)

    def to_dict(self) -> dict:
        """The disk as given (only the fields set)."""
        return json.loads(self._text)

    def resolved(self) -> dict:
        """Every field with its value (defaults filled in), as the CLI saves the disk."""
        return json.loads(self._resolved)

    def to_json(self) -> str:
        """The resolved disk file exactly as ``nivalis`` writes it."""
        return self._resolved

    def run(self) -> "Model":
        """Run the model (the GIL is released while the core runs)."""
        try:
            core = _core.run(self._text)
        except ValueError as e:
            raise DiskError(_problems(e)) from None
        return Model(core)

    def __repr__(self) -> str:
        return f"nivalis.Disk({self._text})"


#: Model arrays: name -> (table, unit, description). Units in the names.
ARRAYS = {
    "radius_au": ("structure", "AU", "radial cell centre"),
    "surface_density_g_cm2": ("structure", "g / cm2", "gas surface density"),
    "midplane_temperature_k": ("structure", "K", "midplane temperature"),
    "irradiation_temperature_k": ("structure", "K", "stellar irradiation temperature"),
    "accretion_temperature_k": ("structure", "K", "viscous heating temperature"),
    "midplane_density_h_cm3": ("structure", "cm-3", "midplane H-nucleus number density"),
    "scale_height_au": ("structure", "AU", "midplane pressure scale height"),
    "aspect_ratio": ("structure", "", "scale height over radius"),
    "c_to_o_gas": ("profile", "", "C/O number ratio of the gas (NaN where undefined)"),
    "c_to_o_ice": ("profile", "", "C/O number ratio of the ices (NaN where undefined)"),
    "c_to_o_solid": ("profile", "", "C/O number ratio of all solids"),
    "c_to_h_gas_rel_star": ("profile", "", "gas C/H over the star's"),
    "o_to_h_gas_rel_star": ("profile", "", "gas O/H over the star's"),
}


class Model:
    """A computed model.

    Arrays (numpy float64 over the radial cells, inner first; NaN where a ratio
    is undefined): ``radius_au`` [AU], ``surface_density_g_cm2`` [g cm-2],
    ``midplane_temperature_k``, ``irradiation_temperature_k``,
    ``accretion_temperature_k`` [K], ``midplane_density_h_cm3`` [H nuclei
    cm-3], ``scale_height_au`` [AU], ``aspect_ratio`` [1], ``c_to_o_gas``,
    ``c_to_o_ice``, ``c_to_o_solid``, ``c_to_h_gas_rel_star``,
    ``o_to_h_gas_rel_star`` [1]; ``ice_fraction(species)`` [1] at the midplane.

    Tables (astropy ``QTable`` with units, descriptions and the provenance in
    ``meta``): :meth:`profile`, :meth:`structure`, :meth:`elements`,
    :meth:`map`. Texts as the CLI writes them: :meth:`snowlines`,
    :meth:`planet`, :meth:`fit`, :meth:`methods`, :meth:`bibtex`.
    """

    def __init__(self, core):
        self._core = core
        self._arrays: dict = {}
        #: ``{program, disk_hash, disk}``: the program version, the first 12 hex digits of the
        #: SHA-256 of the resolved disk file, and the resolved disk.
        self.provenance = json.loads(core.provenance_json())

    @property
    def disk_hash(self) -> str:
        """First 12 hex digits of the SHA-256 of the resolved disk file."""
        return self.provenance["disk_hash"]

    def _table_arrays(self, kind: str, quantity: Optional[str] = None):
        columns, arrays = self._core.table_arrays(kind, quantity)
        return json.loads(columns), arrays

    def arrays(self, kind: str = "structure") -> "dict[str, np.ndarray]":
        """The columns of a table (``structure``, ``profile`` or ``elements``) as numpy arrays."""
        columns, arrays = self._table_arrays(kind)
        return {c["name"]: a for c, a in zip(columns, arrays)}

    def __getattr__(self, name: str):
        if name.startswith("_") or name not in ARRAYS:
            raise AttributeError(name)
        kind = ARRAYS[name][0]
        if kind not in self._arrays:
            self._arrays[kind] = self.arrays(kind)
        return self._arrays[kind][name]

    def ice_fraction(self, species: str) -> np.ndarray:
        """Midplane ice fraction [1] of a species (H2O CO CO2 CH4 N2 NH3 CH3OH H2S HCN) per radial cell."""
        key = f"ice_fraction_{species}"
        table = self.arrays("profile")
        if key not in table:
            raise ValueError(f"unknown species {species!r}")
        return table[key]

    def _qtable(self, kind: str, quantity: Optional[str] = None):
        columns, arrays = self._table_arrays(kind, quantity)
        return qtable(columns, arrays, self.provenance, kind=kind, quantity=quantity)

    def profile(self):
        """Radial model profile as a QTable (``nivalis model``): C/O of gas, ice and
        solids, gas C/H and O/H over the star's, midplane ice fraction per species."""
        return self._qtable("profile")

    def structure(self):
        """Radial structure as a QTable (``nivalis structure``): radius [AU], surface
        density [g cm-2], temperatures [K], density [cm-3], scale height [AU]."""
        return self._qtable("structure")

    def elements(self):
        """Midplane element abundances per H nucleus in each phase (``nivalis elements``)."""
        return self._qtable("elements")

    def map(self, quantity: str):
        """An r-z map as a long-form QTable (``nivalis map --quantity``): radius [AU],
        height [AU], z/r and the value in the quantity's unit."""
        try:
            return self._qtable("map", quantity)
        except ValueError as e:
            raise ValueError(str(e).replace("--quantity: ", "quantity: ")) from None

    def table_text(self, kind: str, format: str = "csv", quantity: Optional[str] = None) -> str:
        """A table exactly as the CLI writes it: ``kind`` profile (``nivalis model``),
        structure, elements or map; ``format`` csv, ecsv or json."""
        return self._core.table_text(kind, quantity, format)

    def snowlines(self, text: bool = False):
        """Snowlines [AU] and snow surfaces as ``nivalis snowlines`` gives them (a dict,
        or with ``text=True`` the CLI's JSON text byte for byte)."""
        out = self._core.snowlines_text()
        return out if text else json.loads(out)

    def planet(
        self,
        radius_au: float,
        solid_to_gas: float,
        to_radius_au: Optional[float] = None,
        weighting: str = "accreted_mass",
        mix: float = 1.0,
        format: str = "json",
        text: bool = False,
    ):
        """Envelope of a planet that accreted at ``radius_au`` [AU] (or over a migration
        range to ``to_radius_au`` [AU]) with solid-to-gas mass ratio ``solid_to_gas`` [1]
        and mixing fraction ``mix`` [1]: ``nivalis planet``'s output (a dict, or the
        CLI's text with ``text=True``; ``format`` json or csv)."""
        try:
            out = self._core.planet_text(radius_au, solid_to_gas, to_radius_au, weighting, mix, format)
        except ValueError as e:
            raise DiskError(_problems(e)) from None
        return out if text or format != "json" else json.loads(out)

    def fit(self, format: str = "json", text: bool = False, **options):
        """Inverse chi-square map of formation radius x solid-to-gas ratio (``nivalis fit``).
        ``options`` take the CLI's names with underscores: ``c_to_o``, ``c_to_o_sigma``,
        ``c_to_h_dex`` [dex], ``c_to_h_sigma`` [dex], ``o_to_h_dex``, ``o_to_h_sigma``,
        ``m_to_h_dex``, ``m_to_h_sigma``, ``covariance`` (flat list), ``relative_to``
        (star or sun), ``mix``, ``ratio_min``, ``ratio_max``, ``ratio_count``,
        ``radius_prior_au`` [AU, (min, max)], ``solid_to_gas_prior``,
        ``oxygen_correction``, ``planet_mass_mjup`` [M_Jup], ``feeding_zone_hill_radii``,
        ``convention``. Returns a dict (json) or the CLI's text (``text=True``)."""
        try:
            out = self._core.fit_text(json.dumps(options, allow_nan=False), format)
        except ValueError as e:
            raise DiskError(_problems(e)) from None
        return out if text or format != "json" else json.loads(out)

    def methods(self) -> str:
        """The methods paragraph for exactly this configuration (``nivalis methods``)."""
        return self._core.methods_text()

    def bibtex(self) -> str:
        """BibTeX of exactly the references cited (``nivalis methods --bibtex``)."""
        return self._core.bibtex_text()

    def __repr__(self) -> str:
        return f"<nivalis.Model disk_hash={self.disk_hash}>"
