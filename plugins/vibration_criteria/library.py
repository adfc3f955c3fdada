"""The vibration-criterion data model and its evaluation: limits, classification, zones, lookup.

Pure numpy over SI values; the built-in criteria live in builtin.py, a firm's own in files.py.
"""

from __future__ import annotations

import difflib
import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np

from .errors import UnknownCriterionError

__all__ = [
    "BAND_VELOCITY",
    "INTERPOLATIONS",
    "OVERALL_VELOCITY",
    "PPV",
    "QUANTITIES",
    "STATUSES",
    "Classification",
    "Criterion",
    "classify",
    "limit_at",
    "neighbours",
    "normalise_name",
    "ratios",
    "resolve",
    "stringency",
    "zone_of",
]

#: rms velocity in one-third-octave bands (m/s), a curve over frequency.
BAND_VELOCITY = "band_velocity_rms"
#: peak particle velocity (m/s) against the dominant frequency of the peak.
PPV = "ppv"
#: broadband rms velocity (m/s) against zone boundaries (machinery severity).
OVERALL_VELOCITY = "overall_velocity_rms"
QUANTITIES = (BAND_VELOCITY, PPV, OVERALL_VELOCITY)
#: between points: straight lines on log-log axes, straight lines on linear axes, or steps
#: (the value of the point at or below the frequency).
INTERPOLATIONS = ("loglog", "linear", "step")
#: the status labels of the project's reference values, plus one for a firm's own curves.
STATUSES = (
    "confirmed_in_source",
    "corroborated_secondary",
    "formula_confirmed_example_invented",
    "from_memory",
    "numerical_reference_only",
    "common_practice_no_source",
    "user_supplied",
)
ON_BOUNDARY = ("a value exactly on a limit meets it; a value exactly on a zone boundary belongs"
               " to the lower zone")


@dataclass(frozen=True, slots=True, kw_only=True)
class Criterion:
    """A published or supplied vibration criterion.

    A curve (``frequencies`` ascending, Hz; ``values`` the limit at each, m/s) is evaluated by
    ``interpolation`` between points and held at its end values outside them; a criterion with
    one value and no frequencies is frequency-independent. A zone criterion (``zones`` set)
    has ascending boundary ``values`` and one more zone label than boundaries.
    ``title``, ``source`` and ``notes`` are written to be printed; ``status`` and
    ``status_note`` say how well the values are known, for maintainers and tests only.
    """

    name: str
    title: str
    quantity: str
    values: tuple[float, ...]
    frequencies: tuple[float, ...] = ()
    interpolation: str = "loglog"
    zones: tuple[str, ...] = ()
    zone_meanings: tuple[str, ...] = ()
    family: str = ""
    source: str
    status: str
    status_note: str = ""
    notes: str = ""
    aliases: tuple[str, ...] = ()
    valid_from: float = 0.0  # Hz: below this the source gives no value (the end value is held)
    on_boundary: str = ON_BOUNDARY
    #: (file name, bytes) of the firm's file it was read from, embedded in a package that
    #: uses it (reportgen.calc.criteria.ORIGIN_FILE), so that verify re-reads it
    origin_file: tuple[str, bytes] | None = field(default=None, repr=False, compare=False)

    def __post_init__(self) -> None:
        problem = _problem(self)
        if problem:
            raise ValueError(f"criterion {self.name!r}: {problem}")


def _problem(c: Criterion) -> str:
    if not c.name.strip():
        return "the name is empty"
    if c.quantity not in QUANTITIES:
        return f"quantity must be one of {', '.join(QUANTITIES)}, found {c.quantity!r}"
    if c.interpolation not in INTERPOLATIONS:
        return f"interpolation must be one of {', '.join(INTERPOLATIONS)}"
    if c.status not in STATUSES:
        return f"status must be one of {', '.join(STATUSES)}, found {c.status!r}"
    if not c.values:
        return "no values"
    if not all(math.isfinite(v) and v > 0 for v in c.values):
        return "every value must be a positive number"
    if c.zones:
        if c.frequencies:
            return "a zone criterion has boundaries, not frequencies"
        if len(c.zones) != len(c.values) + 1:
            return f"{len(c.values)} boundaries need {len(c.values) + 1} zone labels"
        if any(b <= a for a, b in zip(c.values, c.values[1:], strict=False)):
            return "zone boundaries must ascend"
        return ""
    if c.frequencies:
        if len(c.frequencies) != len(c.values):
            return (f"{len(c.frequencies)} frequencies but {len(c.values)} values: one value"
                    " per frequency")
        if not all(math.isfinite(f) and f > 0 for f in c.frequencies):
            return "every frequency must be a positive number"
        if any(b <= a for a, b in zip(c.frequencies, c.frequencies[1:], strict=False)):
            return "frequencies must ascend, each once"
    elif len(c.values) != 1:
        return "a criterion without frequencies has exactly one value"
    return ""


def limit_at(criterion: Criterion, frequencies: float | Iterable[float]) -> np.ndarray:
    """The criterion's limit (m/s) at each frequency (Hz), vectorised.

    loglog: log v linear in log f between points (a straight line on the log-log chart on
    which such curves are published); linear: v linear in f; step: the value of the nearest
    point at or below f. Outside the points the end values hold.
    """
    if criterion.zones:
        raise ValueError(f"criterion {criterion.name!r} is a zone table: use zone_of")
    f = np.asarray(frequencies, dtype=np.float64)
    if not criterion.frequencies:
        return np.full(f.shape, criterion.values[0])
    fp = np.asarray(criterion.frequencies)
    vp = np.asarray(criterion.values)
    i = np.clip(np.searchsorted(fp, f, side="right") - 1, 0, len(fp) - 1)
    if criterion.interpolation == "step" or len(fp) == 1:
        return vp[i]
    # Segment-wise v_i·(v_i+1/v_i)^t (log-log) or v_i + (v_i+1 − v_i)·t (linear): exact at
    # the points and on flat segments, so a level equal to a tabulated limit meets it.
    i = np.minimum(i, len(fp) - 2)
    lo, hi = fp[i], fp[i + 1]
    with np.errstate(divide="ignore", invalid="ignore"):
        if criterion.interpolation == "linear":
            t = (f - lo) / (hi - lo)
        else:
            t = np.log(np.where(f > 0, f, lo) / lo) / np.log(hi / lo)
    t = np.clip(t, 0.0, 1.0)  # the end values hold outside the points
    if criterion.interpolation == "linear":
        return vp[i] + (vp[i + 1] - vp[i]) * t
    return vp[i] * (vp[i + 1] / vp[i]) ** t


def ratios(criterion: Criterion, frequencies: Iterable[float],
           levels: Iterable[float]) -> np.ndarray:
    """Level over limit per band; ≤ 1 meets the criterion (a level exactly on it meets it)."""
    lv = np.asarray(levels, dtype=np.float64)
    return lv / limit_at(criterion, frequencies)


def zone_of(value: float, criterion: Criterion) -> str:
    """The zone label of ``value`` (m/s) in a zone criterion.

    Zone k holds boundary[k-1] < v ≤ boundary[k]: a value exactly on a boundary belongs to
    the lower zone (the project's rule, VERIFICATION.md).
    """
    if not criterion.zones:
        raise ValueError(f"criterion {criterion.name!r} has no zones")
    if not math.isfinite(value) or value < 0:
        raise ValueError(f"a severity value must be a non-negative number, found {value!r}")
    return criterion.zones[int(np.searchsorted(criterion.values, value, side="left"))]


def stringency(criterion: Criterion, frequencies: Sequence[float] | None = None) -> float:
    """A key that orders curves from most stringent (smallest) to least: the mean log limit
    over ``frequencies`` (default the one-third-octave centres 1–80 Hz)."""
    if criterion.zones:
        return float(np.mean(np.log(criterion.values)))
    f = _DEFAULT_CENTRES if frequencies is None else np.asarray(frequencies, dtype=np.float64)
    return float(np.mean(np.log(limit_at(criterion, f))))


_DEFAULT_CENTRES = 10.0 ** (np.arange(0, 20) / 10.0)  # exact base-ten centres 1 … 79.4 Hz


@dataclass(frozen=True, slots=True, kw_only=True)
class Classification:
    """The most stringent curve a band spectrum meets and its margins (dB re the curve)."""

    met: str | None  # most stringent criterion met, None when none is met
    margin_db: float | None  # 20 log10(limit / level) at the tightest band of ``met``
    governing_frequency: float  # band of the largest level-to-limit ratio for ``met`` (or next)
    next: str | None  # the next more stringent curve, which the spectrum fails
    exceedance_db: float | None  # 20 log10(level / limit) at the worst band of ``next``
    exceeding_next: tuple[float, ...]  # bands above ``next``


def _pairs(band_levels) -> tuple[np.ndarray, np.ndarray]:
    if isinstance(band_levels, Mapping):
        items = list(band_levels.items())
    elif hasattr(band_levels, "frequencies") and hasattr(band_levels, "values"):
        items = list(zip(band_levels.frequencies, band_levels.values, strict=True))
    else:
        items = [tuple(p) for p in band_levels]
    if not items:
        raise ValueError("no band levels to classify")
    f = np.array([p[0] for p in items], dtype=np.float64)
    v = np.array([p[1] for p in items], dtype=np.float64)
    return f, v


def classify(band_levels, criteria: Iterable[Criterion] | None = None) -> Classification:
    """The most stringent criterion that every band meets (level ≤ limit), and the next one.

    ``band_levels``: (frequency Hz, rms m/s) pairs, a mapping, or an object with
    ``frequencies`` and ``values``. ``criteria`` default: the built-in building and
    sensitive-equipment curves (ISO-based and VC-A … VC-G). Ordered by :func:`stringency`.
    """
    if criteria is None:
        from .builtin import BUILTIN

        criteria = [c for c in BUILTIN if c.family == "building"]
    f, v = _pairs(band_levels)
    pool = sorted((c for c in criteria if c.quantity == BAND_VELOCITY),
                  key=lambda c: stringency(c, f), reverse=True)  # least stringent first
    if not pool:
        raise ValueError("no band-velocity criteria to classify against")
    met_index = None
    for i, c in enumerate(pool):
        if np.all(ratios(c, f, v) <= 1.0):
            met_index = i
    met = pool[met_index] if met_index is not None else None
    nxt_index = 0 if met_index is None else met_index + 1
    nxt = pool[nxt_index] if nxt_index < len(pool) else None
    margin = gov = None
    if met is not None:
        r = ratios(met, f, v)
        margin = -20.0 * math.log10(float(r.max())) if r.max() > 0 else math.inf
        gov = float(f[int(np.argmax(r))])
    exceed, over = None, ()
    if nxt is not None:
        r = ratios(nxt, f, v)
        exceed = 20.0 * math.log10(float(r.max()))
        over = tuple(float(x) for x in f[r > 1.0])
        if gov is None:
            gov = float(f[int(np.argmax(r))])
    return Classification(met=met.name if met else None, margin_db=margin,
                          governing_frequency=float(gov), next=nxt.name if nxt else None,
                          exceedance_db=exceed, exceeding_next=over)


def neighbours(criterion: Criterion, pool: Iterable[Criterion] | None = None,
               count: int = 1) -> tuple[Criterion, ...]:
    """The criterion and up to ``count`` curves on each side of it in stringency, drawn from
    ``pool`` (default the built-ins) with the same quantity and family (for a curve of no
    built-in family: the building curves), least stringent first. For the spectrum figure."""
    if pool is None:
        from .builtin import BUILTIN

        pool = BUILTIN
    pool = list(pool)
    families = {c.family for c in pool if c.quantity == criterion.quantity}
    family = criterion.family if criterion.family in families else "building"
    same = [c for c in pool if c.quantity == criterion.quantity and c.family == family
            and normalise_name(c.name) != normalise_name(criterion.name)]
    ordered = sorted([*same, criterion], key=stringency, reverse=True)
    i = next(k for k, c in enumerate(ordered) if c is criterion)
    return tuple(ordered[max(0, i - count):i + count + 1])


def normalise_name(name: str) -> str:
    """Names match case-insensitively, with '_', ' ' and '-' taken as the same."""
    return "-".join(name.casefold().replace("_", " ").replace("-", " ").split())


def resolve(name: str, criteria: Iterable[Criterion]) -> Criterion:
    """The criterion called ``name`` (or one of its aliases) among ``criteria``.

    Raises UnknownCriterionError with the nearest names, or ValueError when two different
    criteria answer to the name.
    """
    key = normalise_name(str(name))
    index: dict[str, list[Criterion]] = {}
    for c in criteria:
        for n in (c.name, *c.aliases):
            index.setdefault(normalise_name(n), []).append(c)
    found = index.get(key, [])
    distinct = list({id(c): c for c in found}.values())
    if len(set(distinct)) > 1:
        raise ValueError(f"the criterion name {name!r} is defined more than once"
                         f" ({', '.join(c.title for c in distinct)})")
    if distinct:
        return distinct[0]
    canonical = {}
    for k, cs in index.items():
        canonical.setdefault(k, cs[0].name)
    close = difflib.get_close_matches(key, list(canonical), n=3, cutoff=0.6)
    suggestions = tuple(dict.fromkeys(canonical[k] for k in close))
    known = tuple(dict.fromkeys(cs[0].name for cs in index.values()))
    raise UnknownCriterionError(str(name), suggestions, known)
