"""Checks for values that come from outside: the command line, import files, TOML files, backups.

One place says what an acceptable number, time, name or JSON line is, so that every edge refuses
the same things with the same kind of line: the field, the value and what is allowed. Nothing
here knows about pool; callers add the file and line to the message (``InputError`` is a
ValueError, so ``cli.main`` prints it as one line and exits 2).

The limits are deliberately generous for real data and tight for garbage:

- numbers: finite, at most ``MAX_NUMBER_CHARS`` characters of text and within the caller's range
  (an integer too big for a float is refused before it is converted);
- times: years ``YEAR_MIN`` to ``YEAR_MAX`` (so that moving a time to UTC or to any local zone
  can never leave the calendar Python represents, years 1 to 9999);
- names (players, tables, packs): 1 to ``NAME_MAX`` printable characters after trimming;
- free text (notes and labels): at most ``TEXT_MAX`` characters, no control characters but tab
  and newline;
- JSON lines: nested at most ``MAX_DEPTH`` deep, numbers as above;
- TOML files: at most ``MAX_TOML_CHARS`` characters.
"""

from __future__ import annotations

import json
import math
import re
import tomllib
from datetime import UTC, date, datetime
from typing import Any

YEAR_MIN = 1900
YEAR_MAX = 2200
NAME_MAX = 40
TEXT_MAX = 2000
MAX_NUMBER_CHARS = 40
"""Characters in one number's text: room for any float's repr (at most 24) with slack."""
MAX_DEPTH = 16
"""Nesting of a JSON line: an attempt needs 4 (object, shot, target, ball)."""
MAX_TOML_CHARS = 1_000_000
"""A drill pack or table file bigger than this is not one (the built-in packs are a few kB)."""
_MAX_INT_BITS = 1024
"""An integer with more bits than this does not fit a float (its largest is just under 2**1024)."""


class InputError(ValueError):
    """A value from outside is not acceptable; the message names the field and what is allowed."""


def finite(
    value: Any, field: str, lo: float = -math.inf, hi: float = math.inf, unit: str = ""
) -> float:
    """``value`` as a float if it is a finite real number within ``lo`` to ``hi``.

    Booleans and text are refused (text is parsed by ``number_text`` first); so are integers
    too big for a float, NaN and the infinities.
    """
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise InputError(f"field {field!r} must be a finite number, got {show(value)}")
    if isinstance(value, int) and value.bit_length() > _MAX_INT_BITS:
        raise InputError(f"field {field!r} is too large a number{_range(lo, hi, unit)}")
    v = float(value)
    if not math.isfinite(v):
        raise InputError(
            f"field {field!r} must be a finite number, got {v!r}{_range(lo, hi, unit)}"
        )
    if not (lo <= v <= hi):
        raise InputError(f"field {field!r} = {v:g} is out of range{_range(lo, hi, unit)}")
    return v


def _range(lo: float, hi: float, unit: str) -> str:
    if math.isinf(lo) and math.isinf(hi):
        return ""
    u = f" {unit}" if unit else ""
    if math.isinf(hi):
        return f" (allowed: {lo:g}{u} or more)"
    if math.isinf(lo):
        return f" (allowed: up to {hi:g}{u})"
    return f" (allowed: {lo:g} to {hi:g}{u})"


def show(value: Any, limit: int = 40) -> str:
    """A value for a message, cut short so that a huge one still gives one readable line."""
    text = repr(value)
    return text if len(text) <= limit else text[: limit - 3] + "..."


def number_text(text: str, field: str, lo: float = -math.inf, hi: float = math.inf,
                unit: str = "") -> float:  # fmt: skip
    """A number written as text (command line, CSV cell) to a float within ``lo`` to ``hi``."""
    t = text.strip()
    if len(t) > MAX_NUMBER_CHARS:
        raise InputError(
            f"field {field!r} has a number {len(t)} characters long (at most {MAX_NUMBER_CHARS})"
        )
    try:
        v = float(t)
    except ValueError:
        raise InputError(f"field {field!r} = {show(text)} is not a number") from None
    return finite(v, field, lo, hi, unit)


def when(value: datetime, field: str = "when") -> datetime:
    """An aware time within years YEAR_MIN to YEAR_MAX, moved to UTC."""
    if value.tzinfo is None or value.utcoffset() is None:
        raise InputError(f"field {field!r} has no time zone (write it in UTC with a Z)")
    if not (YEAR_MIN <= value.year <= YEAR_MAX):  # first, so that the move below cannot overflow
        raise InputError(
            f"field {field!r} is in the year {value.year} (allowed: {YEAR_MIN} to {YEAR_MAX})"
        )
    utc = value.astimezone(UTC)
    if not (YEAR_MIN <= utc.year <= YEAR_MAX):
        raise InputError(
            f"field {field!r} is in the year {utc.year} in UTC (allowed: {YEAR_MIN} to {YEAR_MAX})"
        )
    return utc


def when_text(text: Any, field: str = "when") -> datetime:
    """An ISO-8601 time with a zone, within the allowed years, to an aware UTC datetime."""
    if not isinstance(text, str) or len(text) > 64:
        raise InputError(f"field {field!r} = {show(text)} is not an ISO-8601 time")
    try:
        value = datetime.fromisoformat(text)
    except ValueError:
        raise InputError(f"field {field!r} = {show(text)} is not an ISO-8601 time") from None
    return when(value, field)


def day(value: date, field: str) -> date:
    """A calendar day within years YEAR_MIN to YEAR_MAX."""
    if not (YEAR_MIN <= value.year <= YEAR_MAX):
        raise InputError(f"{field} is in the year {value.year} (allowed: {YEAR_MIN} to {YEAR_MAX})")
    return value


def name(value: Any, field: str) -> str:
    """A name (player, table, pack): 1 to NAME_MAX printable characters once trimmed."""
    if not isinstance(value, str):
        raise InputError(f"field {field!r} must be text, got {show(value)}")
    v = value.strip()
    if not v or len(v) > NAME_MAX or not v.isprintable():
        what = "is empty" if not v else (
            f"is {len(v)} characters long" if len(v) > NAME_MAX else "holds control characters"
        )  # fmt: skip
        raise InputError(
            f"field {field!r} = {show(value)} {what} (allowed: 1 to {NAME_MAX} "
            "printable characters)"
        )
    return v


def text(value: Any, field: str, limit: int = TEXT_MAX) -> str:
    """Free text (a note, a label): at most ``limit`` characters, no control characters but
    tab and newline."""
    if not isinstance(value, str):
        raise InputError(f"field {field!r} must be text, got {show(value)}")
    if len(value) > limit:
        raise InputError(f"field {field!r} is {len(value)} characters long (at most {limit})")
    if not value.replace("\n", " ").replace("\t", " ").replace("\r", " ").isprintable():
        raise InputError(f"field {field!r} holds control characters (allowed: text, tab, newline)")
    return value


# ----- JSON ---------------------------------------------------------------------------------


def _depth(line: str) -> int:
    """How deep the brackets of a JSON text nest (strings skipped)."""
    depth = top = 0
    in_str = esc = False
    for ch in line:
        if in_str:
            if esc:
                esc = False
            elif ch == "\\":
                esc = True
            elif ch == '"':
                in_str = False
        elif ch == '"':
            in_str = True
        elif ch in "[{":
            depth += 1
            top = max(top, depth)
        elif ch in "]}":
            depth -= 1
    return top


def _parse_int(text: str) -> int:
    if len(text) > MAX_NUMBER_CHARS:
        raise InputError(f"a number is {len(text)} characters long (at most {MAX_NUMBER_CHARS})")
    return int(text)


def _parse_float(text: str) -> float:
    if len(text) > MAX_NUMBER_CHARS:
        raise InputError(f"a number is {len(text)} characters long (at most {MAX_NUMBER_CHARS})")
    return float(text)


def _no_constant(text: str) -> float:
    raise InputError(f"{text} is not a number JSON allows (use a finite number)")


_LONG_NUMBER = re.compile(
    r'"([^"\\]{1,60})"\s*:\s*(?:\[\s*(?:[-+0-9.eE]+\s*,\s*)*)?-?[0-9][-+0-9.eE]{'
    + str(MAX_NUMBER_CHARS)
    + ",}"
)
"""A key whose value (or a member of its list) is a number too long: to name it in the message."""


_CHECKING = json.JSONDecoder(
    parse_int=_parse_int, parse_float=_parse_float, parse_constant=_no_constant
)
"""json.loads with every number's length checked (a Python call per number)."""
_PLAIN = json.JSONDecoder(parse_constant=_no_constant)
"""json.loads refusing NaN and Infinity, numbers read by the C parser."""
_NUMBER_RUN = re.compile("[0-9][-+0-9.eE]{" + str(MAX_NUMBER_CHARS - 1) + "}")
"""A digit and then enough characters that could make a number longer than MAX_NUMBER_CHARS:
a JSON number (RFC 8259, section 6) starts with a digit or with '-' and a digit, so one longer
than MAX_NUMBER_CHARS holds this; a run starting at a digit searches faster than any run."""


def json_line(line: str) -> Any:
    """Parse one JSON text with bounded nesting and number length; InputError otherwise.

    NaN and Infinity (which Python's json accepts but JSON does not) are refused too.
    """
    if line.count("[") + line.count("{") > MAX_DEPTH and _depth(line) > MAX_DEPTH:
        raise InputError(f"JSON nested deeper than {MAX_DEPTH} levels")
    # no run of number characters longer than a number may be: the C parser reads the numbers
    # (the same values as the checking hooks give, without a Python call for each one)
    decoder = _CHECKING if _NUMBER_RUN.search(line) else _PLAIN
    try:
        return decoder.decode(line)
    except InputError as exc:
        m = _LONG_NUMBER.search(line)
        if m is None:
            raise
        raise InputError(f"field {m.group(1)!r}: {exc}") from None
    except json.JSONDecodeError as exc:
        raise InputError(f"not valid JSON ({exc.msg} at column {exc.colno})") from None
    except RecursionError:  # pragma: no cover - the depth check comes first
        raise InputError(f"JSON nested deeper than {MAX_DEPTH} levels") from None


# ----- TOML ---------------------------------------------------------------------------------


def toml_text(text: str, source: str) -> dict[str, Any]:
    """Parse a TOML file's text, refusing what the parser cannot hold: a file bigger than
    MAX_TOML_CHARS, nesting deeper than Python's recursion allows and integers too long for a
    number. ``tomllib.TOMLDecodeError`` passes through for the caller to place on a line.
    """
    if len(text) > MAX_TOML_CHARS:
        raise InputError(f"{source}: the file is {len(text)} characters (at most {MAX_TOML_CHARS})")
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError:
        raise
    except RecursionError:
        raise InputError(f"{source}: values nested too deeply to be a tablecoach file") from None
    except ValueError as exc:  # e.g. an integer beyond Python's digit limit
        raise InputError(f"{source}: {str(exc).splitlines()[0]}") from None


__all__ = [
    "InputError",
    "MAX_DEPTH",
    "MAX_NUMBER_CHARS",
    "NAME_MAX",
    "TEXT_MAX",
    "YEAR_MAX",
    "YEAR_MIN",
    "day",
    "show",
    "finite",
    "json_line",
    "name",
    "number_text",
    "text",
    "toml_text",
    "when",
    "when_text",
]
