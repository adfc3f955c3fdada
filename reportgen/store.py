"""The content-addressed store every cache of reportgen keeps its entries in.

One file format for all of them (drawn figures and equations, the math font, independent
verification rows): ``KEY[:2]/KEY.EXT`` holding the SHA-256 of the body on its first line,
then the body. An entry whose hash does not match is ignored (and rewritten); a hit touches
the file, and :func:`prune_cache` evicts the least recently used when the folder grows past
its cap. The folder is ``REPORTGEN_CACHE_DIR``, else the platform's user cache folder.
"""

from __future__ import annotations

import hashlib
import math
import os
from pathlib import Path


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


class Store:
    """Entries ``KEY[:2]/KEY<suffix>`` in ``folder`` (None: a store that keeps nothing).

    Writes go through a temporary file and a rename, so a reader never sees half an entry;
    a read-only or full folder only costs speed.
    """

    def __init__(self, folder: Path | None, suffix: str):
        self.folder = folder
        self.suffix = suffix

    def path(self, key: str) -> Path:
        assert self.folder is not None
        return self.folder / key[:2] / f"{key}{self.suffix}"

    def get(self, key: str) -> bytes | None:
        if self.folder is None:
            return None
        path = self.path(key)
        try:
            raw = path.read_bytes()
        except OSError:
            return None
        head, sep, body = raw.partition(b"\n")
        if not sep or head != hashlib.sha256(body).hexdigest().encode("ascii"):
            return None  # corrupt or truncated: ignore, it will be rewritten
        touch(path)  # least recently used goes first when the cache is pruned
        return body

    def put(self, key: str, body: bytes) -> None:
        if self.folder is None:
            return
        path = self.path(key)
        try:
            path.parent.mkdir(parents=True, exist_ok=True)
            tmp = path.with_name(f".{path.name}.{os.getpid()}.tmp")
            tmp.write_bytes(hashlib.sha256(body).hexdigest().encode("ascii") + b"\n" + body)
            os.replace(tmp, path)
        except OSError:
            pass  # a read-only or full cache folder only costs speed
