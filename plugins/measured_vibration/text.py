"""measured_vibration's printed words: method, assumptions, cautions and captions."""

from __future__ import annotations

METHOD_BANDS = (
    "The record is read in chunks of 65 536 samples, so memory does not grow with its length."
    " An acceleration record is integrated to velocity by a centred FIR filter whose response"
    " is HP(f)/(j2πf): integration by division by j2πf (Bendat & Piersol, Random Data, ch. 11)"
    " realised as a convolution, 12 periods of the lowest band's lower edge long with a Tukey"
    " taper. HP is a fourth-order Butterworth-magnitude high-pass at one third of that edge;"
    " it removes the drift that integration makes of offsets and low-frequency noise and"
    " changes the lowest band by less than 0.01 %. Half the filter length is lost at each end"
    " of the record. One-third-octave band levels come from a filter bank: a digital"
    " third-order Butterworth band-pass per band (six poles; the usual design for class-1"
    " one-third-octave filters), exact base-ten centres f_m = 1000·10^(x/10) Hz and edges"
    " f_m·10^(±1/20) (IEC 61260-1), pre-warped so that each filter is 3 dB down exactly at its"
    " edges; energy beyond an edge is shared with the neighbouring band as the filter skirts"
    " fall (18 dB per octave away from the band). The first samples, until the lowest band's"
    " filter has settled (less than 0.1 % of its impulse-response energy left), only run the"
    " filters in. The band level is the rms over the rest of the record or, with an averaging"
    " time, the largest rms over consecutive blocks of that length. The overall level is the"
    " energetic sum of the band levels; the peak velocity is the largest absolute value of the"
    " velocity signal; the narrow-band spectrum is a Welch average (Hann window, 50 % overlap)."
)

METHOD_PPV = (
    "Peak particle velocity per channel: the largest absolute value of the velocity signal"
    " (an acceleration record is first integrated as for the band levels: a centred FIR filter"
    " of response HP(f)/(j2πf), HP a fourth-order high-pass at one third of the lowest band's"
    " lower edge). The dominant frequency of the peak is taken from the zero crossings of the"
    " half cycle that holds it (f = 1/(2·half-period)), the reading of the guideline"
    " documents; the guideline value is read from the criterion at that frequency. Where the"
    " half cycle is cut by the record's ends, the lowest guideline value is used. Only the"
    " largest peak of each channel is assessed: a smaller event at a lower frequency, where the"
    " guideline value is lower, can lie closer to its own value. Where the time history shows"
    " such events, assess them separately (a record cut around each event)."
)


def assumptions(quantity: str, channels: tuple[str, ...], sample_rate: float,
                averaging: float | None, analysed: tuple[float, float], ppv: bool) -> list[str]:
    items = [
        f"The record holds {quantity} of the channels {', '.join(channels)} at"
        f" {sample_rate:g} samples/s, in the units its header, the job or the calibration"
        " states; the transducers were calibrated and mounted rigidly to the surface measured"
        " (a loose or resonant mount changes the levels above its own resonance).",
        "The measurement period represents the conditions assessed: a survey is a sample in"
        " time, and sources that were not running then are not in it.",
    ]
    if not ppv:
        span = f"{analysed[0]:.3g} s to {analysed[1]:.4g} s"
        items.append(f"Band levels are taken over the analysed span, {span} of the record"
                     + (f", as the largest rms of blocks of {averaging:g} s" if averaging
                        else ", as one rms over the span") + ".")
    return items


CAUTIONS_BANDS = (
    "A criterion curve is a design aid, not a guarantee: an instrument maker's own floor"
    " specification, where one exists, governs the instrument; confirm the curve with the"
    " maker and the user of the space before design decisions rest on it.",
    "Measured levels describe the floor as it was when measured. Future sources (new plant,"
    " traffic, construction, occupancy) and changes to the structure change them; where the"
    " margin is small, measure again when the building is complete and in use.",
    "This package is an engineering calculation to be read with local codes and licensed"
    " professional practice; it does not replace the judgement of the engineer in charge.",
)

CAUTIONS_PPV = (
    "Guideline values for construction vibration concern cosmetic damage to buildings in"
    " sound condition; they are not limits for people's comfort, for sensitive equipment or"
    " for buildings of special sensitivity (listed, damaged or poorly founded), for which"
    " lower values apply. For continuous vibration the guide values may need to be reduced.",
    "A monitoring record shows the events that occurred while it ran; it does not bound"
    " future work. Agree trigger levels and the response to an exceedance before work begins.",
    "This package is an engineering calculation to be read with local codes and licensed"
    " professional practice; it does not replace the judgement of the engineer in charge.",
)

CUSTOM_SOURCE = "given in the job file as a table of frequency and rms velocity"
