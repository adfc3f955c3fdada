"""Folder builds in worker processes and on Dask give byte-identical packages to a serial
build (same PDF bytes), and the figure/equation worker pool draws what the serial path
draws.
"""

from __future__ import annotations

import shutil
import subprocess
import sys
from pathlib import Path

import pytest
from conftest import REPO

from reportgen.cli import main

JOBS = ("qep-101-pump-p1.toml", "qep-103-pump-p2-force.toml")


@pytest.fixture(scope="module")
def calc_set(tmp_path_factory) -> Path:
    folder = tmp_path_factory.mktemp("set")
    for name in JOBS:
        shutil.copy(REPO / "sample_jobs" / name, folder / name)
    return folder


def _build(folder: Path, out: Path, *extra: str) -> dict[str, bytes]:
    code = main(["build", str(folder), "--out", str(out), "--force", *extra])
    assert code in (0, 1)
    pdfs = {p.name: p.read_bytes() for p in sorted(out.glob("*.pdf")) if p.name != "register.pdf"}
    assert len(pdfs) == len(JOBS)
    return pdfs


@pytest.fixture(scope="module")
def serial(calc_set, tmp_path_factory) -> dict[str, bytes]:
    return _build(calc_set, tmp_path_factory.mktemp("serial"), "--jobs", "1", "--no-cache")


def test_two_workers_give_byte_identical_packages(calc_set, serial, tmp_path, monkeypatch):
    monkeypatch.setenv("REPORTGEN_CACHE_DIR", str(tmp_path / "cache"))  # cold cache
    assert _build(calc_set, tmp_path / "out", "--jobs", "2") == serial


def test_dask_local_cluster_gives_byte_identical_packages(calc_set, serial, tmp_path,
                                                          monkeypatch):
    pytest.importorskip("dask.distributed")
    monkeypatch.setenv("REPORTGEN_CACHE_DIR", str(tmp_path / "cache"))
    # no --scheduler: a LocalCluster of --jobs worker processes is started and closed
    assert _build(calc_set, tmp_path / "out", "--jobs", "2", "--executor", "dask") == serial


def test_run_on_dask_reports_outcomes_in_order_and_failures(tmp_path):
    pytest.importorskip("dask.distributed")
    from dask.distributed import Client, LocalCluster

    from reportgen.pipeline.sets import run_tasks

    seen = []
    with LocalCluster(n_workers=1, threads_per_worker=2, processes=False,
                      dashboard_address=None) as cluster, Client(cluster) as client:
        out = run_tasks(_outcome, [(i,) for i in range(5)], workers=2, executor="dask",
                        scheduler=client.scheduler.address, on_done=seen.append)
    assert [o["job"] for o in out] == [str(i) for i in range(5)]
    assert sorted(o["job"] for o in seen) == [str(i) for i in range(5)]
    assert [o["ok"] for o in out] == [True, True, True, False, True]
    assert "worker failed" in out[3]["error"]


def _outcome(i: int) -> dict:
    if i == 3:
        raise RuntimeError("lost")  # stands in for a worker that died mid-package
    return {"job": str(i), "ok": True, "exit_code": 0}


def test_parallel_asset_pool_draws_what_the_serial_path_draws(tmp_path):
    from reportgen.calc.plugin_set import load_plugins
    from reportgen.document.compute import compute_document
    from reportgen.job.load import load_job
    from reportgen.pipeline.scheduler import Scheduler
    from reportgen.render.assets import render_assets

    plugins = load_plugins()
    doc = compute_document(load_job(REPO / "sample_jobs" / JOBS[1], plugins), plugins)
    one = render_assets(doc, use_cache=False)
    two = Scheduler(workers=2, use_cache=False).render_assets(doc)
    assert len(one) >= 6 and dict(one) == dict(two) and one.css == two.css


def test_split_build_with_early_workers_matches_the_plain_in_process_build(tmp_path,
                                                                           monkeypatch):
    from reportgen.calc.plugin_set import load_plugins
    from reportgen.pipeline.plan import BuildOptions, build_job

    job = REPO / "sample_jobs" / "qep-104-chiller-ch1.toml"
    plain = build_job(job, load_plugins(), BuildOptions(out_dir=tmp_path / "plain",
                                                        use_cache=False, workers=1))
    monkeypatch.setenv("REPORTGEN_CACHE_DIR", str(tmp_path / "cache"))
    # the command line's path in a fresh process: forked child, drawing pool started
    # early, verification in it (in this process WeasyPrint is loaded: no split)
    for out in ("split-cold", "split-warm"):
        proc = subprocess.run([sys.executable, "-m", "reportgen.cli", "build", str(job),
                               "--out", str(tmp_path / out), "--jobs", "2"],
                              capture_output=True, text=True, timeout=300)
        assert proc.returncode in (0, 1), proc.stderr
        assert (tmp_path / out / plain.pdf.name).read_bytes() == plain.pdf.read_bytes()
