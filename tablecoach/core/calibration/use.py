"""Using calibrations: the table a player aims on, their strokes, fitting from the store."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from .. import shots, strokes
from ..store.query import AttemptQuery
from ..table import TableSpec
from .params import STALE, CalibrationError
from .value import Calibration, StaleCalibration

NOT_CALIBRATED = "not calibrated yet"


def stroke_for(
    calibration: Calibration | None, preset: str, english: float = 0.0, follow: float = 0.0
) -> shots.Stroke:
    """The stroke a player means by a name: their calibrated m/s, or the book's without one."""
    if preset not in shots.SPEED_PRESETS:
        raise CalibrationError(
            f"unknown speed preset {preset!r}: use one of {', '.join(shots.SPEED_PRESETS)}"
        )
    speed = calibration.speed(preset) if calibration is not None else shots.SPEED_PRESETS[preset]
    return shots.Stroke(speed, english, follow)


def speed_for(calibration: Calibration | None, text: str | float) -> float:
    """A --speed value (a stroke name, lengths or m/s) as the m/s the model should use: a name
    becomes the player's calibrated m/s; lengths and m/s are taken as given."""
    if isinstance(text, str) and text.strip().lower() in shots.SPEED_PRESETS:
        return stroke_for(calibration, text.strip().lower()).speed
    return strokes.parse_speed(text)


def stored_calibration(store: Any, table_name: str, player: str | None) -> Calibration | None:
    """The newest stored calibration of a table for a player, or None. One made under an older
    model raises StaleCalibration; a damaged one CalibrationError."""
    if not player:
        return None
    rec = store.calibration(table_name, player)
    if rec is None:
        return None
    return Calibration.from_dict(rec["params"], int(rec["attempts"]))


def default_player(store: Any, player: str | None) -> str | None:
    """The player named, or the only player in the store, or None."""
    if player:
        return player
    names = store.players()
    return names[0] if len(names) == 1 else None


@dataclass(frozen=True, slots=True)
class Resolved:
    """The table to aim on: the spec (calibrated if possible), the calibration, the player it
    belongs to and a one-line status for the screen."""

    table: TableSpec
    calibration: Calibration | None
    player: str | None
    status: str


def resolve(store: Any, table_name: str, player: str | None = None) -> Resolved:
    """The table spec for ``table_name`` (built-in or stored) with the player's calibration
    applied, if there is one. With no player named and one player in the store, that player.
    A calibration made under an older model is not applied; the status says to run it again."""
    base = store.get_table(table_name)
    who = default_player(store, player)
    try:
        cal = stored_calibration(store, table_name, who)
    except StaleCalibration:
        return Resolved(base, None, who, STALE)
    if cal is None:
        status = NOT_CALIBRATED if who else f"{NOT_CALIBRATED} (no player named)"
        return Resolved(base, None, who, status)
    return Resolved(cal.apply(base), cal, who, cal.status)


def calibrated_table(store: Any, table_name: str, player: str | None) -> tuple[TableSpec, str]:
    """The table with the player's calibration applied and a status line."""
    r = resolve(store, table_name, player)
    return r.table, r.status


def resolve_table(
    table_name: str | None, player: str | None = None, store: Any = None
) -> tuple[TableSpec, str]:
    """For the aim and predict commands: the table to use and its status line. ``store`` is an
    open Store; with None, the built-in table and "not calibrated yet"."""
    from ..table import DEFAULT_TABLE, builtin_table

    name = table_name or DEFAULT_TABLE
    if store is None:
        return builtin_table(name), NOT_CALIBRATED
    return calibrated_table(store, name, player)


def needs_table_check(store: Any, table_name: str, player: str | None) -> bool:
    """True when the app should offer the table check: no usable calibration of this table for
    this player yet (none, or one made under an older model)."""
    who = default_player(store, player)
    if who is None:
        return True
    try:
        return stored_calibration(store, table_name, who) is None
    except StaleCalibration:
        return True


def calibrate_from_store(
    store: Any,
    table_name: str,
    player: str | None,
    save: bool = True,
    progress: Callable[[str], None] | None = None,
) -> list[Calibration]:
    """Fit a table from the attempts in the store and save each player's calibration.

    Without a player, the table's cloth and cushion come from everyone's attempts on it and
    each player's strokes from their own; with one, from that player's attempts alone. One
    CalibrationError line when there is nothing to fit."""
    from .fit import fit_table

    table = store.get_table(table_name)
    attempts = store.attempts(AttemptQuery(player=player, table=table_name)) if player else None
    if player and not attempts:
        raise CalibrationError(
            f"{player} has no attempts logged on the {table_name} table yet; the table check in "
            "the practice screen takes 5 to 10 shots"
        )
    if attempts is None:
        attempts = store.attempts(AttemptQuery(table=table_name))
        if not attempts:
            raise CalibrationError(
                f"no attempts logged on the {table_name} table yet: practise first (the table "
                "check in the practice screen takes 5 to 10 shots)"
            )
    warm = _earlier(store, table_name, sorted({str(a.player) for a in attempts}))
    cals = list(fit_table(table, attempts, progress=progress, warm=warm).calibrations)
    if save:
        for cal in cals:
            store.save_calibration(table_name, cal.player, cal.as_dict(), cal.attempts)
    return cals


def _earlier(store: Any, table_name: str, players: list[str]) -> list[Calibration]:
    """The stored calibrations of the table for these players that the fit can start from
    (stale or damaged ones are skipped: the fit then starts from its grid)."""
    out = []
    for p in players:
        try:
            cal = stored_calibration(store, table_name, p)
        except CalibrationError:  # StaleCalibration included
            continue
        if cal is not None:
            out.append(cal)
    return out
