"""Reading packages back under attack: bounded inflation, a tampering corpus, the lock file.

One small package is built once per module; every tampered copy is made from it with
pikepdf in milliseconds. Exit codes are verify's contract (README): 1 when the embedded
results differ from a rebuild, 2 when the file is not a package or was altered.
"""

from __future__ import annotations

import hashlib
import json
import os
import subprocess
import sys
import zlib
from pathlib import Path

import pikepdf
import pytest

from reportgen.calc.plugin_set import load_plugins
from reportgen.cli import main
from reportgen.package import archive

REPO = Path(__file__).resolve().parent.parent
README_JOB = """\
[package]
title = "Pump P1 on spring mounts"
job_number = "J-100"
calc_number = "J-100-V-001"
revision = "A"
date = "2026-12-01"
units = "SI"
prepared_by = "A. Engineer"
checked_by = ""
approved_by = ""
attachments = ["readings.csv"]

[[package.revision_history]]
revision = "A"
date = "2026-12-01"
description = "First issue"

[[calc]]
id = "pump-p1-free"
plugin = "free_vibration"
title = "Pump P1 on spring mounts: free vibration"
[calc.inputs]
mass = "1200 kg"
stiffness = "350 kN/m"
damping_ratio = 0.05
initial_displacement = "2 mm"
[calc.criteria]
max_natural_frequency = "5 Hz"
"""
READINGS = b"point,f_Hz\nP1-N,24.8\n"  # invented readings


@pytest.fixture(scope="module")
def package(tmp_path_factory) -> Path:
    from reportgen.pipeline.plan import BuildOptions, build_job

    root = tmp_path_factory.mktemp("harden-archive")
    (root / "job.toml").write_text(README_JOB, encoding="utf-8")
    (root / "readings.csv").write_bytes(READINGS)
    result = build_job(root / "job.toml", load_plugins(),
                       BuildOptions(out_dir=root / "out", cache_dir=root / "cache", workers=1))
    assert result.exit_code == 0
    return result.pdf


def _files(pdf_path: Path) -> dict[str, bytes]:
    with pikepdf.open(pdf_path) as pdf:
        return {n: s.get_file().read_bytes() for n, s in pdf.attachments.items()}


def _tamper(src: Path, dst: Path, edit) -> Path:
    with pikepdf.open(src) as pdf:
        edit(pdf)
        # keep every stream's encoding as the edit left it (qpdf would re-encode some)
        pdf.save(dst, compress_streams=False,
                 stream_decode_level=pikepdf.StreamDecodeLevel.none)
    return dst


def _put(pdf: pikepdf.Pdf, name: str, data: bytes) -> None:
    pdf.attachments[name] = pikepdf.AttachedFileSpec(pdf, data, filename=name)


def _rehash_manifest(pdf: pikepdf.Pdf, key: str, data: bytes) -> None:
    manifest = json.loads(pdf.attachments["manifest.json"].get_file().read_bytes())
    manifest[key]["sha256"] = hashlib.sha256(data).hexdigest()
    _put(pdf, "manifest.json", json.dumps(manifest).encode())


def _verify(path: Path, capsys) -> tuple[int, str, str]:
    code = main(["verify", "--jobs", "1", str(path)])
    out = capsys.readouterr()
    assert "Traceback" not in out.err
    return code, out.out, out.err


# ---------------------------------------------------------------- the tampering corpus

def _results_replaced(pdf):
    _put(pdf, "results.json", b'{"format": "reportgen.results/1", "calcs": []}\n')


def _job_replaced_rehashed(pdf):
    # consistent hash, inconsistent content: the job now says 2400 kg, the results 1200 kg
    job = pdf.attachments["job.toml"].get_file().read_bytes().replace(b'"1200 kg"',
                                                                       b'"2400 kg"')
    _put(pdf, "job.toml", job)
    _rehash_manifest(pdf, "job_file", job)


def _manifest_replaced(pdf):
    _put(pdf, "manifest.json", b'{"format": "reportgen.manifest/1", "results": {},'
                               b' "job_file": {}}')


def _extra_file(pdf):
    _put(pdf, "notes.txt", b"added after the build\n")


def _renamed_attachment(pdf):
    data = pdf.attachments["readings.csv"].get_file().read_bytes()
    del pdf.attachments["readings.csv"]
    _put(pdf, "readings2.csv", data)


def _renamed_results(pdf):
    data = pdf.attachments["results.json"].get_file().read_bytes()
    del pdf.attachments["results.json"]
    _put(pdf, "results.JSON", data)


def _dotdot_embedded_name(pdf):
    _put(pdf, "../../readings.csv", b"point,f_Hz\n")


def _dotdot_manifest_path(pdf):
    manifest = json.loads(pdf.attachments["manifest.json"].get_file().read_bytes())
    manifest["attachments"][0]["path"] = "sub/../../../etc/readings.csv"
    _put(pdf, "manifest.json", json.dumps(manifest).encode())


def _attachment_replaced(pdf):
    _put(pdf, "readings.csv", b"point,f_Hz\nP1-N,99.9\n")


def _lock_replaced(pdf):
    _put(pdf, "environment.lock", b"numpy==1.0\n")


def _lock_removed(pdf):
    del pdf.attachments["environment.lock"]


def _manifest_removed(pdf):
    del pdf.attachments["manifest.json"]


def _hex_encoded_file(pdf):
    # a filter this tool never writes: refused rather than handed to a decoder
    spec = pdf.attachments["readings.csv"]
    spec.get_file().obj.write(READINGS.hex().encode() + b">",
                              filter=pikepdf.Name.ASCIIHexDecode)


CORPUS = [
    # (name, edit, exit code, words the message must hold)
    ("results replaced", _results_replaced, 2,
     ["results.json does not match its SHA-256"]),
    ("job replaced, manifest rehashed", _job_replaced_rehashed, 1, ["DIFFERS"]),
    ("manifest replaced", _manifest_replaced, 2, ["does not match its SHA-256"]),
    ("extra embedded file", _extra_file, 2, ["'notes.txt' is not listed in the manifest"]),
    ("renamed attachment", _renamed_attachment, 2,
     ["readings.csv is listed in the manifest but not embedded", "'readings2.csv'"]),
    ("renamed results", _renamed_results, 2, ["not a reportgen package", "results.json"]),
    ("'..' in an embedded name", _dotdot_embedded_name, 2,
     ["'../../readings.csv' is not listed"]),
    ("'..' in a manifest attachment path", _dotdot_manifest_path, 2, ["unsafe"]),
    ("attachment replaced", _attachment_replaced, 2, ["readings.csv does not match"]),
    ("lock file replaced", _lock_replaced, 2, ["environment.lock does not match"]),
    ("lock file removed", _lock_removed, 2,
     ["environment.lock is listed in the manifest but not embedded"]),
    ("manifest removed", _manifest_removed, 2, ["not a reportgen package", "manifest.json"]),
    ("foreign filter", _hex_encoded_file, 2, ["'readings.csv'", "FlateDecode only"]),
]


@pytest.mark.parametrize("name,edit,code,words", CORPUS, ids=[c[0] for c in CORPUS])
def test_verify_detects_tampering(package, tmp_path, capsys, name, edit, code, words):
    tampered = _tamper(package, tmp_path / "tampered.pdf", edit)
    got, out, err = _verify(tampered, capsys)
    assert got == code, (name, out, err)
    text = out + err
    for w in words:
        assert w in text, (name, w, text)
    assert str(tampered) in text


def test_the_untouched_package_verifies(package, capsys):
    code, out, _ = _verify(package, capsys)
    assert code == 0 and "OK" in out
    assert "environment differs" not in out  # same environment: the lock agrees


@pytest.mark.parametrize("keep", [0.5, 0.9, 0.999])
def test_truncated_pdf_is_refused(package, tmp_path, capsys, keep):
    data = package.read_bytes()
    cut = tmp_path / "cut.pdf"
    cut.write_bytes(data[: int(len(data) * keep)])
    code, out, err = _verify(cut, capsys)
    assert code == 2, (out, err)
    assert str(cut) in err and "damaged" in err


def test_extract_refuses_a_truncated_pdf_and_writes_nothing(package, tmp_path, capsys):
    cut = tmp_path / "cut.pdf"
    cut.write_bytes(package.read_bytes()[:-200])
    assert main(["extract", str(cut), str(tmp_path / "x")]) == 2
    assert "damaged" in capsys.readouterr().err
    assert not (tmp_path / "x").exists()


# ---------------------------------------------------------------- bounded inflation

MiB = 1024 * 1024


def _flate_zeros(size: int) -> bytes:
    """A valid zlib stream of ``size`` zero bytes, made without compressing them all.

    Each 1 MiB block is compressed once after a full flush (so it needs no history) and
    repeated; the Adler-32 trailer is computed over the real content.
    """
    assert size % MiB == 0
    c = zlib.compressobj(9)
    head = c.compress(b"\0" * MiB) + c.flush(zlib.Z_FULL_FLUSH)
    block = c.compress(b"\0" * MiB) + c.flush(zlib.Z_FULL_FLUSH)
    tail = c.flush(zlib.Z_FINISH)[:-4]  # the final empty block, without c's checksum
    adler = 1
    zero = b"\0" * MiB
    for _ in range(size // MiB):
        adler = zlib.adler32(zero, adler)
    return head + block * (size // MiB - 1) + tail + adler.to_bytes(4, "big")


def _bomb(path: Path, sizes: dict[str, int], declare: bool = False) -> Path:
    pdf = pikepdf.new()
    pdf.add_blank_page()
    for name, size in sizes.items():
        _put(pdf, name, b"x")
        stream = pdf.attachments[name].get_file().obj
        stream.write(_flate_zeros(size), filter=pikepdf.Name.FlateDecode)
        if declare:
            stream.Params.Size = size
        else:
            del stream.Params  # no /Size to trust: the cap must hold by itself
    pdf.save(path)
    return path


def test_flate_zeros_is_really_what_it_claims():
    # zlib itself (the reference decoder) inflates the crafted stream to the stated size
    assert zlib.decompress(_flate_zeros(3 * MiB)) == b"\0" * (3 * MiB)


def test_a_single_embedded_file_over_64_mib_is_refused(tmp_path, capsys):
    bomb = _bomb(tmp_path / "one.pdf", {"results.json": 65 * MiB})
    code, _, err = _verify(bomb, capsys)
    assert code == 2
    assert str(bomb) in err and "'results.json'" in err and str(64 * MiB) in err


def test_embedded_files_over_the_total_are_refused(tmp_path, capsys):
    bomb = _bomb(tmp_path / "many.pdf", {"a.bin": 60 * MiB, "b.bin": 60 * MiB,
                                          "c.bin": 60 * MiB})
    code, _, err = _verify(bomb, capsys)
    assert code == 2 and "in all" in err and str(bomb) in err


def test_too_many_embedded_files_are_refused(tmp_path, capsys):
    pdf = pikepdf.new()
    pdf.add_blank_page()
    for i in range(archive.MAX_EMBEDDED_FILES + 1):
        _put(pdf, f"f{i:03}.txt", b"x")
    pdf.save(tmp_path / "crowd.pdf")
    assert main(["extract", str(tmp_path / "crowd.pdf"), str(tmp_path / "x")]) == 2
    err = capsys.readouterr().err
    assert f"embeds {archive.MAX_EMBEDDED_FILES + 1} files" in err
    assert not (tmp_path / "x").exists()


def test_a_declared_size_over_the_cap_is_refused_before_reading(tmp_path, capsys):
    bomb = _bomb(tmp_path / "declared.pdf", {"job.toml": 65 * MiB}, declare=True)
    code, _, err = _verify(bomb, capsys)
    assert code == 2 and "declares" in err


BOMB_SIZE = 1600 * MiB  # ~1.6 MB of PDF (zlib's ratio is at most ~1030:1)


@pytest.mark.parametrize("command", ["verify", "extract"])
def test_a_zip_bomb_pdf_stays_under_500_mb(tmp_path, command):
    bomb = _bomb(tmp_path / "bomb.pdf", {"results.json": BOMB_SIZE})
    assert bomb.stat().st_size < 10 * 1000 * 1000
    argv = [sys.executable, "-m", "reportgen.cli", command, str(bomb)]
    if command == "extract":
        argv.append(str(tmp_path / "x"))
    # measured from a fresh parent whose only child is the command: RUSAGE_CHILDREN is the
    # largest child a process has waited for, so the test process's own would remember
    # earlier builds
    probe = ("import json, resource, subprocess, sys\n"
             "run = subprocess.run(sys.argv[1:], capture_output=True, text=True, timeout=120)\n"
             "print(json.dumps([run.returncode, run.stderr,"
             " resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss]))\n")
    done = subprocess.run([sys.executable, "-c", probe, *argv], capture_output=True,
                          text=True, timeout=180, check=True,
                          env={**os.environ, "MPLBACKEND": "Agg"})
    code, stderr, peak_kib = json.loads(done.stdout)
    assert code == 2, stderr
    assert "'results.json'" in stderr and str(bomb) in stderr
    assert "Traceback" not in stderr
    assert peak_kib < 500 * 1024, f"peak RSS {peak_kib / 1024:.0f} MiB"
    assert not (tmp_path / "x").exists()


# ---------------------------------------------------------------- the environment lock

def test_the_package_embeds_a_lock_listed_in_its_manifest(package):
    from packaging.requirements import Requirement

    files = _files(package)
    lock = files["environment.lock"]
    manifest = json.loads(files["manifest.json"])
    assert manifest["environment_lock"] == {"name": "environment.lock",
                                            "sha256": hashlib.sha256(lock).hexdigest()}
    text = lock.decode()
    pinned = {}
    for line in text.splitlines():
        if line and not line.startswith("#"):
            req = Requirement(line)  # pip's own grammar (PEP 508) reads every line
            (spec,) = req.specifier
            assert spec.operator == "=="
            pinned[req.name.lower()] = spec.version
    from importlib import metadata

    for dist in ("numpy", "scipy", "pint", "pikepdf", "weasyprint"):
        assert pinned[dist] == metadata.version(dist)
    # reportgen is named with its version but never asked of a package index
    assert "reportgen" not in pinned
    assert not {"pip", "setuptools", "wheel"} & set(pinned)  # a new venv brings its own
    assert f"# reportgen=={metadata.version('reportgen')}" in text
    assert "# Python 3." in text
    assert list(pinned) == sorted(pinned, key=archive.normalized_name)


def test_the_lock_ignores_the_working_folder_and_the_process(tmp_path):
    # a source checkout or stray metadata in the working folder must not enter the lock
    (tmp_path / "stray_dist-9.9.dist-info").mkdir()
    (tmp_path / "stray_dist-9.9.dist-info" / "METADATA").write_text(
        "Metadata-Version: 2.1\nName: stray-dist\nVersion: 9.9\n")
    code = "import sys; from reportgen.package.archive import environment_lock;" \
           " sys.stdout.buffer.write(environment_lock())"
    run = subprocess.run([sys.executable, "-c", code], cwd=tmp_path, capture_output=True,
                         check=True, timeout=60)
    assert b"stray" not in run.stdout
    assert run.stdout == archive.environment_lock()


def test_extract_writes_the_lock_and_verify_reports_what_differs(package, tmp_path, capsys):
    assert main(["extract", str(package), str(tmp_path / "x")]) == 0
    capsys.readouterr()
    lock = (tmp_path / "x" / "environment.lock").read_bytes()
    assert lock == archive.environment_lock()
    from importlib import metadata

    old = f"cycler=={metadata.version('cycler')}".encode()
    assert old in lock

    def older(pdf):
        edited = lock.replace(old, b"cycler==0.0.1")
        _put(pdf, "environment.lock", edited)
        _rehash_manifest(pdf, "environment_lock", edited)

    edited = _tamper(package, tmp_path / "older.pdf", older)
    code, out, _ = _verify(edited, capsys)
    assert code == 0
    assert f"info: environment differs: cycler: 0.0.1 at build, {metadata.version('cycler')}" \
           " here" in out


def test_a_package_without_a_lock_still_verifies(package, tmp_path, capsys):
    # packages built before the lock existed: no manifest entry, no file
    def drop(pdf):
        manifest = json.loads(pdf.attachments["manifest.json"].get_file().read_bytes())
        del manifest["environment_lock"]
        _put(pdf, "manifest.json", json.dumps(manifest).encode())
        del pdf.attachments["environment.lock"]

    code, out, _ = _verify(_tamper(package, tmp_path / "old.pdf", drop), capsys)
    assert code == 0 and "OK" in out


def test_an_attachment_may_not_take_the_lock_name(tmp_path, capsys):
    (tmp_path / "environment.lock").write_text("x\n")
    job = README_JOB.replace('attachments = ["readings.csv"]',
                             'attachments = ["environment.lock"]')
    (tmp_path / "job.toml").write_text(job, encoding="utf-8")
    assert main(["check", str(tmp_path / "job.toml")]) == 2
    assert "package.attachments[0]" in capsys.readouterr().err
