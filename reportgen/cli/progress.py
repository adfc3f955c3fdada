"""The progress of a folder build on the terminal: a bar on a TTY, one line a package
otherwise."""

from __future__ import annotations

import sys
from pathlib import Path
from typing import Any


class Progress:
    """A rich progress bar on a terminal; one plain line per package otherwise."""

    def __init__(self, total: int, label: str):
        self.total, self.done, self.failed = total, 0, 0
        self.tty = sys.stdout.isatty()
        self._bar = None
        if self.tty:
            from rich.progress import BarColumn, MofNCompleteColumn, TextColumn
            from rich.progress import Progress as RichProgress

            self._bar = RichProgress(TextColumn("{task.description}"), BarColumn(),
                                     MofNCompleteColumn(), TextColumn("{task.fields[info]}"))
            self._bar.start()
            self._task = self._bar.add_task(label, total=total, info="")

    def update(self, outcome: dict[str, Any]) -> None:
        self.done += 1
        self.failed += 0 if outcome.get("ok") and outcome["exit_code"] == 0 else 1
        line = describe(outcome)
        if self._bar is not None:
            self._bar.console.print(line, markup=False, highlight=False)
            self._bar.update(self._task, advance=1,
                             info=f"{self.failed} not clean · last {Path(outcome['job']).name}")
        else:
            print(f"[{self.done}/{self.total}] {line}", flush=True)

    def close(self) -> None:
        if self._bar is not None:
            self._bar.stop()


def describe(outcome: dict[str, Any]) -> str:
    if not outcome.get("ok"):
        first, *rest = outcome["error"].splitlines() or [""]
        more = f" (+{len(rest)} more problems)" if rest else ""
        return f"NOT BUILT {outcome['job']}: {first}{more}"
    verdict = ("all checks pass" if not outcome["checks_failed"] else
               f"{outcome['checks_failed']} of {outcome['checks_total']} checks FAIL")
    return f"built {outcome['pdf']} [{verdict}; {outcome['review_state']}]"


