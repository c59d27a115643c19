"""The practice screen's keys that log a shot or bring a setup back: hit, miss, again, undo.

A mixin of PracticeScreen, kept apart so each module holds one concept: this one says what was
seen and logs it; practice.py deals, solves and shows.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from tablecoach.core.records import Attempt
from tablecoach.core.store.errors import StoreError
from tablecoach.render import words as w

from .landing import LandingPrompt, MissReport

MISS_WORDS = {"short": "stopped short of the rail", "jaw": "rattled in the jaw"}
"""How a miss without a landing is said back to the player."""


def how_it_ended(a: Attempt) -> str:
    """What a logged attempt recorded of where the ball went, in a few words."""
    if a.landing_rail is not None and a.landing_at is not None:
        return f"{a.landing_rail} rail at {w.num(a.landing_at)}"
    if a.miss_kind in MISS_WORDS:
        return MISS_WORDS[a.miss_kind]
    return "no landing recorded"


class ShotKeys:
    """h, H, m, r and u on the practice screen (mixed into PracticeScreen)."""

    session: Any
    aim: Any
    ascii_only: bool
    refresh_dealer: bool
    app: Any

    if TYPE_CHECKING:  # provided by PracticeScreen (and Screen); never defined here

        def offer_text(self) -> str: ...
        def say(self, text: str, error: bool = False) -> None: ...
        def _ready(self) -> Any: ...
        def _deal(self, first: bool = False) -> None: ...
        def _solve(self) -> None: ...

    def action_hit(self) -> None:
        aim = self._ready()
        if aim is None:
            return
        self._logged(lambda: self.session.log_hit(aim))

    def action_hit_landing(self) -> None:
        """A hit with the landing the player saw (by choice: a plain hit records none)."""
        aim = self._ready()
        if aim is None:
            return
        at = w.landing_diamonds(self.session.table, aim.landing)
        hint = f"the aim predicts the {aim.landing.rail} rail at {w.num(at)}"

        def done(result: MissReport | None) -> None:
            if result is None:
                self.say("hit not logged (cancelled)")
                return
            self._logged(lambda: self.session.log_hit(aim, result.rail, result.at))

        prompt = LandingPrompt(aim.landing.rail, at, hint, self.ascii_only, hit=True)
        self.app.push_screen(prompt, done)

    def action_miss(self) -> None:
        aim = self._ready()
        if aim is None:
            return
        at = w.landing_diamonds(self.session.table, aim.landing)
        hint = f"the aim predicts the {aim.landing.rail} rail at {w.num(at)}"

        def done(result: MissReport | None) -> None:
            if result is None:
                self.say("miss not logged (cancelled)")
                return
            self._logged(lambda: self.session.log_miss(aim, result.rail, result.at, result.kind))

        prompt = LandingPrompt(aim.landing.rail, at, hint, self.ascii_only)
        self.app.push_screen(prompt, done)

    def _logged(self, do: Any) -> None:
        try:
            a = do()
        except (StoreError, ValueError) as exc:
            self.say(f"not saved: {exc}", True)
            return
        st = self.session.stats()
        left = self.session.repeats_left()
        said = f"logged a {a.result} ({how_it_ended(a)})"
        offer = self.offer_text()
        if offer:  # the offer instead of the count (on the line below), so the line fits 80
            said = f"{said}; {offer}"
        else:
            said += f"; {w.count(st.shots, 'shot')}, streak {st.streak}"
        if left:
            self.session.again()
            self.say(f"{said}; the same setup again ({w.count(left, 'more time')})")
            self._solve()
            return
        self.say(said if offer else f"{said}; r shoots it again")
        self._deal()

    def action_again(self) -> None:
        try:
            pick = self.session.again()
        except ValueError:
            self.say("the setup just logged no longer fits this table", True)
            return
        if pick is None:
            self.say("nothing logged yet in this session: r brings back the setup just logged")
            return
        self.say("again: the setup you just logged, same stroke and spin")
        self._solve()

    def action_undo(self) -> None:
        try:
            gone = self.session.undo()
        except StoreError as exc:
            self.say(f"cannot undo: {exc}", True)
            return
        if gone is None:
            self.say("nothing to undo in this session")
            return
        try:
            self.session.show_again(gone)
        except ValueError:
            self.say(f"undone: the {gone.result}; its setup no longer fits this table")
            self._deal()
            return
        self.say(f"undone: the {gone.result} ({how_it_ended(gone)}); its setup is back")
        self.refresh_dealer = True  # once the setup is back on the screen (see _after_solved)
        self._solve()
