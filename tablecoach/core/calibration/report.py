"""A calibration in a player's words: how well it predicts, what the table does, what each
stroke does in lengths of travel, and what the shots could not tell."""

from __future__ import annotations

import math

from .. import shots, strokes
from ..table import TableSpec
from .params import PARAM_WORDS
from .value import KEPT_BOUND, Calibration, Estimate

PINNED = 0.5
"""A posterior sd below this fraction of the prior's: the shots pinned the value down."""
SILENT = 0.9
"""A posterior sd above this fraction of the prior's: the shots said next to nothing."""


def sentences(cal: Calibration, table: TableSpec | None = None) -> list[str]:
    """The whole calibration, most useful first: the head line, the table, the strokes."""
    return [head(cal), *table_sentences(cal), *stroke_sentences(cal, table)]


def head(cal: Calibration) -> str:
    """``Calibrated from N attempts (...)``: what the shots said and how well it predicts."""
    said = [
        f"{n} {word}"
        for n, word in (
            (cal.landings, "landing" if cal.landings == 1 else "landings"),
            (cal.hits, "hit" if cal.hits == 1 else "hits"),
            (cal.shorts, "short"),
            (cal.jaws, "jaw" if cal.jaws == 1 else "jaws"),
        )
        if n
    ]
    text = f"Calibrated from {cal.attempts} attempt{'s' if cal.attempts != 1 else ''}"
    if said:
        text += f" ({', '.join(said)})"
    if cal.players > 1:
        text += f"; the table from {cal.players} players' shots"
    if cal.outliers:
        text += (
            f"; {cal.outliers} far from the model (mislogged, or near a pocket) count for little"
        )
    if math.isfinite(cal.rms_after_inliers) and math.isfinite(cal.rms_before_inliers):
        text += (
            f": logged landings predicted to {cal.rms_after_inliers:.2f} diamond RMS, "
            f"against {cal.rms_before_inliers:.2f} on the default table"
        )
    return text + "."


def table_sentences(cal: Calibration) -> list[str]:
    """What the table does: landings against the default table's, then each parameter against
    its prior, with how much the shots narrowed it, and what they could not tell."""
    out: list[str] = []
    for s in sorted(cal.shifts, key=lambda s: -abs(s.long)):
        fam = shots.PRESETS.get(s.family)
        title = (fam.title if fam else s.family).lower()
        if abs(s.long) < 0.05:
            out.append(f"{_cap(title)}s at {s.preset} land as on the default table.")
            continue
        way = "longer" if s.long > 0 else "shorter"
        out.append(
            f"{_cap(title)}s at {s.preset} land {abs(s.long):.1f} diamond {way} here "
            "than on the default table."
        )
    for e in cal.params:
        out.append(param_sentence(e))
    for key in cal.notes:
        line = _unclear_sentence(key)
        if line:
            out.append(line)
    return out


def param_sentence(e: Estimate) -> str:
    """One table parameter: its value and spread against the prior's, in a player's words."""
    words = _cap(PARAM_WORDS.get(e.name, e.name))
    if e.kept == KEPT_BOUND:
        return (
            f"{words}: the shots pushed it to the end of its range, which says more about "
            f"those shots than the table; kept at the usual {e.prior:.3g}."
        )
    spread = f"{e.value:.3g} +- {e.sd:.2g}"
    ratio = e.narrowed
    if math.isfinite(ratio) and ratio > SILENT:
        return f"{words} {spread}: the shots say little about it; the usual {e.prior:.3g} stands."
    if abs(e.value - e.prior) <= e.sd:
        text = f"{words} {spread}: as the default"
    else:
        way = "higher" if e.value > e.prior else "lower"
        extra = ""
        if e.name == "cushion.restitution":
            extra = " (livelier cushions)" if way == "higher" else " (deader cushions)"
        text = f"{words} {spread}, {way} than the default {e.prior:.3g}{extra}"
    if math.isfinite(ratio) and math.isfinite(e.prior_sd):
        how = "pinned it down" if ratio < PINNED else "narrowed it"
        text += f"; the shots {how} from the usual +- {e.prior_sd:.2g}"
    return text + "."


FAR_FROM_BOOK = 1.5
"""A fitted stroke whose speed differs by more than this factor from the speed that gives the
book's lengths of travel on the calibrated table (strokes.stroke_speed) is said to be
doubtful: the named strokes sit 1.25-1.6 times apart in speed on the default table
(shots.SPEED_PRESETS), so a stroke past this factor is another stroke."""


def _far(speed: float, named: float) -> bool:
    return (
        math.isfinite(named)
        and named > 0
        and not 1 / FAR_FROM_BOOK <= speed / named <= FAR_FROM_BOOK
    )


def stroke_sentences(cal: Calibration, table: TableSpec | None = None) -> list[str]:
    """Each of the player's strokes in lengths of travel on the calibrated table, beside the
    book's lengths (shots.STROKE_LENGTHS), and in m/s."""
    here = _words_table(cal, table)
    who = f"{cal.player}'s" if cal.players > 1 and cal.player else "Your"
    out = []
    for e in cal.speeds:
        book_l = shots.STROKE_LENGTHS[e.name]
        book = shots.SPEED_PRESETS[e.name]
        if e.kept == KEPT_BOUND:
            out.append(
                f"{who} {e.name}: the shots pushed it to the end of its range (half or twice "
                "the book's pace), which says more about those shots, or about what the model "
                f"cannot do on this table, than about your stroke; kept at {e.value:.2f} m/s."
            )
            continue
        lengths = _lengths(here, e.value)
        if lengths is not None:
            text = (
                f"{who} {e.name} sends the ball {lengths:.1f} lengths on this table "
                f"(the book's {e.name}: {book_l:g})"
            )
        else:
            text = f"{who} {e.name} is {e.value:.2f} m/s (the book's: {book:.2f})"
        text += f": {e.value:.2f} +- {e.sd:.2f} m/s"
        ratio = e.narrowed
        if math.isfinite(ratio) and ratio > SILENT:
            text += ", which the shots hardly tell: the book's pace stands"
        elif here is not None and _far(e.value, strokes.stroke_speed(here, e.name)):
            text += (
                "; that is far from any stroke so named, so it may say more about what the "
                "model cannot do on this table than about your stroke: count the lengths a "
                f"few of your {e.name} strokes travel to check it"
            )
        out.append(text + ".")
    return out


def _unclear_sentence(key: str) -> str:
    parts = key.split("|")
    if len(parts) != 3:
        return ""
    a, b, sign = parts
    wa, wb = _name(a), _name(b)
    # a positive posterior correlation: the two can rise together and fit about as well
    if sign.startswith("-"):
        how = f"more {wa} with less {wb} fits them about as well"
    else:
        how = f"more {wa} with more {wb} fits them about as well"
    return f"The shots cannot tell {wa} from {wb} apart: {how}."


def _name(key: str) -> str:
    if key.startswith("speed."):
        _, player, stroke = key.split(".", 2)
        return f"{player}'s {stroke} pace"
    return PARAM_WORDS.get(key, key)


def _words_table(cal: Calibration, table: TableSpec | None) -> TableSpec | None:
    """The calibrated table to say lengths of travel on, or None when it is not known."""
    if table is None:
        from ..table import builtin_table

        try:
            table = builtin_table(cal.table)
        except ValueError:
            return None
    try:
        return cal.apply(table)
    except ValueError:
        return None


def _lengths(table: TableSpec | None, speed: float) -> float | None:
    if table is None:
        return None
    try:
        lengths = strokes.travel_lengths(table, speed)
    except ValueError:
        return None
    return lengths if math.isfinite(lengths) else None


def _cap(s: str) -> str:
    return s[:1].upper() + s[1:]
