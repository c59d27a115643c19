"""The help screen: what each key does, and a word of caution about the laptop on the rail."""

from __future__ import annotations

from rich.table import Table as RichTable
from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Footer, Static

from tablecoach.render.table_view import ASCII, UNICODE

KEYS = (
    ("h", "hit: the shot did what it should (no landing is recorded for a hit)"),
    ("H", "hit, and say where the ball crossed the landing rail (when you saw it)"),
    (
        "m",
        "miss: then where the ball crossed the rail (arrows in quarter diamonds, "
        "up/down another rail, or type the number), or s if it stopped short of the rail, "
        "j if it rattled in the jaw; Enter saves, Escape cancels",
    ),
    ("r", "again: the setup just logged comes back, same balls, stroke and spin"),
    ("u", "undo the last attempt of this session; its setup comes back"),
    ("n", "skip this setup without logging it"),
    ("s", "next named stroke for this attempt (the aim is solved again)"),
    (
        "e",
        "spin for this attempt: a tip of running english, of reverse english, a half tip of "
        "follow, of draw, centre ball (the aim is solved again)",
    ),
    ("b", "the aim reading in large type, to read from the table; b again for the usual size"),
    (
        "k",
        "keep this line: after a hit, its start and reading become this family's reference "
        "line on this table (also `tablecoach refs`)",
    ),
    (
        "w",
        "speed paths: this reading's path at the next softer and firmer named stroke, to see "
        "how speed moves each rail and the landing (w again hides them)",
    ),
    ("p", "pin this zone for the next 10 setups; p again unpins (with the coach)"),
    ("v", "history: streaks, rates and trends"),
    ("c", "calibrate this table from your landings (in the background; offered after 30 new)"),
    ("t", "setup: table, drill pack, player"),
    ("l", "light or dark colours (remembered for the next start)"),
    ("ctrl+p", "command palette: every action by name"),
    ("?", "this help"),
    ("q", "quit with a session summary"),
)

READING = (
    "Place the balls as the card says: diamonds from the nearer end rail and the nearer long "
    "rail, ball centre to cushion nose (x runs from the head rail, y from the left rail, standing "
    "at the head rail). Aim over the sight the card names: the cue line crosses the line of the "
    "diamonds there, which is not the cushion contact point. The margin is how far the reading may "
    "move each way and still score. Every attempt is saved the moment you press its key."
)


def turn_text(ascii_only: bool = False) -> str:
    """The point and the turn in a few lines, with the glyphs the drawing uses (plain ASCII
    ones in ASCII mode, as on the table)."""
    g = ASCII if ascii_only else UNICODE
    return (
        "Good aim lines of one family, from different places, all point toward one spot, "
        f"usually beyond the rail: the convergence point ({g.convergence}). The drawing zooms "
        "out to keep it in view, and the aim line is drawn on to it "
        f"({g.extension}). From a line you trust, turn it about that point to reach a new "
        "position; do not slide it parallel. With a reference line kept (k after a hit), the "
        f"card shows three lines: {g.parallel} your line slid parallel and what it misses by, "
        f"{g.turned} your line turned about the point, and {g.path} the model's aim. The turn "
        "assumes the same stroke: speed moves the point, so the card says when your line was "
        "played at another stroke. "
        f"w draws the same reading at the next softer ({g.softer}) and firmer ({g.firmer}) "
        "stroke. More: docs/rotation.md."
    )


CAUTION = (
    "Keep the laptop where no ball or cue can reach it, not on the rail line of the shot; on "
    "power shots keep onlookers clear and follow the room's own rules."
)


class HelpScreen(ModalScreen[None]):
    """Keys and how to read the card."""

    BINDINGS = [
        Binding("escape", "close", "Back"),
        Binding("question_mark", "close", "Back", key_display="?", show=False),
        Binding("q", "close", "Back", show=False),
    ]

    def __init__(self, ascii_only: bool = False) -> None:
        super().__init__()
        self.ascii_only = ascii_only

    def compose(self) -> ComposeResult:
        grid = RichTable.grid(padding=(0, 2))
        grid.add_column(style="bold", no_wrap=True)
        grid.add_column()
        for key, what in KEYS:
            grid.add_row(key, what)
        with VerticalScroll(id="help-box"):
            yield Static(Text("Keys", style="bold underline"))
            yield Static(grid)
            yield Static(Text("\nReading the card", style="bold underline"))
            yield Static(READING)
            yield Static(Text("\nTurn, don't slide", style="bold underline"))
            yield Static(turn_text(self.ascii_only))
            yield Static(Text("\nCaution", style="bold underline"))
            yield Static(CAUTION)
        yield Footer()

    def action_close(self) -> None:
        self.dismiss(None)
