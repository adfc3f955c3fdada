"""The digital seal and verify of what the pages show.

A final sample package (QEP-2417-V-104 revision B, checked, approved, fit to issue)
is built once; an invented firm's self-signed certificate is made at test time with
`cryptography` (never committed). Each tampering the issue names is made here the way an
attacker would and must be detected and named; re-saving an untouched package with qpdf
or pikepdf, or linearising it, must not be.

Outside references: PAdES baseline signatures (ETSI EN 319 142-1) are produced and
validated by pyHanko; RFC 3161 time stamps come from pyHanko's local stand-in authority;
PDF/A-3b identification as ISO 19005-3 defines it (XMP pdfaid:part/conformance), read by
pikepdf; qpdf re-saves and linearises as an independent PDF tool.
"""

from __future__ import annotations

import http.server
import io
import re
import shutil
import subprocess
import threading
import tomllib
from pathlib import Path

import pikepdf
import pytest

from reportgen.calc.plugin_set import load_plugins
from reportgen.cli import main
from reportgen.package import seal
from reportgen.package.archive import embedded_of
from reportgen.package.shown import compare_pages, printed_numbers

REPO = Path(__file__).resolve().parent.parent
FINAL = REPO / "sample_jobs" / "qep-104-chiller-ch1.toml"
STEM = "QEP-2417-V-104-B"
PASS = "quillmoor test seal"  # the invented firm's test passphrase
EMBEDDED = ["environment.lock", "job.toml", "manifest.json", "results.json"]


@pytest.fixture(scope="module")
def built(tmp_path_factory) -> dict[str, Path]:
    from reportgen.pipeline.plan import BuildOptions, build_job

    root = tmp_path_factory.mktemp("seal")
    result = build_job(FINAL, load_plugins(), BuildOptions(out_dir=root / "out", workers=1))
    # one failing check (rocking not modelled) carries an accepted deviation: it still exits
    # 1, and --final and the seal accept it
    assert result.exit_code == 1 and result.review_state == "approved"
    key = root / "seal.p12"
    key.write_bytes(seal.make_test_key("S. Brannock", "Quillmoor Engineering Partners",
                                       PASS.encode()))
    return {"root": root, "pdf": result.pdf, "key": key}


@pytest.fixture(scope="module")
def sealed(built) -> Path:
    out = built["root"] / "sealed" / f"{STEM}.pdf"
    out.parent.mkdir()
    mp = pytest.MonkeyPatch()
    mp.setenv(seal.PASSPHRASE_ENV, PASS)
    try:
        assert main(["seal", str(built["pdf"]), "--key", str(built["key"]),
                     "--out", str(out)]) == 0
    finally:
        mp.undo()
    return out


@pytest.fixture(scope="module")
def rebuilt(built) -> bytes:
    from reportgen.package.archive import open_package
    from reportgen.pipeline.seal import rebuild_pdf

    folder = built["root"] / "rebuild"
    folder.mkdir()
    return rebuild_pdf(open_package(built["pdf"]), load_plugins(), folder)


def _doc_of(path: Path):
    import tempfile

    from reportgen.document.compute import compute_document
    from reportgen.package.archive import load_embedded_job, open_package

    plugins = load_plugins()
    with tempfile.TemporaryDirectory() as tmp:
        job = load_embedded_job(open_package(path), plugins, Path(tmp))
        return compute_document(job, plugins)


# ---------------------------------------------------------------- sealing


def test_sealed_package_keeps_pdfa3b_files_and_signs_into_the_seal_box(built, sealed):
    data, original = sealed.read_bytes(), built["pdf"].read_bytes()
    assert data.startswith(original)  # an incremental update: the build's bytes untouched
    assert seal.archival_problems(data, EMBEDDED) == []
    with pikepdf.open(sealed) as pdf:
        assert pdf.open_metadata().pdfa_status == "3B"  # ISO 19005-3 identification
        assert sorted(pdf.attachments) == EMBEDDED
        widgets = [a for a in pdf.pages[0].Annots if a.get("/FT") == "/Sig"]
        assert len(widgets) == 1
        rect = [float(v) for v in widgets[0].Rect]
        sig = widgets[0].V
        assert str(sig.Reason) == "Approved for issue"
        assert str(sig.SubFilter) == "/ETSI.CAdES.detached"  # PAdES baseline
    assert embedded_of(sealed) == embedded_of(built["pdf"])
    page, box = seal.seal_box(original)
    assert page == 0 and rect == pytest.approx(list(box), abs=0.01)
    # the box is the cover's dashed seal cell: 48 mm wide plus its padding (style.css)
    assert 48 * 72 / 25.4 < box[2] - box[0] + 6 < 56 * 72 / 25.4
    states = seal.seal_states(data)
    assert len(states) == 1 and states[0].holds and states[0].signer == "S. Brannock"
    text = subprocess.run(["pdftotext", "-f", "1", "-l", "1", str(sealed), "-"],
                          capture_output=True, text=True, check=True).stdout
    assert "Approved for issue" in text and "S. Brannock" in text  # the visible face


def test_verify_a_sealed_untouched_package(sealed, capsys):
    assert main(["verify", str(sealed), "--jobs", "1"]) == 0
    out = capsys.readouterr().out
    assert "seal 'EngineerSeal' by S. Brannock" in out
    assert "intact: the sealed revision is unchanged" in out
    assert "every page draws the same as a rebuild, and the file starts byte for byte" in out


def test_pem_key_and_a_wrong_passphrase(built, tmp_path, monkeypatch, capsys):
    pem = tmp_path / "seal.pem"
    pem.write_bytes(seal.make_test_key("T. Marsh", "Quillmoor Engineering Partners",
                                       b"pem pass", pem=True))
    monkeypatch.setenv(seal.PASSPHRASE_ENV, "not it")
    assert main(["seal", str(built["pdf"]), "--key", str(pem),
                 "--out", str(tmp_path / "x.pdf")]) == 2
    assert "wrong passphrase" in capsys.readouterr().err
    assert not (tmp_path / "x.pdf").exists()
    monkeypatch.setenv(seal.PASSPHRASE_ENV, "pem pass")
    key = seal.load_key(pem, b"pem pass")
    assert key.name == "T. Marsh"
    monkeypatch.delenv(seal.PASSPHRASE_ENV)
    # no terminal and no variable: told how to give the passphrase, nothing written
    assert main(["seal", str(built["pdf"]), "--key", str(pem),
                 "--out", str(tmp_path / "y.pdf")]) == 2
    assert seal.PASSPHRASE_ENV in capsys.readouterr().err
    assert not (tmp_path / "y.pdf").exists()


def test_passphrase_is_never_an_argument(built, capsys):
    with pytest.raises(SystemExit) as e:
        main(["seal", "--help"])
    assert e.value.code == 0
    helptext = capsys.readouterr().out
    assert "usage: reportgen seal" in helptext and "--passphrase" not in helptext
    with pytest.raises(SystemExit) as e:
        main(["seal", str(built["pdf"]), "--key", str(built["key"]), "--passphrase", PASS])
    assert e.value.code == 2


def _variant(tmp: Path, replace: dict[str, str]) -> Path:
    text = FINAL.read_text(encoding="utf-8")
    for old, new in replace.items():
        assert old in text
        text = text.replace(old, new)
    path = tmp / FINAL.name
    path.write_text(text, encoding="utf-8")
    return path


def _with_embedded_job(pdf_path: Path, job_path: Path, out: Path) -> Path:
    """The package with its job, results and manifest replaced consistently by those of
    ``job_path`` (computed, hashed): the pages are left as they were."""
    from reportgen.document.compute import compute_document
    from reportgen.document.results import results_bytes
    from reportgen.job.load import load_job
    from reportgen.package.archive import manifest_bytes

    plugins = load_plugins()
    job = load_job(job_path, plugins)
    doc = compute_document(job, plugins)
    results = results_bytes(doc)
    files = {"job.toml": job.source, "results.json": results,
             "manifest.json": manifest_bytes(doc, job, results)}
    with pikepdf.open(pdf_path) as pdf:
        for name, data in files.items():
            spec = pdf.attachments[name].obj
            spec.EF.F.write(data)
            spec.EF.F.Params.Size = len(data)
        pdf.save(out)
    return out


def test_an_unapproved_package_is_refused(built, tmp_path, monkeypatch, capsys):
    job = _variant(tmp_path, {'approved_by = "S. Brannock"': 'approved_by = ""'})
    pkg = _with_embedded_job(built["pdf"], job, tmp_path / "unapproved.pdf")
    before = pkg.read_bytes()
    monkeypatch.setenv(seal.PASSPHRASE_ENV, PASS)
    assert main(["seal", str(pkg), "--key", str(built["key"])]) == 2
    err = capsys.readouterr().err
    assert "cannot seal: the package has been checked but not approved" in err
    assert pkg.read_bytes() == before  # refused: nothing written


def test_a_package_with_a_failing_check_is_refused(built, tmp_path, monkeypatch, capsys):
    # a much stiffer mount: the isolation checks fail (the same rule --final applies)
    job = _variant(tmp_path, {'mass = "3200 kg"': 'mass = "32 kg"'})
    pkg = _with_embedded_job(built["pdf"], job, tmp_path / "failing.pdf")
    monkeypatch.setenv(seal.PASSPHRASE_ENV, PASS)
    assert main(["seal", str(pkg), "--key", str(built["key"])]) == 2
    assert "cannot seal: design checks fail" in capsys.readouterr().err


def test_a_sealed_package_is_not_sealed_twice(built, sealed, tmp_path, monkeypatch,
                                              capsys):
    monkeypatch.setenv(seal.PASSPHRASE_ENV, PASS)
    copy = tmp_path / "again.pdf"
    shutil.copy(sealed, copy)
    assert main(["seal", str(copy), "--key", str(built["key"])]) == 2
    assert "already sealed" in capsys.readouterr().err
    assert copy.read_bytes() == sealed.read_bytes()


def test_build_final_seal_key_and_in_place_sealing(built, tmp_path, monkeypatch, capsys):
    monkeypatch.setenv(seal.PASSPHRASE_ENV, PASS)
    assert main(["build", str(FINAL), "--out", str(tmp_path / "b"), "--seal-key",
                 str(built["key"])]) == 2  # without --final: refused
    assert "--seal-key needs --final" in capsys.readouterr().err
    assert not (tmp_path / "b").exists()
    # exit 1: its one failing check is accepted as a deviation, which --final allows
    assert main(["build", str(FINAL), "--out", str(tmp_path / "b"), "--final",
                 "--seal-key", str(built["key"]), "--jobs", "1"]) == 1
    pdf = tmp_path / "b" / f"{STEM}.pdf"
    states = seal.seal_states(pdf.read_bytes())
    assert len(states) == 1 and states[0].holds
    # the same bytes as the unsealed build, with the seal appended
    assert pdf.read_bytes().startswith(built["pdf"].read_bytes())


# ---------------------------------------------------------------- a time-stamp authority


class _TSA(http.server.BaseHTTPRequestHandler):
    stamper = None

    def do_POST(self):  # noqa: N802 (the standard library's name)
        from asn1crypto import tsp

        req = tsp.TimeStampReq.load(self.rfile.read(int(self.headers["Content-Length"])))
        body = self.stamper.request_tsa_response(req).dump()
        self.send_response(200)
        self.send_header("Content-Type", "application/timestamp-reply")
        self.send_header("Content-Length", str(len(body)))
        self.end_headers()
        self.wfile.write(body)

    def log_message(self, *args):
        pass


def _tsa_stamper():
    """pyHanko's stand-in RFC 3161 authority, with a time-stamping certificate made here."""
    import datetime as dt

    from asn1crypto import keys as asn1_keys
    from asn1crypto import x509 as asn1_x509
    from cryptography import x509
    from cryptography.hazmat.primitives import hashes, serialization
    from cryptography.hazmat.primitives.asymmetric import rsa
    from cryptography.x509.oid import ExtendedKeyUsageOID, NameOID
    from pyhanko.sign.timestamps.dummy_client import DummyTimeStamper

    key = rsa.generate_private_key(public_exponent=65537, key_size=2048)  # stand-in: RSA
    name = x509.Name([x509.NameAttribute(NameOID.COMMON_NAME, "Harrowgate Test TSA")])
    start = dt.datetime.now(dt.UTC) - dt.timedelta(days=1)
    cert = (x509.CertificateBuilder().subject_name(name).issuer_name(name)
            .public_key(key.public_key()).serial_number(x509.random_serial_number())
            .not_valid_before(start).not_valid_after(start + dt.timedelta(days=30))
            .add_extension(x509.ExtendedKeyUsage([ExtendedKeyUsageOID.TIME_STAMPING]),
                           critical=True)
            .sign(key, hashes.SHA256()))
    der_key = key.private_bytes(serialization.Encoding.DER,
                                serialization.PrivateFormat.PKCS8,
                                serialization.NoEncryption())
    return DummyTimeStamper(
        tsa_cert=asn1_x509.Certificate.load(cert.public_bytes(serialization.Encoding.DER)),
        tsa_key=asn1_keys.PrivateKeyInfo.load(der_key))


def test_seal_with_a_local_time_stamp_authority(built, tmp_path, monkeypatch, capsys):
    handler = type("Handler", (_TSA,), {"stamper": _tsa_stamper()})
    server = http.server.ThreadingHTTPServer(("127.0.0.1", 0), handler)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    try:
        monkeypatch.setenv(seal.PASSPHRASE_ENV, PASS)
        out = tmp_path / "stamped.pdf"
        url = f"http://127.0.0.1:{server.server_address[1]}/tsa"
        assert main(["seal", str(built["pdf"]), "--key", str(built["key"]), "--out",
                     str(out), "--tsa-url", url]) == 0
    finally:
        server.shutdown()
        server.server_close()
    states = seal.seal_states(out.read_bytes())
    assert states[0].holds and states[0].time_stamped
    # a TSA that does not answer: a clear refusal, nothing written
    assert main(["seal", str(built["pdf"]), "--key", str(built["key"]), "--out",
                 str(tmp_path / "none.pdf"), "--tsa-url", url]) == 2
    assert "time-stamp authority" in capsys.readouterr().err
    assert not (tmp_path / "none.pdf").exists()


# ---------------------------------------------------------------- tamperings


def _edit_glyph(data: bytes, page_no: int, old: str, new: str) -> bytes:
    """``old`` drawn as ``new`` on page ``page_no``: one glyph code changed in the content
    stream (the same font, the same place), saved by pikepdf."""
    from reportgen.render.selfcheck import _to_unicode_map

    pdf = pikepdf.open(io.BytesIO(data))
    page = pdf.pages[page_no - 1]
    stream = page.obj.Contents
    content = stream.read_bytes()
    for font in page.Resources.Font.values():
        inv = {v: k for k, v in (_to_unicode_map(font) or {}).items()}
        if not all(ch in inv for ch in old + new):
            continue
        codes = [b"<" + inv[ch].hex().encode() + b">" for ch in old]
        pattern = rb"-?[\d.]*".join(re.escape(c) for c in codes)
        m = re.search(pattern, content, re.IGNORECASE)
        if m is None:
            continue
        i = next(i for i, (a, b) in enumerate(zip(old, new, strict=True)) if a != b)
        hit = m.group(0).replace(codes[i], b"<" + inv[new[i]].hex().encode() + b">", 1)
        stream.write(content[:m.start()] + hit + content[m.end():])
        out = io.BytesIO()
        pdf.save(out)
        return out.getvalue()
    raise AssertionError(f"{old!r} is not drawn on page {page_no}")


def test_one_glyph_edited_is_named_with_its_page(built, rebuilt):
    data = built["pdf"].read_bytes()
    # the first page that draws f_n = 3.082 Hz (the summary): drawn as 3.182 Hz instead
    for page_no in range(1, 8):
        try:
            tampered = _edit_glyph(data, page_no, "3.082", "3.182")
            break
        except AssertionError:
            continue
    found = compare_pages(tampered, rebuilt, exact=True)
    assert len(found) == 1 and found[0].startswith(f"page {page_no}: shows '")
    assert "3.182" in found[0] and "3.082" in found[0]
    # the printed number no longer matches the embedded results either
    assert any("natural_frequency" in x for x in printed_numbers(tampered,
                                                                 _doc_of(built["pdf"])))


def test_a_number_drawn_over_page_1_is_named(built, rebuilt):
    pdf = pikepdf.open(built["pdf"])
    page = pdf.pages[0]
    page.Resources.Font["/Fx"] = pikepdf.Dictionary(Type=pikepdf.Name.Font,
                                                     Subtype=pikepdf.Name.Type1,
                                                     BaseFont=pikepdf.Name.Helvetica)
    page.contents_add(pikepdf.Stream(pdf, b"q 1 1 1 rg 100 500 80 20 re f 0 g BT /Fx 12 Tf"
                                     b" 102 505 Td (9.99 Hz) Tj ET Q"), prepend=False)
    out = io.BytesIO()
    pdf.save(out)
    found = compare_pages(out.getvalue(), rebuilt, exact=True)
    assert found[0].startswith("page 1: shows '9.99 Hz' where the rebuild shows 'nothing'")
    # the pages share one resource dictionary, which gained a font: each page says so
    assert all(line.endswith("the fonts, figures or images it draws with differ from the"
                             " rebuild's") for line in found)
    # an annotation drawn over a page is named too, even with the same text
    pdf = pikepdf.open(built["pdf"])
    ap = pikepdf.Stream(pdf, b"q 1 1 1 rg 0 0 80 20 re f Q")
    ap.Type, ap.Subtype, ap.BBox = pikepdf.Name.XObject, pikepdf.Name.Form, [0, 0, 80, 20]
    pdf.pages[0].Annots = pdf.make_indirect(pikepdf.Array([pdf.make_indirect(
        pikepdf.Dictionary(Type=pikepdf.Name.Annot, Subtype=pikepdf.Name.Square, F=4,
                           Rect=[100, 500, 180, 520],
                           AP=pikepdf.Dictionary(N=ap)))]))
    out = io.BytesIO()
    pdf.save(out)
    found = compare_pages(out.getvalue(), rebuilt, exact=True)
    assert found == ["page 1: 1 annotation(s) drawn over the page that the rebuild does"
                     " not have"]


def _append_update(data: bytes, page_ix: int, content: bytes) -> bytes:
    """An incremental update (appended bytes, the original left in place) that draws
    ``content`` on a page, written by pyHanko's incremental writer."""
    from pyhanko.pdf_utils import generic
    from pyhanko.pdf_utils.incremental_writer import IncrementalPdfFileWriter

    w = IncrementalPdfFileWriter(io.BytesIO(data), strict=False)
    ref = w.add_object(generic.StreamObject(stream_data=content))
    w.add_stream_to_page(page_ix, ref)
    out = io.BytesIO()
    w.write(out)
    assert out.getvalue().startswith(data)
    return out.getvalue()


def test_an_appended_update_that_changes_a_page(built, sealed, rebuilt, tmp_path,
                                                capsys):
    cover = b"q 1 1 1 rg 60 60 200 200 re f Q"  # paints over part of a page
    unsealed = _append_update(built["pdf"].read_bytes(), 1, cover)
    found = compare_pages(unsealed, rebuilt, exact=True)
    assert found == ["page 2: its drawing (content stream) differs from the rebuild's"]
    # sealed: the seal's own revision is still intact; the update after it is a failure
    data = _append_update(sealed.read_bytes(), 1, cover)
    [state] = seal.seal_states(data)
    assert state.intact and state.valid and not state.covers_file
    assert state.later_revisions == 1 and not state.holds
    path = tmp_path / "appended.pdf"
    path.write_bytes(data)
    assert main(["verify", str(path), "--jobs", "1"]) == 1
    out = capsys.readouterr().out
    assert "intact: the sealed revision is unchanged" in out
    assert "CHANGED AFTER SEALING: 1 incremental update(s)" in out
    assert "after sealing, page 2: its drawing (content stream) differs" in out
    assert "ALTERED: page 2" in out


def test_embedded_job_results_and_manifest_replaced_consistently(built, tmp_path, capsys):
    job = _variant(tmp_path, {'mass = "3200 kg"': 'mass = "3150 kg"'})
    pkg = _with_embedded_job(built["pdf"], job, tmp_path / "swapped.pdf")
    assert main(["verify", str(pkg), "--jobs", "1"]) == 1
    out = capsys.readouterr().out
    # the embedded files agree with each other and with a recomputation, so the results
    # rows agree; the pages do not: f_n = (1/2π)√(k/m) moves with the mass (Thomson &
    # Dahleh, Ch. 2), 3200 kg → 3150 kg takes the printed 3.082 Hz to 3.082·√(3200/3150)
    assert "ALTERED: the results agree with a fresh rebuild" in out
    f_new = 3.082 * (3200 / 3150) ** 0.5
    assert (f"natural_frequency = {f_new:.3f} Hz, which the summary does not print"
            in out)
    assert re.search(r"ALTERED: page \d+: shows '3200' where the rebuild shows '3150'", out)
    assert re.search(r"ALTERED: page \d+: shows '3.082' where the rebuild shows", out)


# ---------------------------------------------------------------- broken and forged seals


def test_a_forged_signature_is_named(sealed, tmp_path):
    data = bytearray(sealed.read_bytes())
    [state] = seal.seal_states(bytes(data))
    with pikepdf.open(sealed) as pdf:
        byte_range = [int(v) for v in pdf.pages[0].Annots[0].V.ByteRange]
    # the signature value lies in /Contents, outside the signed bytes: change its end
    hole = bytes(data[byte_range[1]:byte_range[2]])
    sig_hex = hole.strip(b"<>").rstrip(b"0")
    at = byte_range[1] + 1 + len(sig_hex) - 8
    data[at:at + 4] = b"0000" if bytes(data[at:at + 4]) != b"0000" else b"1111"
    [forged] = seal.seal_states(bytes(data))
    assert forged.intact and not forged.valid and not forged.holds
    assert any("FORGED" in line for line in seal.describe(forged))


def test_a_byte_changed_inside_the_sealed_bytes_breaks_the_seal(sealed):
    data = bytearray(sealed.read_bytes())
    at = data.find(b"/Producer")  # the document information, inside the signed range
    data[at + 12] = ord("X") if data[at + 12] != ord("X") else ord("Y")
    [state] = seal.seal_states(bytes(data))
    assert not state.intact and not state.holds
    assert any("BROKEN" in line for line in seal.describe(state))


def test_a_sealed_package_resaved_is_no_longer_covered(sealed, tmp_path, capsys):
    out = tmp_path / "resaved.pdf"
    with pikepdf.open(sealed) as pdf:
        pdf.save(out)
    [state] = seal.seal_states(out.read_bytes())
    assert state.resaved and not state.holds
    assert main(["verify", str(out), "--jobs", "1"]) == 1
    text = capsys.readouterr().out
    assert "it is no longer covered by its seal" in text
    # what it shows is still what the sealed revision showed
    assert "pages: every page draws the same as a rebuild" in text
    assert "ALTERED: page" not in text


def test_a_signature_field_outside_the_seal_box_counts_as_drawn_over(sealed, rebuilt):
    pdf = pikepdf.open(sealed)
    widget = next(a for a in pdf.pages[0].Annots if a.get("/FT") == "/Sig")
    widget.Rect = [60, 60, 200, 200]  # the seal's face moved over the page's content
    out = io.BytesIO()
    pdf.save(out)
    assert compare_pages(out.getvalue(), rebuilt, exact=True) == [
        "page 1: 1 annotation(s) drawn over the page that the rebuild does not have"]
    assert compare_pages(sealed.read_bytes(), rebuilt, exact=True) == []


# ---------------------------------------------------------------- no false alarms


@pytest.mark.parametrize("tool", ["qpdf", "qpdf-linearize", "pikepdf"])
def test_untouched_package_resaved_by_common_tools_is_not_an_alteration(built, rebuilt,
                                                                        tmp_path, tool):
    out = tmp_path / f"{tool}.pdf"
    if tool == "pikepdf":
        with pikepdf.open(built["pdf"]) as pdf:
            pdf.save(out, object_stream_mode=pikepdf.ObjectStreamMode.generate)
    else:
        extra = ["--linearize"] if tool == "qpdf-linearize" else []
        subprocess.run(["qpdf", *extra, str(built["pdf"]), str(out)], check=True)
    data = out.read_bytes()
    assert data != built["pdf"].read_bytes()
    assert compare_pages(data, rebuilt, exact=True) == []
    assert compare_pages(data, rebuilt, exact=False) == []
    assert printed_numbers(data, _doc_of(built["pdf"])) == []
    assert seal.seal_states(data) == []


def test_verify_an_untouched_package_resaved_by_qpdf(built, tmp_path, capsys):
    out = tmp_path / "q.pdf"
    subprocess.run(["qpdf", "--linearize", str(built["pdf"]), str(out)], check=True)
    assert main(["verify", str(out), "--jobs", "1"]) == 0
    assert "every page draws the same as a rebuild" in capsys.readouterr().out


# ---------------------------------------------------------------- diff


def test_diff_between_a_sealed_revision_and_its_successor(built, sealed, tmp_path, capsys):
    from reportgen.pipeline.plan import BuildOptions, build_job

    job = _variant(tmp_path, {'revision = "B"\ndate': 'revision = "C"\ndate',
                              'mass = "3200 kg"': 'mass = "3300 kg"'})
    result = build_job(job, load_plugins(), BuildOptions(out_dir=tmp_path / "c", workers=1))
    assert main(["diff", str(sealed), str(result.pdf)]) == 0
    out = capsys.readouterr().out
    assert "revision B" in out and "revision C" in out
    assert '"3200 kg" → "3300 kg"' in out
    assert tomllib.loads(job.read_text(encoding="utf-8"))["package"]["revision"] == "C"
