"""Plane geometry for the ideal model: reflection, unfolding, line crossings, the convergence fit.

Pure functions over floats and numpy arrays, SI units. Reflection of a ball centre about a rail's
reflection line (one ball radius inside the cushion nose) is the law of reflection, angle of
incidence equals angle of reflection; unfolding a multi-rail path replaces each bounce by a
mirror image of the table, so the whole path becomes one straight line (the classical
method of images for billiards, see e.g. S. Tabachnikov, "Geometry and Billiards", AMS 2005).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

Point = tuple[float, float]


def axis_of(rail: str) -> int:
    """The coordinate a rail fixes: 0 (x) for head/foot, 1 (y) for left/right."""
    return 0 if rail in ("head", "foot") else 1


def reflect(p: Point, rail: str, line: float) -> Point:
    """Mirror a point across the line ``coord = line`` of the given rail."""
    if axis_of(rail) == 0:
        return (2.0 * line - p[0], p[1])
    return (p[0], 2.0 * line - p[1])


def reflect_vector(v: Point, rail: str) -> Point:
    """Mirror a direction across a rail (the normal component changes sign)."""
    if axis_of(rail) == 0:
        return (-v[0], v[1])
    return (v[0], -v[1])


@dataclass(frozen=True, slots=True)
class Unfolding:
    """The images of a target across a rail sequence, and the lines crossed in unfolded space.

    ``lines[k]`` is rail k's reflection line as it stands in the plane after the first k
    reflections have been unfolded (so the straight line from the start to ``image`` crosses
    them in order); ``image`` is the target after reflecting across the rails in reverse order.
    """

    rails: tuple[str, ...]
    lines: tuple[float, ...]
    image: Point


def unfold(target: Point, rails: Sequence[str], lines: Sequence[float]) -> Unfolding:
    """Unfold ``target`` across ``rails`` (reflection line coordinates ``lines``, same order).

    The ball travels start -> rail 0 -> rail 1 -> ... -> target. Reflect the target across the
    last rail, then that image across the rail before, and so on back to the first: the straight
    line from start to the final image meets rail 0's line at the first contact. Each later rail
    line is carried through the reflections that precede it, so the straight line crosses the
    images of all rail lines in order.
    """
    n = len(rails)
    # Unfolded line for rail k: reflect rail k's line through rails k-1, ..., 0.
    unfolded: list[float] = []
    for k in range(n):
        c = lines[k]
        ax = axis_of(rails[k])
        for j in range(k - 1, -1, -1):
            if axis_of(rails[j]) == ax:
                c = 2.0 * lines[j] - c
        unfolded.append(c)
    # The target's image: reflect across rail n-1, then n-2, ..., 0.
    img = target
    for j in range(n - 1, -1, -1):
        img = reflect(img, rails[j], lines[j])
    return Unfolding(tuple(rails), tuple(unfolded), img)


def fold_point(p: Point, rails: Sequence[str], lines: Sequence[float], upto: int) -> Point:
    """Map a point of unfolded space (after ``upto`` reflections) back onto the real table."""
    q = p
    for j in range(upto):
        q = reflect(q, rails[j], lines[j])
    return q


def line_crossing(start: Point, direction: Point, axis: int, value: float) -> float | None:
    """Parameter t >= 0 at which start + t*direction meets ``coord[axis] = value``, or None."""
    d = direction[axis]
    if abs(d) < 1e-15:
        return None
    t = (value - start[axis]) / d
    return t if t >= -1e-12 else None


def point_line_distance(p: Point, a: Point, d: Point) -> float:
    """Signed distance of ``p`` from the line through ``a`` with unit direction ``d``.

    Positive to the left of the direction of travel (cross product d x (p - a)).
    """
    return d[0] * (p[1] - a[1]) - d[1] * (p[0] - a[0])


def unit(v: Point) -> Point:
    """The unit vector along v (ValueError for a zero vector)."""
    n = math.hypot(v[0], v[1])
    if n == 0.0:
        raise ValueError("zero-length direction")
    return (v[0] / n, v[1] / n)


@dataclass(frozen=True, slots=True)
class LineFit:
    """The least-squares point nearest to a set of lines, and how well they meet there.

    ``spread`` is the RMS perpendicular distance of the lines from the point (metres);
    ``condition`` the condition number of the normal matrix (large means nearly parallel lines).
    """

    point: Point
    spread: float
    condition: float
    count: int


def nearest_point_to_lines(points: np.ndarray, directions: np.ndarray) -> LineFit:
    """Least-squares point p minimising sum_i dist(p, line_i)^2 for lines (a_i, d_i).

    The normal equations are sum_i (I - d_i d_i^T) p = sum_i (I - d_i d_i^T) a_i; the
    projector I - d d^T removes the along-line component, so the residual of each line is its
    perpendicular distance. ``points`` and ``directions`` are (n, 2) arrays; directions are
    normalised here. Raises ValueError for fewer than two lines or (nearly) parallel lines.
    """
    a = np.asarray(points, dtype=float).reshape(-1, 2)
    d = np.asarray(directions, dtype=float).reshape(-1, 2)
    if a.shape[0] < 2:
        raise ValueError("a convergence point needs at least two aim lines")
    d = d / np.linalg.norm(d, axis=1, keepdims=True)
    proj = np.eye(2)[None, :, :] - d[:, :, None] * d[:, None, :]
    m = proj.sum(axis=0)
    b = np.einsum("nij,nj->i", proj, a)
    cond = float(np.linalg.cond(m))
    if not math.isfinite(cond) or cond > 1e12:
        raise ValueError("the aim lines are parallel: they have no convergence point")
    p = np.linalg.solve(m, b)
    resid = np.einsum("nij,nj->ni", proj, p[None, :] - a)
    spread = float(np.sqrt(np.mean(np.sum(resid**2, axis=1))))
    return LineFit((float(p[0]), float(p[1])), spread, cond, int(a.shape[0]))
