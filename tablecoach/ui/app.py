"""The practice app: opens the store, picks table, pack and player, and runs the practice screen."""

from __future__ import annotations

import contextlib
import getpass
import json
import os
import sys
from collections.abc import Iterable
from dataclasses import dataclass
from typing import Any

import numpy as np
from textual import work
from textual.app import App, SystemCommand
from textual.binding import Binding
from textual.screen import Screen

from tablecoach import paths
from tablecoach.core import drills as drills_mod
from tablecoach.core.calibration import use as calibration_use
from tablecoach.core.practice import Session
from tablecoach.core.store import Store
from tablecoach.core.store.errors import StoreError
from tablecoach.core.summary import by_family
from tablecoach.core.table import BUILTIN_TABLES, DEFAULT_TABLE, TableSpec

from .screens.practice import PracticeScreen
from .screens.setup import Choice, SetupScreen
from .screens.summary import SummaryScreen, summary_text

SETTINGS_FILE = "practice.json"
"""Last table, pack and player picked on the setup screen, and the colours, in the
configuration folder."""

THEMES = ("textual-dark", "textual-light")


def default_player() -> str:
    """The login name, or "player" when there is none usable."""
    try:
        name = getpass.getuser().strip()
    except (OSError, KeyError, ImportError):
        name = ""
    return name[:40] if name else "player"


def env_seed() -> int | None:
    """TABLECOACH_SEED as an integer, for repeatable deals (tests, demos); None if unset."""
    text = os.environ.get("TABLECOACH_SEED", "").strip()
    if not text:
        return None
    try:
        return int(text)
    except ValueError:
        raise ValueError(f"TABLECOACH_SEED must be a whole number, got {text!r}") from None


def load_settings() -> dict[str, str]:
    """The last setup-screen picks; an unreadable file counts as none."""
    try:
        data = json.loads((paths.config_dir() / SETTINGS_FILE).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return {}
    if not isinstance(data, dict):
        return {}
    keys = ("table", "drill", "player", "theme")
    return {k: v for k, v in data.items() if k in keys and isinstance(v, str)}


def update_settings(**values: str) -> None:
    """Remember these settings for the next start, keeping the others (best effort)."""
    data = load_settings()
    data.update(values)
    try:
        folder = paths.ensure_dir(paths.config_dir())
        (folder / SETTINGS_FILE).write_text(json.dumps(data, indent=1), encoding="utf-8")
    except OSError:
        pass


def save_settings(choice: Choice) -> None:
    """Remember the setup-screen picks for the next start (best effort)."""
    update_settings(table=choice.table, drill=choice.drill, player=choice.player)


@dataclass(frozen=True)
class Resolved:
    """A table spec (calibrated when possible), its status line, a drill pack and a player."""

    table: TableSpec
    status: str
    drill: Any
    player: str
    calibration: Any = None


def resolve(store: Store, table: str, drill: str, player: str) -> Resolved:
    """Look up the names; a wrong one is a ValueError with one line naming what exists."""
    player = player.strip()
    if not player or len(player) > 40:
        raise ValueError(f"a player name must be 1 to 40 characters, got {player!r}")
    r = calibration_use.resolve(store, table, player)
    pack = drills_mod.find_drill(drill, paths.user_drills_dir())
    return Resolved(r.table, r.status, pack, player, r.calibration)


def drill_names() -> list[tuple[str, str]]:
    """(name, title) of every drill pack, built-in and the player's own."""
    found = drills_mod.all_drills(paths.user_drills_dir())
    items = found.values() if isinstance(found, dict) else found
    out = []
    for d in items:
        name = str(getattr(d, "name", d))
        title = str(getattr(d, "title", "") or getattr(d, "description", ""))
        out.append((name, title))
    return out


class TableCoachApp(App[int]):
    """The practice coach. Keys work without a mouse; every action is in the palette too."""

    CSS_PATH = "app.tcss"
    TITLE = "tablecoach"
    BINDINGS = [Binding("l", "toggle_theme", "Light/dark", show=False)]

    def __init__(
        self,
        store: Store,
        start: Resolved,
        drill_name: str,
        *,
        seed: int | None = None,
        model: str | None = None,
        ascii_only: bool = False,
        theme: str = "textual-dark",
    ) -> None:
        super().__init__()
        self.store = store
        self.drill_name = drill_name
        self.rng = np.random.default_rng(seed)
        self.model = model or "physical"
        self.ascii_only = ascii_only
        self.start_theme = theme
        self.summary: str = ""
        self.refused: str = ""
        """The store's integrity check failed: its one line (run_app prints it), nothing written."""
        # the first session is opened here, so a pack that cannot deal fails before any screen
        self.practice: PracticeScreen | None = self._practice_for(start, drill_name)

    # ----- sessions ------------------------------------------------------------------------------
    def on_mount(self) -> None:
        self.theme = self.start_theme
        assert self.practice is not None
        self.push_screen(self.practice)
        self._watch_store()

    @work(thread=True, group="store-check", exit_on_error=False)
    def _watch_store(self) -> None:
        """Wait for the store's integrity check (begun on opening, beside the first card:
        Store.start_check); a damaged file ends the app with the check's one line, and
        nothing is written into it (every write waits for the check and refuses too)."""
        try:
            self.store.check()
        except StoreError as exc:
            self.call_from_thread(self._refuse, str(exc))

    def _refuse(self, line: str) -> None:
        self.refused = line
        self.exit(2)

    def _practice_for(self, r: Resolved, drill_name: str) -> PracticeScreen:
        session = Session(
            self.store, r.table, r.drill, r.player, self.rng, self.model, r.calibration
        )
        self.drill_name = drill_name
        return PracticeScreen(session, r.status, self.ascii_only)

    def _end_session(self) -> None:
        if self.practice is None:
            return
        s = self.practice.session
        self.summary = summary_text(s.stats())
        with contextlib.suppress(StoreError):
            s.end()

    def action_open_setup(self) -> None:
        if self.practice is None:
            return
        s = self.practice.session
        tables = [(n, t.description) for n, t in BUILTIN_TABLES.items()]
        try:
            tables += [(n, t.description) for n, t in self.store.tables().items()]
            players = self.store.players()
            packs = drill_names()
        except ValueError as exc:
            self.practice.say(f"cannot open the setup screen: {exc}", True)
            return
        current = Choice(s.table.name, self.drill_name, s.player, s.repeat)
        self.push_screen(SetupScreen(tables, packs, players, current), self._setup_done)

    def _setup_done(self, choice: Choice | None) -> None:
        if choice is None or self.practice is None:
            return
        old_drill = self.drill_name
        try:
            r = resolve(self.store, choice.table, choice.drill, choice.player)
            fresh = self._practice_for(r, choice.drill)
        except ValueError as exc:
            self.drill_name = old_drill
            self.practice.say(str(exc), True)
            return
        if choice.repeat:
            fresh.session.repeat = choice.repeat
        save_settings(choice)
        self._end_session()
        self.practice = fresh
        fresh.opening = f"new session: {r.table.name} table, {choice.drill} pack, {r.player}"
        self.switch_screen(fresh)

    def action_summary(self) -> None:
        if self.practice is None:
            self.exit(0)
            return
        s = self.practice.session
        try:
            table_of = {s.table.name: s.store.get_table(s.table.name)}.get
            families = by_family(s.logged, table_of)
        except ValueError:
            families = []
        screen = SummaryScreen(s.stats(), s.player, s.table.name, self.drill_name, families)

        def done(leave: bool | None) -> None:
            if leave:
                self._end_session()
                self.exit(0)

        self.push_screen(screen, done)

    def on_unmount(self) -> None:
        self._end_session()

    # ----- looks and the palette ----------------------------------------------------------------
    def action_toggle_theme(self) -> None:
        self.theme = THEMES[1] if self.theme == THEMES[0] else THEMES[0]
        update_settings(theme=self.theme)  # the next start opens in the same colours

    def get_system_commands(self, screen: Screen[Any]) -> Iterable[SystemCommand]:
        yield from super().get_system_commands(screen)
        yield SystemCommand(
            "Dark or light", "Switch between dark and light colours (l)", self.action_toggle_theme
        )
        if isinstance(screen, PracticeScreen):
            for action, title, help_text in screen.COMMANDS_LIST:
                if screen.check_action(action, ()) is False:
                    continue
                yield SystemCommand(title, help_text, getattr(screen, f"action_{action}"))


def build_app(
    table: str | None = None,
    drill: str | None = None,
    player: str | None = None,
    *,
    seed: int | None = None,
    model: str | None = None,
    ascii_only: bool = False,
    theme: str | None = None,
) -> TableCoachApp:
    """Open the store (paths / TABLECOACH_DATA_DIR) and build the app.

    Names not given come from the last setup-screen picks, then the defaults (9ft table, the
    default pack; the store's only player, else the login name). Raises StoreError for a
    file that is not a store, or is damaged where opening reads it, and ValueError for an
    unknown name, before any screen is drawn. The store's integrity check runs beside the
    first card (a big store takes seconds): damage it finds ends the app (``refused``).
    """
    saved = load_settings()
    store = Store.open(paths.db_path())
    store.start_check()  # the integrity check, beside the rest of the opening (Store.check)
    try:
        t = table or saved.get("table") or DEFAULT_TABLE
        d = drill or saved.get("drill") or drills_mod.DEFAULT_DRILL
        known = store.players()
        only = known[0] if len(known) == 1 else None  # one player in the store: that player
        p = player or saved.get("player") or only or default_player()
        start = resolve(store, t, d, p)
        colours = theme or saved.get("theme", THEMES[0])
        if colours not in THEMES:
            colours = THEMES[0]
        return TableCoachApp(
            store, start, d, seed=seed, model=model, ascii_only=ascii_only, theme=colours
        )
    except BaseException:
        store.close()
        raise


def run_app(args: Any) -> int:
    """Run the practice app for the parsed command line; returns the exit code.

    A damaged database or an unknown name is one line on stderr and exit code 2.
    """
    try:
        app = build_app(
            getattr(args, "table", None),
            getattr(args, "drill", None),
            getattr(args, "player", None),
            seed=env_seed(),
            ascii_only=bool(os.environ.get("TABLECOACH_ASCII")),
        )
    except ValueError as exc:
        print(f"tablecoach: {exc}", file=sys.stderr)
        return 2
    try:
        code = app.run()
    finally:
        app.store.close()
    if app.refused:
        print(f"tablecoach: {app.refused}", file=sys.stderr)
        return 2
    if app.summary:
        print(f"tablecoach: {app.summary}")
    return int(code or 0)
