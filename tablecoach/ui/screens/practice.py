"""The practice screen: a setup on the table, the aim, one or two keys to log the shot, the next."""

from __future__ import annotations

import importlib.util
from typing import Any

from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.widgets import Footer

from tablecoach.core import shots
from tablecoach.core.shots import Aim, Convergence, Stroke
from tablecoach.core.store import StoreError

from ..messages import AimSolved, ConvergenceFound
from ..widgets import wording as w
from ..widgets.info import InfoCard, MessageLine, SessionBar, card, session_line
from ..widgets.landing import LandingPrompt
from ..widgets.session import Session
from ..widgets.table_panel import TablePanel


def history_available() -> bool:
    """True once the history screen (ui/screens/history.py) is installed."""
    return importlib.util.find_spec("tablecoach.ui.screens.history") is not None


class PracticeScreen(Screen[None]):
    """One session of practice. Every key is in the footer and in the command palette."""

    BINDINGS = [
        Binding("h", "hit", "Hit"),
        Binding("m", "miss", "Miss"),
        Binding("u", "undo", "Undo"),
        Binding("n", "skip", "Skip"),
        Binding("s", "speed", "Speed"),
        Binding("p", "pin", "Pin"),
        Binding("v", "history", "History"),
        Binding("t", "setup", "Setup"),
        Binding("question_mark", "help", "Help", key_display="?"),
        Binding("q", "quit_session", "Quit"),
    ]

    # (action, title, help) for the command palette; keys as in BINDINGS
    COMMANDS_LIST = (
        ("hit", "Log a hit", "The shot scored; the landing is the aim's predicted landing (h)"),
        ("miss", "Log a miss", "The shot missed; say where it crossed the rail (m)"),
        ("undo", "Undo the last attempt", "Remove the last logged attempt of this session (u)"),
        ("skip", "Skip this setup", "Deal the next setup without logging (n)"),
        ("speed", "Change speed", "Next speed preset for this attempt; re-solves the aim (s)"),
        ("pin", "Pin this zone", "Keep practising this zone (p again to unpin)"),
        ("history", "History", "Streaks, rates and trends (v)"),
        ("setup", "Change table, pack or player", "Open the setup screen (t)"),
        ("help", "Help", "What every key does (?)"),
        ("quit_session", "Quit with a summary", "Show the session summary, then leave (q)"),
    )

    def __init__(self, session: Session, status: str = "", ascii_only: bool = False) -> None:
        super().__init__()
        self.session = session
        self.status = status
        self.ascii_only = ascii_only
        self.aim: Aim | None = None
        self.conv: Convergence | None = None
        self.error = ""
        self.token = 0
        self.pinned = False

    # ----- layout ----------------------------------------------------------------------------
    def compose(self) -> ComposeResult:
        with Horizontal(id="main"):
            yield TablePanel(self.ascii_only, id="table-panel")
            with VerticalScroll(id="side"):
                yield InfoCard(id="card")
        yield SessionBar(id="session")
        yield MessageLine(id="message")
        yield Footer()

    def on_mount(self) -> None:
        self._deal(first=True)

    # ----- showing ---------------------------------------------------------------------------
    def _refresh(self) -> None:
        s = self.session
        pick = s.pick
        self.query_one(TablePanel).show(
            s.table, pick.setup if pick else None, self.aim, self.conv, self._table_note()
        )
        self.query_one(InfoCard).update(
            card(s.table, pick, s.stroke, self.aim, self.conv, self.status, self.error)
        )
        self.query_one(SessionBar).update(
            session_line(s.stats(), s.earlier_stats(), s.table.name, s.player)
        )

    def _table_note(self) -> str:
        if self.aim is None:
            return "working out the aim..." if not self.error else ""
        return ""

    def say(self, text: str, error: bool = False) -> None:
        line = self.query_one(MessageLine)
        line.set_class(error, "error")
        line.update(text)

    # ----- dealing and solving -----------------------------------------------------------------
    def _deal(self, first: bool = False) -> None:
        try:
            self.session.deal()
        except ValueError as exc:
            self.error = str(exc)
            self.aim = None
            self._refresh()
            return
        self._solve()

    def _solve(self) -> None:
        """Start an aim solve for the shown setup in a worker thread; the screen stays live."""
        self.token += 1
        self.aim = None
        self.conv = None
        self.error = ""
        self._refresh()
        pick = self.session.pick
        assert pick is not None
        self._solve_worker(self.token, pick.setup, self.session.stroke, self.session.model)

    @work(thread=True, exclusive=True, group="aim", exit_on_error=False)
    def _solve_worker(self, token: int, setup: shots.Setup, stroke: Stroke, model: str) -> None:
        table = self.session.table
        note = ""
        try:
            aim = shots.solve_aim(table, setup, stroke, model)
        except ValueError as exc:
            if model == "ideal":
                self.post_message(AimSolved(token, None, error=f"no aim: {exc}"))
                return
            try:
                aim = shots.solve_aim(table, setup, stroke, "ideal")
            except ValueError:
                self.post_message(AimSolved(token, None, error=f"no aim: {exc}"))
                return
            model = "ideal"
            note = f"the {self.session.model} model found no path ({exc}); showing the ideal aim"
        self.post_message(AimSolved(token, aim, note=note))
        try:
            conv = shots.convergence(table, setup, None, stroke, model)
        except ValueError:
            conv = None
        self.post_message(ConvergenceFound(token, conv))

    def on_aim_solved(self, message: AimSolved) -> None:
        if message.token != self.token:
            return
        self.aim = message.aim
        self.error = message.error
        if message.error:
            self.say(message.error + "; n deals another setup, s tries another speed", True)
        elif message.note:
            self.say(message.note)
        self._refresh()

    def on_convergence_found(self, message: ConvergenceFound) -> None:
        if message.token != self.token:
            return
        self.conv = message.convergence
        self._refresh()

    # ----- keys --------------------------------------------------------------------------------
    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        if action == "history":
            return history_available()
        if action == "pin":
            return self.session.dealer.coached
        return True

    def _ready(self) -> Aim | None:
        if self.aim is None:
            self.say(self.error or "the aim is still being worked out; a moment", bool(self.error))
        return self.aim

    def action_hit(self) -> None:
        aim = self._ready()
        if aim is None:
            return
        self._logged(lambda: self.session.log_hit(aim))

    def action_miss(self) -> None:
        aim = self._ready()
        if aim is None:
            return
        at = w.landing_diamonds(self.session.table, aim.landing)
        hint = f"the aim predicts the {aim.landing.rail} rail at {w.num(at)}"

        def done(result: tuple[str, float] | None) -> None:
            if result is None:
                self.say("miss not logged (cancelled)")
                return
            rail, spot = result
            self._logged(lambda: self.session.log_miss(aim, rail, spot))

        self.app.push_screen(LandingPrompt(aim.landing.rail, at, hint), done)

    def _logged(self, do: Any) -> None:
        try:
            a = do()
        except StoreError as exc:
            self.say(f"not saved: {exc}", True)
            return
        except ValueError as exc:
            self.say(f"not saved: {exc}", True)
            return
        st = self.session.stats()
        where = f"{a.landing_rail} rail at {w.num(a.landing_at)}"
        self.say(f"logged a {a.result} ({where}); {st.shots} shots, streak {st.streak}")
        self._deal()

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
        self.say(f"undone: the {gone.result} at {gone.landing_rail} rail; its setup is back")
        self._solve()

    def action_skip(self) -> None:
        self.say("skipped; here is the next setup")
        self._deal()

    def action_speed(self) -> None:
        if self.session.pick is None:
            return
        stroke = self.session.next_speed()
        self.say(f"speed for this attempt: {shots.speed_name(stroke.speed)}")
        self._solve()

    def action_pin(self) -> None:
        dealer = self.session.dealer
        if not dealer.coached:
            self.say("pinning needs the coach, which is not installed")
            return
        if self.pinned:
            dealer.unpin()
            self.pinned = False
            self.say("unpinned: the coach picks setups again")
            return
        pick = self.session.pick
        if pick is None:
            return
        try:
            if pick.zone:
                dealer.pin(zone=pick.zone)
            else:
                dealer.pin(family=pick.setup.family.name)
        except ValueError as exc:
            self.say(str(exc), True)
            return
        self.pinned = True
        self.say("pinned: the next 10 setups come from this zone (p again to unpin)")

    def action_history(self) -> None:
        if not history_available():
            self.say("the history screen is not installed")
            return
        from . import history  # noqa: PLC0415

        self.app.push_screen(history.HistoryScreen(self.session.store, self.session.player))

    def action_setup(self) -> None:
        self.app.action_open_setup()  # type: ignore[attr-defined]

    def action_help(self) -> None:
        from .help import HelpScreen  # noqa: PLC0415

        self.app.push_screen(HelpScreen())

    def action_quit_session(self) -> None:
        self.app.action_summary()  # type: ignore[attr-defined]
