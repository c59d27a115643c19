"""Make rates and weekly trends in words, as the history command, report and screen show them."""

from __future__ import annotations

from collections.abc import Iterable

from ..core.stats.rates import Rate
from ..core.stats.trends import WeekRate

SPARK = " .:-=+*#"
"""The trend line's characters, lightest to darkest (a space: a week without practice)."""


def pct(r: Rate) -> str:
    """'62% (55-69%)' or 'no attempts'."""
    if r.rate is None:
        return "no attempts"
    return f"{100 * r.rate:.0f}% ({100 * r.low:.0f}-{100 * r.high:.0f}%)"


def spark(weeks: Iterable[WeekRate]) -> str:
    """A week-by-week trend line in plain ASCII: one character a week, darker = more made,
    a space for a week without practice."""
    out = []
    for w in weeks:
        if w.rate.rate is None:
            out.append(" ")
        else:
            out.append(SPARK[1 + min(int(w.rate.rate * (len(SPARK) - 1)), len(SPARK) - 2)])
    return "".join(out)
