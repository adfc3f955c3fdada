"""The verification cache: a calc's independent-check rows, keyed by a hash of everything
they depend on, so a warm rebuild skips the second method (ODE integration and the like).

Entries live in the content-addressed store (``verify/KEY[:2]/KEY.json``; ``--no-cache``
bypasses it); rows that do not rebuild into VerificationRows are ignored. A plugin bumps
its version when its verify method changes; the key includes that version, the inputs and
the computed results.
"""

from __future__ import annotations

import json
import math
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from reportgen.calc.plugin_set import RegisteredCalc
from reportgen.calc.sheet import CalcContext, CalcOutput
from reportgen.model import VerificationRow, to_json
from reportgen.store import Store

#: Bump when the key or the entry format changes.
CACHE_TAG = "verify/1"
_FIELDS = ("quantity", "closed_form", "independent", "tolerance", "method", "abs_tolerance",
           "unit")


def _plain(value: Any) -> Any:
    """JSON-able form that keeps floats exact (repr round-trips) and sets ordered."""
    if isinstance(value, float):
        return repr(value) if not math.isfinite(value) else value
    if isinstance(value, (frozenset, set)):
        return sorted(_plain(v) for v in value)
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in sorted(value.items())}
    if isinstance(value, (tuple, list)):
        return [_plain(v) for v in value]
    if hasattr(value, "tolist"):  # numpy arrays and scalars
        return _plain(value.tolist())
    return value


def verification_key(reg: RegisteredCalc, ctx: CalcContext, output: CalcOutput) -> str:
    import hashlib

    ct = reg.calc_type
    payload = {
        "tag": CACHE_TAG,
        "calc_type": [reg.name, ct.version, getattr(ct, "api_version", 1)],
        "package": [reg.package, reg.package_version],
        "inputs": _plain(dict(ctx.inputs)), "given": _plain(ctx.given),
        "criteria": _plain(dict(ctx.criteria)), "criteria_given": _plain(ctx.criteria_given),
        "units": ctx.units, "files": _plain(ctx.file_hashes()),
        "results": _plain(to_json(tuple(output.results))),
    }
    text = json.dumps(payload, sort_keys=True, separators=(",", ":"), default=repr)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


#: What :meth:`VerificationCache.get` returns for a key it does not hold.
MISSING: Any = object()


class VerificationCache:
    """``verify=`` for :func:`reportgen.document.compute.compute_document`: reuse rows
    from the store, or compute them (and keep them)."""

    def __init__(self, folder: Path | None):
        self.store = Store(folder / "verify" if folder is not None else None, ".json")
        self.hits = 0
        self.misses = 0

    @property
    def enabled(self) -> bool:
        return self.store.folder is not None

    def key(self, reg: RegisteredCalc, ctx: CalcContext, output: CalcOutput) -> str | None:
        """The entry's key, or None where there is no cache or the inputs cannot be hashed."""
        if not self.enabled:
            return None
        try:
            return verification_key(reg, ctx, output)
        except (TypeError, ValueError):
            return None  # inputs we cannot hash: no caching

    def __call__(self, reg: RegisteredCalc, ctx: CalcContext,
                 output: CalcOutput) -> Sequence[VerificationRow] | None:
        key = self.key(reg, ctx, output)
        if key is not None:
            found = self.get(key)
            if found is not MISSING:
                self.hits += 1
                return found
        rows = reg.calc_type.verify(ctx, output)
        self.record(key, rows)
        return rows

    def record(self, key: str | None, rows: Any) -> None:
        """Count a computed verification and keep its rows under ``key``."""
        self.misses += 1
        if key is not None and (rows is None or all(isinstance(r, VerificationRow)
                                                    for r in rows)):
            self.put(key, None if rows is None else list(rows))

    def get(self, key: str) -> Any:
        body = self.store.get(key)
        if body is None:
            return MISSING
        try:
            data = json.loads(body)
            if data["key"] != key:
                return MISSING
            if data["rows"] is None:
                return None
            rows = [VerificationRow(**r) for r in data["rows"]]
        except (ValueError, KeyError, TypeError):
            return MISSING
        if not all(isinstance(r.closed_form, float) and isinstance(r.independent, float)
                   for r in rows):
            return MISSING
        return rows

    def put(self, key: str, rows: list[VerificationRow] | None) -> None:
        data = {"key": key, "rows": None if rows is None else [
            {f: getattr(r, f) for f in _FIELDS} for r in rows]}
        try:
            body = json.dumps(data, sort_keys=True).encode("utf-8")
        except (TypeError, ValueError):
            return
        self.store.put(key, body)
