"""One row of an equipment schedule as a job of its own (``reportgen build --split``).

The row's package needs a job file that re-runs it alone: the job's ``[package]`` with
the calc number ``<calc_number>-<tag>``, and the row's calc as a ``[[calc]]`` table whose
values keep their sources (the schedule's file, sheet, row and tag). That text is what
the package embeds; it is loaded from the job's folder, so its relative paths hold.
"""

from __future__ import annotations

from typing import Any

from reportgen.errors import JobError, Problem
from reportgen.job.load import Job, load_job

__all__ = ["row_job", "row_source"]


def row_source(job: Job, tag: str) -> bytes:
    """The TOML of the job that builds the row tagged ``tag`` alone."""
    import tomli_w

    item = next((i for i in job.schedule if i.tag == tag), None)
    if item is None:
        raise JobError(Problem(str(job.path), f"the schedule has no row tagged {tag!r}",
                               field="schedule"))
    spec = next(c for c in job.calcs if c.id == item.calc_id)
    package = {k: v for k, v in dict(job.raw.get("package", {})).items()
               if k != "previous_package"}  # a revision of the whole schedule, not of a row
    package["calc_number"] = f"{job.info.calc_number}-{tag}"
    if "deviations" in package:  # only the row's own accepted deviations
        package["deviations"] = [d for d in package["deviations"]
                                 if isinstance(d, dict) and d.get("calc") == item.calc_id]
        if not package["deviations"]:
            del package["deviations"]
    calc: dict[str, Any] = {"id": spec.id, "plugin": spec.plugin, "title": spec.title}
    if spec.notes:
        calc["notes"] = spec.notes
    calc["inputs"] = dict(spec.raw_inputs)
    calc["criteria"] = dict(spec.raw_criteria)
    head = (f"# Row {item.row} (tag {tag}) of the equipment schedule {job.schedule_source},"
            f" written by reportgen build --split from {job.path.name}.\n")
    return (head + tomli_w.dumps({"package": package, "calc": [calc]})).encode("utf-8")


def row_job(job: Job, tag: str, plugins: Any, **load: Any) -> Job:
    """The row's job, loaded (and so checked) like any job file in the job's folder
    (``load``: what :func:`load_job` was given, the template folder)."""
    return load_job(job.path, plugins, source=row_source(job, tag), **load)
