"""Batched element matrices (frame and truss members), vectorised over elements."""

from .frame import (
    condense_load,
    condense_mass,
    condense_releases,
    frame_mass,
    frame_mass_timoshenko,
    frame_stiffness,
    to_global,
    transform_matrix,
    truss_mass,
    truss_stiffness,
    uniform_load_fixed_end,
)

__all__ = [
    "condense_load",
    "condense_mass",
    "condense_releases",
    "frame_mass",
    "frame_mass_timoshenko",
    "frame_stiffness",
    "to_global",
    "transform_matrix",
    "truss_mass",
    "truss_stiffness",
    "uniform_load_fixed_end",
]
