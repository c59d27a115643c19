"""The practice screen's keys that change how this attempt is struck: the named stroke (s)
and the spin (e). Each re-solves the aim; the attempt is filed under the stroke played.

A mixin of PracticeScreen, kept apart so practice.py stays about dealing and showing.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from tablecoach.render import words as w


class StrokeKeys:
    """s and e on the practice screen (mixed into PracticeScreen)."""

    session: Any
    aim: Any

    if TYPE_CHECKING:  # provided by PracticeScreen; never defined here

        def say(self, text: str, error: bool = False) -> None: ...
        def _solve(self) -> None: ...

    def action_speed(self) -> None:
        if self.session.pick is None:
            return
        preset, stroke = self.session.next_speed()
        self.say(f"speed for this attempt: {preset}, {stroke.speed:.2f} m/s")
        self._solve()

    def action_spin(self) -> None:
        if self.session.pick is None:
            return
        stroke = self.session.next_spin(self.aim)
        said = w.spin_text(stroke, self.aim)
        note = "" if self.session.model != "ideal" else " (the ideal model leaves spin out)"
        self.say(f"spin for this attempt: {said}{note}")
        self._solve()
