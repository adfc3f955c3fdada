"""Transforms: functions Document -> Document run in a fixed order before rendering.

Each returns a new tree (dataclasses.replace); none mutates its input.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable

from reportgen.model import Document


def number_sections(doc: Document) -> Document:
    """Give each calc section its number ("1", "2", ...) in job order."""
    sections = tuple(dataclasses.replace(s, number=str(i)) for i, s in
                     enumerate(doc.sections, start=1))
    return dataclasses.replace(doc, sections=sections)


def with_changes(doc: Document, changes: tuple[str, ...], previous_revision: str) -> Document:
    """The "Changes since revision X" section: its lines and the previous revision's
    label (``doc.extra['previous_revision']``, for its title)."""
    extra = tuple(kv for kv in doc.extra if kv[0] != "previous_revision")
    return dataclasses.replace(doc, changes=changes,
                               extra=extra + (("previous_revision", previous_revision),))


#: The transforms, in the order they run.
TRANSFORMS: tuple[Callable[[Document], Document], ...] = (number_sections,)


def apply_transforms(doc: Document) -> Document:
    for transform in TRANSFORMS:
        doc = transform(doc)
    return doc
