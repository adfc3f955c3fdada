"""floor_walking's design checks, written onto the Sheet from the printed values."""

from __future__ import annotations

from reportgen import Sheet
from reportgen.units import format_number

from .bay import BayModes
from .method import LOW_FREQUENCY_LIMIT, WalkingResponse


def write(s: Sheet, resp: WalkingResponse, tolerance_text: str,
          modes: BayModes | None) -> None:
    s.check("walking", "Peak acceleration under walking within the tolerance a0/g",
            value=resp.peak_acceleration_ratio, limit=resp.limit_acceleration_ratio,
            comparison="<=", note=tolerance_text)
    s.check("method-range", "Natural frequency within the walking method's range",
            value=resp.natural_frequency, limit=LOW_FREQUENCY_LIMIT, comparison="<=",
            dimension="frequency", note="design guide Ch. 4: floors up to 9 Hz")
    if modes is None:
        return
    for w, what in ((modes.beam_width, "beam"), (modes.girder_width, "girder")):
        if w.limited and w.limit is not None:
            s.check(f"{what}-width-limit", f"The {what} panel's effective width is limited"
                    " to ⅔ of the floor's extent", status="info",
                    note=f"{format_number(w.unlimited, 4)} m reduced to"
                         f" {format_number(w.width, 4)} m")
