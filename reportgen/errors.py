"""Errors the core raises; only :mod:`reportgen.cli` turns them into messages and exit codes.

    ReportgenError
     ├── JobError          invalid job file or usage (exit 2); carries every Problem found
     │    └── ThemeError      a firm theme's file is refused or its template fails (exit 2)
     ├── PluginError       a plugin failed to load, compute or verify (exit 3; 2 at load)
     │    └── VerificationError   two independent methods disagree (exit 3)
     └── RenderError       the HTML/PDF step or the self-check of the written PDF failed (exit 3)

A failed design check is content (a Check with status "fail"), never an exception.
"""

from __future__ import annotations

import enum
from dataclasses import dataclass


class ExitCode(enum.IntEnum):
    OK = 0
    CHECKS_FAIL = 1
    INVALID_INPUT = 2
    FAILURE = 3


@dataclass(frozen=True, slots=True)
class Problem:
    """One thing wrong with a job file."""

    file: str
    message: str
    calc: str = ""
    field: str = ""

    def __str__(self) -> str:
        where = [self.file]
        if self.calc:
            where.append(f"calc '{self.calc}'")
        if self.field:
            where.append(f"field '{self.field}'")
        return f"{': '.join(where)}: {self.message}"


class ReportgenError(Exception):
    exit_code: ExitCode = ExitCode.FAILURE


class JobError(ReportgenError):
    """The job file (or the command line) is invalid; nothing was written."""

    exit_code = ExitCode.INVALID_INPUT

    def __init__(self, problems: list[Problem] | Problem | str):
        if isinstance(problems, str):
            problems = [Problem(file="", message=problems)]
        elif isinstance(problems, Problem):
            problems = [problems]
        self.problems = list(problems)
        super().__init__("\n".join(str(p).lstrip(": ") for p in self.problems))


class ThemeError(JobError):
    """A file of a firm's theme folder is refused, or a theme template fails (exit 2)."""


class PluginError(ReportgenError):
    """A plugin failed; the message names the plugin, its package and the calc."""

    exit_code = ExitCode.FAILURE

    def __init__(self, message: str, *, plugin: str = "", package: str = "", calc: str = "",
                 stage: str = "", exit_code: ExitCode | None = None):
        self.plugin, self.package, self.calc, self.stage = plugin, package, calc, stage
        if exit_code is not None:
            self.exit_code = exit_code
        who = []
        if plugin:
            who.append(f"plugin '{plugin}'" + (f" (package {package})" if package else ""))
        if calc:
            who.append(f"calc '{calc}'")
        if stage:
            who.append(stage)
        super().__init__((", ".join(who) + ": " if who else "") + message)


class VerificationError(PluginError):
    """The closed form and the independent method disagree beyond tolerance."""


class RenderError(ReportgenError):
    """Rendering or the self-check of the written PDF failed; nothing was written."""

    exit_code = ExitCode.FAILURE


def error_text(exc: BaseException) -> str:
    """The message of an error as the command line shows it (one line a problem)."""
    if isinstance(exc, JobError):
        return "\n".join(str(p).lstrip(": ") for p in exc.problems)
    if isinstance(exc, ReportgenError):
        return str(exc)
    return f"internal error: {type(exc).__name__}: {exc}"


def nearest_hint(word: str, options: list[str]) -> str:
    """`` (did you mean 'x'?)`` for the closest of ``options`` to a misspelt name, or ""."""
    import difflib

    close = difflib.get_close_matches(word, options, n=1, cutoff=0.6)
    return f" (did you mean '{close[0]}'?)" if close else ""
