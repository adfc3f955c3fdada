"""Hostile job files: escaped text, a URL fetcher that reads nothing outside the job folder
and never touches the network, sanitised firm logos, and random documents that never
produce a traceback.
"""

from __future__ import annotations

import base64
import datetime as dt
import io
import json
import math
import re
import socket
import sys
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from reportgen.calc.plugin_set import load_plugin_set
from reportgen.cli import main
from reportgen.errors import JobError, RenderError, ThemeError
from reportgen.job.load import load_job

PASSWD = Path("/etc/passwd")

# Demo scenario (invented): Quillmoor Engineering Partners for Ferrow Quay Developments.
BASE_PACKAGE = {
    "title": "Pump P1 on spring mounts", "client": "Ferrow Quay Developments",
    "project": "Ferrow Quay Data Centre, plant room B", "job_number": "QEP-2417",
    "calc_number": "QEP-2417-V-191", "revision": "A", "date": "2026-12-01",
    "prepared_by": "T. Marsh", "checked_by": "L. Okafor-Reid", "approved_by": "S. Brannock",
}
BASE_CALC = {"id": "pump-p1", "plugin": "free_vibration", "title": "Pump P1 free vibration",
             "inputs": {"mass": "1200 kg", "stiffness": "350 kN/m", "damping_ratio": 0.05}}


# ---------------------------------------------------------------- TOML writing


def _toml_str(s: str) -> str:
    out = []
    for ch in s:
        if ch in '"\\':
            out.append("\\" + ch)
        elif ord(ch) < 0x20 or ord(ch) == 0x7F:
            out.append(f"\\u{ord(ch):04x}")
        else:
            out.append(ch)
    return '"' + "".join(out) + '"'


def _toml_value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, str):
        return _toml_str(v)
    if isinstance(v, (dt.date, dt.time)):
        return v.isoformat()
    if isinstance(v, list):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{_toml_str(k)} = {_toml_value(x)}" for k, x in v.items()) + "}"
    raise TypeError(type(v))


def to_toml(doc: dict) -> str:
    """Any TOML-able dict as top-level key = inline value lines (valid for every shape)."""
    return "".join(f"{_toml_str(k)} = {_toml_value(v)}\n" for k, v in doc.items())


# ---------------------------------------------------------------- safe rendering


@pytest.fixture
def no_network(monkeypatch):
    """Fail the test if anything tries to resolve a name or open a connection."""
    attempts: list[object] = []

    def refuse(*args, **kwargs):
        attempts.append(args)
        raise AssertionError(f"network access attempted: {args!r}")

    monkeypatch.setattr(socket.socket, "connect", refuse)
    monkeypatch.setattr(socket.socket, "connect_ex", refuse)
    monkeypatch.setattr(socket, "create_connection", refuse)
    monkeypatch.setattr(socket, "getaddrinfo", refuse)
    yield attempts
    assert not attempts


@pytest.fixture
def opened():
    """Record every file path opened (audit event 'open') while the test runs."""
    paths: list[str] = []
    state = {"on": True}

    def hook(event, args):
        if state["on"] and event == "open" and args and isinstance(args[0], (str, bytes)):
            paths.append(args[0] if isinstance(args[0], str) else args[0].decode("utf-8",
                                                                                  "replace"))

    sys.addaudithook(hook)  # audit hooks cannot be removed: switch this one off after
    yield paths
    state["on"] = False


@pytest.fixture
def folders(tmp_path):
    job = tmp_path / "job"
    job.mkdir()
    (job / "figure.svg").write_text('<svg xmlns="http://www.w3.org/2000/svg"/>')
    secret = tmp_path / "secret.txt"
    secret.write_text("not for the package")
    (job / "link-out.txt").symlink_to(secret)
    (job / "link-passwd").symlink_to(PASSWD)
    (job / "sub").mkdir()
    return job, secret


def _fetcher(root: Path):
    from reportgen.render.pdf import _fetcher_class

    return _fetcher_class()(root)


def test_fetcher_serves_files_inside_the_job_folder(folders, no_network):
    job, _ = folders
    fetcher = _fetcher(job)
    response = fetcher.fetch((job / "figure.svg").as_uri())
    assert b"<svg" in response.read()
    png = "data:text/plain;base64," + base64.b64encode(b"inline").decode()
    assert fetcher.fetch(png).read() == b"inline"


@pytest.mark.parametrize("url", [
    "file:///etc/passwd",
    "FILE:///etc/passwd",
    "file:/etc/passwd",
    "file://localhost/etc/passwd",
    "{job}/../secret.txt",
    "{job}/sub/../../secret.txt",
    "{job}/../../../../../../etc/passwd",
    "{job}/%2e%2e/secret.txt",
    "{job}/link-out.txt",
    "{job}/link-passwd",
    "{job}/sub",
    "{job}/missing.png",
    "http://example.invalid/logo.png",
    "https://example.invalid/font.woff2",
    "HTTPS://example.invalid/x.css",
    "ftp://example.invalid/x",
    "//example.invalid/x.png",
    "javascript:alert(1)",
])
def test_fetcher_refuses_everything_else(url, folders, no_network):
    from weasyprint.urls import FatalURLFetchingError

    job, _ = folders
    url = url.replace("{job}", job.as_uri())
    with pytest.raises(FatalURLFetchingError, match="refused"):
        _fetcher(job).fetch(url)


def test_fetcher_with_the_file_system_root_as_job_folder_serves_nothing(no_network):
    from weasyprint.urls import FatalURLFetchingError

    with pytest.raises(FatalURLFetchingError):
        _fetcher(Path("/")).fetch("file:///etc/passwd")


HOSTILE_HTML = [
    ('<link rel="attachment" href="file:///etc/passwd">', "/etc/passwd"),
    ('<img src="http://example.invalid/pixel.png">', "http://example.invalid"),
    ('<style>@import url("https://example.invalid/x.css");</style>', "https://example.invalid"),
    ('<img src="../secret.txt">', "secret.txt"),
    ('<img src="link-out.txt">', "link-out.txt"),
]


@pytest.mark.parametrize("fragment,named", HOSTILE_HTML, ids=[h[1] for h in HOSTILE_HTML])
def test_renderer_refuses_hostile_html(fragment, named, folders, no_network, opened):
    """Even raw HTML (never produced from job text) cannot read outside the job folder."""
    from reportgen.render.pdf import write_pdf

    job, secret = folders
    html = f"<html><head>{fragment}</head><body><p>x</p>{fragment}</body></html>"
    before = len(opened)
    with pytest.raises(RenderError, match="refused") as err:
        write_pdf(html, base_dir=job, attachments=[], date="2026-12-01")
    assert named in str(err.value)
    assert str(PASSWD) not in opened[before:] and str(secret) not in opened[before:]


HOSTILE_TITLE = "<img src=x onerror=alert(1)>"
HOSTILE_CALC_TITLE = "Pump {{ 7*7 }} {% if true %}yes{% endif %}"
HOSTILE_NOTE = ('Mass from survey. <link rel="attachment" href="file:///etc/passwd">'
                ' <img src="../secret.txt"> </div><script>alert(1)</script>')


def _squash(text: str) -> str:
    return re.sub(r"\s+", "", text)


def test_job_text_is_escaped_and_reads_nothing(tmp_path, no_network, opened, capsys):
    import pikepdf
    import pypdf

    job_dir = tmp_path / "job"
    job_dir.mkdir()
    secret = tmp_path / "secret.txt"
    secret.write_text("not for the package")
    calc = {**BASE_CALC, "title": HOSTILE_CALC_TITLE, "notes": HOSTILE_NOTE}
    pkg = {**BASE_PACKAGE, "title": HOSTILE_TITLE, "client": "<b>Ferrow</b> & Quay"}
    path = job_dir / "job.toml"
    path.write_text(to_toml({"package": pkg, "calc": [calc]}), encoding="utf-8")
    out = tmp_path / "out"
    before = len(opened)
    code = main(["build", str(path), "--out", str(out)])
    during_build = opened[before:]
    err = capsys.readouterr().err
    assert code in (0, 1), err
    assert str(PASSWD) not in during_build and str(secret) not in during_build
    assert str(path) in during_build  # the hook does see the build's own opens
    pdf_path = out / "QEP-2417-V-191-A.pdf"
    text = _squash("".join(page.extract_text() for page in pypdf.PdfReader(pdf_path).pages))
    for literal in (HOSTILE_TITLE, "{{ 7*7 }}", "{% if true %}yes{% endif %}",
                    '<link rel="attachment" href="file:///etc/passwd">',
                    "<script>alert(1)</script>", "<b>Ferrow</b> & Quay"):
        assert _squash(literal) in text, literal
    assert "Pump49" not in text  # the template engine did not evaluate job text
    with pikepdf.open(pdf_path) as pdf:
        names = set(pdf.attachments)
        assert names <= {"job.toml", "results.json", "manifest.json", "environment.lock"}, names
        passwd_head = PASSWD.read_bytes()[:20] if PASSWD.exists() else b"root:x:0:0"
        for name in names:
            data = pdf.attachments[name].get_file().read_bytes()
            assert passwd_head not in data
        raw = pdf_path.read_bytes()
        assert b"root:x:0:0" not in raw


def test_svg_logo_that_reads_a_file_is_refused(tmp_path, capsys):
    from reportgen.render.logo import firm_logo

    firm = tmp_path / "firm"
    firm.mkdir()
    (firm / "logo.svg").write_text(
        '<svg xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink">'
        '<image href="file:///etc/passwd" width="10" height="10"/></svg>')
    with pytest.raises(ThemeError, match="logo"):
        firm_logo(firm)


@pytest.mark.parametrize("svg", [
    '<svg><use xlink:href = \'file:///etc/passwd#x\'/></svg>',
    '<svg><rect style="fill: url( http://example.invalid/p.svg#a )"/></svg>',
    '<svg><style>@import "https://example.invalid/x.css";</style></svg>',
    '<!DOCTYPE svg [<!ENTITY e SYSTEM "file:///etc/passwd">]><svg><text>&e;</text></svg>',
    '<svg><script>alert(1)</script></svg>',
    '<svg><foreignObject><div/></foreignObject></svg>',
    '<svg><feImage href="other.png"/></svg>',
    '<svg><a href="&#102;ile:///etc/passwd"><rect/></a></svg>',
])
def test_svg_logo_variants_are_refused(svg, tmp_path):
    from reportgen.render.logo import firm_logo

    (tmp_path / "logo.svg").write_text(svg)
    with pytest.raises(ThemeError):
        firm_logo(tmp_path)


def test_clean_svg_logo_is_accepted(tmp_path):
    from reportgen.render.logo import firm_logo

    svg = ('<?xml version="1.0"?><svg xmlns="http://www.w3.org/2000/svg"'
           ' xmlns:xlink="http://www.w3.org/1999/xlink" viewBox="0 0 10 10"><defs>'
           '<linearGradient id="g"><stop offset="0"/></linearGradient></defs>'
           '<style>.a { fill: url(#g) }</style><rect class="a" width="10" height="10"/>'
           '<use xlink:href="#g"/></svg>')
    (tmp_path / "logo.svg").write_text(svg)
    uri = firm_logo(tmp_path)
    assert uri.startswith("data:image/svg+xml;base64,")
    assert base64.b64decode(uri.split(",", 1)[1]).decode() == svg


def test_build_with_hostile_logo_fails_and_writes_nothing(tmp_path, no_network, capsys):
    firm = tmp_path / "firm"
    firm.mkdir()
    (firm / "logo.svg").write_text('<svg><image href="file:///etc/passwd"/></svg>')
    path = tmp_path / "job.toml"
    path.write_text(to_toml({"package": BASE_PACKAGE, "calc": [BASE_CALC]}), encoding="utf-8")
    out = tmp_path / "out"
    code = main(["build", str(path), "--out", str(out), "--template-dir", str(firm)])
    err = capsys.readouterr().err
    assert code == 2, err
    assert "logo" in err and "Traceback" not in err
    assert not out.exists() or not any(out.iterdir())


# ---------------------------------------------------------------- random documents

PLUGINS = load_plugin_set()
_INPUT_NAMES = sorted({s.name for n in PLUGINS.names() for s in
                       PLUGINS.get(n).calc_type.inputs + PLUGINS.get(n).calc_type.criteria})
_UNITS = ["kg", "g", "lb", "N/m", "kN/m", "lbf/in", "N*s/m", "m", "mm", "in", "s", "ms", "h",
          "Hz", "rpm", "rad/s", "m/s", "mm/s", "g", "m/s**2", "kg*m", "deg", "%", "degC", "",
          "kg kg", "1/s", "m**-1", "furlong", "µm", "N", "kN", "?", "**", "(", "e"]

scalars = st.one_of(
    st.none(), st.booleans(), st.integers(min_value=-(10**30), max_value=10**30),
    st.floats(allow_nan=True, allow_infinity=True), st.text(max_size=30),
    st.dates(), st.times(),
)
quantity_text = st.builds(lambda n, u, sep: f"{n}{sep}{u}",
                          st.one_of(st.floats(allow_nan=True, allow_infinity=True),
                                    st.integers(min_value=-(10**6), max_value=10**6),
                                    st.sampled_from(["", "1e400", "-0", "1e-400", "nan", ".5",
                                                     "10**9**9", "1_000"])),
                          st.sampled_from(_UNITS), st.sampled_from([" ", "", "  "]))
values = st.recursive(
    st.one_of(scalars.filter(lambda v: v is not None), quantity_text),
    lambda inner: st.one_of(st.lists(inner, max_size=3),
                            st.dictionaries(st.text(max_size=8), inner, max_size=3)),
    max_leaves=6)
keys = st.one_of(st.sampled_from(_INPUT_NAMES + list(BASE_PACKAGE) + ["id", "plugin", "title",
                                                                      "notes", "inputs",
                                                                      "criteria", "calc",
                                                                      "package"]),
                 st.text(max_size=12))


@st.composite
def job_documents(draw):
    """Valid-looking jobs with random keys replaced, dropped or added, and random values."""
    pkg = dict(BASE_PACKAGE)
    calcs = []
    for i in range(draw(st.integers(min_value=0, max_value=3))):
        calc = json.loads(json.dumps(BASE_CALC))
        calc["id"] = f"calc-{i}"
        calc["plugin"] = draw(st.sampled_from(PLUGINS.names() + ["free_vibraton", "", "x"]))
        inputs = calc["inputs"]
        for _ in range(draw(st.integers(min_value=0, max_value=4))):
            inputs[draw(keys)] = draw(st.one_of(quantity_text, values))
        if draw(st.booleans()):
            calc["criteria"] = draw(st.dictionaries(keys, st.one_of(quantity_text, values),
                                                    max_size=3))
        for _ in range(draw(st.integers(min_value=0, max_value=2))):
            target = draw(st.sampled_from([calc, inputs]))
            if target and draw(st.booleans()):
                target.pop(draw(st.sampled_from(sorted(target))))
            else:
                target[draw(keys)] = draw(values)
        calcs.append(calc)
    for _ in range(draw(st.integers(min_value=0, max_value=3))):
        if draw(st.booleans()):
            pkg.pop(draw(st.sampled_from(sorted(pkg))), None)
        else:
            pkg[draw(keys)] = draw(values)
    doc: dict = {"package": pkg, "calc": calcs}
    if draw(st.booleans()):
        doc[draw(keys)] = draw(values)
    if draw(st.integers(min_value=0, max_value=9)) == 0:
        doc = draw(st.dictionaries(keys, values, max_size=4))
    return doc


FUZZ = settings(max_examples=60, deadline=None, derandomize=True,
                suppress_health_check=[HealthCheck.function_scoped_fixture,
                                       HealthCheck.too_slow, HealthCheck.data_too_large])


@FUZZ
@given(doc=job_documents())
def test_random_documents_load_or_raise_job_error(doc, tmp_path):
    path = tmp_path / "fuzz.toml"
    source = to_toml(doc).encode("utf-8")
    try:
        job = load_job(path, PLUGINS, source=source)
    except JobError as exc:
        assert exc.problems and all(p.message for p in exc.problems)
        assert all(str(path) == p.file for p in exc.problems)
    else:
        assert job.calcs


@FUZZ
@given(doc=job_documents())
def test_random_documents_through_check_never_trace_back(doc, tmp_path, capsys):
    path = tmp_path / "fuzz.toml"
    path.write_text(to_toml(doc), encoding="utf-8")
    code = main(["check", str(path)])
    err = capsys.readouterr().err
    assert code in (0, 2), err
    assert "Traceback" not in err and "internal error" not in err, err


@settings(max_examples=60, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(data=st.one_of(st.binary(max_size=300), st.text(max_size=300).map(str.encode)))
def test_random_bytes_never_trace_back(data, tmp_path):
    try:
        load_job(tmp_path / "bytes.toml", PLUGINS, source=data)
    except JobError as exc:
        assert exc.problems


@settings(max_examples=60, deadline=None, derandomize=True)
@given(text=st.one_of(quantity_text, st.text(max_size=40)),
       dim=st.sampled_from(["mass", "stiffness", "frequency", "acceleration", "dimensionless",
                            "length", "angle", "mass_length"]))
def test_random_quantity_text_is_a_value_or_a_unit_problem(text, dim):
    from reportgen.units import UnitProblem, parse_quantity

    try:
        value = parse_quantity(text, dim)
    except UnitProblem as exc:
        assert str(exc)
    else:
        assert math.isfinite(value)


def test_toml_writer_round_trips():
    import tomllib

    doc = {"package": {"a b": "x\"\\\n\u0001", "d": dt.date(2026, 12, 1)},
           "calc": [{"inputs": {"m": float("nan"), "k": [1, "2 kg"]}}], "z": -math.inf}
    back = tomllib.loads(to_toml(doc))
    assert back["package"] == doc["package"] and math.isnan(back["calc"][0]["inputs"]["m"])
    assert back["z"] == -math.inf and io.StringIO(to_toml(doc)).read().count("\n") == 3
