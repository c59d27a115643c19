"""Ideal aim geometry checked against physics results and independent reference libraries."""

import math
import subprocess
import sys

import numpy as np
import pytest
import shapely
import sympy
from shapely.geometry import LineString

from tablecoach.core import aim as aims
from tablecoach.core import shots
from tablecoach.core.aim import ideal
from tablecoach.core.geometry import box_exit, box_exits, nearest_point_to_lines, unfold
from tablecoach.core.table import builtin_table

T = builtin_table("9ft")


def _random_setups(family, n, seed):
    rng = np.random.default_rng(seed)
    out = []
    while len(out) < n:
        cue = T.to_metres(*rng.uniform([0.3, 0.3], [7.7, 3.7]))
        other = T.to_metres(*rng.uniform([0.3, 0.3], [7.7, 3.7]))
        try:
            if family.travel == "cue":
                s = shots.make_setup(T, family, cue, target_ball=other)
            else:
                s = shots.make_setup(T, family, cue, object_ball=other)
            aim = ideal.solve(T, s)
        except shots.ShotError:
            continue
        out.append((s, aim))
    return out


def test_law_of_reflection_on_random_one_rail_kicks():
    # Law of reflection (angle of incidence = angle of reflection) about the ball-centre line.
    for _s, aim in _random_setups(shots.preset("one-rail-kick"), 40, 1):
        start, contact, target = aim.path[0], aim.path[1], aim.path[2]
        normal = np.array([0.0, 1.0])  # right rail: normal along y
        vin = np.subtract(contact, start)
        vout = np.subtract(target, contact)
        ain = math.acos(abs(vin @ normal) / np.linalg.norm(vin))
        aout = math.acos(abs(vout @ normal) / np.linalg.norm(vout))
        assert ain == pytest.approx(aout, abs=1e-9)


def test_mirror_contact_point_a_x_over_a_plus_b():
    # Kick-system mirror rule (J. Loy's kick pages; common practice): with a, b the balls'
    # distances from the reflecting line and x their separation along it, the contact is
    # a*x/(a+b) along the rail from the first ball.
    line = T.reflection_line("right")
    for s, aim in _random_setups(shots.preset("one-rail-kick"), 60, 2):
        a = line - s.cue[1]
        b = line - s.target_ball[1]
        x = s.target_ball[0] - s.cue[0]
        expected = s.cue[0] + a * x / (a + b)
        assert aim.contacts[0].at == pytest.approx(expected, abs=1e-9)


def _sympy_line(rail):
    c = sympy.Rational(T.reflection_line(rail)).limit_denominator(10**12)
    if rail in ("head", "foot"):
        return sympy.Line(sympy.Point(c, 0), sympy.Point(c, 1))
    return sympy.Line(sympy.Point(0, c), sympy.Point(1, c))


@pytest.mark.parametrize("name", ["two-rail-kick", "three-rail-kick", "two-rail-bank"])
def test_unfolded_image_matches_sympy_reflections(name):
    # Reference: sympy.geometry reflections across each rail line, last rail first.
    fam = shots.preset(name)
    rng = np.random.default_rng(3)
    lines = [T.reflection_line(r) for r in fam.rails]
    for _ in range(10):
        target = tuple(rng.uniform([0.1, 0.1], [2.4, 1.2]))
        uf = unfold(target, fam.rails, lines)
        p = sympy.Point(sympy.Rational(target[0]), sympy.Rational(target[1]))
        for rail in reversed(fam.rails):
            p = p.reflect(_sympy_line(rail))
        assert float(p.x) == pytest.approx(uf.image[0], abs=1e-9)
        assert float(p.y) == pytest.approx(uf.image[1], abs=1e-9)


def _shapely_contacts(start, direction, rails):
    # Independent path: walk the ray with shapely intersections, reflecting at each rail line.
    p, d = np.array(start), np.array(direction)
    out = []
    for rail in rails:
        c = T.reflection_line(rail)
        if rail in ("head", "foot"):
            wall = LineString([(c, -10), (c, 10)])
        else:
            wall = LineString([(-10, c), (10, c)])
        ray = LineString([tuple(p + 1e-9 * d), tuple(p + 20 * d)])
        hit = ray.intersection(wall)
        assert isinstance(hit, shapely.Point)
        q = np.array([hit.x, hit.y])
        out.append(q)
        flip = np.array([-1.0, 1.0]) if rail in ("head", "foot") else np.array([1.0, -1.0])
        d = d * flip
        p = q
    return out


@pytest.mark.parametrize("name", list(shots.PRESETS))
def test_contacts_match_shapely_ray_walk(name):
    fam = shots.preset(name)
    for s, aim in _random_setups(fam, 8, 4):
        ref = _shapely_contacts(s.start, aim.direction, fam.rails)
        for c, q in zip(aim.contacts, ref, strict=True):
            along = q[1] if c.rail in ("head", "foot") else q[0]
            assert c.at == pytest.approx(along, abs=1e-7)


@pytest.mark.parametrize("name", list(shots.PRESETS))
def test_ideal_convergence_is_the_unfolded_image(name):
    # Under ideal reflection every aim line passes through the target's image (method of
    # images), so the least-squares point is the image itself and the spread is zero.
    fam = shots.preset(name)
    s, aim = _random_setups(fam, 1, 5)[0]
    conv = aims.convergence(T, s)
    lines = [T.reflection_line(r) for r in fam.rails]
    img = unfold(s.target_point(T), fam.rails, lines).image
    assert conv.point[0] == pytest.approx(img[0], abs=1e-9)
    assert conv.point[1] == pytest.approx(img[1], abs=1e-9)
    assert conv.spread < 1e-9
    assert len(conv.starts) >= 2


def test_line_fit_agrees_with_numpy_lstsq():
    # Reference: numpy.linalg.lstsq on the stacked equations (I - d d^T) p = (I - d d^T) a.
    rng = np.random.default_rng(6)
    for _ in range(20):
        n = int(rng.integers(2, 12))
        a = rng.normal(size=(n, 2))
        d = rng.normal(size=(n, 2))
        d /= np.linalg.norm(d, axis=1, keepdims=True)
        A = np.concatenate([np.eye(2) - np.outer(di, di) for di in d])
        b = np.concatenate(
            [(np.eye(2) - np.outer(di, di)) @ ai for ai, di in zip(a, d, strict=True)]
        )
        ref, *_ = np.linalg.lstsq(A, b, rcond=None)
        fit = nearest_point_to_lines(a, d)
        assert fit.point == pytest.approx(tuple(ref), abs=1e-9)
        dist = [
            abs(di[0] * (ref[1] - ai[1]) - di[1] * (ref[0] - ai[0]))
            for ai, di in zip(a, d, strict=True)
        ]
        assert fit.spread == pytest.approx(math.sqrt(np.mean(np.square(dist))), abs=1e-9)


def test_parallel_lines_have_no_convergence_point():
    with pytest.raises(ValueError, match="parallel"):
        nearest_point_to_lines(np.array([[0, 0], [0, 1]]), np.array([[1, 0], [1, 0]]))


def test_quarter_diamond_parallel_shift_misses_by_about_half_a_diamond():
    # Common practice, no source: on a cross-corner bank, shifting a good line a quarter
    # diamond parallel misses the pocket by about half a diamond (checked for 0.35 to 0.65).
    fam = shots.preset("cross-corner-bank")
    m = T.to_metres
    ref = shots.make_setup(T, fam, m(3, 1), object_ball=m(4, 2))
    new = shots.make_setup(T, fam, m(3.25, 1), object_ball=m(4.25, 2))
    cmp = aims.compare_shift(T, ref, new)
    assert 0.35 <= abs(cmp.parallel_miss) <= 0.65
    # rotating the line about the convergence point lands where the solved aim does
    assert abs(cmp.rotated_miss) < 1e-6


def test_core_imports_neither_rich_nor_textual():
    # The core stays headless (project architecture rule): inspect sys.modules in a subprocess.
    code = (
        "import sys, tablecoach.core, tablecoach.core.shots, tablecoach.core.table;"
        "import tablecoach.core.geometry, tablecoach.core.records;"
        "print(','.join(m for m in ('rich', 'textual') if m in sys.modules))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


def test_box_exit_matches_shapely_for_rays_from_inside_the_ball_box():
    # Reference: shapely (general-purpose geometry library): where a long segment from a point
    # inside the box crosses the box's boundary. Side codes follow table.RAILS (head xmin, foot
    # xmax, left ymin, right ymax); the array form gives the same answers row by row.
    box = T.ball_box()
    xmin, xmax, ymin, ymax = box
    rng = np.random.default_rng(13)
    p = np.column_stack((rng.uniform(xmin, xmax, 200), rng.uniform(ymin, ymax, 200)))
    ang = rng.uniform(0.0, 2.0 * math.pi, 200)
    d = np.column_stack((np.cos(ang), np.sin(ang)))
    ts, sides = box_exits(p, d, box)
    outline = shapely.box(xmin, ymin, xmax, ymax).exterior
    for i in range(200):
        t, side = box_exit((p[i, 0], p[i, 1]), (d[i, 0], d[i, 1]), box)
        far = LineString([p[i], p[i] + 10.0 * d[i]])
        hit = outline.intersection(far)
        assert t == pytest.approx(math.dist(p[i], (hit.x, hit.y)), abs=1e-9)
        q = p[i] + t * d[i]
        walls = (q[0] - xmin, xmax - q[0], q[1] - ymin, ymax - q[1])
        assert abs(walls[side]) < 1e-9
        assert ts[i] == pytest.approx(t, abs=1e-12) and sides[i] == side
