"""A long animation's frame captions drawn by a plain text actor at a fixed font size.

The corner annotation a caption starts as (pyvista's `add_text` at a named corner) works out
its font size anew whenever its text changes, which on the software renderer costs about half
of a response frame (20 of 40 ms on the rack demo). `FixedCaption` finds, once an animation,
the font size at which a text actor draws the shortest caption pixel for pixel as the
annotation does, and then the longest caption length the annotation still draws at that size
(it shrinks a caption too wide for its corner, such as the one marking the largest motion);
captions up to that length are drawn by the text actor, longer ones by the annotation.
"""

from __future__ import annotations

import numpy as np

from .grab import grab

__all__ = ["FIXED_FROM", "FixedCaption"]

FIXED_FROM = 40        # frames: shorter animations keep the annotation (the search costs a few renders)
_CORNER = (4, 4)       # pixels: where the annotation puts lower-left text
_SIZES = sorted(range(6, 41), key=lambda s: abs(s - 15))     # nearest first to its size at 640 x 480


class FixedCaption:
    """Captions in the plotter `p`'s current frame, each as the lower-left corner annotation
    `clock` would draw it, most by a text actor at a fixed font size (`show`)."""

    def __init__(self, p, clock, captions):
        self.p, self.clock, self.actor, self.longest = p, clock, None, -1
        lengths = sorted({len(c) for c in captions})
        first = min(captions, key=len)
        want = self._annotated(first)
        clock.SetVisibility(False)
        actor = p.add_text(first, position=_CORNER, render=False)
        actor.GetTextProperty().ShallowCopy(clock.GetTextProperty())
        for size in _SIZES:
            actor.GetTextProperty().SetFontSize(size)
            if np.array_equal(grab(p), want):
                self.actor, self.longest = actor, len(first)
                break
        else:
            p.remove_actor(actor, render=False)
            clock.SetVisibility(True)
            return
        for n in lengths[::-1]:           # the longest length still drawn at that size
            if n <= self.longest:
                break
            text = max((c for c in captions if len(c) == n))
            want = self._annotated(text)
            self._fixed(text)
            if np.array_equal(grab(p), want):
                self.longest = n
                break

    def _annotated(self, text: str) -> np.ndarray:
        if self.actor is not None:
            self.actor.SetVisibility(False)
        self.clock.SetVisibility(True)
        self.clock.set_text("lower_left", text)
        return grab(self.p)

    def _fixed(self, text: str) -> None:
        self.clock.SetVisibility(False)
        self.actor.SetVisibility(True)
        self.actor.SetInput(text)

    def show(self, text: str) -> None:
        """Set the caption (drawn at the next render)."""
        fixed = self.actor is not None and len(text) <= self.longest
        if self.actor is not None:
            self.actor.SetVisibility(fixed)
            if fixed:
                self.actor.SetInput(text)
        self.clock.SetVisibility(not fixed)
        if not fixed:
            self.clock.set_text("lower_left", text)
