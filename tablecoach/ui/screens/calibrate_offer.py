"""The practice screen's calibration offer: after OFFER_AFTER new landings on a table, `c`
fits it again in a worker thread (the screen keeps going) and says what changed.

A mixin of PracticeScreen, kept apart so practice.py stays about dealing and showing.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from textual import work

from tablecoach.core import feedback

from ..messages import CalibrationDone


class CalibrationOffer:
    """`c` on the practice screen, and the offer that tells the player about it."""

    session: Any
    status: str
    solved: dict[Any, Any]
    offered: bool = False
    calibrating: bool = False
    offer_hint: str = ""
    """Added to the table's status line under the table while an offer stands."""

    if TYPE_CHECKING:  # provided by PracticeScreen (and Screen); never defined here

        def say(self, text: str, error: bool = False) -> None: ...
        def _solve(self) -> None: ...
        def _refresh(self) -> None: ...
        def _forget_ahead(self) -> None: ...
        def post_message(self, message: Any) -> bool: ...

    def offer_text(self) -> str:
        """The offer, when one is due (checked after each logged shot), else ""."""
        if self.offered or self.calibrating:
            return ""
        s = self.session
        try:
            n = feedback.should_offer(s.store, s.table.name, s.player)
        except ValueError:
            return ""
        if not n:
            return ""
        self.offered = True
        self.offer_hint = f"; {feedback.landings_words(n)}: c calibrates"
        return f"{feedback.landings_words(n)}: c calibrates"

    def action_calibrate(self) -> None:
        if self.calibrating:
            self.say("the calibration is still running; keep practising")
            return
        self.calibrating = True
        self.offered = True
        self.offer_hint = "; calibrating..."
        s = self.session
        self.say(f"calibrating the {s.table.name} table from your landings; keep practising")
        self._calibrate_worker(s.table.name, s.player, s.model, s.calibration)

    @work(thread=True, group="calibrate", exit_on_error=False)
    def _calibrate_worker(self, table: str, player: str, model: str, before: Any) -> None:
        from tablecoach.core.calibration.use import calibrate_from_store

        try:
            cals = calibrate_from_store(self.session.store, table, player)
            cal = next((c for c in cals if c.player == player), cals[0])
        except ValueError as exc:
            self.post_message(CalibrationDone(error=str(exc)))
            return
        self.post_message(CalibrationDone(cal, feedback.what_changed(before, cal)))

    def on_calibration_done(self, message: CalibrationDone) -> None:
        self.calibrating = False
        self.offer_hint = ""
        if message.error:
            self.say(f"not calibrated: {message.error}", True)
            return
        cal = message.calibration
        s = self.session
        try:
            base = s.store.get_table(s.table.name)
        except ValueError as exc:
            self.say(f"calibrated, but the table could not be read again: {exc}", True)
            return
        with s.lock:
            s.calibration = cal
            s.table = cal.apply(base)
        self.status = cal.status
        self.solved.clear()  # aims solved on the old table
        self._forget_ahead()  # and the setup dealt ahead was solved there too
        # what changed stays under the table (the message line is one line)
        self.offer_hint = ": " + "; ".join(message.changes)
        self.say(f"calibrated the {s.table.name} table: what changed is under the table")
        if s.pick is not None:
            self._solve()
        else:
            self._refresh()
