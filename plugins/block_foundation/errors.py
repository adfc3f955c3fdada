"""The block-foundation physics' own refusal: a foundation the method cannot model.

Raised for physical impossibilities and unsupported cases that a field-by-field validator
cannot see; ``field`` names the input so the calc type can point the engineer at it.
"""

from __future__ import annotations


class FoundationError(ValueError):
    """The stated foundation is physically impossible or outside this method."""

    def __init__(self, field: str, message: str) -> None:
        self.field = field
        self.message = message
        super().__init__(f"{field}: {message}")
