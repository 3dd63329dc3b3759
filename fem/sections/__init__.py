"""Cross-section properties: shapes from dimensions (:mod:`.shapes`) and standard sections by
designation (:mod:`.catalogue`)."""

from .catalogue import CatalogueEntry, catalogue_designations, catalogue_entry, catalogue_section
from .shapes import (
    CATALOGUE,
    SHAPES,
    SectionProps,
    angle,
    angle_leg_moments,
    angle_principal_angle,
    channel,
    cowper_kappa_hollow_circle,
    cowper_kappa_rectangle,
    cowper_kappa_solid_circle,
    generic,
    ishape,
    make_section,
    pipe,
    rect,
    rhs,
    round_bar,
    shear_follows_nu,
)

__all__ = [
    "CATALOGUE",
    "SHAPES",
    "CatalogueEntry",
    "SectionProps",
    "angle",
    "angle_leg_moments",
    "angle_principal_angle",
    "catalogue_designations",
    "catalogue_entry",
    "catalogue_section",
    "channel",
    "cowper_kappa_hollow_circle",
    "cowper_kappa_rectangle",
    "cowper_kappa_solid_circle",
    "generic",
    "ishape",
    "make_section",
    "pipe",
    "rect",
    "rhs",
    "round_bar",
    "shear_follows_nu",
]
