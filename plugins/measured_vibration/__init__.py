"""measured_vibration: site surveys and monitoring records reduced to one-third-octave band
levels or peak particle velocity and assessed against a criterion from the criteria library.

Readers (readers.py), bands (bands.py), the streaming method (method.py with stream.py),
assessment (assess.py), the second method (verify.py); wiring in working.py.
"""

from __future__ import annotations

from reportgen_plugins.vibration_criteria import (
    BAND_VELOCITY,
    PPV,
    DataFileError,
    neighbours,
)

from reportgen import (
    Assumptions,
    CalcContext,
    CalcOutput,
    CalcType,
    Caution,
    Column,
    InputSpec,
    Paragraph,
    Sheet,
    Source,
    Table,
    VerificationCase,
    VerificationRow,
    hookimpl,
)

from . import checks, figures, text
from .assess import assess_ppv
from .working import analysis_of, criterion_of, field_of, mode_of, second_method

__version__ = "0.1.1"

IEC = Source(key="iec-61260-1", citation=(
    "IEC 61260-1:2014, Electroacoustics: octave-band and fractional-octave-band filters,"
    " Part 1: specifications (base-ten one-third-octave centres and band edges)."))
BENDAT = Source(key="bendat-piersol", citation=(
    "J.S. Bendat & A.G. Piersol, Random Data: Analysis and Measurement Procedures, 4th ed.,"
    " Wiley, 2010 (spectral estimates, Welch averaging, integration in the frequency"
    " domain)."))
OPPENHEIM = Source(key="oppenheim-schafer", citation=(
    "A.V. Oppenheim & R.W. Schafer, Discrete-Time Signal Processing, 3rd ed., Pearson, 2010,"
    " §7.1 (Butterworth filters by the bilinear transform with pre-warped edges)."))

_CASES_SOURCE = IEC.citation
_FORMATS = (".csv", ".txt", ".wav", ".npy")


class MeasuredVibration(CalcType):
    name = "measured_vibration"
    title = "Measured vibration assessed against a criterion"
    version = __version__
    api_version = 1
    purpose = ("Reduce a measured vibration record to one-third-octave band rms velocities"
               " (or peak particle velocities) and compare them with the stated criterion.")
    inputs = (
        InputSpec(name="data_file", symbol="", description="Measured record (CSV with a header"
                  " row, WAV or NumPy .npy) in the job's folder", kind="file",
                  formats=_FORMATS, max_bytes=256 * 1024 * 1024),
        InputSpec(name="time_column", symbol="", description="CSV column holding the time"
                  " (default: a column named time or t)", kind="text", required=False,
                  max_length=80),
        InputSpec(name="sample_rate", symbol="f_s", description="Sample rate (where the file"
                  " has no time column)", dimension="frequency", required=False,
                  positive=True, maximum=1e6, rangeable=False),
        InputSpec(name="channels", symbol="", description="Channels to assess (column names;"
                  " default every column but time)", kind="texts", required=False,
                  max_rows=64, max_length=80),
        InputSpec(name="quantity", symbol="", description="What the record holds, where its"
                  " header has no unit", kind="choice", choices=("velocity", "acceleration"),
                  required=False),
        InputSpec(name="unit", symbol="", description="Unit of the values, where the header"
                  " has none (e.g. mm/s, g)", kind="text", required=False, max_length=40),
        InputSpec(name="calibration", symbol="", description="WAV: the value of full scale"
                  " (e.g. 10 mm/s)", kind="text", required=False, max_length=40),
        InputSpec(name="band_low", symbol="f_low", description="Lowest one-third-octave band"
                  " (nominal centre)", dimension="frequency", default=1.0, positive=True,
                  minimum=0.1, maximum=20000.0, rangeable=False,
                  default_note="the usual range of building and floor criteria"),
        InputSpec(name="band_high", symbol="f_high", description="Highest one-third-octave band"
                  " (nominal centre)", dimension="frequency", default=80.0, positive=True,
                  minimum=0.1, maximum=20000.0, rangeable=False,
                  default_note="the usual range of building and floor criteria"),
        InputSpec(name="averaging_time", symbol="T_avg", description="Averaging time of the"
                  " band rms (absent: one rms over the record)", dimension="time",
                  required=False, positive=True, maximum=86400.0, rangeable=False),
        InputSpec(name="mode", symbol="", description="bands (one-third-octave levels) or ppv"
                  " (peak particle velocity; default when the criterion is a PPV guideline)",
                  kind="choice", choices=("bands", "ppv"), required=False),
    )
    criteria = (
        InputSpec(name="criterion", symbol="", description="Criterion: a name from the"
                  " criteria library, or a curve of frequency and rms velocity",
                  kind="criterion", required=False, choices=(BAND_VELOCITY, PPV),
                  min_rows=1, max_rows=200,
                  columns=(Column(name="frequency", description="Frequency",
                                  dimension="frequency", positive=True),
                           Column(name="velocity", description="rms velocity limit",
                                  dimension="velocity", positive=True))),
    )
    sources = (IEC, BENDAT, OPPENHEIM)
    verification_cases = (
        VerificationCase(id="T0_third_octave_band_table_1_to_100Hz", description="Exact"
                         " centres and edges of the one-third-octave bands 1 Hz to 100 Hz",
                         source=_CASES_SOURCE, status="corroborated_secondary"),
        VerificationCase(id="T1_band_rms_of_a_sine_centre_and_edge", description="A sine at a"
                         " band's exact centre gives A/√2 in that band",
                         source=_CASES_SOURCE, status="formula_confirmed_example_invented"),
        VerificationCase(id="T2_band_limited_white_noise_band_rms", description="White noise"
                         " of known density gives √(PSD·bandwidth) per band",
                         source=_CASES_SOURCE, status="formula_confirmed_example_invented"),
        VerificationCase(id="T3_two_tone_plus_one_band_rms", description="Two tones in their"
                         " bands", source=_CASES_SOURCE,
                         status="formula_confirmed_example_invented"),
        VerificationCase(id="T4_acceleration_velocity_displacement_conversions",
                         description="v = a/(2πf) for a sine", source="kinematics of harmonic"
                         " motion (common practice)", status="common_practice_no_source"),
    )

    def validate(self, inputs, given, criteria):
        problems: list[tuple[str, str]] = []
        given_curve = criteria.get("criterion")
        if given_curve is not None and not isinstance(given_curve, str):
            fs = [r["frequency"] for r in given_curve]
            for i in range(1, len(fs)):
                if fs[i] <= fs[i - 1]:
                    problems.append((f"criteria.criterion[{i + 1}].frequency",
                                     f"row {i + 1}: the frequencies must ascend, each once"))
                    break
        if problems:
            return problems
        criterion = criterion_of(given_curve)
        mode = mode_of(inputs, criterion)
        if criterion is not None:
            want = PPV if mode == "ppv" else BAND_VELOCITY
            if criterion.quantity != want:
                return [("inputs.mode", f"mode = {mode!r} needs a criterion of {want}, but"
                         f" {criterion.name!r} is a criterion of {criterion.quantity}")]
        if inputs["band_high"] < inputs["band_low"]:
            return [("inputs.band_high", "band_high must not be below band_low")]
        try:
            analysis_of(inputs, mode == "ppv")
        except DataFileError as exc:
            field = field_of(exc)
            # a setting at fault is named as the field; a column of the file in the message
            where = exc.file + (f", line {exc.row}" if exc.row is not None else "")
            return [(field, f"{where}: {exc.message}" if field != "inputs.data_file"
                     else str(exc))]
        return []

    def compute(self, ctx: CalcContext) -> CalcOutput:
        criterion = criterion_of(ctx.criteria.get("criterion"), ctx.criteria_library)
        mode = mode_of(ctx.inputs, criterion)
        if criterion is not None and criterion.quantity != (PPV if mode == "ppv"
                                                            else BAND_VELOCITY):
            raise ValueError(f"mode {mode!r} does not fit the criterion {criterion.name!r}")
        analysis = analysis_of(ctx.inputs, mode == "ppv")
        plan, units = analysis.plan, ctx.display  # figures in the display units
        s = Sheet(self.inputs + self.criteria)
        s.declare(v_b="velocity", v_lim="velocity", v_p="velocity", v_g="velocity")
        s.add(Assumptions(items=tuple(text.assumptions(
            plan.quantity, plan.channels, plan.sample_rate, ctx.inputs.get("averaging_time"),
            (analysis.analysed_from, analysis.analysed_to), mode == "ppv"))),
            Paragraph(title="Method",
                      text=text.METHOD_PPV if mode == "ppv" else text.METHOD_BANDS),
            _record_table(ctx, analysis))
        if criterion is not None:
            s.add(Paragraph(title=f"Criterion: {criterion.name}", text=(
                f"{criterion.title}. Source: {criterion.source}."
                + (f" {criterion.notes[0].upper()}{criterion.notes[1:]}." if criterion.notes
                   else "") + f" On a boundary: {criterion.on_boundary}.")))
        if mode == "ppv":
            _ppv(s, analysis, criterion)
        else:
            _bands(s, analysis, criterion, ctx.criteria_library, units)
        s.add(figures.envelope(analysis, units), figures.narrow_band(analysis, units),
              *(Caution(text=t) for t in (text.CAUTIONS_PPV if mode == "ppv"
                                         else text.CAUTIONS_BANDS)))
        return s.output(purpose=self.purpose)

    def verify(self, ctx: CalcContext, output: CalcOutput) -> list[VerificationRow] | None:
        criterion = criterion_of(ctx.criteria.get("criterion"), ctx.criteria_library)
        mode = mode_of(ctx.inputs, criterion)
        return second_method(ctx.inputs, analysis_of(ctx.inputs, mode == "ppv"),
                             mode == "ppv")


def _record_table(ctx: CalcContext, analysis) -> Table:
    plan = analysis.plan
    f = ctx.inputs["data_file"]
    rows = (("Data file", f"{f.name} (SHA-256 {f.sha256[:12]}…)"),
            ("Quantity recorded", plan.quantity),
            ("Channels", ", ".join(plan.channels)),
            ("Sample rate", f"{plan.sample_rate:g} samples/s"),
            ("Samples per channel", f"{analysis.n_samples}"),
            ("Duration", f"{analysis.n_samples / plan.sample_rate:.6g} s"),
            ("Analysed span", f"{analysis.analysed_from:.4g} s to {analysis.analysed_to:.6g} s"
             + (f" ({analysis.blocks} blocks)" if plan.block else "")))
    return Table(title="The record", header=("Item", "Value"), rows=rows)


def _bands(s: Sheet, analysis, criterion, library, units: str) -> None:
    bands = analysis.plan.bands
    assessments = checks.band_checks(s, analysis, criterion)
    worst = checks.worst_band(analysis, assessments)
    ch = analysis.channels[worst]
    if assessments:
        a = assessments[worst]
        k = int(abs(bands.centre - a.governing_band_frequency).argmin())
    else:
        k = int(abs(bands.centre - ch.max_band_frequency).argmin())
    s.equation("f_m", "1000*10**(x/10)", "frequency", x=float(bands.index[k]),
               dims={"x": "dimensionless"},
               description=f"Exact centre of the {bands.nominal[k]:g} Hz band (IEC 61260-1,"
                           " base ten)")
    s.equation("f_1", "f_m*10**(-1/20)", "frequency", f_m=float(bands.centre[k]),
               description="Lower band edge")
    s.equation("f_2", "f_m*10**(1/20)", "frequency", f_m=float(bands.centre[k]),
               description="Upper band edge")
    if assessments:
        limit = float(ch.band_levels[k]) / float(a.criterion_ratio)
        s.equation("R", "v_b/v_lim", v_b=float(ch.band_levels[k]), v_lim=limit,
                   description=f"Ratio of the band level of channel {ch.channel} to"
                               f" {criterion.name} in the governing band (≤ 1 meets it)")
    checks.band_results(s, analysis, criterion)
    pool = list(_library_curves(library)) or None
    near = (neighbours(criterion, pool) if criterion is not None else
            tuple(c for c in (pool or ()) if c.name in ("VC-A", "VC-C", "VC-E")))
    s.add(figures.band_table(analysis, criterion),
          figures.band_spectrum(analysis, criterion, near, units))


def _library_curves(library):
    for entry in library or ():
        c = entry.criterion
        if getattr(c, "quantity", None) == BAND_VELOCITY and getattr(c, "frequencies", None):
            yield c


def _ppv(s: Sheet, analysis, criterion) -> None:
    assessments = assess_ppv(analysis, criterion) if criterion is not None else None
    if assessments:
        worst = max(assessments, key=lambda a: a.ratio)
        s.equation("R", "v_p/v_g", v_p=worst.ppv, v_g=worst.limit,
                   description=f"Peak particle velocity of channel {worst.channel} over the"
                               f" guideline value of {criterion.name} at its dominant"
                               " frequency (≤ 1 meets it)")
        checks.ppv_checks(s, assessments, criterion)
    checks.ppv_results(s, analysis, assessments)


@hookimpl
def reportgen_register_calc_types():
    return [MeasuredVibration()]
