"""`tablecoach backup FILE` and `tablecoach restore FILE`: everything, to another machine."""

from __future__ import annotations

import argparse
import json
from pathlib import Path
from typing import Any

from .options import add_common


def register(sub: Any) -> None:
    p = sub.add_parser(
        "backup",
        help="write everything (attempts, players, tables, calibrations, packs) to one file",
        description="Write the whole practice store and your own drill packs to FILE (JSON "
        "lines, docs/formats.md). 'tablecoach restore FILE' on another machine brings it all "
        "back exactly.",
    )
    add_common(p)
    p.add_argument("file", help="the backup file to write")
    p.add_argument("--json", action="store_true", help="print JSON instead of text")
    p.set_defaults(func=run_backup)
    r = sub.add_parser(
        "restore",
        help="bring back a backup into a new data folder",
        description="Check every line of a backup, then write it into an empty data folder "
        "(all or nothing) and your drill packs into your drills folder.",
    )
    add_common(r)
    r.add_argument("file", help="the backup file to read")
    r.add_argument("--json", action="store_true", help="print JSON instead of text")
    r.set_defaults(func=run_restore)


def run_backup(args: argparse.Namespace) -> int:
    from ..core import backup
    from ..core.store import Store
    from ..paths import db_path, user_drills_dir

    path = db_path()
    if not path.exists():
        raise backup.BackupError(f"no practice database at {path} yet: nothing to back up")
    with Store.open(path) as s:
        summary = backup.write_backup_file(s, Path(args.file), user_drills_dir())
    if args.json:
        print(json.dumps({"file": args.file, "rows": summary.rows}))
    else:
        print(f"wrote {args.file}: {summary.text()}")
    return 0


def run_restore(args: argparse.Namespace) -> int:
    from ..core import backup
    from ..core.store import Store
    from ..paths import db_path, user_drills_dir

    source = Path(args.file)
    if not source.is_file():
        raise backup.BackupError(f"{source}: no such backup file")
    path = db_path()
    created = not path.exists()
    try:
        with Store.open(path) as s:
            summary = backup.restore_file(s, source, user_drills_dir())
    except ValueError:
        if created:  # a failed restore leaves no new, empty store behind
            for extra in ("", "-wal", "-shm"):
                path.with_name(path.name + extra).unlink(missing_ok=True)
        raise
    if args.json:
        print(json.dumps({"file": args.file, "database": str(path), "rows": summary.rows}))
    else:
        print(f"restored {args.file} into {path}: {summary.text()}")
    return 0
