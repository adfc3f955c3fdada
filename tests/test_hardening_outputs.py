"""The output folder: one file name per (calc number, revision), folder builds refusing
shared names, a commit journal that a kill between two renames cannot tear, targets
checked before anything is written, and `reportgen demo` never writing over a file.

Invariants checked (no outside reference applies): the PDF and the results.json under
final names always come from one build (the results.json embedded in the PDF equals the
one beside it); the file stem maps back to its (calc number, revision) pair.
"""

from __future__ import annotations

import hashlib
import json
import os
import signal
import subprocess
import sys
from pathlib import Path

import pytest
from hardening_c_support import assert_not_torn, job_text, write_jobs
from hypothesis import given, settings
from hypothesis import strategies as st

from reportgen.cli import main
from reportgen.job.load import file_stem
from reportgen.pipeline.commit import JOURNAL_SUFFIX, commit_outputs, recover

# -------------------------------------------------------------------- the file-name rule

NAME = st.from_regex(r"[A-Za-z0-9][A-Za-z0-9._-]{0,20}", fullmatch=True)
REVISION = st.from_regex(r"[A-Za-z0-9][A-Za-z0-9._]{0,6}", fullmatch=True)


@settings(max_examples=100, deadline=None)
@given(a=st.tuples(NAME, REVISION), b=st.tuples(NAME, REVISION))
def test_file_stems_are_one_per_calc_number_and_revision(a, b):
    sa, sb = file_stem(*a), file_stem(*b)
    assert sa is not None and sa.rsplit("-", 1) == list(a)  # the stem gives the pair back
    assert (sa == sb) == (a == b)


def test_the_colliding_pair_of_the_audit_is_refused(tmp_path, capsys):
    ok = tmp_path / "k3a.toml"
    ok.write_text(job_text(calc="K-3-A", rev="B"), encoding="utf-8")
    bad = tmp_path / "k3.toml"
    bad.write_text(job_text(calc="K-3", rev="A-B"), encoding="utf-8")
    assert main(["check", str(ok)]) == 0
    assert main(["check", str(bad)]) == 2
    err = capsys.readouterr().err
    assert "package.revision" in err and "'A-B'" in err and str(bad) in err
    assert file_stem("K-3", "A-B") is None and file_stem("K-3-A", "B") == "K-3-A-B"


@pytest.mark.parametrize("second", [("QEP-2417-V-300", "A"), ("qep-2417-v-300", "a")],
                         ids=["same", "case-only"])
def test_a_folder_build_refuses_jobs_that_share_a_file_name(second, tmp_path, capsys):
    jobs = tmp_path / "jobs"
    jobs.mkdir()
    (jobs / "a.toml").write_text(job_text(calc="QEP-2417-V-300", rev="A"), encoding="utf-8")
    (jobs / "b.toml").write_text(job_text(calc=second[0], rev=second[1], mass=900),
                                 encoding="utf-8")
    (jobs / "c.toml").write_text(job_text(calc="QEP-2417-V-399", rev="A"), encoding="utf-8")
    out = tmp_path / "out"
    assert main(["build", str(jobs), "--out", str(out), "--jobs", "1"]) == 2
    err = capsys.readouterr().err
    assert str(jobs / "a.toml") in err and str(jobs / "b.toml") in err
    assert "c.toml" not in err
    assert not out.exists(), "refused before anything was built"


# -------------------------------------------------------------------- the commit journal

# Commits three files and is SIGKILLed by itself right after the first final rename.
KILL_AFTER_FIRST_RENAME = r"""
import os, signal, sys
from pathlib import Path
from reportgen.pipeline import commit as outputs

out = Path(sys.argv[1])
real = os.replace
def replace(src, dst, *a, **k):
    real(src, dst, *a, **k)
    if not str(dst).endswith(outputs.JOURNAL_SUFFIX):
        os.kill(os.getpid(), signal.SIGKILL)
os.replace = replace
outputs.commit_outputs([(out / "p.results.json", b"new results"), (out / "p.pdf", b"new pdf"),
                        (out / "p.html", b"new html")],
                       journal=out / ".p.reportgen-journal", locks=[out / ".p.lock"])
"""


def _killed_between_renames(out: Path) -> None:
    proc = subprocess.run([sys.executable, "-c", KILL_AFTER_FIRST_RENAME, str(out)],
                          capture_output=True, text=True, timeout=60)
    assert proc.returncode == -signal.SIGKILL, proc.stderr


@pytest.fixture
def half_committed(tmp_path) -> Path:
    out = tmp_path / "out"
    out.mkdir()
    for name, data in (("p.results.json", b"old results"), ("p.pdf", b"old pdf")):
        (out / name).write_bytes(data)
    _killed_between_renames(out)
    assert (out / "p.results.json").read_bytes() == b"new results"
    assert (out / "p.pdf").read_bytes() == b"old pdf"  # torn, until recovered
    assert (out / f".p{JOURNAL_SUFFIX}").exists()
    return out


def test_a_commit_killed_between_renames_is_rolled_forward(half_committed):
    out = half_committed
    notes = recover(out)
    assert len(notes) == 1 and "completed" in notes[0]
    assert [(out / n).read_bytes() for n in ("p.results.json", "p.pdf", "p.html")] == [
        b"new results", b"new pdf", b"new html"]
    assert sorted(p.name for p in out.iterdir()) == ["p.html", "p.pdf", "p.results.json"]


def test_a_journal_whose_temporaries_are_gone_is_discarded(half_committed):
    out = half_committed
    for part in out.glob(".p.pdf.*.part"):
        part.unlink()
    notes = recover(out)
    assert len(notes) == 1 and "discarded" in notes[0]
    assert (out / "p.pdf").read_bytes() == b"old pdf"
    assert not list(out.glob(".*")), "journal and temporaries are gone"


def test_a_changed_temporary_is_not_committed(half_committed):
    out = half_committed
    part = next(out.glob(".p.pdf.*.part"))
    part.write_bytes(b"tampered")  # its SHA-256 no longer matches the journal's
    assert "discarded" in recover(out)[0]
    assert (out / "p.pdf").read_bytes() == b"old pdf"


def test_a_journal_is_left_alone_while_its_writer_holds_the_lock(half_committed):
    out = half_committed
    holder = subprocess.Popen([sys.executable, "-c", (
        "import sys, time; from filelock import FileLock;"
        " lock = FileLock(sys.argv[1]); lock.acquire(); print('held', flush=True);"
        " time.sleep(60)"), str(out / ".p.lock")], stdout=subprocess.PIPE, text=True)
    try:
        assert holder.stdout.readline().strip() == "held"
        assert recover(out) == []
        assert (out / f".p{JOURNAL_SUFFIX}").exists()
    finally:
        holder.kill()
        holder.wait()
    assert "completed" in recover(out)[0]


def test_a_commit_writes_nothing_when_a_target_is_a_folder(tmp_path):
    out = tmp_path / "out"
    (out / "p.pdf").mkdir(parents=True)
    with pytest.raises(IsADirectoryError):
        commit_outputs([(out / "p.results.json", b"r"), (out / "p.pdf", b"p")])
    assert sorted(p.name for p in out.iterdir()) == ["p.pdf"]


def test_a_real_build_killed_between_renames_is_completed_by_verify(tmp_path):
    job = tmp_path / "job.toml"
    job.write_text(job_text(mass=1200), encoding="utf-8")
    out = tmp_path / "out"
    assert main(["build", str(job), "--out", str(out)]) in (0, 1)
    old_pdf = (out / "QEP-2417-V-301-A.pdf").read_bytes()
    job.write_text(job_text(mass=1500), encoding="utf-8")  # revision A, other numbers
    kill = ("import os, signal, sys\nfrom reportgen.pipeline import commit as outputs\n"
            "real = os.replace\n"
            "def replace(src, dst, *a, **k):\n    real(src, dst, *a, **k)\n"
            "    if str(dst).endswith('.results.json'):\n"
            "        os.kill(os.getpid(), signal.SIGKILL)\n"
            "os.replace = replace\nfrom reportgen.cli import main\n"
            "main(['build', sys.argv[1], '--out', sys.argv[2], '--force'])\n")
    proc = subprocess.run([sys.executable, "-c", kill, str(job), str(out)],
                          capture_output=True, text=True, timeout=300)
    assert proc.returncode == -signal.SIGKILL, proc.stderr
    with pytest.raises(AssertionError):
        assert_not_torn(out)  # the new results.json lies beside the old PDF
    verify = subprocess.run([sys.executable, "-m", "reportgen.cli", "verify", str(out)],
                            capture_output=True, text=True, timeout=300)
    assert "completed a commit that a stopped build left" in verify.stderr, verify.stderr
    assert verify.returncode == 0, verify.stdout + verify.stderr
    assert_not_torn(out)
    assert (out / "QEP-2417-V-301-A.pdf").read_bytes() != old_pdf  # rolled forward
    assert not [p for p in out.iterdir() if p.name.startswith(".")]


# -------------------------------------------------------------------- before writing


def test_force_with_the_pdf_path_a_folder_writes_nothing(tmp_path, capsys):
    job = tmp_path / "job.toml"
    job.write_text(job_text(), encoding="utf-8")
    out = tmp_path / "out"
    (out / "QEP-2417-V-301-A.pdf").mkdir(parents=True)
    assert main(["build", str(job), "--out", str(out), "--force"]) == 2
    err = capsys.readouterr().err
    assert "QEP-2417-V-301-A.pdf is a folder" in err and "--out" in err
    assert sorted(p.name for p in out.iterdir()) == ["QEP-2417-V-301-A.pdf"]


def test_the_existence_check_is_made_again_just_before_the_commit(tmp_path, monkeypatch,
                                                                  capsys):
    from reportgen.pipeline import plan as pipeline

    job = tmp_path / "job.toml"
    job.write_text(job_text(), encoding="utf-8")
    out = tmp_path / "out"
    pdf = out / "QEP-2417-V-301-A.pdf"
    real = pipeline.make_package

    def make_then_someone_writes(*args, **kw):
        made = real(*args, **kw)
        pdf.write_bytes(b"%PDF- written meanwhile by something else")
        return made

    monkeypatch.setattr(pipeline, "make_package", make_then_someone_writes)
    assert main(["build", str(job), "--out", str(out)]) == 2
    assert "already exists" in capsys.readouterr().err
    assert pdf.read_bytes().startswith(b"%PDF- written meanwhile")
    assert sorted(p.name for p in out.iterdir()) == [pdf.name]


def test_demo_refuses_to_write_over_a_file_in_its_folder(tmp_path, capsys):
    out = tmp_path / "out"
    out.mkdir()
    (out / "register.json").write_text("a user's file\n", encoding="utf-8")
    assert main(["demo", "--out", str(out), "--jobs", "1"]) == 2
    err = capsys.readouterr().err
    assert str(out / "register.json") in err and "--force" in err
    assert [p.name for p in out.iterdir()] == ["register.json"]
    assert (out / "register.json").read_text(encoding="utf-8") == "a user's file\n"


def test_a_set_commits_packages_and_register_together(tmp_path, capsys):
    jobs = tmp_path / "jobs"
    write_jobs(jobs, 2)
    out = tmp_path / "out"
    assert main(["build", str(jobs), "--out", str(out), "--jobs", "1"]) in (0, 1)
    assert sorted(p.name for p in out.iterdir()) == [
        "QEP-2417-V-300-A.pdf", "QEP-2417-V-300-A.results.json",
        "QEP-2417-V-301-A.pdf", "QEP-2417-V-301-A.results.json",
        "register.json", "register.pdf"]
    register = json.loads((out / "register.json").read_text(encoding="utf-8"))
    for row in register["packages"]:
        assert row["sha256"] == hashlib.sha256((out / row["file"]).read_bytes()).hexdigest()
    assert_not_torn(out)
    assert os.path.getsize(out / "register.pdf") > 0


def test_a_single_build_of_a_set_member_brings_the_register_up_to_date(tmp_path):
    jobs = tmp_path / "jobs"
    write_jobs(jobs, 2)
    out = tmp_path / "out"
    assert main(["build", str(jobs), "--out", str(out), "--jobs", "1"]) in (0, 1)
    before = json.loads((out / "register.json").read_text(encoding="utf-8"))["packages"]
    (jobs / "job-0.toml").write_text(job_text(calc="QEP-2417-V-300", mass=1700, n="p0"),
                                     encoding="utf-8")
    assert main(["build", str(jobs / "job-0.toml"), "--out", str(out), "--force"]) in (0, 1)
    after = json.loads((out / "register.json").read_text(encoding="utf-8"))["packages"]
    assert after[1] == before[1]  # the other package's row is untouched
    assert after[0]["sha256"] != before[0]["sha256"]
    assert_not_torn(out)  # every row's hash is that of the PDF on disk
