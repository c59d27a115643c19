"""Shared test helpers: run the command line in-process and read what it said."""

from __future__ import annotations

import pytest

from tablecoach.cli import main


def cli(capsys: pytest.CaptureFixture[str], *args: str) -> tuple[int, str, str]:
    """Run ``tablecoach ARGS`` in-process: (exit code, stdout, stderr); argparse's own exit
    (SystemExit) is caught and its code returned like any other."""
    try:
        code = main(list(args))
    except SystemExit as exc:
        code = int(exc.code or 0) if not isinstance(exc.code, str) else 2
    out = capsys.readouterr()
    return code, out.out, out.err


def assert_refused(code: int, err: str, *words: str) -> None:
    """Exit 2, one line on stderr that starts like every refusal, no traceback, the words."""
    lines = err.strip().splitlines()
    assert code == 2, (code, err)
    assert len(lines) == 1, err
    assert lines[0].startswith("tablecoach"), err
    assert "Traceback" not in err
    for w in words:
        assert w in lines[0], (w, lines[0])
