"""Type stubs of the compiled core (``nivalis._core``); see ``nivalis`` for the public API."""

from typing import List, Optional, Tuple

import numpy as np
import numpy.typing as npt

def read_disk(text: str) -> Tuple[bool, str, str]:
    """(True, resolved disk JSON, warnings JSON) or (False, problems JSON, "[]")."""

def with_values(disk: str, values: str) -> str:
    """The disk JSON with each {dotted path: value} of the JSON object ``values`` set."""

def run(disk: str) -> CoreModel:
    """Run the model of a disk (JSON text); ValueError carries the problems as JSON."""

def sweep_info(text: str, base_dir: str) -> Tuple[bool, str]:
    """(True, {points, hash, columns, sweep} JSON) or (False, problems JSON)."""

def sweep_points(text: str, base_dir: str, start: int, end: int) -> Tuple[List[object], str]:
    """One array per column of grid points start..end, and the failed points as JSON."""

def program_version() -> str:
    """"nivalis X.Y.Z"."""

class CoreModel:
    def disk_json(self) -> str: ...
    def provenance_json(self) -> str: ...
    def table_arrays(
        self, kind: str, quantity: Optional[str]
    ) -> Tuple[str, List[npt.NDArray[np.float64]]]: ...
    def table_text(self, kind: str, quantity: Optional[str], format: str) -> str: ...
    def snowlines_text(self) -> str: ...
    def planet_text(
        self,
        radius_au: float,
        solid_to_gas: float,
        to_radius_au: Optional[float] = None,
        weighting: str = "accreted_mass",
        mix: float = 1.0,
        format: str = "json",
    ) -> str: ...
    def fit_text(self, options: str, format: str) -> str: ...
    def methods_text(self) -> str: ...
    def bibtex_text(self) -> str: ...
