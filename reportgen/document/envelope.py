"""The operating envelope of a calc: its checks judged over ranges, tolerances and orders.

The calc's compute is a black box called with changed inputs; this module owns the points
(each range swept densely at every corner of the tolerance box, for every order, the
worst of each check refined), the governing point of each check, and what the section
gains from it (governed checks, an envelope table and figure, a sentence of assumptions).
"""

from __future__ import annotations

import dataclasses
import itertools
import math
import re
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

from reportgen.calc.plugin_set import RegisteredCalc
from reportgen.calc.sheet import CalcContext, CalcOutput
from reportgen.job.load import CalcSpec
from reportgen.job.orders import SWEEP_POINTS, speed_input
from reportgen.model import (
    Assumptions,
    Block,
    Caution,
    Check,
    Envelope,
    EnvelopeInput,
    Figure,
    Fill,
    Governing,
    Marker,
    Panel,
    Quantity,
    Series,
    Table,
)
from reportgen.units import (
    DIMENSIONS,
    UnitProblem,
    axis_unit,
    format_number,
    parse_quantity,
    table_display,
)

#: golden-section steps refining a worst value that lies between two sweep points: the
#: bracket of two sweep steps shrinks by 0.618^24 (about 1e-5 of it), ample for a
#: resonance peak within 0.5 % of its true height
REFINE_STEPS = 24
#: how many of the worst sweeps of each check are refined
REFINE_SERIES = 2
#: at most this many envelope points are verified by the second method
MAX_VERIFIED_POINTS = 6
#: relative distance below which an input is at its nominal value
SAME_REL = 1e-9
_ORDER = "order"
_SIGNED = ("<=", "<", ">=", ">")

Point = tuple[tuple[str, float], ...]  # (input name, SI value) ..., then ("order", k)


@dataclass(frozen=True, kw_only=True)
class Outcome:
    """What the envelope adds to a calc: its extent, the checks as governed, and the
    points the second method must also run at (their context and output)."""

    envelope: Envelope
    output: CalcOutput
    verify_at: tuple[tuple[CalcContext, CalcOutput, str, tuple[tuple[str, Quantity], ...]],
                     ...]


def wanted(spec: CalcSpec) -> bool:
    """Whether a calc has an envelope: an input with a range or a tolerance, or orders."""
    return bool(spec.spreads) or len(spec.orders) > 1


class _Evaluator:
    """Evaluates a calc's checks at envelope points, each point once."""

    def __init__(self, spec: CalcSpec, reg: RegisteredCalc, ctx: CalcContext,
                 fail: Callable[[str, BaseException], Exception]):
        self.spec, self.reg, self.ctx, self.fail = spec, reg, ctx, fail
        self.speed = speed_input(reg.calc_type.inputs) or ""  # what an order multiplies
        self.cache: dict[Point, dict[str, Check]] = {}

    def context(self, point: Point) -> CalcContext:
        inputs = dict(self.ctx.inputs)
        order = 1.0
        for name, value in point:
            if name == _ORDER:
                order = value
            else:
                inputs[name] = value
        if order != 1.0:
            inputs[self.speed] = inputs[self.speed] * order
        return dataclasses.replace(self.ctx, inputs=inputs)

    def output(self, point: Point) -> CalcOutput:
        try:
            return self.reg.calc_type.compute(self.context(point))
        except Exception as exc:  # named with its point; the core's rule for plugins
            raise self.fail(where(self.spec, point, self.ctx.units) or "at nominal",
                            exc) from exc

    def checks(self, point: Point) -> dict[str, Check]:
        got = self.cache.get(point)
        if got is None:
            out = self.output(point)
            got = self.cache[point] = {c.id: c for c in out.checks}
        return got


def score(c: Check) -> tuple[int, float]:
    """How close a check is to failing, larger is worse: failing first, then the margin
    relative to the limit (positive beyond it)."""
    fail = 1 if c.status == "fail" else 0
    if c.value is None or c.limit is None or c.comparison not in _SIGNED:
        return fail, 0.0
    v, lim = c.value.value, c.limit.value
    if not math.isfinite(v):
        return 1, math.inf
    d = v - lim if c.comparison in ("<=", "<") else lim - v
    return fail, d / (abs(lim) or 1.0)


def _differs(a: float, b: float) -> bool:
    return abs(a - b) > SAME_REL * max(abs(a), abs(b), 1e-300)


def _moved(spec: CalcSpec, point: Point) -> list[tuple[str, float]]:
    out = []
    for name, value in point:
        nominal = 1.0 if name == _ORDER else spec.spreads[name].nominal
        if _differs(value, nominal):
            out.append((name, value))
    return out


def _written_unit(spec: CalcSpec, name: str, dimension: str) -> tuple[float, str]:
    """The unit a range was written in (its factor to SI, its label): '900 to 1800 rpm'
    is described in rpm."""
    text = spec.spreads[name].text
    tail = re.split(r"\s+to\s+", text.strip())[-1]
    m = re.match(r"^\s*[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?\s*(?P<u>.*)$", tail)
    unit = m.group("u").strip() if m else ""
    if unit:
        try:
            return parse_quantity(f"1 {unit}", dimension), unit
        except UnitProblem:
            pass
    factor, label = table_display(1.0, dimension, "SI")
    return 1.0 / factor if factor else 1.0, label


def _dimension(spec: CalcSpec, reg: RegisteredCalc, name: str) -> str:
    for sp in reg.calc_type.inputs:
        if sp.name == name:
            return sp.dimension
    return "dimensionless"


def where(spec: CalcSpec, point: Point, units: str, reg: RegisteredCalc | None = None
          ) -> str:
    """The point in words: "at 912 rpm, order 2 (blade pass), with stiffness + 15 %";
    '' at nominal."""
    moved = dict(_moved(spec, point))
    values = dict(point)
    at, with_ = [], []
    labels = dict(spec.orders)
    speed = speed_input(reg.calc_type.inputs) if reg is not None else None
    for name, value in point:
        if name == _ORDER:
            continue
        sp = spec.spreads[name]
        pretty = name.replace("_", " ")
        is_speed = name == speed
        if sp.kind == "range" and (name in moved or is_speed and _ORDER in moved):
            dim = _dimension(spec, reg, name) if reg else "dimensionless"
            factor, unit = _written_unit(spec, name, dim)
            text = f"{format_number(value / factor, 4)} {unit}".strip()
            at.append(text if is_speed else f"{pretty} {text}")
        elif sp.kind == "tolerance" and name in moved:
            sign = "+" if value > sp.nominal else "−"
            if sp.nominal:
                rel = abs(value - sp.nominal) / abs(sp.nominal) * 100
                with_.append(f"{pretty} {sign} {format_number(rel, 3)} %")
            else:
                dim = _dimension(spec, reg, name) if reg else "dimensionless"
                v, unit = table_display(abs(value), dim, units)
                with_.append(f"{pretty} {sign} {format_number(v, 3)} {unit}".strip())
    if _ORDER in moved:
        k = values[_ORDER]
        lab = labels.get(k, "")
        at.append(f"order {format_number(k, 4)}" + (f" ({lab})" if lab else ""))
    text = ""
    if at:
        text = "at " + ", ".join(at)
    if with_:
        text += (" with " if text else "with ") + " and ".join(with_)
    return text


def _inputs_of(spec: CalcSpec, reg: RegisteredCalc, point: Point
               ) -> tuple[tuple[str, Quantity], ...]:
    out = []
    for name, value in _moved(spec, point):
        dim = "dimensionless" if name == _ORDER else _dimension(spec, reg, name)
        out.append((name, Quantity(value=value, dimension=dim)))
    return tuple(out)


def _golden(f: Callable[[float], float], a: float, b: float, steps: int) -> float:
    """The x of the largest f on [a, b] (unimodal there), by golden-section search."""
    g = (math.sqrt(5) - 1) / 2
    c, d = b - g * (b - a), a + g * (b - a)
    fc, fd = f(c), f(d)
    for _ in range(steps):
        if fc >= fd:
            b, d, fd = d, c, fc
            c = b - g * (b - a)
            fc = f(c)
        else:
            a, c, fc = c, d, fd
            d = a + g * (b - a)
            fd = f(d)
    return c if fc >= fd else d


def evaluate(spec: CalcSpec, reg: RegisteredCalc, ctx: CalcContext, nominal: CalcOutput,
             fail: Callable[[str, BaseException], Exception]) -> Outcome:
    """Judge every check of a calc over its envelope; return the output with its checks
    governed and the envelope's table, figure and assumption added."""
    ev = _Evaluator(spec, reg, ctx, fail)
    names = list(spec.spreads)
    ranges = [n for n in names if spec.spreads[n].kind == "range"]
    tols = [n for n in names if spec.spreads[n].kind == "tolerance"]
    orders = [k for k, _ in spec.orders] or [1.0]
    nominal_point: Point = (*((n, spec.spreads[n].nominal) for n in names), (_ORDER, 1.0))
    ev.cache[nominal_point] = {c.id: c for c in nominal.checks}

    corners = [dict(zip(tols, ends, strict=True)) for ends in itertools.product(
        *((spec.spreads[n].low, spec.spreads[n].high) for n in tols))]
    corners.insert(0, {n: spec.spreads[n].nominal for n in tols})
    # a sweep: (key, x name or None, points); every range swept at every corner, the other
    # ranges at their ends and middle, for every order
    sweeps: list[tuple[tuple[Any, ...], str | None, list[Point]]] = []
    for order in orders:
        for ci, corner in enumerate(corners):
            base = {n: spec.spreads[n].nominal for n in names} | corner
            if not ranges:
                pt = (*((n, base[n]) for n in names), (_ORDER, order))
                sweeps.append(((order, ci, None, ()), None, [pt]))
                continue
            for r in ranges:
                others = [o for o in ranges if o != r]
                sp = spec.spreads[r]
                xs = [sp.low + (sp.high - sp.low) * i / (SWEEP_POINTS - 1)
                      for i in range(SWEEP_POINTS)]
                xs[SWEEP_POINTS // 2] = sp.nominal
                for ends in itertools.product(*((spec.spreads[o].low, spec.spreads[o].nominal,
                                                 spec.spreads[o].high) for o in others)):
                    fixed = base | dict(zip(others, ends, strict=True))
                    pts = [(*((n, x if n == r else fixed[n]) for n in names), (_ORDER, order))
                           for x in xs]
                    sweeps.append(((order, ci, r, ends), r, pts))

    ids = [c.id for c in nominal.checks]
    grid: dict[tuple[Any, ...], list[dict[str, Check]]] = {}
    for key, _, pts in sweeps:
        grid[key] = [ev.checks(p) for p in pts]
        for got in grid[key]:
            ids += [i for i in got if i not in ids]

    # the worst of each check: the nominal unless a point is strictly worse (ties keep the
    # point with the fewest inputs moved, so a check that does not depend on speed is not
    # said to govern at some speed)
    best: dict[str, tuple[tuple[int, float], Point, Check]] = {}

    def consider(cid: str, point: Point, c: Check) -> None:
        s = score(c)
        old = best.get(cid)
        if old is None or _worse(s, old[0]) or (
                not _worse(old[0], s) and len(_moved(spec, point)) < len(_moved(spec, old[1]))):
            best[cid] = (s, point, c)

    for cid, c in ev.cache[nominal_point].items():
        best[cid] = (score(c), nominal_point, c)
    for key, _, pts in sweeps:
        for p, got in zip(pts, grid[key], strict=True):
            for cid, c in got.items():
                consider(cid, p, c)

    # refine between sweep points where a check's worst lies inside a range
    for cid in ids:
        cands = []
        for key, r, pts in sweeps:
            if r is None:
                continue
            vals = [score(g[cid]) if cid in g else (0, -math.inf) for g in grid[key]]
            i = max(range(len(vals)), key=lambda j: vals[j])
            if 0 < i < len(vals) - 1 and math.isfinite(vals[i][1]):
                cands.append((vals[i], key, r, pts, i))
        cands.sort(key=lambda t: t[0], reverse=True)
        for _, _key, r, pts, i in cands[:REFINE_SERIES]:
            ri = names.index(r)

            def at(x: float, pts: list[Point] = pts, ri: int = ri, i: int = i) -> Point:
                p = list(pts[i])
                p[ri] = (p[ri][0], x)
                return tuple(p)

            def f(x: float, cid: str = cid, at: Callable[[float], Point] = at) -> float:
                c = ev.checks(at(x)).get(cid)
                return -math.inf if c is None else score(c)[1]

            x = _golden(f, pts[i - 1][ri][1], pts[i + 1][ri][1], REFINE_STEPS)
            p = at(x)
            c = ev.checks(p).get(cid)
            if c is not None:
                consider(cid, p, c)

    # a check that arises only at a refined point (a linear model's validity near a peak)
    for p, got in list(ev.cache.items()):
        for cid, c in got.items():
            if cid not in ids:
                ids.append(cid)
            consider(cid, p, c)
    return _outcome(spec, reg, ctx, nominal, ev, best, ids, sweeps, grid, orders)


def _worse(a: tuple[int, float], b: tuple[int, float]) -> bool:
    """a strictly worse than b (beyond round-off)."""
    if a[0] != b[0]:
        return a[0] > b[0]
    return a[1] - b[1] > 1e-12 * max(abs(a[1]), abs(b[1]), 1e-300)


def _outcome(spec: CalcSpec, reg: RegisteredCalc, ctx: CalcContext, nominal: CalcOutput,
             ev: _Evaluator, best: Mapping[str, tuple[tuple[int, float], Point, Check]],
             ids: list[str], sweeps: list, grid: Mapping, orders: list[float]) -> Outcome:
    by_id = {c.id: c for c in nominal.checks}
    governed: dict[str, Check] = {}
    extra: list[Check] = []
    for cid in ids:
        s, point, worst = best[cid]
        nom = by_id.get(cid)
        if (nom is not None and nom.status == "info") or (nom is None and worst.status != "fail"):
            continue
        value = worst.value if worst.value is None or math.isfinite(worst.value.value) else None
        gov = Governing(value=value, status=worst.status,
                        nominal_status="pass" if nom is None else nom.status,
                        where=where(spec, point, ctx.units, reg),
                        inputs=_inputs_of(spec, reg, point))
        if nom is None:  # a check that only arises inside the envelope, and fails there
            extra.append(dataclasses.replace(worst, value=None, governing=gov))
        else:
            status = "fail" if "fail" in (nom.status, worst.status) else nom.status
            governed[cid] = dataclasses.replace(nom, status=status, governing=gov)
    checks = tuple(governed.get(c.id, c) for c in nominal.checks) + tuple(extra)

    extent = Envelope(
        inputs=tuple(EnvelopeInput(
            name=n, symbol=_symbol(reg, n), kind=sp.kind, text=sp.text,
            low=Quantity(value=sp.low, dimension=_dimension(spec, reg, n)),
            nominal=Quantity(value=sp.nominal, dimension=_dimension(spec, reg, n)),
            high=Quantity(value=sp.high, dimension=_dimension(spec, reg, n)))
            for n, sp in spec.spreads.items()),
        orders=tuple(spec.orders) if spec.orders else ((1.0, ""),),
        evaluations=len(ev.cache))

    blocks: list[Block] = []
    sentence = assumption(spec, extent)
    placed = False
    for b in nominal.blocks:
        if isinstance(b, Check) and b.id in governed:
            b = governed[b.id]
        if isinstance(b, Assumptions) and not placed:
            b = dataclasses.replace(b, items=(*b.items, sentence))
            placed = True
        blocks.append(b)
    if not placed:
        blocks.insert(0, Assumptions(items=(sentence,)))
    ours: list[Block] = [*extra, envelope_table(checks)]
    fig = envelope_figure(spec, reg, ctx, checks, best, sweeps, grid, orders)
    if fig is not None:
        ours.append(fig)
    at = next((i for i, b in enumerate(blocks) if isinstance(b, Caution)), len(blocks))
    blocks[at:at] = ours
    out = CalcOutput(blocks=tuple(blocks), results=nominal.results, checks=checks,
                     purpose=nominal.purpose)
    return Outcome(envelope=extent, output=out,
                   verify_at=_verify_points(spec, reg, ev, best, checks))


def _symbol(reg: RegisteredCalc, name: str) -> str:
    return next((sp.symbol for sp in reg.calc_type.inputs if sp.name == name), name)


def assumption(spec: CalcSpec, extent: Envelope) -> str:
    """The sentence the assumptions gain: what the envelope is and how it was judged."""
    parts = []
    for e in extent.inputs:
        how = (f"swept at {SWEEP_POINTS} points and refined around each worst value"
               if e.kind == "range" else "both ends")
        parts.append(f"{e.name.replace('_', ' ')} {e.text} ({how})")
    if len(extent.orders) > 1:
        listed = ", ".join(format_number(k, 4) + (f" ({lab})" if lab else "")
                           for k, lab in extent.orders)
        parts.append(f"excitation orders {listed} of the running speed, each an excitation"
                     " at that multiple of the speed with the amplitude stated for the"
                     " running speed (state an order's own amplitude in a calc of its own"
                     " where it differs)")
    return ("The design is judged over its operating envelope: " + "; ".join(parts)
            + ". Every range is swept at every corner of the tolerance box and for every"
            f" order ({extent.evaluations} evaluations); each check is judged at its worst"
            " value and fails if it fails anywhere in the envelope. The working below is"
            " shown at the nominal point.")


def envelope_table(checks: tuple[Check, ...]) -> Table:
    rows = []
    for c in checks:
        g = c.governing
        if g is None:
            continue
        status = g.status.upper()
        if g.status == "fail" and g.nominal_status == "pass":
            status += " (passes at nominal)"
        rows.append((c.description, c.value, g.value, g.where or "at nominal", status))
    return Table(title="Operating envelope: each check at its worst",
                 header=("Check", "Nominal", "Governing", "Where it governs", "Status"),
                 rows=tuple(rows))


def envelope_figure(spec: CalcSpec, reg: RegisteredCalc, ctx: CalcContext,
                    checks: tuple[Check, ...], best: Mapping, sweeps: list, grid: Mapping,
                    orders: list[float]) -> Figure | None:
    """The main response over the swept range: the check nearest to failing (or the most
    failing), one curve per order at nominal tolerances, the tolerance band shaded, the
    limit and the governing point marked."""
    cands = [c for c in checks if c.governing is not None and c.value is not None
             and c.governing.value is not None]
    if not cands or not any(r is not None for _, r, _ in sweeps):
        return None
    main = max(cands, key=lambda c: best[c.id][0])
    point = dict(best[main.id][1])
    ranges = [n for n in spec.spreads if spec.spreads[n].kind == "range"]
    moved = [n for n in ranges if _differs(point[n], spec.spreads[n].nominal)]
    speed = speed_input(reg.calc_type.inputs)
    r = speed if speed in ranges else (moved or ranges)[0]
    dim = main.value.dimension
    factor, xunit = _written_unit(spec, r, _dimension(spec, reg, r))

    yfactor, ylabel = axis_unit(ctx.display, dim)

    def y(c: Check | None) -> float:
        if c is None or c.value is None or not math.isfinite(c.value.value):
            return math.nan
        return c.value.value * yfactor

    others_at = tuple(point[o] for o in ranges if o != r)
    series, fills = [], []
    labels = dict(spec.orders)
    for order in orders:
        rows = [(key, pts) for key, rr, pts in sweeps
                if rr == r and key[0] == order and _close_all(key[3], others_at)]
        if not rows:
            continue
        xs = tuple(p[list(spec.spreads).index(r)][1] / factor for p in rows[0][1])
        curves = [[y(g.get(main.id)) for g in grid[key]] for key, _ in rows]
        nominal_curve = curves[0]  # corner 0 is the nominal of every tolerance
        name = ("" if len(orders) == 1 else f"order {format_number(order, 4)}"
                + (f" ({labels[order]})" if labels.get(order) else ""))
        series.append(Series(x=xs, y=tuple(nominal_curve), label=name or "nominal",
                             emphasis=order == point[_ORDER]))
        if len(curves) > 1:
            lo = tuple(min(v[i] for v in curves) for i in range(len(xs)))
            hi = tuple(max(v[i] for v in curves) for i in range(len(xs)))
            fills.append(Fill(x=xs, low=lo, high=hi, label="tolerance band"
                              + (f", {name}" if name else "")))
    if not series:
        return None
    g = main.governing
    assert g is not None and g.value is not None
    gx = point[r] / factor
    gy = g.value.value * yfactor
    limit = [] if main.limit is None else [(main.limit.value * yfactor, "criterion")]
    unit = f" ({ylabel})" if ylabel else ""
    return Figure(
        key="operating-envelope",
        caption=(f"{main.description} over the {r.replace('_', ' ')} range: nominal curve,"
                 " tolerance band shaded, criterion and governing point marked."),
        alt=(f"{main.description} against {r.replace('_', ' ')}; it governs"
             f" {g.where or 'at nominal'}."),
        x_label=f"{r.replace('_', ' ').capitalize()} ({xunit})" if xunit else r,
        panels=(Panel(series=tuple(series), y_label=_short(main.description, 30) + unit,
                      fills=tuple(fills), hlines=tuple(limit),
                      markers=(Marker(x=gx, y=gy, label="governing"),)),))


def _short(text: str, n: int = 40) -> str:
    """At most n characters, cut at a word (an axis label has the room of the plot)."""
    if len(text) <= n:
        return text
    cut = text[: n - 1].rsplit(" ", 1)[0].rstrip(" ,:;(")
    return cut + "…"


def _close_all(a: tuple[float, ...], b: tuple[float, ...]) -> bool:
    return len(a) == len(b) and all(not _differs(x, y) for x, y in zip(a, b, strict=True))


def _verify_points(spec: CalcSpec, reg: RegisteredCalc, ev: _Evaluator, best: Mapping,
                   checks: tuple[Check, ...]):
    """The governing points of every failing check and of the tightest passing one (not
    the nominal, verified already), each with its context and output."""
    failing = [c for c in checks if c.governing is not None and c.governing.status == "fail"]
    passing = sorted((c for c in checks if c.governing is not None
                      and c.governing.status != "fail"),
                     key=lambda c: best[c.id][0], reverse=True)
    points: list[Point] = []
    for c in [*failing, *passing[:1]]:
        p = best[c.id][1]
        if _moved(spec, p) and p not in points:
            points.append(p)
    out = []
    for p in points[:MAX_VERIFIED_POINTS]:
        out.append((ev.context(p), ev.output(p), where(spec, p, ev.ctx.units, reg),
                    _inputs_of(spec, reg, p)))
    return tuple(out)


def si_inputs(inputs: tuple[tuple[str, Quantity], ...]) -> dict[str, dict[str, Any]]:
    """{name: {value, unit}} in SI, for results.json."""
    return {n: {"value": q.value, "unit": DIMENSIONS[q.dimension].si_unit or "1"}
            for n, q in inputs}
