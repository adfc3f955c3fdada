"""The numbers the rigid-body figures need (no drawing here): a plan of the mounts with
their loads and the CG, the six mode shapes in two views each, and the frequency chart.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from .method import SQRT2, Modes, RigidBodyModel, frequency_limit
from .statics import StaticResult

__all__ = ["FrequencyChart", "ModeView", "PlanView", "frequency_chart", "mode_views",
           "plan_view", "support_outline"]

#: The views a mode may be drawn in: name, the two datum axes across and up the page.
VIEWS = {"plan": (0, 1), "front": (0, 2), "side": (1, 2)}


@dataclass(frozen=True, slots=True, kw_only=True)
class PlanView:
    """Mount positions (m) with their static loads (N, compression positive), the CG, and
    the support outline (the convex hull of the mounts, closed, counter-clockwise)."""

    mount_x: tuple[float, ...]
    mount_y: tuple[float, ...]
    loads: tuple[float, ...]
    cg_x: float
    cg_y: float
    outline: tuple[tuple[float, float], ...]
    cg_inside: bool


def support_outline(points: Sequence[Sequence[float]]) -> tuple[tuple[float, float], ...]:
    """Convex hull of plan points by the monotone chain (Andrew, Inf. Proc. Letters 9,
    1979), counter-clockwise, first point repeated at the end."""
    pts = sorted({(float(p[0]), float(p[1])) for p in points})
    if len(pts) < 3:
        return tuple(pts + pts[:1])

    def cross(o, a, b):
        return (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0])

    lower: list[tuple[float, float]] = []
    upper: list[tuple[float, float]] = []
    for p in pts:
        while len(lower) >= 2 and cross(lower[-2], lower[-1], p) <= 0:
            lower.pop()
        lower.append(p)
    for p in reversed(pts):
        while len(upper) >= 2 and cross(upper[-2], upper[-1], p) <= 0:
            upper.pop()
        upper.append(p)
    hull = lower[:-1] + upper[:-1]
    return tuple(hull + hull[:1])


def _inside(outline: Sequence[tuple[float, float]], x: float, y: float) -> bool:
    if len(outline) < 4:  # fewer than three corners: no area to stand on
        return False
    return all((b[0] - a[0]) * (y - a[1]) - (b[1] - a[1]) * (x - a[0]) >= 0.0
               for a, b in zip(outline[:-1], outline[1:], strict=True))


def plan_view(model: RigidBodyModel, static: StaticResult) -> PlanView:
    """The plan of the mounts with their loads and the CG."""
    xy = [(m.x, m.y) for m in model.mounts]
    outline = support_outline(xy)
    cx, cy = float(model.body.cg[0]), float(model.body.cg[1])
    return PlanView(mount_x=tuple(p[0] for p in xy), mount_y=tuple(p[1] for p in xy),
                    loads=tuple(float(p) for p in static.loads), cg_x=cx, cg_y=cy,
                    outline=outline, cg_inside=_inside(outline, cx, cy))


@dataclass(frozen=True, slots=True, kw_only=True)
class ModeView:
    """One mode drawn in two views. Points, in order: the four plan corners of the mounts'
    bounding box at the mean mount height (draw them as a closed outline), then each
    mount, then the CG. ``undeformed``/``displaced``: per view, (P, 2) coordinates in m on
    the view's two axes (``axes``, e.g. ("x", "z")); the displacement is scaled so the point
    that moves most moves ``scale`` × the layout's size."""

    mode: int
    frequency: float
    dominant: str
    views: tuple[str, str]
    axes: tuple[tuple[str, str], tuple[str, str]]
    undeformed: tuple[np.ndarray, np.ndarray]
    displaced: tuple[np.ndarray, np.ndarray]


def _points(model: RigidBodyModel) -> np.ndarray:
    pos = np.array([[m.x, m.y, m.z] for m in model.mounts])
    lo, hi = pos.min(axis=0), pos.max(axis=0)
    z = float(pos[:, 2].mean())
    corners = np.array([[lo[0], lo[1], z], [hi[0], lo[1], z], [hi[0], hi[1], z],
                        [lo[0], hi[1], z]])
    return np.vstack([corners, pos, np.asarray(model.body.cg, dtype=float)[None, :]])


def mode_views(model: RigidBodyModel, modes: Modes, scale: float = 0.15) -> tuple[ModeView, ...]:
    """For each mode, the two of plan / front (x–z) / side (y–z) that show the most motion
    (ties kept in that order); point motion u = t + θ × r from the mode shape."""
    pts = _points(model)
    offsets = pts - np.asarray(model.body.cg, dtype=float)
    size = max(float(np.ptp(pts, axis=0).max()), 1e-3)
    names = "xyz"
    out = []
    for i in range(6):
        phi = modes.shapes[:, i]
        motion = phi[:3][None, :] + np.cross(phi[3:][None, :], offsets)
        biggest = float(np.linalg.norm(motion, axis=1).max())
        motion = motion * (scale * size / biggest if biggest > 0.0 else 0.0)
        seen = {v: float(np.sum(motion[:, list(ax)] ** 2)) for v, ax in VIEWS.items()}
        ranked = sorted(VIEWS, key=lambda v: -seen[v])[:2]
        chosen = tuple(v for v in VIEWS if v in ranked)
        out.append(ModeView(
            mode=i + 1, frequency=float(modes.frequencies[i]),
            dominant=modes.dominant_coordinate[i], views=chosen,
            axes=tuple((names[VIEWS[v][0]], names[VIEWS[v][1]]) for v in chosen),
            undeformed=tuple(pts[:, list(VIEWS[v])] for v in chosen),
            displaced=tuple((pts + motion)[:, list(VIEWS[v])] for v in chosen)))
    return tuple(out)


@dataclass(frozen=True, slots=True, kw_only=True)
class FrequencyChart:
    """Natural frequencies (Hz) beside the running speed's orders and the highest natural
    frequency that still isolates (``limit`` = f_run / r_min)."""

    natural_frequencies: tuple[float, ...]
    orders: tuple[tuple[float, float], ...]
    limit: float
    min_ratio: float


def frequency_chart(modes: Modes, running_speed: float, orders: Sequence[float] = (1.0,),
                    min_ratio: float = SQRT2) -> FrequencyChart:
    """The chart's numbers: each order n at n·f_run, and the isolation limit."""
    if not running_speed > 0.0 or not math.isfinite(running_speed):
        raise ValueError("the running speed must be a positive frequency")
    return FrequencyChart(
        natural_frequencies=tuple(float(f) for f in modes.frequencies),
        orders=tuple((float(n), float(n) * running_speed) for n in orders),
        limit=frequency_limit(running_speed, min_ratio), min_ratio=min_ratio)
