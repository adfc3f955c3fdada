"""rigid_body_mounts' design checks, written onto the Sheet: frequencies against the running
speed, mounts in compression and within their rating, tilt, decoupling, and the catalogue's
cross-checks for every spring it supplies."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from reportgen_plugins.mechanics.catalogue_sheet import MountSpring, catalogue_checks

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


def springs(a: Analysis, done: Resolved) -> tuple[MountSpring, ...]:
    """Each mount's spring with its load and deflection from the six-degree statics."""
    return tuple(MountSpring(number=i + 1, how=c.how, model=c.model, selection=c.selection,
                             load=float(a.static.loads[i]),
                             deflection=float(a.static.deflections[i]))
                 for i, c in enumerate(done.choices))


def _catalogue(s: Sheet, a: Analysis, done: Resolved) -> None:
    assert done.catalogue is not None
    catalogue_checks(s, springs(a, done), done.catalogue, done.required_deflection)
