"""The aim's reading at the next softer and firmer named strokes (core.aim.speed_neighbours)."""

from __future__ import annotations

from tablecoach.core import aim as aims
from tablecoach.core import shots
from tablecoach.core.strokes import book_strokes
from tablecoach.core.table import builtin_table

T = builtin_table("9ft")
M = T.to_metres


def test_ideal_paths_do_not_depend_on_speed():
    # The mirror law (angle in = angle out) has no speed in it: every stroke's path is the
    # played one (docs/model.md, the ideal model).
    s = shots.make_setup(T, shots.preset("cross-corner-bank"), M(3, 1), object_ball=M(4, 2))
    aim = aims.solve(T, s, shots.Stroke(book_strokes(T)["medium"]))
    got = aims.speed_neighbours(T, aim)
    assert [(k, n) for k, n, _ in got] == [("softer", "lag"), ("firmer", "fast")]
    for _, _, tr in got:
        assert [c.rail for c in tr.contacts] == [c.rail for c in aim.contacts]
        assert all(abs(a.at - b.at) < 1e-9 for a, b in zip(tr.contacts, aim.contacts, strict=True))
        assert tr.scores  # the played reading scores at every speed under the mirror law


def test_the_firmest_stroke_has_only_a_softer_neighbour():
    s = shots.make_setup(T, shots.preset("cross-corner-bank"), M(3, 1), object_ball=M(4, 2))
    aim = aims.solve(T, s, shots.Stroke(book_strokes(T)["power"]))
    assert [(k, n) for k, n, _ in aims.speed_neighbours(T, aim)] == [("softer", "fast")]


def test_physical_speed_differences_grow_rail_by_rail():
    # Common practice, no source: on a three-rail kick a change of speed moves the first
    # cushion contact not at all (same reading) and each later contact more than the one
    # before (the physical model, docs/model.md: cushion rebound depends on speed).
    s = shots.make_setup(T, shots.preset("three-rail-kick"), M(2, 1), None, None, M(3, 2.5))
    aim = aims.solve(T, s, shots.Stroke(book_strokes(T)["medium"]), "physical")
    (_, soft_name, soft), (_, firm_name, firm) = aims.speed_neighbours(T, aim)
    assert (soft_name, firm_name) == ("lag", "fast")

    def along(tr, k):
        c = tr.contacts[k]
        return T.along_to_diamonds(c.rail, c.at)

    for tr in (soft, firm):
        gaps = [abs(along(tr, k) - along(aim, k)) for k in range(3)]
        assert gaps[0] < 1e-3
        assert gaps[0] < gaps[1] < gaps[2]
