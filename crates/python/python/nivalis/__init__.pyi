"""Type stubs of the ``nivalis`` package (units in every name; see docs/python.md)."""

import os
from typing import Any, Dict, List, Mapping, Optional, Tuple, Union

import numpy as np
import numpy.typing as npt

__version__: str

Problem = Dict[str, Optional[str]]  # {path, value, allowed, message}

class DiskError(ValueError):
    problems: List[Problem]
    def __init__(self, problems: List[Problem]) -> None: ...

class SweepError(ValueError):
    problems: List[Problem]
    def __init__(self, problems: List[Problem]) -> None: ...

class Disk:
    warnings: List[Problem]
    def __init__(self, data: Optional[Mapping[str, Any]] = None) -> None: ...
    @classmethod
    def from_file(cls, path: Union[str, os.PathLike]) -> Disk: ...
    @classmethod
    def from_json(cls, text: str) -> Disk: ...
    def with_values(self, values: Mapping[str, Any]) -> Disk: ...
    def to_dict(self) -> Dict[str, Any]: ...
    def resolved(self) -> Dict[str, Any]: ...
    def to_json(self) -> str: ...
    def run(self) -> Model: ...

class Model:
    provenance: Dict[str, Any]
    @property
    def disk_hash(self) -> str: ...
    # Arrays over the radial cells, inner first (units in the names).
    radius_au: npt.NDArray[np.float64]  # [AU]
    surface_density_g_cm2: npt.NDArray[np.float64]  # [g cm-2]
    midplane_temperature_k: npt.NDArray[np.float64]  # [K]
    irradiation_temperature_k: npt.NDArray[np.float64]  # [K]
    accretion_temperature_k: npt.NDArray[np.float64]  # [K]
    midplane_density_h_cm3: npt.NDArray[np.float64]  # [H nuclei cm-3]
    scale_height_au: npt.NDArray[np.float64]  # [AU]
    aspect_ratio: npt.NDArray[np.float64]  # [1]
    c_to_o_gas: npt.NDArray[np.float64]  # [1], NaN where undefined
    c_to_o_ice: npt.NDArray[np.float64]  # [1]
    c_to_o_solid: npt.NDArray[np.float64]  # [1]
    c_to_h_gas_rel_star: npt.NDArray[np.float64]  # [1]
    o_to_h_gas_rel_star: npt.NDArray[np.float64]  # [1]
    def arrays(self, kind: str = "structure") -> Dict[str, npt.NDArray[np.float64]]: ...
    def ice_fraction(self, species: str) -> npt.NDArray[np.float64]: ...
    def profile(self) -> Any: ...  # astropy.table.QTable
    def structure(self) -> Any: ...  # astropy.table.QTable
    def elements(self) -> Any: ...  # astropy.table.QTable
    def map(self, quantity: str) -> Any: ...  # astropy.table.QTable
    def table_text(self, kind: str, format: str = "csv", quantity: Optional[str] = None) -> str: ...
    def snowlines(self, text: bool = False) -> Union[Dict[str, Any], str]: ...
    def planet(
        self,
        radius_au: float,
        solid_to_gas: float,
        to_radius_au: Optional[float] = None,
        weighting: str = "accreted_mass",
        mix: float = 1.0,
        format: str = "json",
        text: bool = False,
    ) -> Union[Dict[str, Any], str]: ...
    def fit(self, format: str = "json", text: bool = False, **options: Any) -> Union[Dict[str, Any], str]: ...
    def methods(self) -> str: ...
    def bibtex(self) -> str: ...

SweepLike = Union[str, os.PathLike, Mapping[str, Any]]

def program_version() -> str: ...
def sweep_info(sweep: SweepLike, base_dir: Optional[str] = None) -> Dict[str, Any]: ...
def sweep_frame(
    sweep: SweepLike, start: int = 0, end: Optional[int] = None, base_dir: Optional[str] = None
) -> Tuple[Any, List[Dict[str, Any]]]: ...
def sweep(
    sweep: SweepLike,
    client: Any = None,
    partitions: Optional[int] = None,
    base_dir: Optional[str] = None,
    with_failures: bool = False,
) -> Any: ...  # dask.dataframe.DataFrame, or (frame, delayed failed list)
