"""rigid_body_mounts' design checks, written onto the Sheet: frequencies against the running
speed, mounts in compression and within their rating, tilt, decoupling, and the catalogue's
cross-checks for every spring it supplies."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from reportgen_plugins.mechanics.isolator_selection import consistency, travel_check

from reportgen import Sheet
from reportgen.units import format_number

from .analysis import Analysis
from .resolve import Resolved


def write(s: Sheet, p: Mapping[str, Any], crit: Mapping[str, Any], a: Analysis,
          done: Resolved, units: str) -> None:
    _frequencies(s, p, crit, a)
    _loads(s, crit, a)
    _tilt_and_decoupling(s, crit, a)
    if done.catalogue is not None:
        _catalogue(s, a, done)


def _frequencies(s: Sheet, p: Mapping[str, Any], crit: Mapping[str, Any],
                 a: Analysis) -> None:
    speed = p.get("running_speed")
    r_min = crit["min_frequency_ratio"]
    if not speed:
        s.check("frequency-ratio", "Natural frequencies against the running speed",
                status="info", note="no running speed stated: the frequencies are reported"
                                    " but not judged")
        return
    limit = speed / r_min
    for i, f in enumerate(a.modes.frequencies, start=1):
        s.check(f"frequency-{i}", f"Mode {i}: natural frequency at most the running speed"
                f" / r_min (r_min = {format_number(r_min, 4)})", value=float(f), limit=limit,
                comparison="<=", dimension="frequency",
                note=f"frequency ratio {format_number(speed / float(f), 3)}")


def _loads(s: Sheet, crit: Mapping[str, Any], a: Analysis) -> None:
    loads = [float(v) for v in a.static.loads]
    low = min(range(len(loads)), key=loads.__getitem__)
    tension = [i + 1 for i, v in enumerate(loads) if v <= 0.0]
    s.check("mounts-in-compression", "Every mount in compression under the weight",
            value=loads[low], limit=0.0, comparison=">", dimension="force",
            note=(f"mount{'s' if len(tension) > 1 else ''} "
                  f"{', '.join(map(str, tension))} in tension or unloaded: move or add mounts,"
                  " or move the centre of gravity (ballast)" if tension
                  else f"least loaded: mount {low + 1}"))
    if "min_mount_load" in crit:
        s.check("min-mount-load", "Smallest mount load at least the stated minimum",
                value=loads[low], limit=crit["min_mount_load"], comparison=">=",
                dimension="force", note=f"mount {low + 1}")
    for i, (m, load) in enumerate(zip(a.model.mounts, loads, strict=True), start=1):
        if m.rated_load is not None:
            s.check(f"rated-load-{i}", f"Mount {i}{f' ({m.model})' if m.model else ''}: static"
                    " load within its rated load", value=load, limit=m.rated_load,
                    comparison="<=", dimension="force")


def _tilt_and_decoupling(s: Sheet, crit: Mapping[str, Any], a: Analysis) -> None:
    tilt = a.static.tilt
    if "max_tilt" in crit:
        s.check("tilt", "Static tilt of the base, √(θx² + θy²), within the limit", value=tilt,
                limit=crit["max_tilt"], comparison="<=", dimension="angle")
    else:
        s.check("tilt", "Static tilt of the base, √(θx² + θy²)", status="info", value=tilt,
                dimension="angle", note="no limit stated (max_tilt)")
    if "min_decoupling_share" in crit:
        shares = [float(v) for v in a.modes.dominant_share]
        i = min(range(6), key=shares.__getitem__)
        s.check("decoupling", "Every mode's dominant kinetic-energy share at least the stated"
                " minimum", value=shares[i], limit=crit["min_decoupling_share"],
                comparison=">=", note=f"least decoupled: mode {i + 1}")


def _catalogue(s: Sheet, a: Analysis, done: Resolved) -> None:
    used: dict[str, Any] = {}
    for i, c in enumerate(done.choices, start=1):
        if c.selection is not None and c.selection.row is None:
            s.check(f"selection-{i}", f"Mount {i}: a catalogue model meets its need",
                    status="fail", note=f"{c.selection.reason}; analysed with"
                    f" {c.model.model if c.model else 'no model'}, the nearest")
        if c.model is None:
            continue
        used.setdefault(c.model.model, c.model)
        defl = float(a.static.deflections[i - 1])
        if defl > 0.0:
            t = travel_check(c.model, defl)
            s.check(f"travel-{i}", f"Mount {i} ({c.model.model}): travel left to solid at"
                    f" least {format_number(100 * t.allowance, 3)} % of the operating"
                    " deflection (common practice)", value=t.remaining, limit=t.required,
                    comparison=">=", dimension="length")
        if done.required_deflection is not None and c.how == "named":
            s.check(f"deflection-{i}", f"Mount {i} ({c.model.model}): static deflection"
                    " reaches the required deflection", value=defl,
                    limit=done.required_deflection, comparison=">=", dimension="length")
    for name, row in used.items():
        k = consistency(row)
        s.check(f"catalogue-{name}", f"Catalogue data of {name}: spring rate × rated"
                f" deflection within ±{format_number(100 * k.tolerance, 3)} % of the rated"
                " load", value=round(abs(k.ratio - 1.0), 9), limit=k.tolerance, comparison="<=",
                note=f"k·δ_rated/P_rated = {format_number(k.ratio, 4)}")
    assert done.catalogue is not None
    bad = [r.model for r in done.catalogue.rows
           if r.model not in used and not consistency(r).passes]
    if bad:
        s.check("catalogue-other-models", "Catalogue models not used here whose spring rate ×"
                " rated deflection contradicts their rated load", status="info",
                note=", ".join(bad) + ": confirm with the maker before using them")
