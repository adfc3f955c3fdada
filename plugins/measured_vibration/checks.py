"""measured_vibration's design checks and results: band levels against the criterion curve,
or peak particle velocity against the guideline value, per channel."""

from __future__ import annotations

import math

from reportgen_plugins.vibration_criteria import Criterion, classify

from reportgen import Sheet
from reportgen.units import format_number

from .assess import (
    ChannelAssessment,
    PpvAssessment,
    assess_bands,
    channel_key,
    result_values,
    worst_channel,
)
from .method import Analysis

# key: (dimension, symbol, description)
BAND_KEYS = {
    "overall_velocity_rms": ("velocity", "v_rms", "Overall rms velocity over the band range"),
    "peak_velocity": ("velocity", "v_peak", "Peak velocity (largest absolute value)"),
    "max_band_velocity": ("velocity", "v_b,max", "Largest one-third-octave band rms velocity"),
    "max_band_frequency": ("frequency", "f_b,max", "Exact centre of the largest band"),
    "criterion_ratio": ("dimensionless", "R", "Largest ratio of band level to criterion"),
    "governing_band_frequency": ("frequency", "f_gov", "Exact centre of the governing band"),
}
PPV_KEYS = {
    "peak_velocity": ("velocity", "v_p", "Peak particle velocity"),
    "peak_frequency": ("frequency", "f_p", "Dominant frequency of the peak"),
    "guideline_velocity": ("velocity", "v_g", "Guideline value at the dominant frequency"),
    "criterion_ratio": ("dimensionless", "R", "Peak particle velocity over guideline value"),
}
KEY_RESULTS = ("criterion_ratio", "max_band_velocity")


def _record(sheet: Sheet, values: dict[str, float], table: dict, channels: tuple[str, ...]
            ) -> None:
    suffixes = {channel_key(c): c for c in channels} if len(channels) > 1 else {}
    for key, value in values.items():
        base, channel = key, ""
        for suffix, name in suffixes.items():
            if key.endswith("_" + suffix) and key[:-len(suffix) - 1] in table:
                base, channel = key[:-len(suffix) - 1], name
                break
        dimension, symbol, description = table[base]
        if channel:
            description += f", channel {channel}"
        elif suffixes:
            description += " (worst channel)"
        sheet.result(key, value, dimension, symbol, description,
                     key_result=not channel and base in KEY_RESULTS)


def band_results(sheet: Sheet, analysis: Analysis, criterion: Criterion | None) -> None:
    values = result_values(analysis, criterion)
    lists = {k: v for k, v in values.items() if isinstance(v, list)}
    scalars = {k: float(v) for k, v in values.items() if not isinstance(v, list)}
    _record(sheet, scalars, BAND_KEYS, analysis.plan.channels)
    fields = {"frequency": "frequency", "nominal": "frequency", "value": "velocity"}
    for key, rows in lists.items():
        channel = "" if key == "band_levels" else key[len("band_levels_"):]
        sheet.result_list(key, "One-third-octave band rms velocity" + (
            f", channel {channel}" if channel else " (worst channel)"
            if len(analysis.channels) > 1 else ""), fields,
            [(r["frequency"], r["nominal"], r["value"]) for r in rows])


def band_checks(sheet: Sheet, analysis: Analysis, criterion: Criterion | None
                ) -> tuple[ChannelAssessment, ...]:
    bands = analysis.plan.bands
    out: tuple[ChannelAssessment, ...] = ()
    if criterion is not None:
        out = assess_bands(analysis, criterion)
        for a in out:
            k = int(abs(bands.centre - a.governing_band_frequency).argmin())
            sheet.check(f"criterion-{channel_key(a.channel)}",
                        f"Channel {a.channel}: every band level within {criterion.name}"
                        " (largest ratio of band level to limit)", value=a.criterion_ratio,
                        limit=1.0, comparison="<=",
                        note=f"governing band {format_number(bands.nominal[k], 3)} Hz")
    if criterion is None or criterion.family == "building" or not criterion.family:
        for ch in analysis.channels:
            got = classify(list(zip(bands.centre, ch.band_levels, strict=True)))
            met = (f"meets {got.met} (margin {format_number(got.margin_db, 3)} dB)"
                   if got.met else "meets none of the building and equipment curves")
            nxt = (f"; exceeds {got.next} by {format_number(got.exceedance_db, 3)} dB"
                   if got.next and got.exceedance_db is not None else "")
            sheet.check(f"class-{channel_key(ch.channel)}" if len(analysis.channels) > 1
                        else "class", f"Channel {ch.channel}: most stringent built-in curve"
                        f" met: {got.met or 'none'}", status="info", note=met + nxt)
    return out


def worst_band(analysis: Analysis, assessments: tuple[ChannelAssessment, ...]) -> int:
    return worst_channel(analysis, assessments or None)


def ppv_results(sheet: Sheet, analysis: Analysis,
                assessments: tuple[PpvAssessment, ...] | None) -> None:
    per = []
    for i, ch in enumerate(analysis.channels):
        v = {"peak_velocity": ch.peak_velocity}
        if math.isfinite(ch.peak_frequency):
            v["peak_frequency"] = ch.peak_frequency
        if assessments:
            v["guideline_velocity"] = assessments[i].limit
            v["criterion_ratio"] = assessments[i].ratio
        per.append(v)
    if assessments:
        worst = max(range(len(per)), key=lambda i: assessments[i].ratio)
    else:
        worst = max(range(len(per)), key=lambda i: analysis.channels[i].peak_velocity)
    values = dict(per[worst])
    if len(per) > 1:
        for ch, v in zip(analysis.channels, per, strict=True):
            values.update({f"{k}_{channel_key(ch.channel)}": x for k, x in v.items()})
    _record(sheet, values, PPV_KEYS, analysis.plan.channels)


def ppv_checks(sheet: Sheet, assessments: tuple[PpvAssessment, ...],
               criterion: Criterion) -> None:
    for a in assessments:
        if not a.frequency_determined:
            note = ("the half cycle of the peak is cut by the record's end: its frequency is"
                    " not known, and the lowest guideline value is used")
        else:
            note = f"dominant frequency {format_number(a.frequency, 3)} Hz"
            if a.below_range:
                note += (f", below the lowest frequency the source gives"
                         f" ({format_number(criterion.valid_from, 3)} Hz): its value there"
                         " is held")
        sheet.check(f"ppv-{channel_key(a.channel)}",
                    f"Channel {a.channel}: peak particle velocity within {criterion.name}",
                    value=a.ppv, limit=a.limit, dimension="velocity", comparison="<=",
                    note=note)
