"""Somaward: passive-cable attenuation of synaptic signals between a dendritic site and the soma.

The public face is :func:`solve` (scenario dict → report dict) and the cable-constant
functions of :mod:`somaward.membrane`. Importing the package needs numpy only; scipy is imported
inside the few functions that need it, so the page can answer before scipy has loaded.
"""

from ._version import __version__
from .errors import InternalError, ScenarioError
from .membrane import (
    ac_space_constant_um,
    input_resistance_infinite_Mohm,
    membrane_time_constant_ms,
    per_unit_length,
    space_constant_um,
    sphere_input_resistance_Mohm,
)
from .report import solve
from .scenario import validate

__all__ = [
    "solve",
    "validate",
    "ScenarioError",
    "InternalError",
    "space_constant_um",
    "membrane_time_constant_ms",
    "input_resistance_infinite_Mohm",
    "per_unit_length",
    "ac_space_constant_um",
    "sphere_input_resistance_Mohm",
    "__version__",
]
