"""Choosing the cases to solve: the ones named (`quaver run --case NAME`) and what they need.

A combination needs its cases, an envelope its cases and combinations; a free, history, harmonic or spectrum case needs its modes
case (its `modes = NAME` option, or the deck's first modes case) and its start, a static case or
a combination, if it has one.
"""

from __future__ import annotations

from dataclasses import replace

from .errors import DeckError, suggest
from .model import Model

__all__ = ["select_cases"]


def _needs(model: Model, name: str) -> list[str]:
    """The cases and combinations the result `name` is computed from."""
    combo = next((c for c in model.combinations if c.name == name), None)
    if combo is not None:
        return list(combo.factors)
    env = next((e for e in model.envelopes if e.name == name), None)
    if env is not None:
        return list(env.over)
    return list(next(c for c in model.cases if c.name == name).needs)


def select_cases(model: Model, names) -> tuple[Model, list[str]]:
    """The model with only the cases and combinations `names` and those they need, in the
    deck's order, and the names added as needed; the model given is not changed.

    An unknown name is refused with the nearest one.

    Examples
    --------
    >>> only, added = select_cases(model, ["QUAKE"])   # doctest: +SKIP
    >>> added                                           # doctest: +SKIP
    ['MODES']
    """
    known = [c.name for c in model.cases] + [c.name for c in model.combinations] + [e.name for e in model.envelopes]
    for name in names:
        if name not in known:
            raise DeckError(f"--case {name}: the deck has no case or combination of that name; "
                            + (suggest(name, known) if known else "it defines none"))
    keep, todo = set(), list(names)
    while todo:
        name = todo.pop()
        if name not in keep:
            keep.add(name)
            todo += _needs(model, name)
    added = [n for n in known if n in keep and n not in names]
    return replace(model, cases=[c for c in model.cases if c.name in keep],
                   combinations=[c for c in model.combinations if c.name in keep],
                   envelopes=[e for e in model.envelopes if e.name in keep],
                   settings=dict(model.settings), warnings=list(model.warnings)), added
