"""SVG snapshots of the practice app, with theme, size, seed, player, pack and model pinned.

Regenerate after an intended change of the screens, the renderer or the coach's wording with
``pytest tests/ui/test_snapshots.py --snapshot-update`` and look at the new SVGs before
committing them.
"""

from __future__ import annotations

from .test_practice import settle


def test_practice_100x30_dark(make_app, snap_compare):
    app = make_app(theme="textual-dark")
    assert snap_compare(app, terminal_size=(100, 30), run_before=settle)


def test_practice_120x40_light(make_app, snap_compare):
    app = make_app(theme="textual-light")
    assert snap_compare(app, terminal_size=(120, 40), run_before=settle)


def test_practice_80x24_dark(make_app, snap_compare):
    app = make_app(theme="textual-dark")
    assert snap_compare(app, terminal_size=(80, 24), run_before=settle)


def test_miss_prompt_100x30(make_app, snap_compare):
    async def before(pilot) -> None:
        await settle(pilot)
        await pilot.press("m", "right", "right")
        await pilot.pause()

    app = make_app(theme="textual-dark")
    assert snap_compare(app, terminal_size=(100, 30), run_before=before)


def test_summary_after_a_hit_100x30(make_app, snap_compare):
    async def before(pilot) -> None:
        await settle(pilot)
        await pilot.press("h")
        await settle(pilot)
        await pilot.press("q")
        await pilot.pause()

    app = make_app(theme="textual-dark")
    assert snap_compare(app, terminal_size=(100, 30), run_before=before)


def test_practice_with_a_reference_line_100x30(make_app, snap_compare):
    # a kept one-rail kick line: the card shows it slid, turned and solved, the point drawn
    from .test_reference_lines import keep_kick_line

    keep_kick_line()
    app = make_app()
    assert snap_compare(app, terminal_size=(100, 30), run_before=settle)
