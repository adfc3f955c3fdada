"""Excitation orders of a calc with a running speed: ``orders = [1, 2, { order = 9,
label = "blade pass" }]`` in ``[calc.inputs]``, read and checked here.

A calc type has a running speed when it declares a frequency (or rotational speed) input
named ``speed`` or ``running_speed``.
"""

from __future__ import annotations

import math
from typing import Any

from reportgen.calc.spec import InputSpec

#: the input names a calc's running speed may have (the first a calc declares is it), and
#: the largest order accepted
SPEED_INPUTS = ("speed", "running_speed")
MAX_ORDER = 1000.0
MAX_ORDERS = 32
#: points along each range of an operating envelope before refinement (odd: the mid-range
#: nominal is one of them), and the most points an envelope may plan (about a minute)
SWEEP_POINTS = 41
MAX_ENVELOPE_POINTS = 20000


def envelope_points(ranges: int, tolerances: int, orders: int) -> int:
    """Points an envelope sweeps before refinement: each range at SWEEP_POINTS, the other
    ranges at their ends and middle, at the nominal and every corner of the tolerance box,
    for every order."""
    per_corner = ranges * SWEEP_POINTS * 3 ** (ranges - 1) if ranges else 1
    return per_corner * (2**tolerances + 1) * max(orders, 1)


def speed_input(specs: tuple[InputSpec, ...]) -> str | None:
    """The name of a calc type's running speed (a frequency input named as in
    SPEED_INPUTS), or None when it has none or an input of its own named 'orders'."""
    names = {s.name: s for s in specs}
    if "orders" in names:
        return None
    for name in SPEED_INPUTS:
        speed = names.get(name)
        if speed is not None and speed.kind == "quantity" and speed.dimension in (
                "frequency", "rotational_speed"):
            return name
    return None


def has_running_speed(specs: tuple[InputSpec, ...]) -> bool:
    """Whether a calc type takes excitation orders (see :func:`speed_input`)."""
    return speed_input(specs) is not None


def parse_orders(raw: Any) -> tuple[tuple[tuple[float, str], ...], list[tuple[str, str]]]:
    """Read a list of orders; returns ((order, label), ...) and (field, problem) pairs.
    Order 1 (the stated speed) is always assessed and comes first."""
    if not isinstance(raw, list) or not raw:
        return (), [("orders", "expected a list of excitation orders such as [1, 2] or"
                     " [1, { order = 9, label = \"blade pass\" }]")]
    if len(raw) > MAX_ORDERS:
        return (), [("orders", f"at most {MAX_ORDERS} orders, found {len(raw)}")]
    out: dict[float, str] = {}
    problems = []
    for i, item in enumerate(raw):
        fld = f"orders[{i}]"
        label = ""
        if isinstance(item, dict):
            unknown = [k for k in item if k not in ("order", "label")]
            if unknown or "order" not in item:
                problems.append((fld, "expected { order = 9, label = \"blade pass\" }"
                                 + (f"; unknown key '{unknown[0]}'" if unknown else
                                    "; 'order' is missing")))
                continue
            label = item.get("label", "")
            if not isinstance(label, str) or any(ord(ch) < 32 for ch in label):
                problems.append((f"{fld}.label", "expected one line of text"))
                continue
            item = item["order"]
            fld += ".order"
        if isinstance(item, bool) or not isinstance(item, (int, float)):
            problems.append((fld, f"expected a number such as 1, 2 or 0.5, found"
                             f" {type(item).__name__} {item!r}"[:120]))
            continue
        order = float(item)
        if not (math.isfinite(order) and 0 < order <= MAX_ORDER):
            problems.append((fld, f"an order must be above 0 and at most {MAX_ORDER:g},"
                             f" found {item!r}"))
            continue
        if order in out:
            problems.append((fld, f"order {order:g} is listed twice"))
            continue
        out[order] = label.strip()
    if 1.0 not in out:
        out[1.0] = ""
    first = [(1.0, out.pop(1.0))]
    return tuple(first + sorted(out.items())), problems
