"""The practice screen's reference lines: keep the line of a hit (k), and move the family's
reference line to each new setup (parallel, turned about the convergence point, solved).

A mixin of PracticeScreen: the store lookup and the three traces run in a worker.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from textual import work

from tablecoach.core import aim as aims
from tablecoach.core.shots import Aim, Convergence, ShotError, Stroke
from tablecoach.core.store.errors import StoreError
from tablecoach.core.store.refs import closest_stroke, reference_of
from tablecoach.render import words as w
from tablecoach.render.shift_view import shift_lines, with_shift
from tablecoach.render.speed_view import speed_lines, with_speeds
from tablecoach.render.table_view import Picture

from ..messages import ShiftFound


class ReferenceKeys:
    """k on the practice screen, and the reference line on the card (mixed into PracticeScreen)."""

    session: Any
    token: int
    shift: Any
    shift_stroke: Stroke | None = None  # the stroke the reference line was played at
    speed_paths: Any
    aim: Any
    ascii_only: bool

    if TYPE_CHECKING:  # provided by PracticeScreen (and Screen); never defined here

        def say(self, text: str, error: bool = False) -> None: ...
        def post_message(self, message: Any) -> bool: ...
        def _refresh(self) -> None: ...

    def action_keep_line(self) -> None:
        """Keep the line of the hit just logged as this family's reference on this table."""
        logged = self.session.logged
        if not logged or logged[-1].result != "hit":
            self.say("k keeps the line of a hit: log a hit first (h), then k")
            return
        a = logged[-1]
        try:
            self.session.store.add_reference(reference_of(a))
        except (StoreError, ValueError) as exc:
            self.say(f"line not kept: {exc}", True)
            return
        self.say(
            f"kept your {w.num(a.aim_used)} line as your "
            f"{w.family_text(a.shot.family, in_sentence=True)} reference (? explains)"
        )

    def start_shift(self, token: int, aim: Aim | None, conv: Convergence | None) -> None:
        """Look for this family's reference and move it to the setup (in a worker)."""
        if aim is not None and conv is not None:
            self._shift_worker(token, aim, conv)

    @work(thread=True, exclusive=True, group="shift")
    def _shift_worker(self, token: int, aim: Aim, conv: Convergence) -> None:
        s = self.session
        fam = aim.setup.family
        try:
            refs = s.store.references_for(
                s.player, s.table.name, fam.travel, fam.rails, aim.setup.pocket
            )
        except StoreError:
            return
        st = aim.stroke  # of several lines, the one played most like this shot's stroke
        ref = closest_stroke(refs, st.speed, st.english, st.follow)
        if ref is None:
            return
        rail = fam.rails[0]
        start = s.table.to_metres(*ref.start)
        reading = s.table.along_to_metres(rail, ref.reading)
        try:
            moved = aims.shift(s.table, aim.setup, start, reading, aim, conv, aim.stroke, aim.model)
        except (ShotError, ValueError):
            return  # a reference that no longer fits this table: nothing drawn
        ref_stroke = Stroke(ref.speed, ref.english, ref.follow)
        self.post_message(ShiftFound(token, moved, ref_stroke))

    def on_shift_found(self, message: ShiftFound) -> None:
        if message.token != self.token:
            return
        self.shift = message.shift
        self.shift_stroke = message.stroke
        self._refresh()

    def decorated(self, picture: Picture) -> Picture:
        """The table picture with the reference line moved here and the speed paths, if any."""
        aim, table = self.aim, self.session.table
        if aim is None:
            return picture
        if self.shift is not None:
            picture = with_shift(table, picture, self.shift)
        if self.speed_paths:
            picture = with_speeds(table, picture, self.speed_paths)
        return picture

    def card_lines(self) -> list[tuple[str, Any]] | None:
        """The card's rows under the reading: the reference line, then the speed paths."""
        aim, table = self.aim, self.session.table
        if aim is None:
            return None
        rows: list[tuple[str, Any]] = []
        if self.shift is not None:
            ref = self.shift_stroke
            note = "" if ref is None else w.reference_stroke_text(table, ref, aim.stroke)
            lines = shift_lines(table, aim.setup, self.shift, self.ascii_only, note)
            for i, t in enumerate(lines):
                rows.append(("Line" if i == 0 else "", t))
        if self.speed_paths:
            for i, t in enumerate(speed_lines(table, aim, self.speed_paths, self.ascii_only)):
                rows.append(("Speed" if i == 0 else "", t))
        return rows or None
