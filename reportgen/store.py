"""The verification cache: a calc's independent-check rows, keyed by a hash of everything
they depend on, so a warm rebuild skips the second method (ODE integration and the like).

Entries live beside the asset cache (``REPORTGEN_CACHE_DIR``, ``--no-cache`` bypasses).
An entry carries the SHA-256 of its body and is ignored unless it matches; rows that do
not rebuild into VerificationRows are ignored too. A plugin bumps its version when its
verify method changes; the key includes that version, the inputs and the computed results.
"""

from __future__ import annotations

import hashlib
import json
import math
import os
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from reportgen.calc.plugin_set import RegisteredCalc
from reportgen.calc.sheet import CalcContext, CalcOutput
from reportgen.model import VerificationRow, to_json


def default_cache_dir() -> Path:
    """``REPORTGEN_CACHE_DIR``, else the platform's user cache folder for reportgen."""
    env = os.environ.get("REPORTGEN_CACHE_DIR")
    if env:
        return Path(env)
    import platformdirs

    return Path(platformdirs.user_cache_dir("reportgen", appauthor=False))


#: The cache's size cap in MB unless ``REPORTGEN_CACHE_MAX_MB`` says otherwise.
DEFAULT_CACHE_MAX_MB = 500.0


def cache_max_bytes() -> int:
    """The cap from ``REPORTGEN_CACHE_MAX_MB`` (a number of megabytes, 10**6 bytes)."""
    raw = os.environ.get("REPORTGEN_CACHE_MAX_MB", "").strip()
    try:
        mb = float(raw) if raw else DEFAULT_CACHE_MAX_MB
    except ValueError:
        mb = -1.0
    if not (mb >= 0 and math.isfinite(mb)):
        import sys

        print(f"warning: REPORTGEN_CACHE_MAX_MB must be a number of megabytes >= 0, found"
              f" {raw!r}; using {DEFAULT_CACHE_MAX_MB:g}", file=sys.stderr)
        mb = DEFAULT_CACHE_MAX_MB
    return int(mb * 1_000_000)


def touch(path: Path) -> None:
    """Mark a cache entry as just used (its mtime is the eviction order)."""
    try:
        os.utime(path)
    except OSError:
        pass  # a read-only cache still serves hits


def prune_cache(folder: Path, max_bytes: int | None = None) -> int:
    """Least-recently-used eviction: if the folder holds more than ``max_bytes``, delete
    the entries used longest ago until it holds at most 80 % of it. Returns bytes freed.

    One pass of ``scandir`` over the folder, run once after a build; entries are touched
    on every hit, so their mtime is their last use. Files that vanish meanwhile (another
    build pruning or replacing them) are skipped.
    """
    limit = cache_max_bytes() if max_bytes is None else max_bytes
    entries: list[tuple[float, int, str]] = []
    total = 0
    stack = [str(folder)]
    while stack:
        try:
            with os.scandir(stack.pop()) as it:
                for e in it:
                    try:
                        if e.is_dir(follow_symlinks=False):
                            stack.append(e.path)
                        elif e.is_file(follow_symlinks=False):
                            st = e.stat(follow_symlinks=False)
                            entries.append((st.st_mtime, st.st_size, e.path))
                            total += st.st_size
                    except OSError:
                        continue
        except OSError:
            continue
    if total <= limit:
        return 0
    freed = 0
    target = total - int(limit * 0.8)
    for _mtime, size, path in sorted(entries):
        if freed >= target:
            break
        try:
            os.unlink(path)
            freed += size
        except OSError:
            continue
    return freed


#: Bump when the key or the entry format changes.
CACHE_TAG = "verify/1"


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
    ct = reg.calc_type
    payload = {
        "tag": CACHE_TAG,
        "calc_type": [reg.name, ct.version, getattr(ct, "api_version", 1)],
        "package": [reg.package, reg.package_version],
        "inputs": _plain(dict(ctx.inputs)), "given": _plain(ctx.given),
        "criteria": _plain(dict(ctx.criteria)), "criteria_given": _plain(ctx.criteria_given),
        "units": ctx.units, "options": _plain(dict(ctx.options)),
        "results": _plain(to_json(tuple(output.results))),
    }
    text = json.dumps(payload, sort_keys=True, separators=(",", ":"), default=repr)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


class VerificationCache:
    """``verify=`` for :func:`reportgen.pipeline.compute_document`: reuse rows or compute them."""

    def __init__(self, folder: Path | None):
        self.folder = folder / "verify" if folder is not None else None
        self.hits = 0
        self.misses = 0

    def __call__(self, reg: RegisteredCalc, ctx: CalcContext,
                 output: CalcOutput) -> Sequence[VerificationRow] | None:
        if self.folder is None:
            return reg.calc_type.verify(ctx, output)
        try:
            key = verification_key(reg, ctx, output)
        except (TypeError, ValueError):
            return reg.calc_type.verify(ctx, output)  # inputs we cannot hash: no caching
        found = self.get(key)
        if found is not _MISSING:
            self.hits += 1
            return found
        self.misses += 1
        rows = reg.calc_type.verify(ctx, output)
        if rows is None or all(isinstance(r, VerificationRow) for r in rows):
            self.put(key, None if rows is None else list(rows))
        return rows

    def _path(self, key: str) -> Path:
        assert self.folder is not None
        return self.folder / key[:2] / f"{key}.json"

    def get(self, key: str) -> Any:
        try:
            raw = self._path(key).read_bytes()
        except OSError:
            return _MISSING
        touch(self._path(key))
        head, sep, body = raw.partition(b"\n")
        if not sep or head != hashlib.sha256(body).hexdigest().encode("ascii"):
            return _MISSING  # corrupt or truncated: recompute and rewrite
        try:
            data = json.loads(body)
            if data["key"] != key:
                return _MISSING
            if data["rows"] is None:
                return None
            rows = [VerificationRow(**r) for r in data["rows"]]
        except (ValueError, KeyError, TypeError):
            return _MISSING
        if not all(isinstance(r.closed_form, float) and isinstance(r.independent, float)
                   for r in rows):
            return _MISSING
        return rows

    def put(self, key: str, rows: list[VerificationRow] | None) -> None:
        data = {"key": key, "rows": None if rows is None else [
            {f: getattr(r, f) for f in ("quantity", "closed_form", "independent", "tolerance",
                                        "method", "abs_tolerance", "unit")} for r in rows]}
        try:
            body = json.dumps(data, sort_keys=True).encode("utf-8")
            path = self._path(key)
            path.parent.mkdir(parents=True, exist_ok=True)
            tmp = path.with_name(f".{path.name}.{os.getpid()}.tmp")
            tmp.write_bytes(hashlib.sha256(body).hexdigest().encode("ascii") + b"\n" + body)
            os.replace(tmp, path)
        except (OSError, TypeError, ValueError):
            pass  # a read-only or full cache folder only costs speed


_MISSING = object()


def _verify_remote(reg: RegisteredCalc, ctx: CalcContext, output: CalcOutput):
    rows = reg.calc_type.verify(ctx, output)
    return None if rows is None else list(rows)


class EarlyVerification:
    """Start every uncached verification in worker processes before the document is
    assembled; :func:`reportgen.pipeline.compute_document` then collects the rows in order.

    Each calc is computed once more here (milliseconds) to hand its output to the
    worker; compute is deterministic, so the rows are those the serial path would make.
    """

    def __init__(self, cache: VerificationCache, pool):
        self.cache = cache
        self.pool = pool
        self.futures: dict[str, tuple[str, Any]] = {}
        self.outputs: list[CalcOutput] = []

    def start(self, job, plugins) -> None:
        from reportgen.document.compute import calc_context

        for spec in job.calcs:
            reg = plugins.calcs[spec.plugin]
            ctx = calc_context(spec, job.info.units)
            try:
                out = reg.calc_type.compute(ctx)
            except Exception:
                continue  # compute_document raises it properly, naming the plugin
            self.outputs.append(out)
            if self.cache.folder is None:
                key = ""
            else:
                try:
                    key = verification_key(reg, ctx, out)
                except (TypeError, ValueError):
                    continue
                if self.cache.get(key) is not _MISSING:
                    continue
            self.futures[spec.id] = (key, self.pool.submit(_verify_remote, reg, ctx, out))

    def __call__(self, reg: RegisteredCalc, ctx: CalcContext, output: CalcOutput):
        started = self.futures.pop(ctx.calc_id, None)
        if started is None:
            return self.cache(reg, ctx, output)
        key, fut = started
        rows = fut.result()  # the worker's exception, if any, is re-raised here
        self.cache.misses += 1
        if key and (rows is None or all(isinstance(r, VerificationRow) for r in rows)):
            self.cache.put(key, rows)
        return rows
