"""The practice session, headless: dealing setups, the stroke and spin, logging, undo, repeats."""

from __future__ import annotations

import threading
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from . import feedback, shots, strokes
from .coach import Zone, zone_counts, zone_of
from .records import Attempt, rail_length_diamonds, utc_now
from .scheduler import Scheduler
from .shots import Aim, Setup, Stroke
from .spin import SPIN_STEPS, spin_for
from .store import Store
from .store.query import AttemptQuery
from .table import TableSpec

SPEED_CYCLE: tuple[str, ...] = tuple(shots.SPEED_PRESETS)
"""The named strokes the speed key steps through, softest first (shots.STROKE_LENGTHS)."""

DEAL_MODEL = "ideal"
"""The model the coach checks a dealt setup against. The ideal check is fast; the practice
screen then solves the shown setup under the session's model and draws again (a few times) when
that model finds no path, so dealing never keeps the player waiting for long."""

REDRAWS = 3
"""How many setups the practice screen draws, at most, looking for one the session's model
can solve, before it shows the ideal aim with a note."""


def shown_reading(table: TableSpec, aim: Aim) -> float:
    """The reading as shown and logged: diamonds along the first rail, to 0.01."""
    return round(table.along_to_diamonds(aim.rail, aim.reading), 2)


@dataclass(frozen=True, slots=True)
class Pick:
    """One setup to shoot: the dealt setup and stroke, its zone and why it was picked."""

    setup: Setup
    stroke: Stroke
    label: str
    zone: Any
    why: str


@dataclass(frozen=True, slots=True)
class Stats:
    """The running count of a session."""

    shots: int
    hits: int
    streak: int
    best: int

    @property
    def misses(self) -> int:
        return self.shots - self.hits


def stats_of(attempts: list[Attempt]) -> Stats:
    """Shots, hits, the current run of hits and the longest run, in logged order."""
    hits = streak = best = 0
    for a in attempts:
        if a.hit:
            hits += 1
            streak += 1
            best = max(best, streak)
        else:
            streak = 0
    return Stats(len(attempts), hits, streak, best)


class Dealer:
    """The next setup: a reference shot of the table check, else the coach's scheduler's pick."""

    def __init__(
        self,
        table: TableSpec,
        drill: Any,
        attempts: list[Attempt],
        rng: np.random.Generator,
        model: str = "ideal",
        counts: dict[Zone, tuple[int, int]] | None = None,
    ) -> None:
        self.table = table
        self.drill = drill
        self.rng = rng
        self.model = model
        self.scheduler = Scheduler(
            table, drill, list(attempts), rng, model=DEAL_MODEL, counts=counts
        )
        self._check: list[Any] = []
        self._check_size = 0

    def queue_check(self, dealt: list[Any]) -> None:
        """Deal these reference shots (the table check) before anything else."""
        self._check = list(dealt)
        self._check_size = len(self._check)

    @property
    def checking(self) -> int:
        """Reference shots of the table check still to deal."""
        return len(self._check)

    def next(self) -> Pick:
        if self._check:
            d = self._check.pop(0)
            n = self._check_size - len(self._check)
            why = f"table check, reference shot {n} of {self._check_size}: it calibrates the table"
            return Pick(d.setup, d.stroke, d.label, "", why)
        choice = self.scheduler.next()
        d = choice.dealt
        return Pick(d.setup, d.stroke, d.label, choice.zone, str(choice.why))

    def record(self, attempt: Attempt) -> None:
        """Tell the coach about a logged attempt."""
        self.scheduler.record(attempt)

    def forget(self, attempt: Attempt) -> None:
        """Tell the coach an attempt was undone: its counts lose that one attempt."""
        self.scheduler.forget(attempt)

    def pin(self, zone: Any = None, family: str | None = None, count: int = 10) -> None:
        """Keep dealing one zone or family for ``count`` setups."""
        self.scheduler.pin(zone=zone, family=family, count=count)

    def unpin(self) -> None:
        """Let the coach pick again."""
        self.scheduler.unpin()


def drill_name(drill: Any) -> str:
    return str(getattr(drill, "name", drill))


class Session:
    """One practice session: the store, the table, the pack and the player, and what was logged.

    Every attempt is logged to the store at once (committed before ``log`` returns).
    """

    def __init__(
        self,
        store: Store,
        table: TableSpec,
        drill: Any,
        player: str,
        rng: np.random.Generator,
        model: str,
        calibration: Any = None,
    ) -> None:
        self.store = store
        self.calibration = calibration
        self.preset = strokes.speed_name(Stroke().speed)
        self.spin_step = 0
        self.table = table
        self.drill = drill
        self.player = player
        self.rng = rng
        self.model = model
        self.query = AttemptQuery(player=player, table=table.name)
        counts = zone_counts(store, self.query)
        self._earlier = Stats(
            sum(t for _, t in counts.values()), sum(m for m, _ in counts.values()), 0, 0
        )
        """Earlier sessions' shots and hits, counted once by the store (their runs of hits
        are not: a run over the whole history would mean reading all of it)."""
        self.dealer = Dealer(table, drill, [], rng, model, counts=counts)
        self.started = utc_now()
        self._id: int | ValueError | None = None
        self._opening = threading.Thread(
            target=self._open_row, name="tablecoach-session-start", daemon=True
        )
        self._opening.start()
        self.logged: list[Attempt] = []
        self.setups: dict[int, Setup] = {}
        """Logged attempt id -> the setup as shown (with its family's title), for r and undo."""
        self.pick: Pick | None = None
        self.stroke: Stroke = Stroke()
        self.ended = False
        self.repeat = max(int(getattr(drill, "repeat", 1) or 1), 1)
        """Each setup is dealt this many times in a row (1: shuffled, a new one every shot)."""
        self.lock = threading.RLock()
        self.dealer_stale = False
        self._undone: list[Attempt] = []
        """Undone attempts the coach has not been told about yet (refresh_dealer)."""

    # ----- the session's row ------------------------------------------------------------------
    def _open_row(self) -> None:
        """Write the session's row (a write: it waits for the store's integrity check, which
        takes seconds on a big store, so it runs beside the first card, not before it)."""
        try:
            self._id = self.store.start_session(
                self.player, self.table.name, drill_name(self.drill), started=self.started
            )
        except ValueError as exc:  # StoreError included: kept for the first write to raise
            self._id = exc

    @property
    def id(self) -> int:
        """The session's id in the store, once its row is written (waits for that; raises the
        StoreError that stopped it, e.g. a damaged file)."""
        self._opening.join()
        got = self._id
        if isinstance(got, ValueError):
            raise got
        assert got is not None
        return got

    # ----- setups -------------------------------------------------------------------------------
    def draw(self) -> Pick:
        """The next setup from the dealer (safe to call from a worker thread)."""
        with self.lock:
            return self.dealer.next()

    def show(self, pick: Pick | None) -> None:
        """Put a setup on the table (None while the next one is being dealt)."""
        self.pick = pick
        self.spin_step = 0
        if pick is not None:
            self.stroke = pick.stroke
            self.preset = strokes.speed_name(pick.stroke.speed)

    def deal(self) -> Pick:
        """Draw and show the next setup at once."""
        pick = self.draw()
        self.show(pick)
        return pick

    def show_again(self, attempt: Attempt) -> Pick:
        """Put a logged (or undone) attempt's setup and stroke back on the table."""
        shown = self.setups.get(attempt.id) if attempt.id is not None else None
        setup = shown if shown is not None else shots.setup_of(self.table, attempt.shot)
        stroke = Stroke(attempt.speed, attempt.english, attempt.follow)
        zone = self.pick.zone if self.pick is not None and not attempt.zone else attempt.zone
        self.pick = Pick(setup, stroke, attempt.shot.family, zone, "shown again after undo")
        self.stroke = stroke
        self.spin_step = 0
        self.preset = strokes.speed_name(stroke.speed)
        return self.pick

    def next_speed(self) -> tuple[str, Stroke]:
        """The next speed preset after the current one, for this attempt only: the player's
        calibrated m/s for it when the table is calibrated, else the published preset."""
        i = SPEED_CYCLE.index(self.preset) if self.preset in SPEED_CYCLE else -1
        self.preset = SPEED_CYCLE[(i + 1) % len(SPEED_CYCLE)]
        speed = strokes.book_strokes(self.table)[self.preset]
        if self.calibration is not None:
            from .calibration.use import stroke_for  # heavy: loaded lazily

            speed = stroke_for(self.calibration, self.preset).speed
        self.stroke = replace(self.stroke, speed=speed)
        return self.preset, self.stroke

    def played_zone(self, aim: Aim | None) -> Any:
        """The coach's zone of the shown setup at the stroke to be played (the dealt zone when
        nothing is solved yet): a pin follows the stroke played."""
        if self.pick is None or aim is None or not self.pick.zone:
            return self.pick.zone if self.pick is not None else None
        return zone_of(shots.record_of(self.table, aim.setup), aim.stroke.speed)

    def bias_text(self, setup: Setup, stroke: Stroke) -> str:
        """The player's landing bias in the zone of this setup at this stroke, as advice ("you
        land 0.3 long here (6 landings): aim to land 0.3 shorter"); "" with too few landings.
        Slow under the physical model: call it from a worker."""
        zone = zone_of(shots.record_of(self.table, setup), stroke.speed)
        if self.dealer.scheduler.stats(zone).tried < feedback.MIN_BIAS_LANDINGS:
            return ""  # too few attempts there for a bias: no need to look for their landings
        label = zone.label
        seen = self.store.latest_attempts(
            self.query, feedback.RECENT_LANDINGS, zone=label, landed=True
        )
        got = feedback.zone_bias(self.table, seen, label, self.model, self.calibration)
        return "" if got is None else feedback.bias_words(*got)

    def next_spin(self, aim: Aim | None) -> Stroke:
        """The next spin of core.spin.SPIN_STEPS for this attempt (running and reverse english
        turned into a side with the shown aim); the speed is kept."""
        self.spin_step = (self.spin_step + 1) % len(SPIN_STEPS)
        english, follow = spin_for(self.spin_step, aim)
        self.stroke = replace(self.stroke, english=english, follow=follow)
        return self.stroke

    # ----- attempts ------------------------------------------------------------------------------
    def attempt(
        self,
        aim: Aim,
        result: str,
        landing_rail: str | None,
        landing_at: float | None,
        miss_kind: str | None = None,
    ) -> Attempt:
        """The record of one shot at the shown setup with the shown aim. The landing is only
        what the player saw (None when they gave none): never the aim's predicted landing."""
        assert self.pick is not None
        reading = shown_reading(self.table, aim)
        top = rail_length_diamonds(aim.rail)
        note = ""
        if not 0.0 <= reading <= top:
            # a stick line may cross the line of sights beyond the last sight; the record
            # keeps readings on the rail (0 to 4 or 8), so the nearest end is logged
            note = f"aim reading {reading:g} lies beyond the sights; logged at the rail's end"
            reading = min(max(reading, 0.0), top)
        shot = shots.record_of(self.table, aim.setup)
        return Attempt(
            when=utc_now(),
            player=self.player,
            table=self.table.name,
            shot=shot,
            speed=aim.stroke.speed,
            english=aim.stroke.english,
            follow=aim.stroke.follow,
            aim_rail=aim.rail,
            aim_given=reading,
            aim_used=reading,
            result=result,  # type: ignore[arg-type]
            landing_rail=landing_rail,
            landing_at=landing_at,
            model=aim.model,
            drill=drill_name(self.drill),
            note=note,
            zone=zone_of(shot, aim.stroke.speed).label,  # as played: speed moves it
            miss_kind=miss_kind,  # type: ignore[arg-type]
            session=self.id,
        )

    def log_hit(self, aim: Aim, rail: str | None = None, at: float | None = None) -> Attempt:
        """Log a hit; it carries a landing only when the player gave one."""
        return self._log(self.attempt(aim, "hit", rail, at), aim.setup)

    def log_miss(
        self, aim: Aim, rail: str | None = None, at: float | None = None, kind: str = "landed"
    ) -> Attempt:
        """Log a miss: where it crossed the landing rail, or ``kind`` "short" (stopped before
        the rail) or "jaw" (rattled out) with no landing."""
        if kind != "landed":
            rail = at = None
        return self._log(self.attempt(aim, "miss", rail, at, kind), aim.setup)

    def repeats_left(self) -> int:
        """How many more times the setup just logged comes back before a new one is dealt
        (``repeat`` in a row; 0 when shuffled or nothing was logged)."""
        if self.repeat <= 1 or not self.logged:
            return 0
        last = self.logged[-1].shot
        done = 0
        for a in reversed(self.logged):
            if a.shot != last:
                break
            done += 1
        return max(self.repeat - done, 0)

    def again(self) -> Pick | None:
        """Put the setup just logged back on the table (same positions, target, stroke and
        spin); None when nothing has been logged in this session."""
        if not self.logged:
            return None
        pick = self.show_again(self.logged[-1])
        self.pick = replace(pick, why="again: the setup you just logged")
        return self.pick

    def _log(self, a: Attempt, setup: Setup | None = None) -> Attempt:
        saved = self.store.log(a)
        self.logged.append(saved)
        if setup is not None and saved.id is not None:
            self.setups[saved.id] = setup
        with self.lock:
            self.dealer.record(saved)
        return saved

    def undo(self) -> Attempt | None:
        gone = self.store.undo_last(self.id)
        if gone is None:
            return None
        self.logged = [a for a in self.logged if a.id != gone.id]
        self._undone.append(gone)
        self.dealer_stale = True
        return gone

    def refresh_dealer(self) -> None:
        """Let the coach forget the undone attempts: each takes one attempt off its zone's
        counts (no rebuild, whatever the size of the history). It waits for a setup being
        dealt meanwhile, so the screen runs it in a worker thread."""
        with self.lock:
            if self.dealer_stale:
                for gone in self._undone:
                    self.dealer.forget(gone)
                self._undone.clear()
                self.dealer_stale = False

    def stats(self) -> Stats:
        return stats_of(self.logged)

    def earlier_stats(self) -> Stats:
        """Shots and hits of the player's earlier sessions on this table (streak and best
        are 0: runs are counted for this session only)."""
        return self._earlier

    def end(self) -> None:
        if not self.ended:
            self.ended = True
            self.store.end_session(self.id)
