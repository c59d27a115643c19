"""The practice database (SQLite): the Store, made of one repository per table.

One file (``paths.db_path()``), opened in WAL mode with a busy timeout so that two app windows
can log into it at once. Every write is one short ``BEGIN IMMEDIATE`` transaction; an attempt is
committed before ``log`` returns. A file that is not a tablecoach database, or is damaged, is
never written to: opening it raises a StoreError naming the file and what to do. The modules:
``connection`` (open, check, transactions), ``schema`` (migrations), ``rows``, ``query``
(AttemptQuery), ``errors``, ``counts`` (the zone counts kept by triggers, read through
``attempts``), and the repositories ``attempts``, ``players``, ``sessions``, ``tables``,
``calibrations``, ``refs`` (reference lines).
"""

from __future__ import annotations

from .attempts import Attempts
from .calibrations import Calibrations
from .players import Players
from .refs import Refs
from .sessions import Sessions
from .tables import Tables


class Store(Attempts, Sessions, Players, Tables, Calibrations, Refs):
    """A connection to the practice database with every repository. Open with
    ``Store.open(path)``; safe across threads; a context manager that closes it."""
