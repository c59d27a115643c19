"""The miss prompt: how a miss ended (crossed a rail, stopped short, rattled in the jaw)."""

from __future__ import annotations

from dataclasses import dataclass

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.events import Key
from textual.screen import ModalScreen
from textual.widgets import Footer, Static

from tablecoach.core.records import RecordError, check_rail_point, rail_length_diamonds
from tablecoach.render.words import RAIL_ORDER, num

STEP = 0.25
"""Arrow keys move the landing a quarter diamond."""

MAX_TYPED = 5
"""The longest landing worth typing: one whole diamond and up to three decimals (7.125)."""


@dataclass(frozen=True, slots=True)
class MissReport:
    """What the player saw of a miss: ``kind`` "landed" with the rail and diamonds where the
    ball crossed it, or "short" / "jaw" with neither."""

    kind: str
    rail: str | None = None
    at: float | None = None


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
        if value <= 8.0 and top < 8.0:
            raise RecordError(
                f"{num(value)} is past the end of the {rail} rail (0 to {num(top)}); it fits "
                "a long rail: up/down moves there and keeps it"
            )
        raise RecordError(
            f"{num(value)} is off the {rail} rail: it runs 0 to {num(top)} diamonds; "
            "up/down changes rail"
        )
    check_rail_point("landing", rail, value)
    return value


def accepts(typed: str, ch: str) -> bool:
    """Whether ``ch`` may follow ``typed`` in a landing number: digits with at most one point,
    one whole digit (rails run 0 to 8) and at most MAX_TYPED characters in all."""
    text = typed + ch
    if len(text) > MAX_TYPED or text.count(".") > 1:
        return False
    whole = text.split(".")[0]
    return len(whole) <= 1 and all(c.isdigit() or c == "." for c in text)


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


class LandingPrompt(ModalScreen[MissReport | None]):
    """Ask how a miss ended; dismisses with a MissReport, or None when cancelled.

    Left/right move a quarter diamond along the rail, up/down step to the next or previous rail
    round the table (a typed number that fits the new rail goes with it), digits and '.' type a
    value (Backspace corrects), ``s`` logs "stopped short of the rail", ``j`` "rattled in the
    jaw", Enter saves, Escape cancels. Enter on a prompt nobody moved asks once more before it
    saves the predicted spot as the seen one. Anything else is refused with a word.
    """

    BINDINGS = [
        Binding("left", "move(-1)", "-1/4", show=True),
        Binding("right", "move(1)", "+1/4", show=True),
        Binding("up", "rail(1)", "Next rail", show=True),
        Binding("down", "rail(-1)", "Prev rail", show=True),
        Binding("s", "short", "Short", show=True),
        Binding("j", "jaw", "Jaw", show=True),
        Binding("enter", "save", "Save", show=True, priority=True),
        Binding("escape", "cancel", "Cancel", show=True),
    ]

    def __init__(
        self, rail: str, at: float, hint: str = "", ascii_only: bool = False, hit: bool = False
    ) -> None:
        super().__init__()
        self.hit = hit  # a hit's landing, given by choice: s and j do not apply
        self.ascii_only = ascii_only
        self.rail = rail if rail in RAIL_ORDER else "foot"
        top = rail_length_diamonds(self.rail)
        self.at = min(max(round(at / STEP) * STEP, 0.0), top)
        self.typed = ""
        self.error = ""
        self.hint = hint
        self.touched = False
        self.asked = False

    def compose(self) -> ComposeResult:
        with Vertical(id="landing-box"):
            yield Static(id="landing-body")
        yield Footer()

    def on_mount(self) -> None:
        self._show()

    def _show(self) -> None:
        body = Text()
        ask = "Hit" if self.hit else "Miss"
        body.append(f"{ask}: where did the ball cross the rail?\n", style="bold")
        value = self.typed + "_" if self.typed else num(self.at)
        body.append(f"  {self.rail} rail at ", style="")
        body.append(value, style="bold reverse")
        top = rail_length_diamonds(self.rail)
        zero = "the head end" if self.rail in ("left", "right") else "the left-rail end"
        body.append(f"  (0 to {num(top)}, 0 at {zero})\n")
        body.append_text(ruler(self.rail, self.at, self.ascii_only))
        body.append("  left/right: a quarter diamond   up/down: another rail\n", style="dim")
        body.append("  or type the number; Enter saves, Escape cancels\n", style="dim")
        if not self.hit:
            body.append("  s: stopped short of the rail   j: rattled in the jaw\n", style="dim")
        if self.hint:
            body.append(f"  {self.hint}\n", style="dim")
        if self.error:
            body.append(self.error, style="bold red")
        body.rstrip()
        self.query_one("#landing-body", Static).update(body)

    def on_key(self, event: Key) -> None:
        ch = event.character
        if event.key == "backspace":
            self.typed = self.typed[:-1]
            self.error = ""
        elif ch is not None and (ch.isdigit() or ch == "."):
            if accepts(self.typed, ch):
                self.typed += ch
                self.touched = True
                self.error = ""
            else:
                self.error = (
                    f"{self.typed + ch!r} is not a landing: one number from 0 to 8 diamonds, "
                    "e.g. 2.75 (Backspace corrects)"
                )
        elif ch is not None and ch.isprintable() and ch not in "sj" and ch != " ":
            self.error = (
                f"{ch!r} is not a landing: type a number (e.g. 2.75), s for short, j for jaw"
            )
        else:
            return
        event.stop()
        self._show()

    def action_move(self, step: int) -> None:
        if not self._take_typed(drop_bad=True):
            return
        top = rail_length_diamonds(self.rail)
        self.at = min(max(self.at + step * STEP, 0.0), top)
        self.touched = True
        self._show()

    def action_rail(self, step: int) -> None:
        i = RAIL_ORDER.index(self.rail)
        new = RAIL_ORDER[(i + step) % len(RAIL_ORDER)]
        carried = ""
        if self.typed:
            try:
                self.at = parse_landing(new, self.typed)  # the typed number goes with the rail
                carried = self.typed
            except RecordError:
                self.error = f"{self.typed} dropped: it is not on the {new} rail either"
            self.typed = ""
        self.rail = new
        self.at = min(self.at, rail_length_diamonds(self.rail))
        self.touched = True
        if carried:
            self.error = ""
        self._show()

    def _take_typed(self, drop_bad: bool = False) -> bool:
        """Move a typed value into the landing; False (and a message) when it is refused. With
        ``drop_bad`` a refused value is dropped instead, so arrow keys always do something."""
        if not self.typed:
            self.error = ""
            return True
        try:
            self.at = parse_landing(self.rail, self.typed)
        except RecordError as exc:
            if drop_bad:
                self.error = f"{self.typed} dropped ({exc})"
                self.typed = ""
                return True
            self.error = str(exc)
            self._show()
            return False
        self.typed = ""
        self.error = ""
        return True

    def action_save(self) -> None:
        if not self._take_typed():
            return
        if not self.touched and not self.asked:
            self.asked = True
            self.error = (
                f"you have not moved the mark: Enter again saves the {self.rail} rail at "
                f"{num(self.at)} as where you saw it cross; s short, j jaw"
            )
            self._show()
            return
        self.dismiss(MissReport("landed", self.rail, round(self.at, 3)))

    def action_short(self) -> None:
        if self._no_kind():
            return
        self.dismiss(MissReport("short"))

    def action_jaw(self) -> None:
        if self._no_kind():
            return
        self.dismiss(MissReport("jaw"))

    def _no_kind(self) -> bool:
        if self.hit:
            self.error = "a hit reached its target: give where it crossed, or Escape"
            self._show()
        return self.hit

    def action_cancel(self) -> None:
        self.dismiss(None)
