"""python -m tablecoach runs the command line."""

from tablecoach.cli import main

raise SystemExit(main())
