"""Equipment schedules: a spreadsheet (.xlsx or .csv) whose rows become calcs.

``[schedule]`` names the file (and a sheet); ``[schedule.calc]`` is the calc every row
shares (plugin, a title pattern with ``{tag}`` and ``{description}``, inputs and
criteria). Each row's cells override the template's inputs and criteria by the column's
name, with a unit in brackets in the header (``mass [lb]``). This module reads the file,
checks it cell by cell and writes each row as a ``[[calc]]`` table (every value carrying
its row as its source), which the job's one validator then checks like any other; a
problem it finds in a row's value is reported at that row's cell.
"""

from __future__ import annotations

import csv
import datetime as _dt
import io
import re
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from reportgen.errors import Problem, nearest_hint
from reportgen.model import ScheduleItem

__all__ = ["RESERVED", "Schedule", "read_schedule"]

#: Columns shown in the schedule's summary, never taken as inputs.
RESERVED = ("tag", "description", "location", "mounting", "notes")
SCHEDULE_KEYS = {"file", "sheet", "calc"}
TEMPLATE_KEYS = {"plugin", "title", "notes", "inputs", "criteria"}
MAX_ROWS = 500
MAX_BYTES = 20 * 1024 * 1024
_HEADER = re.compile(r"^\s*([A-Za-z_][A-Za-z0-9_]*)\s*(?:\[\s*([^\]]*?)\s*\])?\s*$")
_NUMBER = re.compile(r"^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$")


@dataclass(frozen=True)
class Schedule:
    """The schedule as read: the file's bytes (embedded in the package), the rows as
    ``[[calc]]`` tables, and where each row's values came from (for messages)."""

    path: str  # as the job wrote it
    sheet: str  # "" for a CSV file
    data: bytes
    calcs: tuple[dict[str, Any], ...]
    items: tuple[ScheduleItem, ...]
    cells: Mapping[tuple[str, str], str]  # (calc id, "inputs.mass") -> "C14"

    def where(self, cell: str = "") -> str:
        sheet = f", sheet '{self.sheet}'" if self.sheet else ""
        return f"{self.path}{sheet}" + (f", cell {cell}" if cell else "")

    def tag_cell(self, calc_id: str) -> str:
        return self.cells.get((calc_id, "tag"), "")


def column_letter(index: int) -> str:
    """0 -> A, 25 -> Z, 26 -> AA: the spreadsheet's name of a column."""
    out = ""
    index += 1
    while index:
        index, rem = divmod(index - 1, 26)
        out = chr(65 + rem) + out
    return out


def calc_id_of(tag: str) -> str:
    """The calc id of a tag: lower case, every run of other characters one '-'."""
    return re.sub(r"[^a-z0-9]+", "-", tag.lower()).strip("-")


def read_schedule(table: Mapping[str, Any], folder: Path, job_file: str, plugins: Any,
                  problems: list[Problem]) -> Schedule | None:
    """Read ``[schedule]`` of a job in ``folder``. Problems are appended (naming the job
    file's field, or the schedule's file, sheet and cell); None when it cannot be read."""
    from reportgen.errors import JobError
    from reportgen.job.paths import read_job_file

    def bad(message: str, field: str = "") -> None:
        problems.append(Problem(job_file, message, field=field))

    before = len(problems)
    for key in table:
        if key not in SCHEDULE_KEYS:
            bad(f"unknown key '{key}' in [schedule]; expected file, sheet and [schedule.calc]",
                f"schedule.{key}")
    name = table.get("file")
    if not isinstance(name, str) or not name.strip():
        bad("the schedule needs 'file', the .xlsx or .csv file of the equipment schedule"
            " (relative to the job file)", "schedule.file")
        return None
    sheet = table.get("sheet")
    if sheet is not None and (not isinstance(sheet, str) or not sheet.strip()):
        bad("'sheet' must be the name of a sheet of the workbook", "schedule.sheet")
        return None
    template = table.get("calc")
    if not isinstance(template, dict):
        bad("the schedule needs [schedule.calc] with the plugin, a title pattern with"
            " {tag}, and the inputs every row shares", "schedule.calc")
        return None
    for key in template:
        if key not in TEMPLATE_KEYS:
            bad(f"unknown key '{key}' in [schedule.calc]; expected "
                + ", ".join(sorted(TEMPLATE_KEYS)), f"schedule.calc.{key}")
    plugin = template.get("plugin")
    reg = plugins.get(plugin) if isinstance(plugin, str) else None
    if reg is None:
        bad(f"unknown calc type {plugin!r}; known calc types: " + ", ".join(plugins.names()),
            "schedule.calc.plugin")
    title = template.get("title", "{tag}")
    if not isinstance(title, str) or "{tag}" not in title:
        bad("the title pattern must contain {tag} (for example \"{tag} {description}:"
            " vibration isolation\")", "schedule.calc.title")
    for key in ("inputs", "criteria"):
        if not isinstance(template.get(key, {}), dict):
            bad(f"expected a table [schedule.calc.{key}]", f"schedule.calc.{key}")
    suffix = Path(name).suffix.lower()
    if suffix not in (".xlsx", ".csv"):
        bad(f"the schedule must be an .xlsx or a .csv file, not {name!r}", "schedule.file")
    if len(problems) != before:
        return None
    try:
        data = read_job_file(folder, name, "schedule.file", limit=MAX_BYTES, file=job_file,
                             what="schedule")
    except JobError as exc:
        problems.extend(exc.problems)
        return None
    reader = _Reader(name, sheet or "", problems)
    grid = reader.csv(data) if suffix == ".csv" else reader.xlsx(data, sheet)
    if grid is None:
        return None
    return _rows(reader, grid, name, data, template, reg, plugins, problems)


class _Reader:
    """The file as a grid of typed cells, with the problems a grid cannot show (merged
    and hidden rows, formulas without a stored value)."""

    def __init__(self, name: str, sheet: str, problems: list[Problem]):
        self.name, self.sheet, self.problems = name, sheet, problems

    def where(self, cell: str = "") -> str:
        sheet = f", sheet '{self.sheet}'" if self.sheet else ""
        return f"{self.name}{sheet}" + (f", cell {cell}" if cell else "")

    def bad(self, message: str, cell: str = "") -> None:
        self.problems.append(Problem(self.where(cell), message))

    def csv(self, data: bytes) -> list[list[Any]] | None:
        try:
            text = data.decode("utf-8-sig")
        except UnicodeDecodeError as exc:
            self.bad(f"not UTF-8 text (byte {exc.start}); save the sheet as CSV UTF-8")
            return None
        try:
            rows = list(csv.reader(io.StringIO(text, newline="")))
        except csv.Error as exc:
            self.bad(f"not a readable CSV file: {exc}")
            return None
        return [[_csv_value(v) for v in row] for row in rows]

    def xlsx(self, data: bytes, sheet: str | None) -> list[list[Any]] | None:
        import zipfile

        import openpyxl

        try:
            values = openpyxl.load_workbook(io.BytesIO(data), data_only=True)
            formulas = openpyxl.load_workbook(io.BytesIO(data), data_only=False)
        except (zipfile.BadZipFile, OSError, KeyError, ValueError) as exc:
            self.bad(f"not a readable .xlsx workbook: {exc}")
            return None
        names = values.sheetnames
        if sheet is None:
            sheet = names[0]
        elif sheet not in names:
            self.problems.append(Problem(self.name, f"no sheet '{sheet}'; the workbook has: "
                                         + ", ".join(names)))
            return None
        self.sheet = sheet
        ws, wf = values[sheet], formulas[sheet]
        before = len(self.problems)
        for merged in ws.merged_cells.ranges:
            self.bad(f"merged cells {merged.coord}: unmerge them (one value per cell)",
                     str(merged.coord).split(":")[0])
        for r, dim in ws.row_dimensions.items():
            if dim.hidden and r <= ws.max_row:
                self.bad(f"row {r} is hidden: unhide it or delete it (a schedule shows every"
                         " row it computes)", f"A{r}")
        for letter, dim in ws.column_dimensions.items():
            if dim.hidden:
                self.bad(f"column {letter} is hidden: unhide it or delete it", f"{letter}1")
        grid: list[list[Any]] = []
        for row_v, row_f in zip(ws.iter_rows(), wf.iter_rows(), strict=True):
            out = []
            for cv, cf in zip(row_v, row_f, strict=True):
                if cf.data_type == "f" and cv.value is None:
                    self.bad("a formula without a stored value: open the workbook in a"
                             " spreadsheet program and save it, so its values are stored",
                             cv.coordinate)
                out.append(cv.value)
            grid.append(out)
        return grid if len(self.problems) == before else None


def _csv_value(text: str) -> Any:
    t = text.strip()
    if _NUMBER.fullmatch(t):
        return float(t) if any(c in t for c in ".eE") else int(t)
    return t


def _rows(reader: _Reader, grid: list[list[Any]], name: str, data: bytes,
          template: Mapping[str, Any], reg: Any, plugins: Any,
          problems: list[Problem]) -> Schedule | None:
    before = len(problems)
    while grid and all(v in (None, "") for v in grid[-1]):
        grid.pop()
    if not grid:
        reader.bad("the schedule is empty: a header row with a 'tag' column, then a row per"
                   " item")
        return None
    ct = reg.calc_type
    inputs = {s.name: s for s in ct.inputs}
    criteria = {s.name: s for s in ct.criteria}
    columns: list[tuple[int, str, str, str]] = []  # (index, name, unit, table)
    for j, head in enumerate(grid[0]):
        ref = f"{column_letter(j)}1"
        if head in (None, ""):
            continue
        m = _HEADER.fullmatch(str(head))
        if m is None:
            reader.bad(f"header {str(head)!r} is not a name with an optional unit in"
                       " brackets, such as 'mass [lb]'", ref)
            continue
        key, unit = m.group(1), (m.group(2) or "")
        if key.lower() in RESERVED:
            columns.append((j, key.lower(), "", "reserved"))
        elif key in inputs:
            columns.append((j, key, unit, "inputs"))
        elif key in criteria:
            columns.append((j, key, unit, "criteria"))
        else:
            known = sorted(inputs) + sorted(criteria)
            reader.bad(f"header '{head}' names no input or criterion of calc type"
                       f" '{reg.name}'{nearest_hint(key, known)}; its inputs: "
                       + ", ".join(sorted(inputs)) + "; its criteria: "
                       + (", ".join(sorted(criteria)) or "none"), ref)
    names = [c[1] for c in columns]
    if "tag" not in names:
        reader.bad("the header row needs a 'tag' column", "A1")
    for n in set(names):
        if names.count(n) > 1:
            refs = [f"{column_letter(c[0])}1" for c in columns if c[1] == n]
            reader.bad(f"column '{n}' appears twice ({' and '.join(refs)})", refs[1])
    if len(problems) != before:
        return None
    rows = [(i + 1, row) for i, row in enumerate(grid) if i > 0
            and not all(v in (None, "") for v in row)]
    if len(rows) > MAX_ROWS:
        reader.bad(f"the schedule has {len(rows)} rows; the limit is {MAX_ROWS}")
        return None
    tag_col = next(c[0] for c in columns if c[1] == "tag")
    seen: dict[str, int] = {}
    calcs: list[dict[str, Any]] = []
    items: list[ScheduleItem] = []
    cells: dict[tuple[str, str], str] = {}
    base_title = str(template.get("title", "{tag}"))
    for r, row in rows:
        row = list(row) + [None] * (len(grid[0]) - len(row))
        tag = _text(row[tag_col])
        ref = f"{column_letter(tag_col)}{r}"
        if not tag:
            reader.bad(f"row {r} has no tag", ref)
            continue
        cid = calc_id_of(tag)
        if not cid:
            reader.bad(f"tag {tag!r} gives no calc id (letters or digits needed)", ref)
            continue
        if cid in seen:
            reader.bad(f"tag {tag!r} in row {r} gives calc id '{cid}', as the tag in row"
                       f" {seen[cid]} does: tags must differ", ref)
            continue
        seen[cid] = r
        cells[(cid, "tag")] = ref
        reserved = {n: _text(row[j]) for j, n, _, t in columns if t == "reserved"}
        source = f"schedule {name}" + (f", sheet {reader.sheet}" if reader.sheet else "") \
            + f", row {r}, tag {tag}"
        calc: dict[str, Any] = {
            "id": cid, "plugin": reg.name,
            "title": base_title.replace("{tag}", tag).replace(
                "{description}", reserved.get("description", "")).strip(),
            "inputs": dict(template.get("inputs", {})),
            "criteria": dict(template.get("criteria", {})),
        }
        if template.get("notes"):
            calc["notes"] = template["notes"]
        for j, key, unit, table in columns:
            if table == "reserved":
                continue
            value = row[j]
            if value in (None, ""):
                continue  # an empty cell: the template's value stands
            cell = f"{column_letter(j)}{r}"
            cells[(cid, f"{table}.{key}")] = cell
            cells[(cid, f"{table}.{key}.value")] = cell
            calc[table][key] = {"value": _cell_text(value, unit), "source": source}
        calcs.append(calc)
        items.append(ScheduleItem(tag=tag, calc_id=cid, row=r, **{
            k: reserved.get(k, "") for k in ("description", "location", "mounting",
                                                "notes")}))
    if len(problems) != before:
        return None
    return Schedule(path=name, sheet=reader.sheet, data=data, calcs=tuple(calcs),
                    items=tuple(items), cells=cells)


def _text(value: Any) -> str:
    if value is None:
        return ""
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    if isinstance(value, _dt.datetime):
        return value.date().isoformat() if value.time() == _dt.time() else value.isoformat()
    if isinstance(value, _dt.date):
        return value.isoformat()
    return str(value).strip()


def _cell_text(value: Any, unit: str) -> Any:
    """A cell as the job file would write it: a number with the header's unit as text
    ("9400 lb"), a number alone where the header has no unit, text as typed."""
    if isinstance(value, bool):
        return value
    if isinstance(value, int | float):
        return f"{value!r} {unit}" if unit else value
    text = _text(value)
    if unit and _NUMBER.fullmatch(text):
        return f"{text} {unit}"
    return text
