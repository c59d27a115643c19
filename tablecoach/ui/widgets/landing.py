"""The landing prompt: after a miss, where the ball crossed the rail, by arrow keys or typing."""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.events import Key
from textual.screen import ModalScreen
from textual.widgets import Footer, Static

from tablecoach.core.records import RecordError, check_rail_point, rail_length_diamonds

from .wording import RAIL_ORDER, num

STEP = 0.25
"""Arrow keys move the landing a quarter diamond."""


def parse_landing(rail: str, typed: str) -> float:
    """A typed landing in diamonds along ``rail``, or a RecordError with one line to act on."""
    text = typed.strip()
    try:
        value = float(text)
    except ValueError:
        raise RecordError(
            f"{text!r} is not a number: type diamonds along the {rail} rail, e.g. 2.75"
        ) from None
    top = rail_length_diamonds(rail)
    if not 0.0 <= value <= top:
        raise RecordError(
            f"{num(value)} is off the {rail} rail: it runs 0 to {num(top)} diamonds; "
            "up/down changes rail"
        )
    check_rail_point("landing", rail, value)
    return value


def ruler(rail: str, at: float, ascii_only: bool = False) -> Text:
    """The rail drawn a quarter diamond a character, numbered, with a mark at ``at``."""
    top = int(rail_length_diamonds(rail))
    tick, dash, mark = ("+", "-", "^") if ascii_only else ("┼", "─", "▲")
    numbers = "".join(f"{d:<4d}" for d in range(top)) + str(top)
    line = (tick + dash * 3) * top + tick
    col = round(at / STEP)
    pointer = " " * col + mark
    t = Text()
    t.append(f"    {numbers}\n", style="dim")
    t.append(f"    {line}\n")
    t.append(f"    {pointer}\n", style="bold")
    return t


class LandingPrompt(ModalScreen[tuple[str, float] | None]):
    """Ask where a missed ball crossed the landing rail; dismisses with (rail, diamonds) or None.

    Left/right move a quarter diamond along the rail, up/down step to the next or previous rail
    round the table, digits and '.' type a value (Backspace corrects), Enter saves, Escape
    cancels. A typed value off the rail, or not a number, is refused with one line and kept for
    correction.
    """

    BINDINGS = [
        Binding("left", "move(-1)", "-1/4", show=True),
        Binding("right", "move(1)", "+1/4", show=True),
        Binding("up", "rail(1)", "Next rail", show=True),
        Binding("down", "rail(-1)", "Prev rail", show=True),
        Binding("enter", "save", "Save", show=True, priority=True),
        Binding("escape", "cancel", "Cancel", show=True),
    ]

    def __init__(self, rail: str, at: float, hint: str = "", ascii_only: bool = False) -> None:
        super().__init__()
        self.ascii_only = ascii_only
        self.rail = rail if rail in RAIL_ORDER else "foot"
        top = rail_length_diamonds(self.rail)
        self.at = min(max(round(at / STEP) * STEP, 0.0), top)
        self.typed = ""
        self.error = ""
        self.hint = hint

    def compose(self) -> ComposeResult:
        with Vertical(id="landing-box"):
            yield Static(id="landing-body")
        yield Footer()

    def on_mount(self) -> None:
        self._show()

    def _show(self) -> None:
        body = Text()
        body.append("Miss: where did the ball cross the rail?\n", style="bold")
        value = self.typed + "_" if self.typed else num(self.at)
        body.append(f"  {self.rail} rail at ", style="")
        body.append(value, style="bold reverse")
        top = rail_length_diamonds(self.rail)
        zero = "the head end" if self.rail in ("left", "right") else "the left-rail end"
        body.append(f"  (0 to {num(top)}, 0 at {zero})\n")
        body.append_text(ruler(self.rail, self.at, self.ascii_only))
        body.append("  left/right: a quarter diamond   up/down: another rail\n", style="dim")
        body.append("  or type the number, then Enter to save; Escape to cancel\n", style="dim")
        if self.hint:
            body.append(f"  {self.hint}\n", style="dim")
        if self.error:
            body.append(self.error, style="bold red")
        body.rstrip()
        self.query_one("#landing-body", Static).update(body)

    def on_key(self, event: Key) -> None:
        ch = event.character
        if ch is not None and (ch.isdigit() or ch in ".-") and len(self.typed) < 8:
            self.typed += ch
            self.error = ""
            event.stop()
            self._show()
        elif event.key == "backspace":
            self.typed = self.typed[:-1]
            event.stop()
            self._show()

    def action_move(self, step: int) -> None:
        if not self._take_typed():
            return
        top = rail_length_diamonds(self.rail)
        self.at = min(max(self.at + step * STEP, 0.0), top)
        self.error = ""
        self._show()

    def action_rail(self, step: int) -> None:
        if not self._take_typed():
            return
        i = RAIL_ORDER.index(self.rail)
        self.rail = RAIL_ORDER[(i + step) % len(RAIL_ORDER)]
        self.at = min(self.at, rail_length_diamonds(self.rail))
        self.error = ""
        self._show()

    def _take_typed(self) -> bool:
        """Move a typed value into the landing; False (and a message) when it is refused."""
        if not self.typed:
            return True
        try:
            self.at = parse_landing(self.rail, self.typed)
        except RecordError as exc:
            self.error = str(exc)
            self._show()
            return False
        self.typed = ""
        return True

    def action_save(self) -> None:
        if not self._take_typed():
            return
        self.dismiss((self.rail, round(self.at, 2)))

    def action_cancel(self) -> None:
        self.dismiss(None)
