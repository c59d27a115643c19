"""The setup screen: pick the table, the drill pack and the player, by keyboard alone."""

from __future__ import annotations

from dataclasses import dataclass

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Footer, Input, Label, OptionList, Static
from textual.widgets.option_list import Option


@dataclass(frozen=True, slots=True)
class Choice:
    """What the player picked."""

    table: str
    drill: str
    player: str
    repeat: int = 0
    """Shots in a row of each setup; 0 keeps the pack's own setting."""


REPEATS: tuple[tuple[int, str], ...] = (
    (0, "as the pack says"),
    (1, "1: a new setup every shot (shuffled)"),
    (2, "2 in a row"),
    (3, "3 in a row"),
    (5, "5 in a row"),
)
"""The setup screen's choices of shots per setup. Shuffled practice, a new setup every shot,
retains better than repeating one (Shea and Morgan 1979); repeats are for grooving a shot."""


class SetupScreen(ModalScreen[Choice | None]):
    """Tab moves between the lists and the name; arrows pick; Enter on the name (or ctrl+s)
    starts a new session with the picks; Escape goes back unchanged."""

    BINDINGS = [
        Binding("ctrl+s", "start", "Start session", priority=True),
        Binding("escape", "cancel", "Back"),
        Binding("tab", "app.focus_next", "Next field", show=True),
    ]

    def __init__(
        self,
        tables: list[tuple[str, str]],
        drills: list[tuple[str, str]],
        players: list[str],
        current: Choice,
    ) -> None:
        super().__init__()
        self.tables = tables
        self.drills = drills
        self.players = players
        self.current = current
        self.message = ""

    def compose(self) -> ComposeResult:
        with Vertical(id="setup-box"):
            yield Static("New session: table, drill pack, player", id="setup-title")
            with Horizontal(id="setup-lists"):
                with Vertical(classes="setup-col"):
                    yield Label("Table")
                    yield OptionList(
                        *[Option(f"{n}  {d}", id=n) for n, d in self.tables], id="tables"
                    )
                with Vertical(classes="setup-col"):
                    yield Label("Drill pack")
                    yield OptionList(
                        *[Option(f"{n}  {d}", id=n) for n, d in self.drills], id="drills"
                    )
                with Vertical(classes="setup-col setup-narrow"):
                    yield Label("Shots per setup")
                    yield OptionList(
                        *[Option(text, id=str(n)) for n, text in REPEATS], id="repeats"
                    )
            yield Label("Player (known: " + (", ".join(self.players) or "none yet") + ")")
            yield Input(value=self.current.player, id="player", max_length=40)
            yield Static("", id="setup-picks")
            yield Static("", id="setup-message")
        yield Footer()

    def on_mount(self) -> None:
        repeats = [(str(n), t) for n, t in REPEATS]
        for wid, items, cur in (
            ("#tables", self.tables, self.current.table),
            ("#drills", self.drills, self.current.drill),
            ("#repeats", repeats, str(self.current.repeat)),
        ):
            ol = self.query_one(wid, OptionList)
            names = [n for n, _ in items]
            if cur in names:
                ol.highlighted = names.index(cur)
            elif names:
                ol.highlighted = 0
        self.query_one("#tables", OptionList).focus()
        self._show_picks()

    def _show_picks(self) -> None:
        table = self._picked("#tables") or "?"
        drill = self._picked("#drills") or "?"
        player = self.query_one("#player", Input).value.strip() or "?"
        n = int(self._picked("#repeats") or 0)
        each = "" if n == 0 else (", a new setup every shot" if n == 1 else f", {n} shots a setup")
        self.query_one("#setup-picks", Static).update(
            f"Start: {table} table, {drill} pack{each}, player {player} "
            "(Enter on the name or ctrl+s)"
        )

    def on_option_list_option_highlighted(self, event: OptionList.OptionHighlighted) -> None:
        self._show_picks()

    def on_input_changed(self, event: Input.Changed) -> None:
        if self.is_mounted:
            self._show_picks()

    def on_option_list_option_selected(self, event: OptionList.OptionSelected) -> None:
        self.focus_next()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        self.action_start()

    def _picked(self, wid: str) -> str | None:
        ol = self.query_one(wid, OptionList)
        if ol.highlighted is None:
            return None
        return ol.get_option_at_index(ol.highlighted).id

    def action_start(self) -> None:
        table = self._picked("#tables")
        drill = self._picked("#drills")
        player = self.query_one("#player", Input).value.strip()
        msg = self.query_one("#setup-message", Static)
        if not player or len(player) > 40:
            msg.update("type a player name of 1 to 40 characters")
            return
        if table is None or drill is None:
            msg.update("pick a table and a drill pack with the arrow keys")
            return
        self.dismiss(Choice(table, drill, player, int(self._picked("#repeats") or 0)))

    def action_cancel(self) -> None:
        self.dismiss(None)
