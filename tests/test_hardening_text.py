"""Text fields of a job: one rule for every field (controls, noncharacters, bidi controls,
edge white space in names, empty dates), deep nesting, revision dates before 1904, and
XMP metadata that stays well formed for the widest valid text.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from hardening_d_support import FREE, free_calc, job_text, run, write_job

from reportgen.job.load import MAX_DEPTH, text_problem

# Characters XML 1.0 (and so XMP) cannot carry, or that display text in another order.
BAD_CHARS = {
    "BEL": "\x07", "VT": "\x0b", "FF": "\x0c", "ESC": "\x1b", "NUL": "\x00", "DEL": "\x7f",
    "C1 NEL": "\x85", "C1 CSI": "\x9b", "U+FFFF": "\uffff", "U+FFFE": "\ufffe",
    "U+FDD0": "\ufdd0", "U+1FFFF": "\U0001ffff", "RLO": "\u202e", "LRE": "\u202a",
    "RLI": "\u2067", "PDI": "\u2069",
}

# (where, field named in the message, job text builder)
FIELDS = {
    "title": ("package.title", lambda v: job_text({"title": f"Pump {v} P1"})),
    "client": ("package.client", lambda v: job_text({"client": f"Ferrow{v}"})),
    "prepared_by": ("package.prepared_by", lambda v: job_text({"prepared_by": f"T.{v}"})),
    "job_number": ("package.job_number", lambda v: job_text({"job_number": f"QEP{v}2417"})),
    "calc title": ("title", lambda v: job_text(calcs=[{**FREE, "title": f"Pump{v}"}])),
    "calc notes": ("notes", lambda v: job_text(calcs=[{**FREE, "notes": f"Mass {v} base"}])),
    "history description": ("package.revision_history[0].description", lambda v: job_text(
        {"revision_history": [{"revision": "A", "date": "2026-12-01",
                               "description": f"First{v}issue"}]})),
    "quantity": ("inputs.mass", lambda v: job_text(calcs=[free_calc(mass=f"1200{v} kg")])),
}


def _refused(tmp_path: Path, text: str, field: str) -> str:
    path = write_job(tmp_path / "job", text)
    out = tmp_path / "out"
    code, stdout, err = run(["build", str(path), "--out", str(out)])
    assert code == 2, err
    assert str(path) in err and f"field '{field}'" in err, err
    assert "Traceback" not in err
    assert not out.exists() or not any(out.iterdir())
    return err


@pytest.mark.parametrize("char", list(BAD_CHARS), ids=list(BAD_CHARS))
@pytest.mark.parametrize("where", list(FIELDS))
def test_bad_characters_refused_in_every_text_field(tmp_path, where, char):
    field, build = FIELDS[where]
    err = _refused(tmp_path, build(BAD_CHARS[char]), field)
    # the message escapes what it quotes: no raw control character reaches the terminal
    assert not any(c in err for c in "\x07\x1b\x9b\u202e")


@pytest.mark.parametrize("field,value", [
    ("calc_number", "QEP-2417-V-301\n"), ("revision", "A\n"), ("revision", " A"),
    ("job_number", "QEP-2417 "), ("job_number", "\tQEP-2417"),
])
def test_names_with_edge_white_space_refused(tmp_path, field, value):
    _refused(tmp_path, job_text({field: value}), f"package.{field}")


def test_calc_id_with_trailing_newline_refused(tmp_path):
    # a '$' anchor accepts a trailing newline; the id rule must not
    _refused(tmp_path, job_text(calcs=[{**FREE, "id": "pump-p1\n"}]), "id")


def test_history_revision_with_newline_refused(tmp_path):
    _refused(tmp_path, job_text({"revision_history": [
        {"revision": "A\n", "date": "2026-12-01", "description": "First issue"}]}),
        "package.revision_history[0].revision")


def test_line_break_refused_in_single_line_fields(tmp_path):
    _refused(tmp_path, job_text({"title": "Pump P1\non springs"}), "package.title")


@pytest.mark.parametrize("field", ["date", "prepared_date", "checked_date"])
def test_empty_date_refused(tmp_path, field):
    _refused(tmp_path, job_text({field: ""}), f"package.{field}")


def test_empty_history_date_refused(tmp_path):
    _refused(tmp_path, job_text({"revision_history": [
        {"revision": "A", "date": "", "description": "First issue"}]}),
        "package.revision_history[0].date")


def test_lone_surrogate_and_noncharacters_refused_by_the_rule():
    # TOML cannot spell a lone surrogate; the rule refuses it for any other caller
    assert "surrogate" in (text_problem("Pump \ud800", "title") or "")
    assert "noncharacter" in (text_problem("Pump \U0010fffe", "title") or "")
    assert text_problem("Mass\nof the base\twith pads\r\n", "notes") is None
    assert text_problem("Mass\nof the base", "title") is not None


def test_free_text_may_hold_line_breaks_and_tabs(tmp_path):
    path = write_job(tmp_path, job_text(calcs=[{**FREE, "notes": "Line one\n\tLine two"}]))
    code, _, err = run(["check", str(path)])
    assert code == 0, err


# ---------------------------------------------------------------- nesting


@pytest.mark.parametrize("depth", [MAX_DEPTH + 2, 400, 5000])
@pytest.mark.parametrize("command", ["check", "build"])
@pytest.mark.parametrize("shape", ["array", "inline table"])
def test_deep_nesting_is_exit_2_naming_the_field(tmp_path, depth, command, shape):
    value = ("[" * depth + "]" * depth if shape == "array"
             else "{a = " * depth + "1" + "}" * depth)
    text = job_text().replace('"mass" = "1200 kg"', f"mass = {value}")
    assert value in text
    path = write_job(tmp_path / "job", text)
    out = tmp_path / "out"
    args = [command, str(path)] + (["--out", str(out)] if command == "build" else [])
    code, _, err = run(args)
    assert code == 2, err
    assert "nested too deeply" in err and str(path) in err
    assert "field 'inputs.mass'" in err, err
    assert not out.exists()


def test_ordinary_nesting_still_loads(tmp_path):
    # mount positions are the deepest legitimate values: calc -> inputs -> list -> pair
    calc = {"id": "chiller", "plugin": "isolation", "title": "Chiller CH1 isolation",
            "inputs": {"mass": "4200 kg", "speed": "1480 rpm", "mounts": 4,
                       "stiffness_per_mount": "420 kN/m", "cg_x": "1.1 m", "cg_y": "0.5 m",
                       "mount_positions": [["0 m", "0 m"], ["2 m", "0 m"], ["2 m", "1 m"],
                                           ["0 m", "1 m"]]}}
    path = write_job(tmp_path, job_text(calcs=[calc]))
    code, _, err = run(["check", str(path)])
    assert code == 0, err


# ---------------------------------------------------------------- dates and XMP


@pytest.mark.parametrize("date", ["1900-01-01", "0001-01-01"])
def test_revision_dates_before_1904_build(tmp_path, monkeypatch, date):
    """Fonts are subset by fontTools where HarfBuzz-subset is missing; fontTools counts
    seconds from 1904 unsigned, so the stamp derived from the revision date must not fall
    before it (the date itself still prints as written)."""
    import pikepdf
    import weasyprint.pdf.fonts as wfonts

    monkeypatch.setattr(wfonts, "harfbuzz_subset", None)  # the fontTools path
    path = write_job(tmp_path, job_text({"date": date}))
    out = tmp_path / "out"
    code, _, err = run(["build", str(path), "--out", str(out), "--jobs", "1"])
    assert code == 0, err
    with pikepdf.open(out / "QEP-2417-V-301-A.pdf") as pdf:
        meta = pdf.open_metadata()
        assert meta.pdfa_status == "3B"
        assert str(meta.get("xmp:CreateDate")).startswith(date)


WIDE = {
    "title": "Pompe P1 sur ressorts — Größe ω₀ ≈ 5 Hz · 泵P1隔振 · 🔧 · משאבה P1 · مضخة P1",
    "client": "Ferrow Quay Développements ΕΠΕ",
    "project": "Κέντρο δεδομένων Ferrow Quay, 機房 B",
    "prepared_by": "T. Marsh-Ñúñez",
    "firm": "Quillmoor Engineering Partners — مكتب",
}


def test_xmp_is_well_formed_for_the_widest_valid_text(tmp_path):
    import pikepdf

    path = write_job(tmp_path, job_text(WIDE, calcs=[{
        **FREE, "title": "Pump P1 — Ω 振動 🔧 שלב א", "notes": "Zeile 1\nZeile 2\tEnde"}]))
    out = tmp_path / "out"
    code, _, err = run(["build", str(path), "--out", str(out), "--jobs", "1"])
    assert code == 0, err
    with pikepdf.open(out / "QEP-2417-V-301-A.pdf") as pdf:
        meta = pdf.open_metadata()  # parses the XMP packet as XML
        assert meta.pdfa_status == "3B"
        assert WIDE["title"] in str(meta.get("dc:title"))


# ---------------------------------------------------------------- self-check of valid text

SCRIPT_TITLES = ["משאבה P1 על קפיצים", "مضخة P1 على نوابض", "Pump ﬁve ﬂow ﬀ", "Pump 12 שלב 3 א",
                 "Chiller CH1 — Ω 振動 🔧 שלב א"]


def test_right_to_left_and_ligature_titles_pass_the_self_check(tmp_path):
    """A correct PDF draws right-to-left runs in visual order and may read a ligature back
    as its letters (Unicode UAX #9 bidi algorithm; NFKC, UAX #15): the self-check accepts
    both, and still refuses a title that is not on the page."""
    import dataclasses

    from reportgen.calc.plugin_set import load_plugin_set
    from reportgen.document.compute import compute_document
    from reportgen.errors import RenderError
    from reportgen.job.load import load_job
    from reportgen.render.selfcheck import self_check

    calcs = [{**FREE, "id": f"calc-{i}", "title": t} for i, t in enumerate(SCRIPT_TITLES)]
    path = write_job(tmp_path, job_text(calcs=calcs))
    out = tmp_path / "out"
    code, _, err = run(["build", str(path), "--out", str(out), "--jobs", "1"])
    assert code == 0, err
    pdf = (out / "QEP-2417-V-301-A.pdf").read_bytes()
    plugins = load_plugin_set()
    doc = compute_document(load_job(path, plugins), plugins)
    self_check(pdf, doc)
    for wrong in ("משאבה P2 על קפיצים", "مضخة P1 على نوابص", "Pump ﬁve ﬂows"):
        bad = dataclasses.replace(doc, sections=(
            dataclasses.replace(doc.sections[0], title=wrong),) + tuple(doc.sections[1:]))
        with pytest.raises(RenderError, match="section title"):
            self_check(pdf, bad)


def test_shown_rule():
    from reportgen.render.selfcheck import shown

    page = "Contents1Pumpא בלש2הבאשמP1םיציפקלע".replace(" ", "")
    assert shown(page, "Pumpשלבא")
    assert shown(page, "משאבהP1עלקפיצים")
    assert not shown(page, "משאבהP2עלקפיצים")  # the left-to-right part differs
    assert not shown(page, "משאבהP1עלקפיץ")  # letters missing
    assert shown("xxלאyy", "אל") and shown("xxאלyy", "אל")
