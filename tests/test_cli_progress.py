"""Progress on stderr for long commands: a spinner with the latest message at a terminal only
(the project's own messages; the terminal is a stand-in whose isatty says yes)."""

from __future__ import annotations

import io
import sys
import time

from tablecoach.cli import progress


class _Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def test_status_is_nothing_off_a_terminal(monkeypatch) -> None:  # type: ignore[no-untyped-def]
    err = io.StringIO()
    monkeypatch.setattr(sys, "stderr", err)
    with progress.status(0.0) as say:
        assert say is None
    assert err.getvalue() == ""


def test_status_shows_the_latest_message_at_a_terminal(monkeypatch) -> None:  # type: ignore[no-untyped-def]
    err = _Terminal()
    monkeypatch.setattr(sys, "stderr", err)
    with progress.status(0.0) as say:
        assert say is not None
        say("fitting 1000 attempts")
        time.sleep(0.2)
        say("fitting: step 2, objective 12.0")
        time.sleep(0.2)
    out = err.getvalue()
    assert "fitting 1000 attempts" in out and "step 2" in out


def test_status_waits_before_it_shows_anything(monkeypatch) -> None:  # type: ignore[no-untyped-def]
    err = _Terminal()
    monkeypatch.setattr(sys, "stderr", err)
    with progress.status(60.0) as say:
        assert say is not None
        say("fitting 10 attempts")
    assert "fitting" not in err.getvalue()
