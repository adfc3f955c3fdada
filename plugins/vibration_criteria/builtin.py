"""The built-in criteria: building and sensitive-equipment curves, machinery severity zones and
construction guideline values, each with its source and the status of what we know of it.
"""

from __future__ import annotations

from .library import BAND_VELOCITY, OVERALL_VELOCITY, PPV, Criterion, resolve

__all__ = ["BUILTIN", "lookup"]

_UM = 1e-6  # m/s per µm/s
_MM = 1e-3  # m/s per mm/s

# --- building vibration and vibration-sensitive equipment (one-third-octave rms velocity) ---

_VC_SOURCE = (
    "C.G. Gordon, 'Generic criteria for vibration-sensitive equipment', Proc. SPIE 1619 (1991);"
    " IEST-RP-CC012 (Considerations in clean room design); H. Amick, M. Gendreau, T. Busch and"
    " C.G. Gordon, 'Evolving criteria for research facilities: vibration', Proc. SPIE 5933"
    " (2005): constant rms velocity in one-third-octave bands from 1 Hz to 80 Hz"
)
_VC_NOTE = (
    "levels (VC-A 2000 µin/s, halving per letter) seen in secondary copies; the form constant"
    " from 1 Hz (the later form; the original VC-A and VC-B had a constant-acceleration part"
    " from 4 Hz to 8 Hz) is recalled, not checked against the 2005 paper"
)
_VC_LEVELS = (("VC-A", 50.0), ("VC-B", 25.0), ("VC-C", 12.5), ("VC-D", 6.25),
              ("VC-E", 3.12), ("VC-F", 1.56), ("VC-G", 0.78))

_ISO_SOURCE = (
    "ISO 2631-2:1989 (Evaluation of human exposure to whole-body vibration, Part 2: continuous"
    " and shock-induced vibration in buildings, 1 to 80 Hz), base curve and Annex A multiplying"
    " factors; the same base curve and factors in BS 6472:1992; flat levels above 8 Hz as in"
    " the ASHRAE TC 2.6 table of building criteria (Workshop 32 000, Office 16 000, Residential"
    " day 8 000, Operating theatre 4 000 µin/s)"
)
_ISO_NOTE = (
    "flat levels above 8 Hz seen in secondary copies; the base curve below 8 Hz (z-axis:"
    " constant acceleration from 4 Hz to 8 Hz, acceleration rising as f^-1/2 from 4 Hz down to"
    " 1 Hz) and the night-time factor 1.4 are recalled, not checked against the standard"
)
# Base curve (factor 1) in velocity: 100 µm/s from 8 Hz up (the ASHRAE rounding of
# 0.005 m/s² / (2π·8 Hz) = 99.5 µm/s); constant acceleration 4–8 Hz (v ∝ 1/f) reaches
# 200 µm/s at 4 Hz; a ∝ f^-1/2 below 4 Hz (v ∝ f^-3/2) reaches 1600 µm/s at 1 Hz. Log-log
# straight lines reproduce both power laws exactly.
_ISO_BASE = ((1.0, 1600.0), (4.0, 200.0), (8.0, 100.0), (80.0, 100.0))
_ISO_CURVES = (
    # name, factor, title, aliases
    ("ISO-workshop", 8.0, "Workshops (ISO 2631-2 base curve × 8)", ("workshop_ISO",)),
    ("ISO-office", 4.0, "Offices (ISO 2631-2 base curve × 4)", ("office_ISO",)),
    ("ISO-residential-day", 2.0, "Residences by day (ISO 2631-2 base curve × 2)",
     ("residential_day_ISO",)),
    ("ISO-residential-night", 1.4, "Residences by night (ISO 2631-2 base curve × 1.4)",
     ("residential_night_ISO",)),
    ("ISO-theatre", 1.0,
     "Operating theatres and critical working areas (ISO 2631-2 base curve × 1)",
     ("operating_theatre_ISO", "ISO-operating-theatre", "ISO-base")),
)


def _building() -> tuple[Criterion, ...]:
    iso = tuple(
        Criterion(
            name=name, title=title, quantity=BAND_VELOCITY, family="building",
            frequencies=tuple(f for f, _ in _ISO_BASE),
            values=tuple(factor * v * _UM for _, v in _ISO_BASE),
            interpolation="loglog", source=_ISO_SOURCE, status="from_memory",
            status_note=_ISO_NOTE, aliases=aliases,
            notes="rms velocity in one-third-octave bands, 1 Hz to 80 Hz, z-axis base curve",
        )
        for name, factor, title, aliases in _ISO_CURVES
    )
    vc = tuple(
        Criterion(
            name=name, title=f"Vibration criterion curve {name} ({level:g} µm/s)",
            quantity=BAND_VELOCITY, family="building", frequencies=(1.0, 80.0),
            values=(level * _UM, level * _UM), interpolation="loglog", source=_VC_SOURCE,
            status="corroborated_secondary", status_note=_VC_NOTE,
            notes="rms velocity in one-third-octave bands, 1 Hz to 80 Hz",
        )
        for name, level in _VC_LEVELS
    )
    return iso + vc


# --- machinery severity (broadband rms velocity, zones A to D) ---

_ZONES = ("A", "B", "C", "D")
_ZONE_MEANINGS = (
    "newly commissioned machines",
    "acceptable for unrestricted long-term operation",
    "unsatisfactory for long-term continuous operation",
    "severe enough to cause damage",
)
_ISO3_SOURCE = (
    "ISO 10816-3:2009 (Evaluation of machine vibration by measurements on non-rotating parts,"
    " Part 3: industrial machines above 15 kW, 120 to 15 000 r/min), Annex A, Table A.1"
    " (group 1: large machines, 300 kW to 50 MW) and Table A.2 (group 2: medium machines,"
    " 15 kW to 300 kW); broadband rms velocity 10 Hz to 1000 Hz (2 Hz to 1000 Hz below"
    " 600 r/min); superseded by ISO 20816-3:2022"
)
_ISO3_NOTE = ("boundary values recalled and corroborated by a secondary public source, not"
              " checked against the standard's text; ISO 20816-3:2022 is believed to keep them"
              " (not confirmed)")
_ISO3 = (
    ("ISO10816-3-group1-rigid", "group 1 (300 kW to 50 MW), rigid support", (2.3, 4.5, 7.1)),
    ("ISO10816-3-group1-flexible", "group 1 (300 kW to 50 MW), flexible support",
     (3.5, 7.1, 11.0)),
    ("ISO10816-3-group2-rigid", "group 2 (15 kW to 300 kW), rigid support", (1.4, 2.8, 4.5)),
    ("ISO10816-3-group2-flexible", "group 2 (15 kW to 300 kW), flexible support",
     (2.3, 4.5, 7.1)),
)
_ISO1_SOURCE = (
    "ISO 10816-1:1995 (Evaluation of machine vibration by measurements on non-rotating parts,"
    " Part 1: general guidelines), Annex B, Table B.1, typical zone boundaries for machine"
    " classes I to IV (the same numbers as the ISO 2372:1974 classes)"
)
_ISO1 = (
    ("ISO10816-1-class-I", "class I (small machines, up to 15 kW)", (0.71, 1.8, 4.5)),
    ("ISO10816-1-class-II", "class II (medium machines, 15 kW to 75 kW; up to 300 kW on"
     " special foundations)", (1.12, 2.8, 7.1)),
    ("ISO10816-1-class-III", "class III (large machines on rigid foundations)",
     (1.8, 4.5, 11.2)),
    ("ISO10816-1-class-IV", "class IV (large machines on soft foundations)", (2.8, 7.1, 18.0)),
)


def _machinery() -> tuple[Criterion, ...]:
    out = []
    for group, source, note, rows in (
        ("ISO 10816-3", _ISO3_SOURCE, _ISO3_NOTE, _ISO3),
        ("ISO 10816-1", _ISO1_SOURCE, "boundary values recalled and corroborated only by a"
         " secondary source", _ISO1),
    ):
        for name, what, bounds in rows:
            out.append(Criterion(
                name=name, title=f"Machinery vibration severity, {group} {what}",
                quantity=OVERALL_VELOCITY, family=group,
                values=tuple(b * _MM for b in bounds), zones=_ZONES,
                zone_meanings=_ZONE_MEANINGS, source=source,
                status="corroborated_secondary", status_note=note,
                notes="broadband rms velocity on the bearing housings; zone boundaries A/B,"
                      " B/C, C/D",
            ))
    return tuple(out)


# --- construction vibration (peak particle velocity against dominant frequency) ---

_DIN_SOURCE = (
    "DIN 4150-3:2016 (Vibrations in buildings, Part 3: effects on structures), Table 1:"
    " guideline values of peak particle velocity of short-term vibration at the foundation,"
    " any component; below 10 Hz constant, rising linearly 10 Hz to 50 Hz and 50 Hz to 100 Hz"
    " (the same values in the 1999 edition)"
)
_DIN_LONG_SOURCE = (
    "DIN 4150-3:2016 (Vibrations in buildings, Part 3: effects on structures), Table 3:"
    " guideline values of peak particle velocity of long-term vibration in the horizontal"
    " plane of the highest floor, all frequencies"
)
_DIN_NOTE = "values and the straight-line variation between them recalled, not checked"
_DIN = (
    ("DIN4150-3-line1", "commercial, industrial and similar buildings", (20.0, 20.0, 40.0, 50.0)),
    ("DIN4150-3-line2", "dwellings and buildings of similar design or use", (5.0, 5.0, 15.0,
                                                                             20.0)),
    ("DIN4150-3-line3", "structures particularly sensitive to vibration (e.g. listed buildings)",
     (3.0, 3.0, 8.0, 10.0)),
)
_DIN_LONG = (
    ("DIN4150-3-long-term-line1", "commercial, industrial and similar buildings", 10.0),
    ("DIN4150-3-long-term-line2", "dwellings and buildings of similar design or use", 5.0),
    ("DIN4150-3-long-term-line3", "structures particularly sensitive to vibration", 2.5),
)
_BS_SOURCE = (
    "BS 7385-2:1993 (Evaluation and measurement for vibration in buildings, Part 2: guide to"
    " damage levels from groundborne vibration), Table 1: transient vibration guide values for"
    " cosmetic damage, peak component particle velocity; below 4 Hz a maximum displacement of"
    " 0.6 mm (zero to peak)"
)
_BS_NOTE = ("values recalled, not checked; straight lines on the log-log chart between the"
            " points and the constant-displacement part below 4 Hz follow the standard's figure"
            " as recalled")


def _construction() -> tuple[Criterion, ...]:
    din = tuple(
        Criterion(
            name=name, title=f"DIN 4150-3 short-term vibration, foundation: {what}",
            quantity=PPV, family="DIN 4150-3", frequencies=(1.0, 10.0, 50.0, 100.0),
            values=tuple(v * _MM for v in values), interpolation="linear",
            source=_DIN_SOURCE, status="from_memory", status_note=_DIN_NOTE,
            notes="above 100 Hz at least the 100 Hz value applies; a value exactly on the"
                  " guideline meets it",
        )
        for name, what, values in _DIN
    )
    din_long = tuple(
        Criterion(
            name=name, title=f"DIN 4150-3 long-term vibration, horizontal, top floor: {what}",
            quantity=PPV, family="DIN 4150-3 long-term", values=(value * _MM,),
            source=_DIN_LONG_SOURCE,
            status="from_memory", status_note=_DIN_NOTE,
        )
        for name, what, value in _DIN_LONG
    )
    bs = (
        Criterion(
            name="BS7385-2-line1",
            title="BS 7385-2 transient vibration, cosmetic damage: reinforced or framed"
                  " structures, industrial and heavy commercial buildings",
            quantity=PPV, family="BS 7385-2", frequencies=(4.0, 250.0),
            values=(50.0 * _MM, 50.0 * _MM), interpolation="loglog", valid_from=4.0,
            source=_BS_SOURCE, status="from_memory", status_note=_BS_NOTE,
            notes="50 mm/s at 4 Hz and above; for continuous vibration the guide values may"
                  " need to be reduced by up to 50 %",
        ),
        Criterion(
            name="BS7385-2-line2",
            title="BS 7385-2 transient vibration, cosmetic damage: unreinforced or light framed"
                  " structures, residential or light commercial buildings",
            quantity=PPV, family="BS 7385-2",
            # below 4 Hz: 0.6 mm zero-to-peak, v = 2π f d, drawn through 15 mm/s at 4 Hz
            frequencies=(1.0, 4.0, 15.0, 40.0, 250.0),
            values=(3.75 * _MM, 15.0 * _MM, 20.0 * _MM, 50.0 * _MM, 50.0 * _MM),
            interpolation="loglog", source=_BS_SOURCE, status="from_memory",
            status_note=_BS_NOTE,
            notes="15 mm/s at 4 Hz rising to 20 mm/s at 15 Hz, 20 mm/s at 15 Hz rising to"
                  " 50 mm/s at 40 Hz and above; for continuous vibration the guide values may"
                  " need to be reduced by up to 50 %",
        ),
    )
    return din + din_long + bs


#: Every built-in criterion, building curves from least to most stringent first.
BUILTIN: tuple[Criterion, ...] = _building() + _machinery() + _construction()


def lookup(name: str, extra: tuple[Criterion, ...] | list[Criterion] = ()) -> Criterion:
    """The criterion called ``name`` (case-insensitive; aliases too) among ``extra`` (a firm's
    or a job's own curves) and the built-ins; raises UnknownCriterionError with the nearest
    names, or ValueError when an extra curve takes a built-in name for a different curve."""
    return resolve(name, (*extra, *BUILTIN))
