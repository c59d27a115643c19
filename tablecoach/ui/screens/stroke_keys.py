"""The practice screen's keys that change how this attempt is struck: the named stroke (s)
and the spin (e), each re-solving the aim (the attempt is filed under the stroke played);
w shows the same reading at the neighbouring strokes.

A mixin of PracticeScreen, kept apart so practice.py stays about dealing and showing.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from textual import work

from tablecoach.core import aim as aims
from tablecoach.core.shots import Aim
from tablecoach.render import words as w

from ..messages import SpeedsFound


class StrokeKeys:
    """s, e and w on the practice screen (mixed into PracticeScreen)."""

    session: Any
    aim: Any
    token: int
    speeds_on: bool
    speed_paths: Any

    if TYPE_CHECKING:  # provided by PracticeScreen; never defined here

        def say(self, text: str, error: bool = False) -> None: ...
        def _solve(self) -> None: ...
        def _refresh(self) -> None: ...
        def post_message(self, message: Any) -> bool: ...

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

    def action_speed_paths(self) -> None:
        """Show (or hide) this reading's path at the next softer and firmer named stroke."""
        self.speeds_on = not self.speeds_on
        if not self.speeds_on:
            self.speed_paths = None
            self.say("speed paths hidden (w shows them)")
            self._refresh()
            return
        same = " (the ideal model leaves speed out: the paths coincide)"
        self.say(
            "speed paths: this reading at the next softer and firmer stroke"
            + (same if self.session.model == "ideal" else "")
        )
        self.start_speeds(self.token, self.aim)

    def start_speeds(self, token: int, aim: Aim | None) -> None:
        """Trace the shown reading at the neighbouring strokes (in a worker), when asked for."""
        if self.speeds_on and aim is not None:
            self._speeds_worker(token, aim)

    @work(thread=True, exclusive=True, group="speeds")
    def _speeds_worker(self, token: int, aim: Aim) -> None:
        self.post_message(SpeedsFound(token, aims.speed_neighbours(self.session.table, aim)))

    def on_speeds_found(self, message: SpeedsFound) -> None:
        if message.token != self.token or not self.speeds_on:
            return
        self.speed_paths = message.paths
        self._refresh()
