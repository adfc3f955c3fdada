"""Sealing a package (only one ``--final`` would accept) and verifying what it shows: the
seal's state and the pages against a rebuild of the embedded job by the build plan."""

from __future__ import annotations

import tempfile
from pathlib import Path
from typing import Any

from reportgen.errors import ExitCode, JobError, Problem
from reportgen.package.archive import (
    LOCK_NAME,
    NotAPackage,
    embedded_of,
    load_embedded_job,
    open_package,
)
from reportgen.package.seal import (
    SealKey,
    archival_problems,
    describe,
    seal_bytes,
    seal_states,
    signed_revision,
)
from reportgen.package.shown import compare_pages, printed_numbers


def accept_for_seal(path: Path, plugins: Any) -> None:
    """Raise JobError (exit 2) unless ``--final`` would accept the package at ``path``:
    the embedded job is computed again here and put to the build's own final test."""
    from reportgen.document.compute import compute_document
    from reportgen.pipeline.plan import refuse_final

    pkg = open_package(path)
    with tempfile.TemporaryDirectory(prefix="reportgen-seal-") as tmp:
        job = load_embedded_job(pkg, plugins, Path(tmp))
        doc = compute_document(job, plugins)
    try:
        refuse_final(doc, job)
    except JobError as exc:
        raise JobError([Problem(str(path), "cannot seal: " + p.message.replace(
            "--final refused: ", ""), field=p.field) for p in exc.problems]) from None


def seal_file(path: Path, key: SealKey, *, out: Path | None = None,
              tsa_url: str | None = None) -> Path:
    """Seal the package at ``path`` into ``out`` (default: in place, atomically)."""
    from reportgen.calc.plugin_set import load_plugins
    from reportgen.pipeline.commit import atomic_write

    accept_for_seal(path, load_plugins())
    data = Path(path).read_bytes()
    sealed = seal_bytes(data, key, where=str(path), tsa_url=tsa_url)
    check_sealed(sealed, path)
    target = out or Path(path)
    try:
        atomic_write(target, sealed)
    except OSError as exc:
        raise JobError(Problem(str(target), f"cannot write the sealed package:"
                               f" {exc.strerror or exc}", field="--out")) from None
    return target


def check_sealed(sealed: bytes, where: Path | str) -> None:
    """The sealed file must still be PDF/A-3b by the project's checks, with its files."""
    from reportgen.errors import RenderError

    with tempfile.NamedTemporaryFile(suffix=".pdf") as tmp:
        tmp.write(sealed)
        tmp.flush()
        names = sorted(embedded_of(Path(tmp.name)))
        open_package(tmp.name)  # the manifest's hashes still hold
    problems = archival_problems(sealed, names)
    states = seal_states(sealed)
    if len(states) != 1 or not states[0].holds:
        problems.append("the new seal does not validate")
    if problems:
        raise RenderError(f"{where}: the sealed package fails its checks: "
                          + "; ".join(problems))


# ---------------------------------------------------------------- verify what is shown


def rebuild_pdf(pkg: Any, plugins: Any, folder: Path) -> bytes:
    """The package's PDF made again from its embedded job by the build plan."""
    from reportgen.pipeline.plan import BuildOptions, make_package

    job_dir = folder / "job"
    job_dir.mkdir()
    job = load_embedded_job(pkg, plugins, job_dir)
    opts = BuildOptions(out_dir=folder / "out", archived=True, self_check=False,
                        workers=1)
    made = make_package(job.path, plugins, opts)
    return dict(made.outputs)[f"{made.stem}.pdf"]


def verify_package(path: str, rtol: float) -> dict[str, Any]:
    """verify_one's outcome, with the seals' state and what the pages show added."""
    from reportgen.calc.plugin_set import load_plugins
    from reportgen.document.compute import compute_document
    from reportgen.errors import error_text
    from reportgen.package.verify import environment_differences, verify_one

    out = verify_one(path, rtol)
    out.update(seals=[], shown=[], notes=[])
    try:
        data = Path(path).read_bytes()
    except OSError:
        return out
    if not data.startswith(b"%PDF-"):
        return out
    altered = False
    try:
        states = seal_states(data)
    except Exception as exc:  # a damaged signature dictionary, or a PDF beyond reading
        states = []
        if b"/ByteRange" in data:  # it carries a signature: one that cannot be checked
            out["seals"].append([f"a seal cannot be read: {error_text(exc)}"])
            altered = True
    for st in states:
        out["seals"].append(describe(st))
        if not st.holds:
            altered = True
        if st.later_revisions and st.intact and not st.resaved:
            for line in compare_pages(signed_revision(data, st), data, exact=True):
                out["seals"][-1].append(f"after sealing, {line}")
    if out.get("kind") in ("not_package", "altered") or out.get("error"):
        if altered:
            out["altered"] = True
            out["exit_code"] = max(int(out["exit_code"]), int(ExitCode.CHECKS_FAIL))
        return out
    try:
        plugins = load_plugins()
        pkg = open_package(path)
        with tempfile.TemporaryDirectory(prefix="reportgen-shown-") as tmp:
            job = load_embedded_job(pkg, plugins, Path(tmp))
            doc = compute_document(job, plugins)
        out["shown"] += printed_numbers(data, doc)
        raw = pkg.job_raw.get("package", {}) if isinstance(pkg.job_raw, dict) else {}
        outside = [f"the job's {k}" for k in ("template_dir", "previous_package")
                   if raw.get(k)]
        if pkg.manifest.get("templates", "built-in") != "built-in" and not raw.get(
                "template_dir"):
            outside.insert(0, "the firm's template folder it was built with")
        if outside:
            out["notes"].append("pages not compared with a rebuild: "
                                + " and ".join(outside) + " is not embedded in the package;"
                                " the summary's numbers were compared")
        else:
            with tempfile.TemporaryDirectory(prefix="reportgen-shown-") as tmp:
                rebuilt = rebuild_pdf(pkg, plugins, Path(tmp))
            from reportgen.document.results import results_data

            same_env = not environment_differences(pkg.manifest, results_data(doc),
                                                   pkg.files.get(LOCK_NAME))
            if same_env and data == rebuilt:
                out["page_check"] = "byte-identical with a rebuild"
            else:
                # what a reader sees now, every later update included (a seal's own
                # signature field apart)
                out["shown"] += compare_pages(data, rebuilt, exact=same_env)
                out["page_check"] = ("every page draws the same as a rebuild" if same_env
                                     else "every page's text matches a rebuild (another"
                                     " environment: drawings not compared)")
                if same_env and data.startswith(rebuilt):
                    out["page_check"] += ", and the file starts byte for byte with it"
    except NotAPackage:
        pass
    except Exception as exc:  # reported, never a crash of a folder's run
        out["notes"].append(f"pages not compared with a rebuild: {error_text(exc)}")
    if out["shown"]:
        out.pop("page_check", None)
        altered = True
    if altered:
        out["altered"] = True
        out["exit_code"] = max(int(out["exit_code"]), int(ExitCode.CHECKS_FAIL))
    return out
