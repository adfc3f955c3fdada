"""The reproducible archive: embedded files, determinism, verify, extract and diff.

Real builds are shared through module-scoped fixtures (each takes a few seconds).
"""

from __future__ import annotations

import hashlib
import io
import json
import math
import os
import shutil
import subprocess
import sys
import threading
from pathlib import Path

import pikepdf
import pytest
from conftest import assert_case

from reportgen.calc.plugin_set import load_plugins
from reportgen.cli import main
from reportgen.errors import JobError
from reportgen.job.load import load_job
from reportgen.package import archive

REPO = Path(__file__).resolve().parent.parent
SAMPLE_B = REPO / "sample_jobs" / "qep-101-pump-p1.toml"
SAMPLE_A = REPO / "sample_jobs" / "history" / "qep-101-pump-p1-revA.toml"
SURVEY = b"point,f_Hz,v_rms_mm_s\nP1-N,24.8,0.41\nP1-S,24.8,0.38\n"  # invented readings

# In a subprocess: take WeasyPrint's fontTools path, as on a machine without HarfBuzz's
# subsetting library, and say so on stderr so the test knows the path was taken.
FONTTOOLS_BUILD = """
import sys
import weasyprint.pdf.fonts as fonts
fonts.harfbuzz_subset = None
_orig = fonts.Font._fonttools_subset
def _marked(self, *a, **k):
    sys.stderr.write("fontTools subsetting\\n")
    return _orig(self, *a, **k)
fonts.Font._fonttools_subset = _marked
from reportgen.cli import main
sys.exit(main(sys.argv[1:]))
"""


def _with_package_keys(source: str, extra: str) -> str:
    """The job text with ``extra`` lines added at the end of its [package] table."""
    head, sep, rest = source.partition("\n[[package.revision_history]]")
    assert sep, "the sample job has a revision history"
    return head.rstrip("\n") + "\n" + extra + "\n" + sep + rest


@pytest.fixture(scope="module")
def work(tmp_path_factory) -> Path:
    """jobs/p1.toml = sample revision B + previous package + an attachment; a/ = revision A.

    Revision A's package is built into jobs/prev/: a job may only name files inside its
    own folder (previous_package follows the one safe-path rule).
    """
    root = tmp_path_factory.mktemp("archive")
    (root / "a").mkdir()
    shutil.copy(SAMPLE_A, root / "a" / SAMPLE_A.name)
    jobs = root / "jobs"
    (jobs / "survey").mkdir(parents=True)
    (jobs / "survey" / "p1-readings.csv").write_bytes(SURVEY)
    text = _with_package_keys(SAMPLE_B.read_text(encoding="utf-8"),
                              'previous_package = "prev/QEP-2417-V-101-A.pdf"\n'
                              'attachments = ["survey/p1-readings.csv"]')
    (jobs / "p1.toml").write_bytes(text.encode("utf-8"))
    return root


@pytest.fixture(scope="module")
def rev_a(work: Path) -> Path:
    from reportgen.pipeline.plan import BuildOptions, build_job

    result = build_job(work / "a" / SAMPLE_A.name, load_plugins(),
                       BuildOptions(out_dir=work / "jobs" / "prev", cache_dir=work / "cache-a",
                                    workers=1))
    assert result.exit_code == 0
    return result.pdf


def _run_build(work: Path, out: str, cache: str | None, fonttools: bool,
               cwd: Path) -> subprocess.CompletedProcess:
    env = {**os.environ, "MPLBACKEND": "Agg"}
    env.pop("SOURCE_DATE_EPOCH", None)
    argv = ["build", str(work / "jobs" / "p1.toml"), "--out", str(work / out), "--jobs", "1"]
    if cache is None:
        argv.append("--no-cache")
    else:
        env["REPORTGEN_CACHE_DIR"] = str(work / cache)
    cwd.mkdir(parents=True, exist_ok=True)
    head = ["-c", FONTTOOLS_BUILD] if fonttools else ["-m", "reportgen.cli"]
    return subprocess.run([sys.executable, *head, *argv], cwd=cwd, env=env,
                          capture_output=True, text=True, timeout=300)


@pytest.fixture(scope="module")
def builds(work: Path, rev_a: Path) -> dict[str, subprocess.CompletedProcess]:
    """Four builds of p1.toml, each in a fresh process, output folder and working folder.

    hb-cold/hb-warm share one asset cache (cold, then warm); ft-1/ft-2 take the fontTools
    font path (one with a cold cache of its own, one with no cache). The two chains run
    side by side to keep the module fast.
    """
    runs: dict[str, subprocess.CompletedProcess] = {}

    def chain(specs):
        for name, cache, ft in specs:
            runs[name] = _run_build(work, f"out-{name}", cache, ft, work / f"cwd-{name}")

    t1 = threading.Thread(target=chain, args=([("hb-cold", "cache-1", False),
                                               ("hb-warm", "cache-1", False)],))
    t2 = threading.Thread(target=chain, args=([("ft-1", "cache-2", True),
                                               ("ft-2", None, True)],))
    t1.start()
    t2.start()
    t1.join()
    t2.join()
    for name, run in runs.items():
        assert run.returncode == 0, f"{name}: {run.stderr}"
    return runs


def _pdf(work: Path, name: str) -> Path:
    return work / f"out-{name}" / "QEP-2417-V-101-B.pdf"


def _results(work: Path, name: str) -> Path:
    return work / f"out-{name}" / "QEP-2417-V-101-B.results.json"


# ---------------------------------------------------------------- determinism

def test_two_processes_cold_and_warm_cache_give_identical_bytes(work, builds):
    assert _pdf(work, "hb-cold").read_bytes() == _pdf(work, "hb-warm").read_bytes()
    assert _results(work, "hb-cold").read_bytes() == _results(work, "hb-warm").read_bytes()
    assert any((work / "cache-1").rglob("*")), "the first build filled the asset cache"


def test_fonttools_font_path_is_deterministic_too(work, builds):
    # fontTools stamps the clock into each subset font unless SOURCE_DATE_EPOCH is set
    assert "fontTools subsetting" in builds["ft-1"].stderr
    assert "fontTools subsetting" in builds["ft-2"].stderr
    assert _pdf(work, "ft-1").read_bytes() == _pdf(work, "ft-2").read_bytes()
    assert _results(work, "ft-1").read_bytes() == _results(work, "hb-cold").read_bytes()


def test_no_build_paths_or_clock_leak_into_the_package(work, builds):
    data = _pdf(work, "hb-cold").read_bytes()
    with pikepdf.open(io.BytesIO(data)) as pdf:
        texts = [data] + [spec.get_file().read_bytes() for spec in pdf.attachments.values()]
        for blob in texts:
            assert str(work).encode() not in blob
        info = pdf.docinfo
        assert str(info["/CreationDate"]).startswith("D:20261201")  # the job's date
        assert str(info["/ModDate"]).startswith("D:20261201")
        for spec in pdf.attachments.values():
            params = spec.obj.EF.F.Params
            assert str(params.CreationDate).startswith("D:20261201")


# ---------------------------------------------------------------- the archival PDF

def test_pdfa3b_metadata_and_embedded_files(work, builds):
    with pikepdf.open(_pdf(work, "hb-cold")) as pdf:
        meta = pdf.open_metadata()
        assert meta.pdfa_status == "3B"
        assert meta["dc:title"].startswith("Chilled-water pump P1")
        assert "T. Marsh" in str(meta.get("dc:creator"))
        intents = pdf.Root.OutputIntents
        assert len(intents) >= 1 and intents[0].S == "/GTS_PDFA1"
        assert "/DestOutputProfile" in intents[0]
        info = pdf.docinfo
        assert str(info.Title) == ("Chilled-water pump P1 on spring mounts: natural"
                                   " frequency and free response")
        assert str(info.Author) == "T. Marsh"  # author = preparer
        assert "QEP-2417" in str(info.Subject) and "QEP-2417-V-101" in str(info.Subject)
        assert "QEP-2417-V-101" in str(info.Keywords)
        names = sorted(pdf.attachments)
        assert names == ["environment.lock", "job.toml", "manifest.json", "p1-readings.csv",
                         "results.json"]
        af = {spec.objgen for spec in pdf.Root.AF if spec.is_indirect}
        relationships = {}
        for name, spec in pdf.attachments.items():
            assert spec.obj.objgen in af, f"{name} is not in the catalogue's /AF"
            relationships[name] = str(spec.obj.AFRelationship)
            assert "/Subtype" in spec.obj.EF.F
        assert relationships == {"job.toml": "/Source", "results.json": "/Data",
                                 "manifest.json": "/Supplement", "p1-readings.csv": "/Data",
                                 "environment.lock": "/Supplement"}
        assert str(pdf.attachments["job.toml"].obj.EF.F.Subtype) == "/application/toml"
        assert str(pdf.attachments["p1-readings.csv"].obj.EF.F.Subtype) == "/text/csv"


def test_manifest_hashes_versions_and_date(work, builds):
    with pikepdf.open(_pdf(work, "hb-cold")) as pdf:
        files = {n: s.get_file().read_bytes() for n, s in pdf.attachments.items()}
    manifest = json.loads(files["manifest.json"])
    assert manifest["format"] == "reportgen.manifest/1"
    # hashlib is the reference SHA-256 (FIPS 180-4)
    assert manifest["job_file"]["sha256"] == hashlib.sha256(files["job.toml"]).hexdigest()
    assert manifest["results"]["sha256"] == hashlib.sha256(files["results.json"]).hexdigest()
    assert manifest["attachments"] == [{
        "name": "p1-readings.csv", "path": "survey/p1-readings.csv",
        "sha256": hashlib.sha256(SURVEY).hexdigest(), "size": len(SURVEY)}]
    assert manifest["build_date"] == "2026-12-01"  # the job's date, not the clock
    for lib in ("numpy", "scipy", "matplotlib", "pint", "jinja2", "weasyprint"):
        assert manifest["libraries"][lib] not in ("", "not installed")
    assert manifest["python"] and manifest["platform"] and manifest["reportgen"]
    assert manifest["plugins"]["free_vibration"]["version"]
    assert files["results.json"] == _results(work, "hb-cold").read_bytes()


def test_every_built_package_has_clean_pdf_syntax(work, builds, rev_a):
    packages = [rev_a] + [_pdf(work, n) for n in ("hb-cold", "ft-1")]
    for path in packages:
        with pikepdf.open(path) as pdf:
            assert pdf.check_pdf_syntax() == [], path
    qpdf = shutil.which("qpdf")
    if qpdf is None:
        pytest.skip("the qpdf binary is not installed (pikepdf's bundled qpdf checked above)")
    for path in packages:
        run = subprocess.run([qpdf, "--check", str(path)], capture_output=True, text=True)
        assert run.returncode == 0, run.stdout + run.stderr
        assert "No syntax or stream encoding errors" in run.stdout


def test_changes_section_names_the_previous_revision(work, builds):
    from pypdf import PdfReader

    pages = PdfReader(_pdf(work, "hb-cold")).pages[:6]  # the front matter holds it
    text = " ".join((p.extract_text() or "") for p in pages)
    text = " ".join(text.split())
    assert "Changes since revision A (2026-11-12)" in text
    # a table in plain words and display units (issue 15): the input by its description
    assert "Vibrating mass 1100 kg 1200 kg changed" in text
    # f_n = (1/2π)·√(k/m) (Thomson & Dahleh, Ch. 2): the mass went 1100 → 1200 kg
    rel = math.sqrt(1100 / 1200) - 1
    assert f"down {abs(rel) * 100:.3g} %" in text
    assert "inputs.mass" not in text and "**" not in text


# ---------------------------------------------------------------- extract

def test_round_trip_extract_gives_the_job_bytes(work, builds, tmp_path, capsys):
    out = tmp_path / "x"
    assert main(["extract", str(_pdf(work, "hb-cold")), str(out)]) == 0
    assert (out / "job.toml").read_bytes() == (work / "jobs" / "p1.toml").read_bytes()
    assert (out / "p1-readings.csv").read_bytes() == SURVEY
    assert (out / "results.json").read_bytes() == _results(work, "hb-cold").read_bytes()
    assert sorted(p.name for p in out.iterdir()) == [
        "environment.lock", "job.toml", "manifest.json", "p1-readings.csv", "results.json"]


def _crafted(path: Path, names: list[str]) -> Path:
    pdf = pikepdf.new()
    pdf.add_blank_page()
    for name in names:
        pdf.attachments[name] = pikepdf.AttachedFileSpec(pdf, b"payload\n", filename=name)
    pdf.save(path)
    return path


def test_extract_refuses_path_traversal(tmp_path, capsys):
    crafted = _crafted(tmp_path / "crafted.pdf", ["../../evil.txt", "/etc/x", "ok.txt"])
    with pikepdf.open(crafted) as pdf:  # the names really are in the PDF
        assert {"../../evil.txt", "/etc/x"} <= set(pdf.attachments)
    dest = tmp_path / "deep" / "er" / "dest"
    assert main(["extract", str(crafted), str(dest)]) == 2
    err = capsys.readouterr().err
    assert "../../evil.txt" in err and "/etc/x" in err and "nothing was written" in err
    assert not dest.exists()
    written = [p for p in tmp_path.rglob("*") if p.is_file() and p.name != "crafted.pdf"]
    assert written == []


def test_safe_name_rules():
    assert archive.safe_name("../../evil.txt") == ""
    assert archive.safe_name("/etc/x") == ""
    assert archive.safe_name("C:\\Windows\\x.dll") == ""
    assert archive.safe_name("a\\..\\b") == ""
    assert archive.safe_name("") == ""
    assert archive.safe_name("x\x00y") == ""
    assert archive.safe_name("..") == ""
    assert archive.safe_name("sub/plot.svg") == "plot.svg"
    assert archive.safe_name("job.toml") == "job.toml"


# ---------------------------------------------------------------- verify

def test_verify_passes_on_a_fresh_package(work, builds, capsys):
    assert main(["verify", str(_pdf(work, "hb-cold"))]) == 0
    out = capsys.readouterr().out
    assert "OK" in out and "agree" in out


def _rewrite(src: Path, dst: Path, edit_results, rehash: bool) -> Path:
    """Copy a package, edit its embedded results.json, optionally re-hash the manifest."""
    with pikepdf.open(src) as pdf:
        results = json.loads(pdf.attachments["results.json"].get_file().read_bytes())
        manifest = json.loads(pdf.attachments["manifest.json"].get_file().read_bytes())
        edit_results(results)
        data = (json.dumps(results, indent=2) + "\n").encode()
        pdf.attachments["results.json"] = pikepdf.AttachedFileSpec(
            pdf, data, filename="results.json", mime_type="application/json")
        if rehash:
            manifest["results"]["sha256"] = hashlib.sha256(data).hexdigest()
            pdf.attachments["manifest.json"] = pikepdf.AttachedFileSpec(
                pdf, json.dumps(manifest).encode(), filename="manifest.json")
        pdf.save(dst)
    return dst


def _nudge(results):
    calc = results["calcs"][0]
    calc["results"]["natural_frequency"]["value"] *= 1.01
    for check in calc["checks"]:
        if check["id"] == "max-natural-frequency":
            check["status"] = "fail"


def test_verify_fails_with_exit_1_when_results_edited_and_rehashed(work, builds, tmp_path,
                                                                     capsys):
    edited = _rewrite(_pdf(work, "hb-cold"), tmp_path / "edited.pdf", _nudge, rehash=True)
    assert main(["verify", str(edited)]) == 1
    out = capsys.readouterr().out
    assert "DIFFERS" in out
    assert "result natural_frequency" in out and "relative change -9.90e-03" in out
    assert "check max-natural-frequency status" in out and "FAIL" in out and "PASS" in out


def test_verify_relaxed_rtol_still_catches_a_flipped_status(work, builds, tmp_path, capsys):
    edited = _rewrite(_pdf(work, "hb-cold"), tmp_path / "edited.pdf", _nudge, rehash=True)
    assert main(["verify", "--rtol", "0.05", str(edited)]) == 1
    out = capsys.readouterr().out
    assert "result natural_frequency" not in out  # 1 % is inside 5 %
    assert "check max-natural-frequency status" in out


def test_verify_exit_2_when_an_embedded_file_is_edited_without_rehash(work, builds,
                                                                       tmp_path, capsys):
    edited = _rewrite(_pdf(work, "hb-cold"), tmp_path / "tampered.pdf", _nudge, rehash=False)
    assert main(["verify", str(edited)]) == 2
    err = capsys.readouterr().err
    assert "results.json does not match its SHA-256 in the manifest" in err
    assert "Traceback" not in err


def test_verify_exit_2_for_a_pdf_that_is_not_ours(tmp_path, capsys):
    plain = pikepdf.new()
    plain.add_blank_page()
    plain.save(tmp_path / "plain.pdf")
    assert main(["verify", str(tmp_path / "plain.pdf")]) == 2
    assert "not a reportgen package" in capsys.readouterr().err
    (tmp_path / "text.pdf").write_text("not a PDF at all\n")
    assert main(["verify", str(tmp_path / "text.pdf")]) == 2
    assert "not a PDF file" in capsys.readouterr().err


def test_verify_a_folder_skips_other_pdfs_and_summarises(work, builds, rev_a, tmp_path,
                                                        capsys):
    folder = tmp_path / "set"
    folder.mkdir()
    shutil.copy(rev_a, folder / rev_a.name)
    shutil.copy(_pdf(work, "hb-cold"), folder / "QEP-2417-V-101-B.pdf")
    _crafted(folder / "register.pdf", [])
    assert main(["verify", "--jobs", "1", str(folder)]) == 0
    out = capsys.readouterr().out
    assert "skipped:" in out and "register.pdf" in out
    assert "verified 2 packages: 2 agree, 0 differ, 0 could not be verified" in out


def _rewrite_manifest(src: Path, dst: Path, edit) -> Path:
    with pikepdf.open(src) as pdf:
        manifest = json.loads(pdf.attachments["manifest.json"].get_file().read_bytes())
        edit(manifest)
        pdf.attachments["manifest.json"] = pikepdf.AttachedFileSpec(
            pdf, json.dumps(manifest).encode(), filename="manifest.json")
        pdf.save(dst)
    return dst


def test_verify_reports_environment_differences_as_information(work, builds, tmp_path,
                                                                capsys):
    def older(m):
        m["libraries"]["numpy"] = "1.0.0"
        m["plugins"]["free_vibration"]["version"] = "0.0.1"

    edited = _rewrite_manifest(_pdf(work, "hb-cold"), tmp_path / "older.pdf", older)
    assert main(["verify", str(edited)]) == 0
    out = capsys.readouterr().out
    assert "info: environment differs: numpy: 1.0.0 at build" in out
    assert "calc type free_vibration: 0.0.1 (reportgen) at build" in out


def test_verify_refuses_a_manifest_path_that_leaves_the_folder(work, builds, tmp_path,
                                                               capsys):
    def escape(m):
        m["attachments"][0]["path"] = "../../evil.csv"

    edited = _rewrite_manifest(_pdf(work, "hb-cold"), tmp_path / "escape.pdf", escape)
    assert main(["verify", str(edited)]) == 2
    assert "unsafe" in capsys.readouterr().err
    assert not (tmp_path.parent / "evil.csv").exists()


# ---------------------------------------------------------------- diff

def test_diff_two_revisions_of_the_sample_job(capsys, check_cases):
    assert main(["diff", str(SAMPLE_A), str(SAMPLE_B)]) == 0
    out = capsys.readouterr().out
    assert "revision A (2026-11-12)" in out and "revision B (2026-12-01)" in out
    assert '"1100 kg" → "1200 kg"' in out and "[1100 → 1200]" in out
    # f_n = (1/2π)√(k/m) and δ_st = m·g/k (Thomson & Dahleh, Ch. 2): ratios from the masses
    assert f"{(math.sqrt(1100 / 1200) - 1) * 100:+.3g} %" in out
    assert f"{(1200 / 1100 - 1) * 100:+.3g} %" in out


def _job_variant(tmp: Path, name: str, source: Path, replace: dict[str, str]) -> Path:
    text = source.read_text(encoding="utf-8")
    for old, new in replace.items():
        assert old in text
        text = text.replace(old, new)
    path = tmp / name
    path.write_text(text, encoding="utf-8")
    return path


def test_diff_compares_inputs_results_and_flipped_checks(tmp_path, check_cases):
    from reportgen.package.compare import compare
    from reportgen.package.revisions import load_side

    case = check_cases["A1_sdof_free_underdamped"]  # invented example, textbook formulas
    inputs = {'mass = "1200 kg"': 'mass = "50 kg"', 'stiffness = "350 kN/m"':
              'stiffness = "200000 N/m"', "damping_ratio = 0.05": 'damping_coefficient ='
              ' "200 N*s/m"', 'initial_displacement = "2 mm"': 'initial_displacement = "5 mm"',
              'initial_velocity = "0 m/s"': 'initial_velocity = "0.1 m/s"',
              'max_natural_frequency = "5 Hz"': 'max_natural_frequency = "10 Hz"'}
    old = _job_variant(tmp_path, "old.toml", SAMPLE_B, inputs)
    # 55 kg lowers f_n from 10.07 Hz to 9.60 Hz: the 10 Hz limit flips from FAIL to PASS
    new = _job_variant(tmp_path, "new.toml", SAMPLE_B, {
        **inputs, 'mass = "1200 kg"': 'mass = "55 kg"', 'max_static_deflection = "50 mm"': ''})
    plugins = load_plugins()
    a, b = load_side(old, plugins), load_side(new, plugins)
    ch = compare(a, b)
    f_old = a.results["calcs"][0]["results"]["natural_frequency"]["value"]
    assert_case(f_old, case, "f_n")
    inputs_changed = {(key, kind): (x, y) for _, key, kind, x, y, _, _ in ch.inputs}
    assert inputs_changed[("inputs.mass", "changed")] == ("50 kg", "55 kg")
    assert ("criteria.max_static_deflection", "removed") in inputs_changed
    moved = {key: rel for _, key, _, _, _, rel in ch.results}
    # f_n ∝ 1/√m at fixed k (Thomson & Dahleh, Ch. 2)
    assert moved["natural_frequency"] == pytest.approx(math.sqrt(50 / 55) - 1, rel=1e-9)
    assert "initial_displacement" not in " ".join(moved)
    flipped = {key: (x, y) for _, key, x, y in ch.checks}
    assert flipped["max-natural-frequency"] == ("fail", "pass")
    assert flipped["max-static-deflection"] == ("pass", "absent")


def test_diff_of_packages_reads_their_embedded_jobs(work, builds, rev_a, capsys):
    assert main(["diff", str(rev_a), str(_pdf(work, "hb-cold"))]) == 0
    out = capsys.readouterr().out
    assert '"1100 kg" → "1200 kg"' in out and "[1100 → 1200]" in out
    assert "natural_frequency" in out


def test_diff_invalid_input_exits_2(tmp_path, capsys):
    assert main(["diff", str(tmp_path / "missing.toml"), str(SAMPLE_B)]) == 2
    plain = pikepdf.new()
    plain.save(tmp_path / "plain.pdf")
    assert main(["diff", str(tmp_path / "plain.pdf"), str(SAMPLE_B)]) == 2
    assert "not a reportgen package" in capsys.readouterr().err


# ---------------------------------------------------------------- [package] attachments

@pytest.mark.parametrize("listed, expect", [
    ('["../outside.csv"]', "must be a relative path"),
    ('["/etc/passwd"]', "must be a relative path"),
    ('["missing.csv"]', "not found beside the job file"),
    ('["results.json"]', "the package's own file"),
    ('["a/x.csv", "b/x.csv"]', "which 'a/x.csv' already uses"),
    ('["link.csv"]', "symbolic link"),
    ('"survey.csv"', "expected a list of file names"),
    ('["big.csv"]', "the limit for one attachment"),
])
def test_attachments_are_validated_strictly(tmp_path, monkeypatch, listed, expect):
    from reportgen.job import load as jobfile

    monkeypatch.setattr(jobfile, "MAX_ATTACHMENT_BYTES", 1000)
    folder = tmp_path / "job"
    for sub in ("a", "b"):
        (folder / sub).mkdir(parents=True)
        (folder / sub / "x.csv").write_text("1\n")
    (folder / "results.json").write_text("{}")
    (folder / "big.csv").write_bytes(b"0" * 1001)
    (tmp_path / "outside.csv").write_text("secret\n")
    (folder / "link.csv").symlink_to(tmp_path / "outside.csv")
    job = folder / "job.toml"
    job.write_text(_with_package_keys(SAMPLE_B.read_text(encoding="utf-8"),
                                      f"attachments = {listed}"), encoding="utf-8")
    with pytest.raises(JobError) as err:
        load_job(job, load_plugins())
    problem = err.value.problems[0]
    assert problem.field.startswith("package.attachments") and expect in problem.message
    assert problem.file == str(job)


def test_a_bad_attachment_stops_the_build_with_exit_2(tmp_path, capsys):
    job = tmp_path / "job.toml"
    job.write_text(_with_package_keys(SAMPLE_B.read_text(encoding="utf-8"),
                                      'attachments = ["../../etc/passwd"]'), encoding="utf-8")
    assert main(["build", str(job), "--out", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err
    assert "package.attachments[0]" in err and "Traceback" not in err
    assert not (tmp_path / "out").exists()


def test_a_previous_package_that_is_not_ours_stops_the_build_with_exit_2(tmp_path, capsys):
    _crafted(tmp_path / "prev.pdf", [])
    job = tmp_path / "job.toml"
    job.write_text(_with_package_keys(SAMPLE_B.read_text(encoding="utf-8"),
                                      'previous_package = "prev.pdf"'), encoding="utf-8")
    assert main(["build", str(job), "--out", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err
    assert "package.previous_package" in err and "not a reportgen package" in err
    assert not (tmp_path / "out").exists()
