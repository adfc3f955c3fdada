"""Load and validate a TOML job file into a typed :class:`Job` with SI inputs.

Every problem found is collected (not only the first) and raised together as a
:class:`~reportgen.errors.JobError` naming the file, the calc id and the field.
"""

from __future__ import annotations

import dataclasses
import datetime as _dt
import math
import re
import stat
import tomllib
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field
from pathlib import Path, PurePosixPath
from typing import Any

from reportgen.calc.criteria import (
    FIRM_CRITERIA_FOLDER,
    CriteriaLibrary,
    load_criteria,
    origin_file,
)
from reportgen.calc.plugin_set import PluginSet
from reportgen.calc.spec import Column, DataFile, InputSpec
from reportgen.errors import JobError, Problem, nearest_hint
from reportgen.job.orders import (
    MAX_ENVELOPE_POINTS,
    envelope_points,
    has_running_speed,
    parse_orders,
    speed_input,
)
from reportgen.job.paths import Kind, job_relative_path, path_parts, read_job_file
from reportgen.model import Deviation, PackageInfo, RevisionEntry, ScheduleItem
from reportgen.units import DIMENSIONS, Spread, UnitProblem, parse_quantity, parse_spread

MAX_JOB_BYTES = 1_000_000
MAX_CALCS = 200
MAX_TEXT = 4000
#: Arrays and tables inside one another: a job needs about 6 (a mount's [x, y] in a calc's
#: inputs); the limit keeps every recursive walk of the values far from Python's stack.
MAX_DEPTH = 32
# attachments are archived inside every PDF: keep packages mailable and readers responsive
MAX_ATTACHMENTS = 20
MAX_ATTACHMENT_BYTES = 10_000_000
MAX_ATTACHMENTS_TOTAL = 25_000_000
#: everything a package embeds from the job's folder (attachments and data files): below
#: what ``verify`` reads back (128 MiB in all, reportgen.package.archive)
MAX_EMBEDDED_TOTAL = 100_000_000
#: embedded names the package itself uses; an attachment may not take one of them
RESERVED_NAMES = frozenset({"job.toml", "results.json", "manifest.json", "environment.lock"})
#: The shapes of ids, file-naming fields and dates: the validator and the JSON Schema
#: (reportgen/job/schema.py) both use these.
ID_PATTERN = r"^[a-z0-9]+(-[a-z0-9]+)*$"
MAX_ID = 64
NAME_PATTERN = r"^[A-Za-z0-9][A-Za-z0-9._-]{0,63}$"
DATE_PATTERN = r"^[0-9]{4}-[0-9]{2}-[0-9]{2}$"
_ID = re.compile(ID_PATTERN)
_SAFE_NAME = re.compile(NAME_PATTERN)
_DATE = re.compile(DATE_PATTERN)

PACKAGE_KEYS = {
    "title": True, "client": False, "project": False, "job_number": True,
    "calc_number": True, "revision": True, "date": False, "units": False,
    "prepared_by": False, "prepared_date": False, "checked_by": False, "checked_date": False,
    "approved_by": False, "approved_date": False, "revision_history": False,
    "template_dir": False, "firm": False, "previous_package": False, "attachments": False,
    "deviations": False,
}
#: What each [package] key holds ("name": text that also names the output files).
PACKAGE_KINDS = {
    "title": "text", "client": "text", "project": "text", "job_number": "text",
    "calc_number": "name", "revision": "name", "date": "date", "units": "units",
    "prepared_by": "text", "prepared_date": "date", "checked_by": "text",
    "checked_date": "date", "approved_by": "text", "approved_date": "date",
    "revision_history": "history", "template_dir": "folder", "firm": "text",
    "previous_package": "path", "attachments": "files", "deviations": "deviations",
}
#: The keys of one [[package.revision_history]] entry, and whether each is required.
HISTORY_KEYS = {"revision": True, "date": False, "description": True, "by": False}
#: The keys of one [[package.deviations]] entry (an accepted failing check).
DEVIATION_KEYS = {"calc": True, "check": True, "justification": True, "accepted_by": True,
                  "date": False}
UNIT_SYSTEMS = ("SI", "US")
#: the keys of an input written as a table: { value = "...", source = "...", tolerance = "..." }
WRAPPER_KEYS = ("value", "source", "tolerance")
_REFUSED = object()  # an input whose wrapper was refused (the problem is recorded)


@dataclass(frozen=True)
class _Parsed:
    """An input value already read into SI (the nominal of a range or a tolerance)."""

    value: float

CALC_KEYS = {"id", "plugin", "title", "notes", "inputs", "criteria"}


@dataclass(frozen=True, kw_only=True)
class CalcSpec:
    id: str
    plugin: str
    title: str
    notes: str
    inputs: Mapping[str, Any]  # SI values, defaults filled
    given: frozenset[str]
    criteria: Mapping[str, Any]
    criteria_given: frozenset[str]
    raw_inputs: Mapping[str, Any]
    raw_criteria: Mapping[str, Any]
    #: the data files its "file" inputs name, by input name (read once, at load time)
    files: Mapping[str, DataFile] = field(default_factory=dict)
    #: the source each input or criterion names ("inputs.mass" -> "Maker's data sheet")
    sources: Mapping[str, str] = field(default_factory=dict)
    #: the inputs given with a range or a tolerance, by name (the nominal is in ``inputs``)
    spreads: Mapping[str, Spread] = field(default_factory=dict)
    #: excitation orders of the running speed, (order, label); () when none are listed
    orders: tuple[tuple[float, str], ...] = ()
    #: the criteria library of the job's build (the same object for every calc)
    criteria_library: CriteriaLibrary = field(default_factory=CriteriaLibrary,
                                              compare=False, repr=False)


@dataclass(frozen=True, kw_only=True)
class JobAttachment:
    """A file from the job's folder that the package embeds (read once, at load time)."""

    path: str  # as written in the job, relative to the job folder, '/' separated
    name: str  # the embedded name: the file's base name
    data: bytes


@dataclass(frozen=True, kw_only=True)
class Job:
    path: Path
    source: bytes
    info: PackageInfo
    revision_history: tuple[RevisionEntry, ...]
    calcs: tuple[CalcSpec, ...]
    template_dir: Path | None = None
    previous_package: Path | None = None
    raw: Mapping[str, Any] = field(default_factory=dict)
    attachments: tuple[JobAttachment, ...] = ()
    schedule: tuple[ScheduleItem, ...] = ()  # the rows of an equipment schedule
    schedule_source: str = ""
    criteria_library: CriteriaLibrary = field(default_factory=CriteriaLibrary,
                                              compare=False, repr=False)
    deviations: tuple[Deviation, ...] = ()

    @property
    def stem(self) -> str:
        return f"{self.info.calc_number}-{self.info.revision}"

    @property
    def folder(self) -> Path:
        return self.path.parent


#: Text fields that name things (files, the title block, cross-references): one line, no
#: space at either end. Free-text fields that may run over several lines.
NAME_FIELDS = frozenset({"calc_number", "revision", "job_number", "id"})
MULTILINE_FIELDS = frozenset({"notes", "description"})
#: Embedding, override and isolate controls make text display in an order other than the
#: one stored (a title could read differently from its content); the renderer orders
#: right-to-left scripts itself, so a job never needs them.
_BIDI_CONTROLS = frozenset(range(0x202A, 0x202F)) | frozenset(range(0x2066, 0x206A))


def text_problem(value: str, key: str) -> str | None:
    """Why ``value`` cannot be the text of field ``key``, or None: the one rule for every
    text in a job. Control characters (C0, DEL, C1), noncharacters, lone surrogates and
    bidi controls are refused, as XMP metadata and an archival record cannot carry them
    faithfully; free-text fields may hold line breaks and tabs; names may not start or
    end with white space (it would end up in file names and cross-references)."""
    multiline = key in MULTILINE_FIELDS
    for i, ch in enumerate(value):
        c = ord(ch)
        if ch in "\n\t\r" and multiline:
            continue
        what = None
        if c < 0x20 or 0x7F <= c <= 0x9F:
            what = ("a line break (this field is one line)" if ch in "\n\r"
                    else f"the control character U+{c:04X}")
        elif 0xD800 <= c <= 0xDFFF:
            what = f"a lone surrogate U+{c:04X}"
        elif 0xFDD0 <= c <= 0xFDEF or (c & 0xFFFE) == 0xFFFE:
            what = f"the noncharacter U+{c:04X}"
        elif c in _BIDI_CONTROLS:
            what = (f"the bidirectional control U+{c:04X}, which makes text display in an"
                    " order other than the one written")
        if what:
            return f"text contains {what} at character {i + 1}; remove it"
    if key in NAME_FIELDS and value != value.strip():
        return (f"{value!r} starts or ends with white space or a line break; a name must not"
                " (it names files and cross-references)")
    return None
def file_stem(calc_number: object, revision: object) -> str | None:
    """``<calc_number>-<revision>``, the package's file stem, or None if either cannot
    name a file. One stem per pair: a revision has no '-', so a stem splits back into its
    calc number and revision at its last '-'."""
    if not (isinstance(calc_number, str) and isinstance(revision, str)):
        return None
    if not (_SAFE_NAME.fullmatch(calc_number) and _SAFE_NAME.fullmatch(revision)):
        return None
    return None if "-" in revision else f"{calc_number}-{revision}"


def read_job_bytes(path: Path) -> bytes:
    try:
        st = path.stat()
    except OSError as exc:
        raise JobError(Problem(str(path), f"cannot read the job file: {exc.strerror}")) from None
    if not stat.S_ISREG(st.st_mode):
        # a device or pipe (/dev/zero) reports size 0 and never ends
        raise JobError(Problem(str(path), "not a regular file; a job file is a TOML text file"))
    if st.st_size > MAX_JOB_BYTES:
        raise JobError(Problem(str(path), f"job file is {st.st_size} bytes; the limit is"
                                          f" {MAX_JOB_BYTES} bytes"))
    try:
        with path.open("rb") as fh:
            data = fh.read(MAX_JOB_BYTES + 1)  # bounded even if the file grows meanwhile
    except OSError as exc:
        raise JobError(Problem(str(path), f"cannot read the job file: {exc.strerror}")) from None
    if len(data) > MAX_JOB_BYTES:
        raise JobError(Problem(str(path), f"job file is over the limit of {MAX_JOB_BYTES}"
                                          " bytes"))
    return data



def parse_job_toml(fname: str, data_bytes: bytes) -> dict[str, Any]:
    """The job file's TOML as a dict, or JobError naming what is wrong with the text
    (not UTF-8, empty, a syntax error, nesting too deep). Every reader of a job file
    goes through here, so none can fail on text the validator refuses."""
    try:
        text = data_bytes.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = data_bytes.count(b"\n", 0, exc.start) + 1
        col = exc.start - (data_bytes.rfind(b"\n", 0, exc.start) + 1) + 1
        raise JobError(Problem(fname, f"job file is not UTF-8 text: byte"
                                      f" 0x{data_bytes[exc.start]:02x} at line {line}, column"
                                      f" {col} (save the file as UTF-8)")) from None
    if not text.strip():
        raise JobError(Problem(fname, "the job file is empty; it needs a [package] table and"
                                      " at least one [[calc]] table", field="package"))
    try:
        raw = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise JobError(_syntax_problem(fname, text, exc)) from None
    except RecursionError:  # the parser recurses once per level of nesting
        raise JobError(_deep_problem(fname, text)) from None
    too_deep = _too_deep(raw)
    if too_deep is not None:
        calc, fld = too_deep
        raise JobError(Problem(fname, _TOO_DEEP, calc, fld))
    return raw


def load_job(path: Path | str, plugins: PluginSet, *, source: bytes | None = None,
             archived: bool = False, template_dir: Path | None = None) -> Job:
    """Read, parse and validate a job file. Raises JobError with every problem.

    ``archived``: the job came out of a package to be recomputed; the previous package
    and the template folder it names need not exist (neither changes a result).
    ``template_dir`` (``--template-dir``) overrides the job's own: the firm's criteria
    files are read from it.
    """
    path = Path(path)
    fname = str(path)
    data_bytes = read_job_bytes(path) if source is None else source
    raw = parse_job_toml(fname, data_bytes)
    problems: list[Problem] = []
    v = _Validator(fname, problems, archived=archived, folder=path.parent)
    for key in raw:
        if key not in ("package", "calc", "schedule"):
            v.add(f"unknown top-level table '{key}'"
                  f"{nearest_hint(key, ['package', 'calc', 'schedule'])};"
                  " expected [package], [[calc]] and an optional [schedule]", field=key)
    pkg = raw.get("package")
    if not isinstance(pkg, dict):
        v.add("missing [package] table (title, job_number, calc_number, revision ...)",
              field="package")
        pkg = {}
    info, history, job_template, previous = v.package(pkg, path)
    template_dir = template_dir or job_template
    if archived and template_dir is None and (path.parent / FIRM_CRITERIA_FOLDER).is_dir():
        template_dir = path.parent  # the firm's criteria files the package embedded
    v.library = load_criteria(plugins, template_dir)
    attachments = v.attachments(pkg, path)
    calcs_raw = raw.get("calc", [])
    if not isinstance(calcs_raw, list) or not all(isinstance(c, dict) for c in calcs_raw):
        v.add("'calc' must be an array of tables: write each calc as [[calc]]", field="calc")
        calcs_raw = []
    schedule = None
    if "schedule" in raw:
        schedule = _schedule(raw["schedule"], path, plugins, problems)
    if (not calcs_raw and schedule is None and "schedule" not in raw
            and isinstance(raw.get("calc", []), list)):  # absent, or calc = []
        v.add("the job has no [[calc]] tables; a package needs at least one calc",
              field="calc")
    if len(calcs_raw) > MAX_CALCS:
        v.add(f"the job has {len(calcs_raw)} calcs; the limit is {MAX_CALCS}", field="calc")
        calcs_raw = []
    calcs: list[CalcSpec] = []
    seen: dict[str, int] = {}
    for index, c in enumerate(calcs_raw):
        spec = v.calc(c, index, plugins, seen)
        if spec is not None:
            calcs.append(spec)
    if schedule is not None:
        calcs.extend(_schedule_calcs(v, schedule, plugins, seen, len(calcs_raw)))
        attachments = _with_schedule(v, attachments, schedule)
    attachments = v.with_data_files(attachments, calcs, plugins)
    deviations = v.deviations(pkg, {c.id for c in calcs})
    if problems:
        raise JobError(problems)
    assert info is not None
    return Job(path=path, source=data_bytes, info=info, revision_history=history,
               calcs=tuple(calcs), template_dir=job_template, previous_package=previous,
               raw=raw, attachments=attachments, criteria_library=v.library,
               deviations=deviations,
               schedule=schedule.items if schedule is not None else (),
               schedule_source=schedule.where() if schedule is not None else "")


def _schedule(table: Any, path: Path, plugins: PluginSet,
              problems: list[Problem]) -> Any:
    from reportgen.job.schedule import read_schedule

    if not isinstance(table, dict):
        problems.append(Problem(str(path), "expected a table [schedule] with the file of"
                                " the equipment schedule", field="schedule"))
        return None
    return read_schedule(table, path.parent, str(path), plugins, problems)


def _schedule_calcs(v: _Validator, schedule: Any, plugins: PluginSet,
                    seen: dict[str, int], first: int) -> list[CalcSpec]:
    """Each row's calc, checked by the one validator; a problem with a value the row
    gave is reported at the row's cell of the schedule."""
    out = []
    for index, c in enumerate(schedule.calcs):
        before = len(v.problems)
        spec = v.calc(c, first + index, plugins, seen)
        for k in range(before, len(v.problems)):
            pr = v.problems[k]
            cell = schedule.cells.get((pr.calc, pr.field))
            if cell is not None or pr.field == "id":  # a value, or the tag, of the row
                where = schedule.where(cell or schedule.tag_cell(pr.calc))
                v.problems[k] = Problem(where, pr.message, calc=pr.calc, field=pr.field)
        if spec is not None:
            out.append(spec)
    return out


def _with_schedule(v: _Validator, attachments: tuple[JobAttachment, ...],
                   schedule: Any) -> tuple[JobAttachment, ...]:
    """The schedule file embedded beside the job, as a data file is."""
    base = schedule.path.replace("\\", "/").rsplit("/", 1)[-1]
    for a in attachments:
        if a.path == schedule.path:
            return attachments
        if a.name == base or base in RESERVED_NAMES:
            v.add(f"the schedule {schedule.path!r} would be embedded as '{base}', which"
                  f" {a.path!r} already uses; rename one", field="schedule.file")
            return attachments
    return (*attachments, JobAttachment(path=schedule.path, name=base, data=schedule.data))


def job_files(targets: list[Path]) -> list[Path]:
    """The job files named: each file as given, each folder's ``*.toml`` in name order."""
    out: list[Path] = []
    for t in targets:
        if t.is_dir():
            out.extend(sorted(p for p in t.glob("*.toml") if p.is_file()))
        elif t.exists():
            out.append(t)
        else:
            raise JobError(Problem(str(t), "no such file or folder"))
    if not out:
        raise JobError(Problem(", ".join(map(str, targets)), "no *.toml job files found"))
    return out


def _too_deep(raw: Mapping[str, Any]) -> tuple[str, str] | None:
    """(calc, field) of the first value nested deeper than MAX_DEPTH, else None.

    Iterative, so it cannot itself overflow; every later walk of the job's values (the
    messages' repr, hashing, JSON) is recursive and stays safe below the limit.
    """
    stack: list[tuple[Any, tuple[str, ...], int]] = [(raw, (), 0)]
    while stack:
        value, path, depth = stack.pop()
        if depth > MAX_DEPTH:
            return _depth_where(path)
        if isinstance(value, dict):
            stack.extend((v, (*path, str(k)), depth + 1) for k, v in value.items())
        elif isinstance(value, list):
            stack.extend((v, (*path, f"[{i}]"), depth + 1) for i, v in enumerate(value))
    return None


def _depth_where(path: tuple[str, ...]) -> tuple[str, str]:
    """Name a too-deep value as other messages do: calc '#2', field 'inputs.mass'."""
    calc = ""
    if len(path) >= 2 and path[0] == "calc" and path[1].startswith("["):
        calc, path = f"#{int(path[1][1:-1]) + 1}", path[2:]
    keys: list[str] = []
    for part in path:  # the table keys down to the first array index
        if part.startswith("["):
            break
        keys.append(part)
    return calc, ".".join(keys[:2])  # the job's own field, not the keys inside the value


_TOO_DEEP = f"values are nested too deeply (the limit is {MAX_DEPTH} levels of arrays and tables)"


def _deep_problem(fname: str, text: str) -> Problem:
    """The parser gave up on nesting: name the first line that opens too many levels."""
    for lineno, line in enumerate(text.splitlines(), start=1):
        if line.count("[") + line.count("{") > MAX_DEPTH:
            where = _syntax_problem(fname, text, ValueError(f"(at line {lineno}, column 1)"))
            return Problem(fname, f"{_TOO_DEEP} (line {lineno})", where.calc, where.field)
    return Problem(fname, _TOO_DEEP)


_AT = re.compile(r"\(at line (\d+), column (\d+)\)")
_HEADER = re.compile(r"^\s*(\[\[?)\s*([A-Za-z0-9_.\-\s\"]+?)\s*\]\]?")
_KEY = re.compile(r"^\s*([A-Za-z0-9_\-]+)\s*(?:=|\s|$)")
_CALC_ID = re.compile(r"^\s*id\s*=\s*[\"']([^\"']*)[\"']")


def _syntax_problem(fname: str, text: str, exc: Exception) -> Problem:
    """A TOML syntax error with its line and column, and (best effort) the calc and field."""
    message = str(exc)
    lines = text.splitlines()
    at = _AT.search(message)
    lineno = int(at.group(1)) if at else _duplicate_key_line(lines)
    if at is None and lineno:
        message = message.replace("(at end of document)", "").strip()
        message += f" (at line {lineno})"
    if message.startswith("Cannot overwrite a value"):
        message += ": a key is given twice in the same table"
    calc, field = "", ""
    if lineno:
        table, block_start = "", None
        for i, line in enumerate(lines[:lineno]):
            h = _HEADER.match(line)
            if h:
                table = h.group(2).replace(" ", "")
                if h.group(1) == "[[" and table == "calc":
                    block_start = i
        if block_start is not None and table.split(".")[0] == "calc":
            for line in lines[block_start + 1:]:
                h = _HEADER.match(line)
                if h and h.group(1) == "[[":
                    break
                m = _CALC_ID.match(line)
                if m:
                    calc = m.group(1)
                    break
            calc = calc or "?"
        bad = lines[lineno - 1] if lineno <= len(lines) else ""
        if bad.lstrip().startswith("["):  # the table header itself is broken
            table, key = bad.strip().strip("[]").replace(" ", ""), ""
        else:
            k = _KEY.match(bad)
            key = k.group(1) if k else ""
        # fields are named as in other messages: "inputs.mass", "package.title"
        scope = table.split(".", 1)[1] if table.startswith("calc.") else (
            "" if table == "calc" else table)
        field = ".".join(part for part in (scope, key) if part) or table
    return Problem(fname, f"TOML syntax error: {message}", calc, field)


def _duplicate_key_line(lines: list[str]) -> int:
    """Line of the first key given twice in one table (tomllib does not say where)."""
    seen: set[tuple[str, str]] = set()
    table, array = "", -1
    for i, line in enumerate(lines):
        h = _HEADER.match(line)
        if h:
            # sub-tables of each [[calc]] are separate tables: key them by their array entry
            array = i if h.group(1) == "[[" else array
            table = f"{h.group(2).strip()}#{array}"
            continue
        k = _KEY.match(line)
        if k:
            if (table, k.group(1)) in seen:
                return i + 1
            seen.add((table, k.group(1)))
    return 0


class _Validator:
    def __init__(self, fname: str, problems: list[Problem], archived: bool = False,
                 folder: Path | None = None):
        self.fname = fname
        self.problems = problems
        self.archived = archived
        self.folder = folder
        self._files: dict[str, DataFile] = {}  # the calc being read's data files
        self._sources: dict[str, str] = {}  # "inputs.mass" -> the source it names
        self._spreads: dict[str, Spread] = {}  # input -> its range or tolerance
        self.template_dir: Path | None = None  # a firm's folder: data files not beside the job
        self.library = CriteriaLibrary()

    def add(self, message: str, *, calc: str = "", field: str = "") -> None:
        self.problems.append(Problem(self.fname, message, calc, field))

    # ------------------------------------------------------------ package

    def _text(self, table: Mapping[str, Any], key: str, where: str, required: bool,
              calc: str = "") -> str:
        value = table.get(key, "")
        if key not in table and required:
            self.add(f"required field '{key}' is missing", calc=calc, field=f"{where}{key}")
            return ""
        if isinstance(value, (_dt.date, _dt.datetime)):
            value = value.isoformat()
        if not isinstance(value, str):
            self.add(f"expected text, found {type(value).__name__} {_short(value)}", calc=calc,
                     field=f"{where}{key}")
            return ""
        if len(value) > MAX_TEXT:
            self.add(f"text is {len(value)} characters; the limit is {MAX_TEXT}", calc=calc,
                     field=f"{where}{key}")
            return ""
        bad = text_problem(value, key)
        if bad:
            self.add(bad, calc=calc, field=f"{where}{key}")
            return ""
        if required and not value.strip():
            self.add(f"required field '{key}' is empty", calc=calc, field=f"{where}{key}")
        return value

    def _date(self, table: Mapping[str, Any], key: str, where: str) -> str:
        if key not in table:
            return ""
        value = table[key]
        if value == "":
            self.add("the date is empty: give an ISO date such as \"2026-12-01\", or leave"
                     " the field out", field=f"{where}{key}")
            return ""
        if isinstance(value, _dt.datetime):
            value = value.date()
        if isinstance(value, _dt.date):
            return value.isoformat()
        if isinstance(value, str) and _DATE.fullmatch(value):
            # only YYYY-MM-DD: fromisoformat alone also takes 20261201 and 2026-W49-2
            try:
                return _dt.date.fromisoformat(value).isoformat()
            except ValueError:
                pass
        self.add(f"expected an ISO date such as \"2026-12-01\", found {_short(value)}",
                 field=f"{where}{key}")
        return ""

    def package(self, pkg: Mapping[str, Any], path: Path):
        for key in pkg:
            if key not in PACKAGE_KEYS:
                self.add(f"unknown field '{key}'{nearest_hint(key, list(PACKAGE_KEYS))}",
                         field=f"package.{key}")
        t = {k: self._text(pkg, k, "package.", req) for k, req in PACKAGE_KEYS.items()
             if PACKAGE_KINDS[k] in ("text", "name")}
        for key in ("calc_number", "revision"):
            if t[key] and not _SAFE_NAME.match(t[key]):
                self.add(f"'{t[key]}' cannot name a file: use letters, digits, '.', '_' or"
                         " '-' (at most 64)", field=f"package.{key}")
        if t["revision"] and "-" in t["revision"]:  # keeps file names one per package
            self.add(f"'{t['revision']}' has a '-': a revision is letters, digits, '.' or"
                     " '_' (such as A, P1, C02), so that calc number and revision make"
                     " one file name each", field="package.revision")
        date = self._date(pkg, "date", "package.")
        if "date" not in pkg:
            self.add("required field 'date' is missing: the ISO date of this revision",
                     field="package.date")
        dates = {k: self._date(pkg, k, "package.")
                 for k in ("prepared_date", "checked_date", "approved_date")}
        units = pkg.get("units", "SI")
        if units not in UNIT_SYSTEMS:
            self.add(f"expected \"SI\" or \"US\", found {units!r}", field="package.units")
            units = "SI"
        history: list[RevisionEntry] = []
        hist_raw = pkg.get("revision_history", [])
        if not isinstance(hist_raw, list):
            self.add("expected an array of tables [[package.revision_history]]",
                     field="package.revision_history")
            hist_raw = []
        for i, h in enumerate(hist_raw):
            where = f"package.revision_history[{i}]."
            if not isinstance(h, dict):
                self.add("expected a table with revision, date and description",
                         field=where.rstrip("."))
                continue
            for key in h:
                if key not in HISTORY_KEYS:
                    self.add(f"unknown field '{key}'{nearest_hint(key, list(HISTORY_KEYS))}",
                             field=where + key)
            history.append(RevisionEntry(
                revision=self._text(h, "revision", where, True),
                date=self._date(h, "date", where),
                description=self._text(h, "description", where, True),
                by=self._text(h, "by", where, False)))
        if t["revision"] and history and t["revision"] not in {h.revision for h in history}:
            self.add(f"the revision history has no entry for the current revision"
                     f" '{t['revision']}'", field="package.revision_history")
        if not history and t["revision"]:
            history.append(RevisionEntry(revision=t["revision"], date=date,
                                         description="Issue"))
        template_dir = None if self.archived else self._folder(pkg, "template_dir", path)
        self.template_dir = template_dir
        previous = None
        if pkg.get("previous_package") and not self.archived:
            p = pkg["previous_package"]
            if not isinstance(p, str):
                self.add("expected a path to the previous revision's PDF",
                         field="package.previous_package")
            else:
                previous = self._named(path, p, "package.previous_package", "file",
                                       "previous package")
        info = PackageInfo(
            title=t["title"], job_number=t["job_number"], calc_number=t["calc_number"],
            revision=t["revision"], date=date, client=t["client"], project=t["project"],
            units=units, prepared_by=t["prepared_by"], checked_by=t["checked_by"],
            approved_by=t["approved_by"], firm=t["firm"], **dates)
        return info, tuple(history), template_dir, previous

    def deviations(self, pkg: Mapping[str, Any], calc_ids: set[str]) -> tuple[Deviation, ...]:
        """[[package.deviations]]: each names a calc of this job and says why its failing
        check is accepted (the check id is checked once the calc has run)."""
        raw = pkg.get("deviations", [])
        if not isinstance(raw, list):
            self.add("expected an array of tables [[package.deviations]]",
                     field="package.deviations")
            return ()
        out: list[Deviation] = []
        seen: set[tuple[str, str]] = set()
        for i, d in enumerate(raw):
            where = f"package.deviations[{i}]."
            if not isinstance(d, dict):
                self.add("expected a table with calc, check, justification, accepted_by"
                         " and date", field=where.rstrip("."))
                continue
            for key in d:
                if key not in DEVIATION_KEYS:
                    self.add(f"unknown field '{key}'{nearest_hint(key, list(DEVIATION_KEYS))}",
                             field=where + key)
            t = {k: self._text(d, k, where, req) for k, req in DEVIATION_KEYS.items()
                 if k != "date"}
            if t["calc"] and t["calc"] not in calc_ids:
                self.add(f"no calc with id '{t['calc']}' in this job"
                         f"{nearest_hint(t['calc'], sorted(calc_ids))}", field=where + "calc")
            if (t["calc"], t["check"]) in seen:
                self.add(f"a second deviation for {t['calc']}/{t['check']}",
                         field=where + "check")
            seen.add((t["calc"], t["check"]))
            out.append(Deviation(calc=t["calc"], check=t["check"],
                                 justification=t["justification"],
                                 accepted_by=t["accepted_by"],
                                 date=self._date(d, "date", where)))
        return tuple(out)

    def attachments(self, pkg: Mapping[str, Any], path: Path) -> tuple[JobAttachment, ...]:
        """Files listed in ``[package] attachments``: regular files inside the job folder."""
        listed = pkg.get("attachments", [])
        fld = "package.attachments"
        if not isinstance(listed, list) or not all(isinstance(a, str) for a in listed):
            self.add('expected a list of file names beside the job file, such as'
                     ' ["survey.csv"]', field=fld)
            return ()
        if len(listed) > MAX_ATTACHMENTS:
            self.add(f"{len(listed)} attachments; the limit is {MAX_ATTACHMENTS}", field=fld)
            return ()
        out: list[JobAttachment] = []
        names: dict[str, str] = {}
        total = 0
        for i, rel in enumerate(listed):
            where = f"{fld}[{i}]"
            try:
                data = read_job_file(path.parent, rel, where, limit=MAX_ATTACHMENT_BYTES,
                                     file=self.fname, what="attachment")
            except JobError as exc:
                self.problems.extend(exc.problems)
                continue
            parts = path_parts(rel)
            name = parts[-1]
            if name in RESERVED_NAMES or name in names:
                other = "the package's own file" if name in RESERVED_NAMES else repr(names[name])
                self.add(f"{rel!r} would be embedded as '{name}', which {other} already uses;"
                         " rename the file", field=where)
                continue
            total += len(data)
            if total > MAX_ATTACHMENTS_TOTAL:
                self.add(f"attachments total more than {MAX_ATTACHMENTS_TOTAL} bytes",
                         field=where)
                break
            names[name] = rel
            out.append(JobAttachment(path="/".join(parts), name=name, data=data))
        return tuple(out)

    def _named(self, path: Path, text: str, field: str, kind: Kind,
               what: str = "") -> Path | None:
        """``text`` by the one safe-path rule (reportgen.job.paths); None and a problem if not."""
        try:
            return job_relative_path(path.parent, text, field, kind=kind, file=self.fname,
                                     what=what)
        except JobError as exc:
            self.problems.extend(exc.problems)
            return None

    def _folder(self, pkg: Mapping[str, Any], key: str, path: Path) -> Path | None:
        value = pkg.get(key)
        if value is None:
            return None
        if not isinstance(value, str) or not value.strip():
            self.add("expected a folder path relative to the job file", field=f"package.{key}")
            return None
        return self._named(path, value, f"package.{key}", "folder")

    # ------------------------------------------------------------ calcs

    def calc(self, c: Mapping[str, Any], index: int, plugins: PluginSet,
             seen: dict[str, int]) -> CalcSpec | None:
        cid = c.get("id")
        label = (cid if isinstance(cid, str) and cid and text_problem(cid, "id") is None
                 else f"#{index + 1}")
        before = len(self.problems)
        for key in c:
            if key not in CALC_KEYS:
                self.add(f"unknown field '{key}'{nearest_hint(key, sorted(CALC_KEYS))}",
                         calc=label, field=key)
        if cid is not None and not isinstance(cid, str):
            self.add(f"expected text such as \"pump-p1\", found {type(cid).__name__}"
                     f" {_short(cid)}", calc=label, field="id")
        elif not cid:
            self.add("required field 'id' is missing", calc=label, field="id")
        elif text_problem(cid, "id"):
            self.add(str(text_problem(cid, "id")), calc=label, field="id")
        elif not _ID.fullmatch(cid) or len(cid) > MAX_ID:
            self.add(f"id {cid!r} must be lowercase letters, digits and single '-'"
                     " (at most 64)", calc=label, field="id")
        elif cid in seen:
            self.add(f"duplicate calc id '{cid}' (calc #{seen[cid] + 1} has it too)",
                     calc=label, field="id")
        else:
            seen[cid] = index
        title = self._text(c, "title", "", True, calc=label)
        notes = self._text(c, "notes", "", False, calc=label)
        plugin = c.get("plugin")
        reg = None
        if plugin is not None and not isinstance(plugin, str):
            self.add(f"expected the name of a calc type, found {type(plugin).__name__}"
                     f" {_short(plugin)}; known calc types: " + ", ".join(plugins.names()),
                     calc=label, field="plugin")
        elif not plugin:
            self.add("required field 'plugin' is missing; known calc types: "
                     + ", ".join(plugins.names()), calc=label, field="plugin")
        elif text_problem(plugin, "plugin"):
            self.add(str(text_problem(plugin, "plugin")), calc=label, field="plugin")
        else:
            reg = plugins.get(plugin)
            if reg is None:
                broken = [b for b in plugins.broken
                          if b.plugin == plugin or plugin in b.calc_types]
                extra = f"; that plugin failed to load: {broken[0].error}" if broken else ""
                self.add(f"unknown calc type '{plugin}'{nearest_hint(plugin, plugins.names())};"
                         f" known calc types: {', '.join(plugins.names()) or 'none'}{extra}",
                         calc=label, field="plugin")
        inputs_raw = c.get("inputs", {})
        criteria_raw = c.get("criteria", {})
        for key, val in (("inputs", inputs_raw), ("criteria", criteria_raw)):
            if not isinstance(val, dict):
                self.add(f"expected a table [calc.{key}]", calc=label, field=key)
        if not isinstance(inputs_raw, dict):
            inputs_raw = {}
        if not isinstance(criteria_raw, dict):
            criteria_raw = {}
        if reg is None:
            return None
        ct = reg.calc_type
        self._files = {}
        self._sources = {}
        self._spreads = {}
        orders: tuple[tuple[float, str], ...] = ()
        if "orders" in inputs_raw and has_running_speed(ct.inputs):
            orders, bad = parse_orders(inputs_raw["orders"])
            for fld, msg in bad:
                self.add(msg, calc=label, field=f"inputs.{fld}")
            speed = speed_input(ct.inputs)
            if speed not in inputs_raw:
                self.add(f"orders multiply the running speed: give {speed} (for example"
                         " \"1480 rpm\")", calc=label, field="inputs.orders")
            inputs_raw = {k: v for k, v in inputs_raw.items() if k != "orders"}
        inputs, given = self._values(inputs_raw, ct.inputs, label, "inputs")
        criteria, cgiven = self._values(criteria_raw, ct.criteria, label, "criteria")
        if len(self.problems) == before:
            try:
                cross = list(ct.validate(inputs, given, criteria))
            except Exception as exc:
                from reportgen.errors import PluginError

                raise PluginError(f"validate raised {type(exc).__name__}: {exc}",
                                  plugin=reg.plugin, package=reg.package, calc=label,
                                  stage="validate") from exc
            for fld, msg in cross:
                self.add(msg, calc=label, field=fld)
        if len(self.problems) == before and (self._spreads or orders):
            kinds = [sp.kind for sp in self._spreads.values()]
            points = envelope_points(kinds.count("range"), kinds.count("tolerance"),
                                     len(orders))
            if points > MAX_ENVELOPE_POINTS:
                self.add(f"the operating envelope would take {points} evaluations (at most"
                         f" {MAX_ENVELOPE_POINTS}): give fewer ranges, tolerances or orders",
                         calc=label, field="inputs")
        if len(self.problems) != before:
            return None
        assert isinstance(cid, str) and isinstance(plugin, str)  # no problems were added
        return CalcSpec(id=cid, plugin=plugin, title=title, notes=notes, inputs=inputs,
                        given=given, criteria=criteria, criteria_given=cgiven,
                        raw_inputs=dict(inputs_raw), raw_criteria=dict(criteria_raw),
                        files=dict(self._files), sources=dict(self._sources),
                        spreads=dict(self._spreads), orders=orders,
                        criteria_library=self.library)

    def _values(self, raw: Mapping[str, Any], specs: tuple[InputSpec, ...], calc: str,
                table: str) -> tuple[dict[str, Any], frozenset[str]]:
        by_name = {s.name: s for s in specs}
        out: dict[str, Any] = {}
        for key in raw:
            if key not in by_name:
                known = ", ".join(sorted(by_name)) or "none"
                self.add(f"unknown {table[:-1] if table == 'inputs' else 'criterion'}"
                         f" '{key}'{nearest_hint(key, list(by_name))}; this calc type accepts:"
                         f" {known}", calc=calc, field=f"{table}.{key}")
        for spec in specs:
            fld = f"{table}.{spec.name}"
            if spec.name not in raw:
                if spec.default is not None:
                    out[spec.name] = spec.default
                elif spec.required:
                    self.add(f"required {table[:-1] if table == 'inputs' else 'criterion'}"
                             f" '{spec.name}' ({spec.description}, {_example(spec)}) is missing",
                             calc=calc, field=fld)
                continue
            written = self._unwrap(raw[spec.name], spec, calc, fld, table)
            if written is _REFUSED:
                continue
            value = self._one(written, spec, calc, fld)
            if value is not None:
                out[spec.name] = value
        return out, frozenset(k for k in raw if k in by_name)

    def _unwrap(self, raw: Any, spec: InputSpec, calc: str, fld: str, table: str) -> Any:
        """An input written as ``{ value = ..., source = ..., tolerance = ... }`` gives its
        value; its source and spread (a range or a tolerance) are recorded. A plain value
        is its own value; a quantity may carry a range ("900 to 1800 rpm") or a tolerance
        ("350 kN/m ± 15 %") in its text."""
        source = tolerance = None
        if isinstance(raw, dict) and spec.kind != "table":
            for key in raw:
                if key not in WRAPPER_KEYS:
                    self.add(f"expected a value, or a table of value, source and tolerance;"
                             f" found dict with unknown key '{key}'"
                             f"{nearest_hint(key, list(WRAPPER_KEYS))}", calc=calc, field=fld)
                    return _REFUSED
            if "value" not in raw:
                self.add("the value table needs 'value' (and may give 'source' and"
                         " 'tolerance')", calc=calc, field=f"{fld}.value")
                return _REFUSED
            source, tolerance = raw.get("source"), raw.get("tolerance")
            if source is not None:
                problem = (text_problem(source, "source") if isinstance(source, str)
                           else "expected text naming the document the value comes from")
                if problem or not str(source).strip():
                    self.add(str(problem or "the source is empty"), calc=calc,
                             field=f"{fld}.source")
                    return _REFUSED
                self._sources[f"{table}.{spec.name}"] = source
            raw = raw["value"]
        spread_allowed = spec.kind == "quantity" and table == "inputs" and spec.rangeable
        if spec.kind == "quantity":
            try:
                spread = parse_spread(raw, spec.dimension, tolerance)
            except UnitProblem as exc:
                self.add(str(exc), calc=calc, field=fld if tolerance is None
                         else f"{fld}.tolerance")
                return _REFUSED
            if spread is not None:
                if not spread_allowed:
                    what = ("a criterion" if table == "criteria" else
                            f"input '{spec.name}' of this calc type")
                    self.add(f"{what} takes one value, not a range or a tolerance",
                             calc=calc, field=fld)
                    return _REFUSED
                try:
                    for end in (spread.low, spread.high):
                        self._range(end, spec)
                except UnitProblem as exc:
                    self.add(f"the {spread.kind} {spread.text!r} leaves the accepted values:"
                             f" {exc}", calc=calc, field=fld)
                    return _REFUSED
                self._spreads[spec.name] = spread
                return _Parsed(spread.nominal)
        elif tolerance is not None:
            self.add(f"a tolerance applies to a quantity, not to {spec.kind} input"
                     f" '{spec.name}'", calc=calc, field=f"{fld}.tolerance")
            return _REFUSED
        return raw

    def _one(self, raw: Any, spec: InputSpec, calc: str, fld: str) -> Any:
        if isinstance(raw, _Parsed):  # the nominal of a range or a tolerance, checked
            return raw.value
        if spec.kind == "table":
            return self._table(raw, spec, calc, fld)
        if spec.kind == "file":
            return self._file(raw, spec, calc, fld)
        if spec.kind == "criterion":
            return self._criterion(raw, spec, calc, fld)
        try:
            if spec.kind in ("choice", "text"):
                return _text_value(raw, spec)
            if spec.kind == "texts":
                return _texts_value(raw, spec)
            if spec.kind == "integer":
                if isinstance(raw, bool) or not isinstance(raw, int):
                    raise UnitProblem(f"expected a whole number, found {raw!r}")
                value: Any = int(raw)
                self._range(float(value), spec)
                return value
            if spec.kind == "pair":
                if not isinstance(raw, list) or len(raw) != 2:
                    raise UnitProblem(f"expected a list of two values such as"
                                      f" [\"{_example(spec, 1)}\", \"{_example(spec, 2)}\"],"
                                      f" found {raw!r}")
                pair = tuple(parse_quantity(r, spec.dimension) for r in raw)
                for p in pair:
                    self._range(p, spec)
                if not pair[0] < pair[1]:
                    raise UnitProblem("the first value must be smaller than the second")
                return pair
            if spec.kind == "points":
                if not isinstance(raw, list) or not raw or len(raw) > 1000 or not all(
                        isinstance(p, list) and len(p) == 2 for p in raw):
                    raise UnitProblem(f"expected a list of [x, y] pairs such as"
                                      f" [[\"0 m\", \"0 m\"], [\"1.2 m\", \"0 m\"]], found"
                                      f" {_short(raw)}")
                return tuple(tuple(parse_quantity(v, spec.dimension) for v in p) for p in raw)
            if isinstance(raw, str) and text_problem(raw, "quantity"):
                raise UnitProblem(str(text_problem(raw, "quantity")))
            value = parse_quantity(raw, spec.dimension)
            self._range(value, spec)
            return value
        except UnitProblem as exc:
            self.add(str(exc), calc=calc, field=fld)
            return None

    def _table(self, raw: Any, spec: InputSpec, calc: str, fld: str) -> Any:
        """An array of tables, one per row, each cell read as its column declares; every
        problem names the row (from 1) and the column."""
        if not isinstance(raw, list) or not all(isinstance(r, dict) for r in raw):
            self.add(f"expected an array of tables, one per row ([[calc.inputs.{spec.name}]]"
                     f" with {', '.join(c.name for c in spec.columns)})", calc=calc, field=fld)
            return None
        if not spec.min_rows <= len(raw) <= spec.max_rows:
            self.add(f"{len(raw)} rows; give from {spec.min_rows} to {spec.max_rows}",
                     calc=calc, field=fld)
            return None
        by_name = {c.name: c for c in spec.columns}
        rows: list[dict[str, Any]] = []
        before = len(self.problems)
        for i, row in enumerate(raw, start=1):
            where = f"{fld}[{i}]"
            for key in row:
                if key not in by_name:
                    self.add(f"row {i}: unknown column '{key}'{nearest_hint(key, list(by_name))};"
                             f" the columns are {', '.join(by_name)}", calc=calc,
                             field=f"{where}.{key}")
            out: dict[str, Any] = {}
            for col in spec.columns:
                cell = f"{where}.{col.name}"
                if col.name not in row:
                    if col.required:
                        self.add(f"row {i}: column '{col.name}' ({col.description}) is"
                                 " missing", calc=calc, field=cell)
                    continue
                try:
                    out[col.name] = _cell_value(row[col.name], col)
                except UnitProblem as exc:
                    self.add(f"row {i}, column '{col.name}': {exc}", calc=calc, field=cell)
            rows.append(out)
        return tuple(rows) if len(self.problems) == before else None

    def _criterion(self, raw: Any, spec: InputSpec, calc: str, fld: str) -> Any:
        """A criterion's name, checked against the library (the name as registered), or,
        where the spec has columns, the job's own curve as a table."""
        if spec.columns and isinstance(raw, list):
            return self._table(raw, spec, calc, fld)
        if not isinstance(raw, str) or not raw.strip() or text_problem(raw, spec.name):
            own = (f", or a curve of your own as an array of tables with"
                   f" {', '.join(c.name for c in spec.columns)}" if spec.columns else "")
            example = _criterion_example(spec, self.library)
            self.add(f"expected the name of a criterion such as \"{example}\"{own};"
                     " `reportgen criteria` lists them", calc=calc, field=fld)
            return None
        for problem in self.library.problems:
            self.add(f"the criteria library is incomplete: {problem}", calc=calc, field=fld)
        found = self.library.get(raw)
        if found is None:
            near = self.library.nearest(raw)
            hint = (f"; did you mean {' or '.join(repr(n) for n in near)}?" if near
                    else "; `reportgen criteria` lists the known criteria")
            self.add(f"unknown criterion {raw!r}{hint}", calc=calc, field=fld)
            return None
        kind = getattr(found, "quantity", None)
        if spec.choices and kind not in spec.choices:
            fits = [n for n in self.library.names()
                    if getattr(self.library.get(n), "quantity", None) in spec.choices]
            self.add(f"criterion {found.name!r} is a criterion of {kind}; this calc takes"
                     f" criteria of {' or '.join(spec.choices)}, such as"
                     f" {', '.join(fits[:4]) or 'none installed'}", calc=calc, field=fld)
            return None
        return str(found.name)

    def _file(self, raw: Any, spec: InputSpec, calc: str, fld: str) -> DataFile | None:
        """A data file in the job's folder by the one safe-path rule, read once."""
        if not isinstance(raw, str) or not raw.strip():
            self.add("expected the path of a file in the job's folder, such as"
                     f" \"{'survey' + (spec.formats[0] if spec.formats else '.csv')}\"",
                     calc=calc, field=fld)
            return None
        suffix = PurePosixPath(raw).suffix.lower()
        if spec.formats and suffix not in spec.formats:
            self.add(f"{raw!r} is not one of the file types this input reads"
                     f" ({', '.join(spec.formats)})", calc=calc, field=fld)
            return None
        assert self.folder is not None
        try:
            data = read_job_file(self.folder, raw, fld, limit=spec.max_bytes,
                                 file=self.fname, what="data file")
        except JobError as exc:
            shared = self._template_file(raw, spec, fld)
            if shared is None:
                self.problems.extend(dataclasses.replace(p, calc=calc) for p in exc.problems)
                return None
            data = shared
        found = DataFile.of("/".join(path_parts(raw)), data)
        self._files[spec.name] = found
        return found

    def _template_file(self, raw: str, spec: InputSpec, fld: str) -> bytes | None:
        """A data file the firm keeps in its template folder (an isolator catalogue), by the
        same rule; None if there is none. The package embeds it under the same relative
        name, so ``reportgen verify`` finds it beside the unpacked job."""
        if self.template_dir is None:
            return None
        try:
            return read_job_file(self.template_dir, raw, fld, limit=spec.max_bytes,
                                 file=self.fname, what="data file")
        except JobError:
            return None

    def with_data_files(self, attachments: tuple[JobAttachment, ...], calcs: list[CalcSpec],
                        plugins: PluginSet) -> tuple[JobAttachment, ...]:
        """The attachments, and every file the calcs read (once each), embedded like them:
        the package carries what its calcs read, so it re-runs without their folders."""
        out = list(attachments)
        by_path = {a.path: a for a in out}
        names = {a.name: a.path for a in out}
        total = sum(len(a.data) for a in out)
        for calc, fld, path, data, differs in self._files_read(calcs, plugins):
            if path in by_path:
                if by_path[path].data != data:
                    self.add(differs, calc=calc, field=fld)
                continue
            base = path.rsplit("/", 1)[-1]
            if base in RESERVED_NAMES or base in names:
                other = ("the package's own file" if base in RESERVED_NAMES
                         else repr(names[base]))
                self.add(f"{path!r} would be embedded as '{base}', which {other}"
                         " already uses; rename the file", calc=calc, field=fld)
                continue
            total += len(data)
            if total > MAX_EMBEDDED_TOTAL:
                self.add(f"the data files and attachments total more than"
                         f" {MAX_EMBEDDED_TOTAL} bytes, the most a package embeds",
                         calc=calc, field=fld)
                return tuple(out)
            a = JobAttachment(path=path, name=base, data=data)
            out.append(a)
            by_path[path] = a
            names[base] = path
        return tuple(out)

    def _files_read(self, calcs: list[CalcSpec], plugins: PluginSet
                    ) -> Iterator[tuple[str, str, str, bytes, str]]:
        """(calc, field, path in the job folder, bytes, message if that path holds other
        bytes) of each file a calc reads: the data files its file inputs name, and the
        firm's file of every criterion it names that came from one, at
        FIRM_CRITERIA_FOLDER/<file> (where an archived job finds it again)."""
        for c in calcs:
            for input_name, f in c.files.items():
                yield (c.id, f"inputs.{input_name}", f.name, f.data,
                       f"{f.name!r} changed while the job was read")
            reg = plugins.calcs.get(c.plugin)
            if reg is None:
                continue
            for table, values, specs in (("inputs", c.inputs, reg.calc_type.inputs),
                                         ("criteria", c.criteria, reg.calc_type.criteria)):
                for sp in specs:
                    value = values.get(sp.name)
                    found = (origin_file(self.library.get(value)) if sp.kind == "criterion"
                             and isinstance(value, str) else None)
                    if found is not None:
                        rel = f"{FIRM_CRITERIA_FOLDER}/{found[0]}"
                        yield (c.id, f"{table}.{sp.name}", rel, found[1],
                               f"the job folder's {rel!r} differs from the firm's criteria"
                               f" file that criterion {value!r} comes from; rename one")

    @staticmethod
    def _range(value: float, spec: InputSpec | Column) -> None:
        if math.isnan(value) or math.isinf(value):
            raise UnitProblem(f"expected a finite value, found {value}")
        unit = DIMENSIONS[spec.dimension].si_label
        if spec.positive and value <= 0:
            raise UnitProblem(f"must be greater than zero, found {value:g} {unit}".rstrip())
        if spec.minimum is not None and value < spec.minimum:
            raise UnitProblem(f"must be at least {spec.minimum:g} {unit}, found"
                              f" {value:g} {unit}".replace("  ", " "))
        if spec.maximum is not None and value > spec.maximum:
            raise UnitProblem(f"must be at most {spec.maximum:g} {unit}, found"
                              f" {value:g} {unit}".replace("  ", " "))


def empty_date_allowed() -> bool:
    """Whether an empty string stands for "no date" (asked of the validator itself)."""
    problems: list[Problem] = []
    _Validator("", problems)._date({"d": ""}, "d", "")
    return not problems


def _texts_value(raw: Any, spec: InputSpec) -> tuple[str, ...]:
    if not isinstance(raw, list) or not all(isinstance(r, str) for r in raw):
        raise UnitProblem(f"expected a list of names such as [\"x\", \"y\", \"z\"], found"
                          f" {_short(raw)}")
    if not spec.min_rows <= len(raw) <= spec.max_rows:
        raise UnitProblem(f"{len(raw)} names; give from {spec.min_rows} to {spec.max_rows}")
    for r in raw:
        problem = text_problem(r, spec.name) if r.strip() else "a name is empty"
        if problem:
            raise UnitProblem(str(problem))
        if len(r) > spec.max_length:
            raise UnitProblem(f"the name {r[:20]!r}… is longer than {spec.max_length}"
                              " characters")
    if len(set(raw)) != len(raw):
        twice = next(r for r in raw if raw.count(r) > 1)
        raise UnitProblem(f"{twice!r} is named twice")
    return tuple(raw)


#: the choices of a yes/no switch, which the job may also write as true or false
YES_NO = ("yes", "no")


def _criterion_example(spec: InputSpec, library: CriteriaLibrary) -> str:
    names = library.names()
    return str(spec.default) if isinstance(spec.default, str) else (names[0] if names
                                                                    else "VC-C")


def _text_value(raw: Any, spec: InputSpec) -> str:
    if isinstance(raw, bool) and spec.kind == "choice" and spec.choices == YES_NO:
        raw = "yes" if raw else "no"  # a yes/no choice may be written as a TOML boolean
    if not isinstance(raw, str):
        raise UnitProblem(f"expected text, found {type(raw).__name__} {_short(raw)}"
                          + (f"; one of {', '.join(spec.choices)}" if spec.choices else ""))
    problem = text_problem(raw, spec.name)
    if problem:
        raise UnitProblem(str(problem))
    if spec.kind == "choice":
        if raw not in spec.choices:
            raise UnitProblem(f"{raw!r} is not one of {', '.join(spec.choices)}"
                              f"{nearest_hint(raw, list(spec.choices))}")
    elif len(raw) > spec.max_length:
        raise UnitProblem(f"text longer than {spec.max_length} characters")
    return raw


def _cell_value(raw: Any, col: Column) -> Any:
    """One table cell, read as its column declares (raises UnitProblem)."""
    if col.kind == "text":
        if not isinstance(raw, str):
            raise UnitProblem(f"expected text, found {type(raw).__name__} {_short(raw)}")
        problem = text_problem(raw, col.name)
        if problem:
            raise UnitProblem(str(problem))
        return raw
    if col.kind == "integer":
        if isinstance(raw, bool) or not isinstance(raw, int):
            raise UnitProblem(f"expected a whole number, found {raw!r}")
        _Validator._range(float(raw), col)
        return int(raw)
    if isinstance(raw, str) and text_problem(raw, "quantity"):
        raise UnitProblem(str(text_problem(raw, "quantity")))
    value = parse_quantity(raw, col.dimension)
    _Validator._range(value, col)
    return value


def _example(spec: InputSpec, n: int = 1) -> str:
    dim = DIMENSIONS[spec.dimension]
    if spec.kind == "integer":
        return "a whole number"
    if spec.kind == "criterion":
        return "the name of a criterion, which `reportgen criteria` lists"
    if dim.name == "dimensionless":
        return "a plain number"
    unit = dim.example.split()[0]
    return f"for example \"{n} {unit}\"" if n == 1 else f"{n} {unit}"


def _short(raw: Any) -> str:
    text = repr(raw)
    return text if len(text) < 80 else text[:77] + "..."
