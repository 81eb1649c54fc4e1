"""Conductor metals as the analysis uses them: the constants of coilstage/data/materials.toml (the one
copy) with the IEC 60949 material constant K derived from them."""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache

from coilstage import tables
from coilstage.physics.fault import material_k


@dataclass(frozen=True)
class Metal:
    """A conductor metal's constants, from the shipped materials table (one copy, in data)."""

    name: str
    rho20: float  # [Ω·m]
    alpha20: float  # [1/K]
    qc: float  # volumetric heat capacity [J/(K·m³)], IEC 60949
    beta: float  # reciprocal temperature coefficient [K], IEC 60949
    k: float  # IEC 60949 material constant K [A·s^½/m²]


@cache
def metal(name: str) -> Metal:
    """The constants of a conductor metal (``copper`` or ``aluminium``) from coilstage/data/materials.toml."""
    row = tables.material(name)
    qc, beta = float(row["qc"]), float(row["beta"])
    return Metal(name, float(row["rho20"]), float(row["alpha20"]), qc, beta, material_k(qc, beta, float(row["rho20"])))
