"""Plane geometry: reflection, unfolding, the ray's exit from the ball box, the convergence fit.

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

from .table import axis_of

Point = tuple[float, float]
Box = tuple[float, float, float, float]
"""(xmin, xmax, ymin, ymax): its sides are numbered in table.RAILS order (head xmin, foot xmax,
left ymin, right ymax)."""


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


def box_exit(p: Point, d: Point, box: Box) -> tuple[float, int]:
    """Where the ray p + t d (t >= 0) from inside ``box`` leaves it: the parameter t (inf for a
    zero direction) and the side crossed (0 xmin, 1 xmax, 2 ymin, 3 ymax; an x side on a tie)."""
    xmin, xmax, ymin, ymax = box
    if d[0] > 1e-15:
        tx = (xmax - p[0]) / d[0]
    elif d[0] < -1e-15:
        tx = (xmin - p[0]) / d[0]
    else:
        tx = math.inf
    if d[1] > 1e-15:
        ty = (ymax - p[1]) / d[1]
    elif d[1] < -1e-15:
        ty = (ymin - p[1]) / d[1]
    else:
        ty = math.inf
    if tx <= ty:
        return max(tx, 0.0), (1 if d[0] > 0 else 0)
    return max(ty, 0.0), (3 if d[1] > 0 else 2)


def box_exits(p: np.ndarray, d: np.ndarray, box: Box) -> tuple[np.ndarray, np.ndarray]:
    """``box_exit`` for (n, 2) arrays of rays: the parameters t (n,) and the sides (n,)."""
    xmin, xmax, ymin, ymax = box
    dx, dy = d[:, 0], d[:, 1]
    with np.errstate(divide="ignore", invalid="ignore"):
        tx = np.where(
            dx > 1e-15, (xmax - p[:, 0]) / dx, np.where(dx < -1e-15, (xmin - p[:, 0]) / dx, np.inf)
        )
        ty = np.where(
            dy > 1e-15, (ymax - p[:, 1]) / dy, np.where(dy < -1e-15, (ymin - p[:, 1]) / dy, np.inf)
        )
    use_x = tx <= ty
    t = np.maximum(np.where(use_x, tx, ty), 0.0)
    side = np.where(use_x, np.where(dx > 0, 1, 0), np.where(dy > 0, 3, 2))
    return t, side


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
