"""The practice screen: a setup on the table, the aim, one or two keys to log the shot, the next."""

from __future__ import annotations

from functools import partial
from typing import Any

from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import Screen
from textual.widgets import Footer

from tablecoach.core import aim as aims
from tablecoach.core import shots
from tablecoach.core.practice import REDRAWS, Session
from tablecoach.core.shots import Aim, Convergence, Stroke

from ..messages import AimSolved, ConvergenceFound, DealerRefreshed, SetupDealt
from ..widgets.info import InfoCard, MessageLine, NotesPanel, SessionBar, card, notes, session_line
from ..widgets.table_panel import TablePanel, draw, picture_of
from .calibrate_offer import CalibrationOffer
from .coach_keys import CoachKeys
from .reference_keys import ReferenceKeys
from .shot_keys import ShotKeys
from .stroke_keys import StrokeKeys

SOLVED_KEPT = 16
"""How many solved aims the screen keeps, so an undone setup or a speed cycled back to is shown
without solving it again."""

SOLVING_SHOWN_AFTER = 0.08
"""Seconds an aim solve may take before the screen says it is working on it."""


class PracticeScreen(
    ShotKeys, StrokeKeys, CoachKeys, ReferenceKeys, CalibrationOffer, Screen[None]
):
    """One session of practice. Every key is in the footer and in the command palette."""

    BINDINGS = [
        Binding("h", "hit", "Hit"),
        Binding("H", "hit_landing", "Hit, with landing", show=False),
        Binding("m", "miss", "Miss"),
        Binding("r", "again", "Again"),
        Binding("u", "undo", "Undo"),
        Binding("n", "skip", "Skip"),
        Binding("s", "speed", "Speed"),
        Binding("e", "spin", "Spin"),
        Binding("b", "large", "Big", show=False),
        Binding("p", "pin", "Pin", show=False),
        Binding("k", "keep_line", "Keep line", show=False),
        Binding("w", "speed_paths", "Speed paths", show=False),
        Binding("c", "calibrate", "Calibrate", show=False),
        Binding("v", "history", "History", show=False),
        Binding("t", "setup", "Setup", show=False),
        Binding("question_mark", "help", "Help", key_display="?"),
        Binding("q", "quit_session", "Quit"),
    ]

    # (action, title, help) for the command palette; keys as in BINDINGS
    COMMANDS_LIST = (
        ("hit", "Log a hit", "The shot scored; no landing is recorded for it (h)"),
        ("hit_landing", "Log a hit and where it crossed", "A hit with the landing you saw (H)"),
        ("miss", "Log a miss", "Where it crossed the rail, or s short, j jaw (m)"),
        ("again", "Shoot it again", "Bring back the setup just logged, same stroke and spin (r)"),
        ("undo", "Undo the last attempt", "Remove the last logged attempt of this session (u)"),
        ("skip", "Skip this setup", "Deal the next setup without logging (n)"),
        ("speed", "Change speed", "Next speed preset for this attempt; re-solves the aim (s)"),
        ("spin", "Change spin", "Running, reverse english, follow, draw, centre; re-solves (e)"),
        ("large", "Large reading", "Show the aim reading in large type, or not (b)"),
        ("pin", "Pin this zone", "Keep practising this zone (p again to unpin)"),
        ("keep_line", "Keep this line", "After a hit: its line becomes the family's reference (k)"),
        ("speed_paths", "Speed paths", "This reading at the next softer and firmer stroke (w)"),
        ("history", "History", "Streaks, rates and trends (v)"),
        (
            "table_check",
            "Table check",
            "Shoot the reference shots that calibrate this table (palette only)",
        ),
        (
            "calibrate",
            "Calibrate this table",
            "Fit the table to your landings, in the background (c)",
        ),
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
        self.shift: Any = None  # the family's reference line moved here (reference_keys.py)
        self.shift_for = -1
        self.speeds_on = False
        self.speed_paths: Any = None  # the reading at the neighbouring strokes (stroke_keys.py)
        self.error = ""
        self.token = 0
        self.pinned = False
        self.generation = 0
        self.ahead: SetupDealt | None = None
        self.dealing = False
        self.waiting = False
        self.model_note = ""
        self.drawn: tuple[Any, Any] | None = None
        self.refresh_dealer = False
        self.large = False
        self.bias_note: tuple[int, str] = (-1, "")
        self.solved: dict[tuple[Any, Stroke], tuple[Aim, Convergence | None, str]] = {}
        self.opening = "h hit, m miss, r again, ? help: each attempt is saved as you log it"

    # ----- layout ----------------------------------------------------------------------------
    def compose(self) -> ComposeResult:
        with Horizontal(id="main"):
            with Vertical(id="left"):
                yield TablePanel(self.ascii_only, id="table-panel")
                yield NotesPanel(id="notes")
            with Vertical(id="side"):
                yield InfoCard(id="card")
        yield SessionBar(id="session")
        yield MessageLine(id="message")
        yield Footer(compact=True)

    def on_mount(self) -> None:
        self.say(self.opening)
        self._deal(first=True)

    # ----- showing ---------------------------------------------------------------------------
    def _refresh(self) -> None:
        s = self.session
        pick = s.pick
        panel = self.query_one(TablePanel)
        if self.drawn is not None and self.aim is not None:
            picture, lines = self.drawn
            panel.show(s.table, None, None, None, self._table_note(), lines, picture)
        else:
            picture = picture_of(s.table, pick.setup if pick else None, self.aim, self.conv)
            picture = self.decorated(picture)
            panel.show(s.table, None, None, None, self._table_note(), None, picture)
        self.drawn = None
        # fixed-size panels: their text changes without a new layout of the screen
        self.query_one(InfoCard).update(
            card(
                s.table,
                pick,
                s.stroke,
                self.aim,
                self.conv,
                self.error,
                self.model_note,
                self.large,
                self.ascii_only,
                self.bias_note[1] if self.bias_note[0] == self.token else "",
                self.card_lines(),
            ),
            layout=False,
        )
        pinned = self.pinned_text()
        self.query_one(NotesPanel).update(
            notes(s.table, pick, self.aim, self.status + self.offer_hint, pinned), layout=False
        )
        self.query_one(SessionBar).update(
            session_line(
                s.stats(),
                s.earlier_stats(),
                s.table.name,
                s.player,
                self.query_one(SessionBar).content_size.width,
            ),
            layout=False,
        )

    def _table_note(self) -> str:
        if self.aim is None:
            return "working out the aim..." if not self.error else ""
        return ""

    def say(self, text: str, error: bool = False) -> None:
        line = self.query_one(MessageLine)
        line.set_class(error, "error")
        line.update(text, layout=False)

    # ----- dealing and solving -----------------------------------------------------------------
    # The next setup is dealt (and its aim solved) in a worker while the player shoots the one
    # on the table, so a logged shot shows the next setup at once. The coach therefore picks
    # each setup before the result of the shot just before it is known.

    def _deal(self, first: bool = False) -> None:
        """Show the next setup: the one dealt ahead if ready, else wait for it."""
        self.token += 1
        self.aim = None
        self.conv = None
        self.shift = self.speed_paths = None
        self.error = ""
        if self.ahead is not None:
            self._take_ahead()
            return
        self.waiting = True
        self.session.show(None)
        self._refresh()
        self._deal_ahead()

    def _deal_ahead(self) -> None:
        if self.ahead is None and not self.dealing:
            self.dealing = True
            size = self.query_one(TablePanel).drawing_size()
            self._ahead_worker(self.generation, self.session.model, size)

    def _forget_ahead(self) -> None:
        """Drop a setup dealt before a pin changed what the coach should deal."""
        self.generation += 1
        self.ahead = None
        self.dealing = False
        self._deal_ahead()

    def _take_ahead(self) -> None:
        msg = self.ahead
        assert msg is not None
        self.ahead = None
        self.waiting = False
        if msg.error:
            self.session.show(None)
            self.error = msg.error
            self.say(msg.error, True)
            self._refresh()
            return
        self.session.show(msg.pick)
        self.aim = msg.aim
        self.conv = msg.conv
        self.drawn = msg.drawn
        self.error = "" if msg.aim is not None else msg.note
        if msg.aim is None:
            self.say(msg.note + "; n deals another setup, s tries another speed", True)
        self.model_note = msg.note if msg.aim is not None else ""
        self._remember()
        self._refresh()
        # background work starts once the new setup is on the screen, so it never delays it
        self.call_after_refresh(self._after_shown, self.token, msg.aim)

    def _after_shown(self, token: int, aim: Aim | None) -> None:
        if aim is not None and token == self.token:
            if self.conv is not None:  # found with the setup dealt ahead
                self._point_known(token, aim)
            else:
                self._conv_worker(token, aim.setup, aim.stroke, aim.model)
        self._deal_ahead()

    def _point_known(self, token: int, aim: Aim) -> None:
        """The convergence point came with the aim (dealt ahead, or remembered): the work that
        waits for it starts now (the reference line moved here, speed paths, the zone's bias)."""
        self.shift_for = token
        self.start_shift(token, aim, self.conv)
        self.start_speeds(token, aim)
        self._bias_worker(token, aim.setup, aim.stroke)

    def _solve(self) -> None:
        """Solve the aim of the shown setup again (new stroke, or a setup put back)."""
        self.token += 1
        self.aim = None
        self.conv = None
        self.shift = self.speed_paths = None
        self.error = ""
        pick = self.session.pick
        assert pick is not None
        key = self._key()
        known = self.solved.get(key) if key is not None else None
        if known is not None:  # shown before in this session (undo, or speeds cycled round)
            self.aim, self.conv, self.model_note = known
            self._refresh()
            self.call_after_refresh(self._after_solved, self.token, self.aim, self.conv is None)
            return
        self._solve_worker(self.token, pick.setup, self.session.stroke, self.session.model)
        # a quick solve is shown in one frame; a slow one shows "working out the aim" meanwhile
        self.set_timer(SOLVING_SHOWN_AFTER, partial(self._still_solving, self.token))

    def _key(self) -> tuple[Any, Stroke] | None:
        """The shown setup and stroke, as the key of the solved-aim memory."""
        pick = self.session.pick
        if pick is None:
            return None
        return (shots.record_of(self.session.table, pick.setup), self.session.stroke)

    def _remember(self) -> None:
        key = self._key()
        if key is None or self.aim is None:
            return
        self.solved[key] = (self.aim, self.conv, self.model_note)
        while len(self.solved) > SOLVED_KEPT:
            self.solved.pop(next(iter(self.solved)))

    def _still_solving(self, token: int) -> None:
        if token == self.token and self.aim is None:
            self._refresh()

    @work(thread=True, group="ahead", exit_on_error=False)
    def _ahead_worker(self, generation: int, model: str, size: tuple[int, int]) -> None:
        for _ in range(REDRAWS):
            try:
                pick = self.session.draw()
            except ValueError as exc:
                msg = f"cannot deal a setup: {exc}"
                self.post_message(SetupDealt(generation, None, None, msg))
                return
            aim, why = self._aim_of(pick.setup, pick.stroke, model)
            if aim is not None and aim.model == model:
                break
            if generation != self.generation:
                return
        conv = None
        if aim is not None:  # the point comes with the setup, so the drawing is not redone
            try:
                conv = aims.convergence(self.session.table, aim.setup, None, aim.stroke, aim.model)
            except ValueError:
                conv = None
        picture = picture_of(self.session.table, pick.setup, aim, conv)
        drawn = (picture, (size, draw(picture, self.ascii_only, *size)))
        self.post_message(SetupDealt(generation, pick, aim, note=why, drawn=drawn, conv=conv))

    @work(thread=True, exclusive=True, group="aim", exit_on_error=False)
    def _solve_worker(self, token: int, setup: shots.Setup, stroke: Stroke, model: str) -> None:
        aim, why = self._aim_of(setup, stroke, model)
        if aim is None:
            self.post_message(AimSolved(token, None, error=why))
            return
        self.post_message(AimSolved(token, aim, note=why))

    @work(thread=True, exclusive=True, group="aim", exit_on_error=False)
    def _conv_worker(self, token: int, setup: shots.Setup, stroke: Stroke, model: str) -> None:
        self._conv_now(token, setup, stroke, model)

    def _aim_of(self, setup: shots.Setup, stroke: Stroke, model: str) -> tuple[Aim | None, str]:
        """The aim under the session's model, else the ideal aim with a note (worker thread)."""
        table = self.session.table
        try:
            return aims.solve_playable(table, setup, stroke, model)
        except ValueError as exc:
            if model == "ideal":
                return None, f"no aim: {exc}"
            try:
                aim = aims.solve(table, setup, stroke, "ideal")
            except ValueError:
                return None, f"no aim: {exc}"
            reason = str(exc).split(":")[0].replace(f" under the {model} model", "")
            return aim, f"the {model} model finds no path here ({reason}): ideal aim shown"

    def _conv_now(self, token: int, setup: shots.Setup, stroke: Stroke, model: str) -> None:
        try:
            conv = aims.convergence(self.session.table, setup, None, stroke, model)
        except ValueError:
            conv = None
        self.post_message(ConvergenceFound(token, conv))
        self._bias_now(token, setup, stroke, conv)

    @work(thread=True, exclusive=True, group="bias", exit_on_error=False)
    def _bias_worker(self, token: int, setup: shots.Setup, stroke: Stroke) -> None:
        self._bias_now(token, setup, stroke, self.conv)

    def _bias_now(
        self, token: int, setup: shots.Setup, stroke: Stroke, conv: Convergence | None
    ) -> None:
        """The zone's landing bias for the card (the model runs the zone's landings)."""
        try:
            note = self.session.bias_text(setup, stroke)
        except ValueError:
            note = ""
        if note and token == self.token:
            self.bias_note = (token, note)
            self.post_message(ConvergenceFound(token, conv))

    def on_setup_dealt(self, message: SetupDealt) -> None:
        if message.generation != self.generation:
            return
        self.dealing = False
        self.ahead = message
        if self.waiting:
            self._take_ahead()

    def on_aim_solved(self, message: AimSolved) -> None:
        if message.token != self.token:
            return
        self.aim = message.aim
        self.error = message.error
        if message.error:
            self.say(message.error + "; n deals another setup, s tries another speed", True)
        self.model_note = message.note if message.aim is not None else ""
        if message.aim is not None:
            self._remember()
            self.call_after_refresh(self._after_solved, message.token, message.aim)
        self._refresh()

    def _after_solved(self, token: int, aim: Aim, need_conv: bool = True) -> None:
        if token == self.token and need_conv:
            self._conv_worker(token, aim.setup, aim.stroke, aim.model)
        elif token == self.token:  # a remembered aim and point: what waits for the point
            self._point_known(token, aim)
        if self.refresh_dealer:
            self.refresh_dealer = False
            self._refresh_dealer_worker()

    def on_convergence_found(self, message: ConvergenceFound) -> None:
        if message.token != self.token:
            return
        self.conv = message.convergence
        self._remember()
        self._refresh()
        if self.shift_for != message.token:
            self.shift_for = message.token
            self.start_shift(message.token, self.aim, self.conv)
            self.start_speeds(message.token, self.aim)

    # ----- keys --------------------------------------------------------------------------------
    def _ready(self) -> Aim | None:
        if self.aim is None:
            self.say(self.error or "the aim is still being worked out; a moment", bool(self.error))
        return self.aim

    @work(thread=True, group="ahead", exit_on_error=False)
    def _refresh_dealer_worker(self) -> None:
        self.session.refresh_dealer()
        self.post_message(DealerRefreshed())

    def on_dealer_refreshed(self, message: DealerRefreshed) -> None:
        # a setup dealt ahead before the undo counted the undone attempt: deal it again
        self._forget_ahead()

    def action_skip(self) -> None:
        self.say("skipped; here is the next setup")
        self._deal()

    def action_large(self) -> None:
        self.large = not self.large
        self.say(
            "large reading on (b again for the usual size)" if self.large else "large reading off"
        )
        self._refresh()

    def action_history(self) -> None:
        from .history import HistoryScreen

        screen = HistoryScreen(self.session.store, self.session.player, ascii_only=self.ascii_only)
        self.app.push_screen(screen)

    def action_setup(self) -> None:
        self.app.action_open_setup()

    def action_help(self) -> None:
        from .help import HelpScreen

        self.app.push_screen(HelpScreen(self.ascii_only))

    def action_quit_session(self) -> None:
        self.app.action_summary()
