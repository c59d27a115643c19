"""The practice screen's keys that steer the coach: pin the zone shown (p) and the table
check (the reference shots that calibrate a table).

A mixin of PracticeScreen, kept apart so practice.py stays about dealing and showing.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any


class CoachKeys:
    """p and the table check on the practice screen (mixed into PracticeScreen)."""

    session: Any
    aim: Any
    pinned: bool

    if TYPE_CHECKING:  # provided by PracticeScreen; never defined here

        def say(self, text: str, error: bool = False) -> None: ...
        def _refresh(self) -> None: ...
        def _forget_ahead(self) -> None: ...
        def _deal(self, first: bool = False) -> None: ...

    def pinned_text(self) -> str:
        """What the coach has pinned, in words ("" when nothing is, or the pin has run out)."""
        sched = self.session.dealer.scheduler
        if not self.pinned:
            return ""
        text = str(getattr(sched, "pinned", "") or "")
        if not text:
            self.pinned = False
        return text

    def action_pin(self) -> None:
        dealer = self.session.dealer
        if self.pinned_text():
            with self.session.lock:
                dealer.unpin()
            self.pinned = False
            self._forget_ahead()
            self._refresh()
            self.say("unpinned: the coach picks setups again")
            return
        pick = self.session.pick
        if pick is None:
            return
        try:
            with self.session.lock:
                zone = self.session.played_zone(self.aim)
                if zone:
                    dealer.pin(zone=zone)
                else:
                    dealer.pin(family=pick.setup.family.name)
        except ValueError as exc:
            self.say(str(exc), True)
            return
        self.pinned = True
        self._forget_ahead()
        self._refresh()
        what = self.pinned_text() or "this zone for 10 setups"
        self.say(f"pinned: {what} (p again to unpin)")

    def action_table_check(self) -> None:
        try:
            from tablecoach.core.calibration.check import table_check_setups

            shots_ = table_check_setups(self.session.table)
        except ValueError as exc:
            self.say(f"no table check here: {exc}", True)
            return
        with self.session.lock:
            self.session.dealer.queue_check(shots_)
        self._forget_ahead()
        self.say(f"table check: {len(shots_)} reference shots come next; log each as usual")
        self._deal()
