"""Cross-section properties: shapes from dimensions (:mod:`.shapes`) and standard sections by
designation (:mod:`.catalogue`)."""

from . import catalogue, shapes
from .catalogue import *  # noqa: F403 (the package's names are the two modules' __all__)
from .shapes import *  # noqa: F403

__all__ = sorted([*shapes.__all__, *catalogue.__all__])
