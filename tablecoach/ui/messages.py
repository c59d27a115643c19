"""Messages the practice screen's workers send back to it when slow work is done."""

from __future__ import annotations

from typing import Any

from textual.message import Message

from tablecoach.core.shots import Aim, Convergence, Stroke


class SetupDealt(Message):
    """The dealer picked a setup ahead of time, with its aim solved when it could be.

    ``generation`` names the dealer state it was drawn from; a pin or a new session moves the
    generation on, so a setup dealt before it is dropped. ``error`` says why nothing was dealt.
    ``drawn`` is (picture, ((width, height), lines)): the table picture drawn in the worker,
    with the convergence point ``conv`` when it was found.
    """

    def __init__(
        self,
        generation: int,
        pick: Any,
        aim: Aim | None,
        error: str = "",
        note: str = "",
        drawn: Any = None,
        conv: Convergence | None = None,
    ) -> None:
        super().__init__()
        self.drawn = drawn
        self.conv = conv
        self.generation = generation
        self.pick = pick
        self.aim = aim
        self.error = error
        self.note = note


class AimSolved(Message):
    """An aim solve finished (``aim`` set) or failed (``error`` set); ``token`` names the setup
    it was for, so a late answer for a setup already left behind is dropped."""

    def __init__(self, token: int, aim: Aim | None, error: str = "", note: str = "") -> None:
        super().__init__()
        self.token = token
        self.aim = aim
        self.error = error
        self.note = note


class ConvergenceFound(Message):
    """The convergence point for the shown setup (None when too few lines had a clean path)."""

    def __init__(self, token: int, convergence: Convergence | None) -> None:
        super().__init__()
        self.token = token
        self.convergence = convergence


class DealerRefreshed(Message):
    """The coach has started again from the attempts still logged (after an undo)."""


class CalibrationDone(Message):
    """A calibration run in the background finished: ``calibration`` with ``changes`` (what it
    changed, in words), or ``error`` with the one line that says why it could not be fitted."""

    def __init__(self, calibration: Any = None, changes: Any = (), error: str = "") -> None:
        super().__init__()
        self.calibration = calibration
        self.changes = tuple(changes)
        self.error = error


class ShiftFound(Message):
    """The player's reference line for this family moved to the setup on screen
    (core/aim/shift.py's ReferenceShift), with the stroke that line was played at; ``token``
    names the setup it was for."""

    def __init__(self, token: int, shift: Any, stroke: Stroke | None = None) -> None:
        super().__init__()
        self.token = token
        self.shift = shift
        self.stroke = stroke


class SpeedsFound(Message):
    """The shown reading traced at the next softer and firmer named strokes
    (core.aim.speed_neighbours); ``token`` names the setup it was for."""

    def __init__(self, token: int, paths: Any) -> None:
        super().__init__()
        self.token = token
        self.paths = paths
