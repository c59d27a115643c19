"""The words a player reads, in the app and on the command line: placement, aim, speed, spin."""

from __future__ import annotations

from tablecoach.core import placing
from tablecoach.core.aim.shift import ReferenceShift
from tablecoach.core.practice import shown_reading
from tablecoach.core.shots import (
    Aim,
    Convergence,
    RailPoint,
    Setup,
    Stroke,
)
from tablecoach.core.spin import english_kind
from tablecoach.core.strokes import speed_name, travel_lengths
from tablecoach.core.summary import family_title
from tablecoach.core.table import TableSpec

RAIL_ORDER = ("head", "left", "foot", "right")
"""The order the landing prompt steps through rails with up/down (round the table)."""


def num(v: float, places: int = 2) -> str:
    """A diamond figure without trailing zeros: 1.5, 2, 0.25, 3.13."""
    text = f"{v:.{places}f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def count(n: int, word: str) -> str:
    """'1 shot', '2 shots', '0 hits'."""
    return f"{n} {word}" if n == 1 else f"{n} {word}s"


def family_text(name: str, in_sentence: bool = False) -> str:
    """A family as players say it ("Two-rail kick" for ``two-rail-kick``, "two-rail kick"
    ``in_sentence``); a family of the player's own (a pack's custom name) is said as it was
    named. Machine names stay in JSON."""
    title = family_title(name)
    if in_sentence and title != name:
        return title[:1].lower() + title[1:]
    return title


def placement(table: TableSpec, what: str, p: tuple[float, float]) -> str:
    """Where to put a ball, as a player measures it: diamonds from the nearer end rail and the
    nearer long rail (ball centre from the cushion nose) in fractions, or frozen to a rail."""
    x, y = table.to_diamonds(*p)
    along, across = placing.words(table, x, y)
    return f"{what}: {along}, {across}"


def placements(table: TableSpec, setup: Setup) -> list[str]:
    """One line a ball, cue ball first."""
    out = [placement(table, "cue ball", setup.cue)]
    if setup.object is not None:
        out.append(placement(table, "object ball", setup.object))
    if setup.target_ball is not None:
        out.append(placement(table, "target ball", setup.target_ball))
    return out


def target_text(setup: Setup) -> str:
    """What the shot must do, in a few words."""
    fam = setup.family
    rails = ", ".join(fam.rails)
    ball = "cue ball" if fam.travel == "cue" else "object ball"
    if setup.pocket is not None:
        return f"{ball} off the {rails} rail{'s' if len(fam.rails) > 1 else ''} into {setup.pocket}"
    return f"{ball} off the {rails} rail{'s' if len(fam.rails) > 1 else ''} to the target ball"


def aim_text(table: TableSpec, aim: Aim) -> str:
    """The sight reading to aim over, with the cushion contact beside it."""
    reading = shown_reading(table, aim)
    first = aim.contacts[0] if aim.contacts else None
    contact = ""
    if first is not None:
        contact = f" (cushion contact {num(table.along_to_diamonds(first.rail, first.at))})"
    return f"sight {num(reading)} on the {aim.rail} rail{contact}"


def contact_text(table: TableSpec, aim: Aim) -> str:
    """Where the travelling ball's centre meets the first cushion, in diamonds along it."""
    first = aim.contacts[0] if aim.contacts else None
    if first is None:
        return "not found"
    return f"{num(table.along_to_diamonds(first.rail, first.at))} on the {first.rail} rail"


def landing_diamonds(table: TableSpec, p: RailPoint) -> float:
    """A rail point in diamonds along its rail, to 0.01, kept on the rail."""
    top = 8.0 if p.rail in ("left", "right") else 4.0
    return min(max(round(table.along_to_diamonds(p.rail, p.at), 2), 0.0), top)


def landing_text(table: TableSpec, p: RailPoint | None) -> str:
    if p is None:
        return "no landing rail"
    return f"{p.rail} rail at {num(landing_diamonds(table, p))}"


def speed_text(table: TableSpec, stroke: Stroke) -> str:
    """The named stroke, its lengths of travel on this table (cushions counted) and m/s."""
    lengths = travel_lengths(table, stroke.speed)
    return (
        f"{speed_name(stroke.speed, table)}: {lengths:.1f} lengths of travel, "
        f"{stroke.speed:.2f} m/s off the tip"
    )


def tips_text(tips: float) -> str:
    """Tips of spin as players say them: "a tip", "a half tip", "a tip and a half"."""
    t = abs(tips)
    named = {0.25: "a quarter tip", 0.5: "a half tip", 0.75: "three quarters of a tip"}
    named |= {1.0: "a tip", 1.5: "a tip and a half"}
    for v, words in named.items():
        if abs(t - v) < 1e-9:
            return words
    return f"{num(t)} tips"


def spin_text(stroke: Stroke, aim: Aim | None = None) -> str:
    """English and follow/draw in the trade's words ("a tip of running english (right)", "a
    half tip of draw"), or a centre-ball hit."""
    parts = []
    if stroke.english:
        side = "right" if stroke.english > 0 else "left"
        kind = english_kind(stroke.english, aim)
        if kind:
            parts.append(f"{tips_text(stroke.english)} of {kind} english ({side})")
        else:
            parts.append(f"{tips_text(stroke.english)} of {side} english")
    if stroke.follow:
        what = "follow" if stroke.follow > 0 else "draw"
        parts.append(f"{tips_text(stroke.follow)} of {what}")
    return ", ".join(parts) if parts else "centre ball"


def margin_text(table: TableSpec, aim: Aim) -> str:
    """How far the reading may move each way and still score, in diamonds."""
    unit = table.rail_unit(aim.rail)
    lo, hi = aim.margin_minus / unit, aim.margin_plus / unit
    return f"-{lo:.2f} / +{hi:.2f} diamond"


def placement_text(table: TableSpec, aim: Aim, shift: float | None) -> str:
    """The margin against what a quarter-diamond placement error does to the aim."""
    if shift is None:
        return ""
    unit = table.rail_unit(aim.rail)
    margin = min(aim.margin_minus, aim.margin_plus) / unit
    said = f"a ball 1/4 diamond off moves the aim {shift:.2f}"
    if shift > margin:
        return f"{said}: more than the margin, place with care"
    return f"{said}: within the margin"


def convergence_text(table: TableSpec, conv: Convergence | None) -> str:
    """The convergence point in diamonds (often off the table), with its spread."""
    if conv is None:
        return "not found for this setup"
    x, y = table.to_diamonds(*conv.point)
    off = "" if 0.0 <= x <= 8.0 and 0.0 <= y <= 4.0 else " (off the table)"
    spread = conv.spread / table.diamond
    if spread < 0.005:
        return f"x {num(x, 1)}, y {num(y, 1)}{off}; nearby aim lines all meet there"
    return f"x {num(x, 1)}, y {num(y, 1)}{off}; nearby aim lines within {spread:.2f} diamond"


def shift_text(table: TableSpec, setup: Setup, shift: ReferenceShift) -> str:
    """A reference line moved to this position, in one sentence: what the parallel shift
    misses by, the reading turned about the convergence point, and the model's reading."""
    rail = setup.family.rails[0]
    u = table.rail_unit(rail)
    what = "the pocket" if setup.pocket is not None else "the target ball"

    def miss(m: float | None) -> str:
        if m is None:
            return "goes where the model cannot follow"
        if m / table.diamond < 0.005:
            return f"reaches {what}"
        return f"misses {what} by {num(m / table.diamond)} diamond"

    par = shift.parallel
    text = (
        f"a parallel shift from your {num(shift.reference_reading / u)} line "
        f"({num(par.reading / u)}) {miss(par.miss)}; "
        f"turn it about the point: {num(shift.rotated.reading / u)}"
    )
    rot = shift.rotated.miss
    if rot is not None and rot / table.diamond >= 0.005:
        text += f" ({miss(rot)})"
    return text + f"; the model says {num(shift.solved.reading / u)}"


SAME_SPIN = 0.05
"""Tips of english or follow closer than this count as the same spin."""


def reference_stroke_text(table: TableSpec, ref: Stroke, stroke: Stroke) -> str:
    """What a reference line played at another stroke means for the turn, in a player's words
    ("your line: medium; this shot: slow. Speed moves the point; the turn assumes the same
    stroke"); "" when the named stroke and the spin are the same."""
    speed = speed_name(ref.speed, table) != speed_name(stroke.speed, table)
    spin = abs(ref.english - stroke.english) >= SAME_SPIN or (
        abs(ref.follow - stroke.follow) >= SAME_SPIN
    )
    if not (speed or spin):
        return ""

    def said(s: Stroke) -> str:
        parts = [speed_name(s.speed, table)] if speed else []
        return ", ".join([*parts, spin_text(s)] if spin else parts)

    moves = "Speed and spin move" if speed and spin else "Speed moves" if speed else "Spin moves"
    return (
        f"your line: {said(ref)}; this shot: {said(stroke)}. {moves} the point; "
        "the turn assumes the same stroke"
    )


MODEL_WORDS = {
    "ideal": "ideal (mirror reflection, no spin or cushion loss)",
    "physical": "physical (cloth friction, spin, cushion impact)",
}


def model_text(model: str) -> str:
    return MODEL_WORDS.get(model, f"{model} model")
