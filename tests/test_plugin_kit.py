"""The plugin kit: the test kit's contract assertions, failure isolation and hook versioning.

Deliberately broken plugins live as real modules in tests/plugins/ (one broken rule each).
"""

from __future__ import annotations

import importlib.util
import inspect
import math
import os
import subprocess
import sys
import types
from importlib import metadata
from pathlib import Path

import pytest

from reportgen import cli
from reportgen.calc import hookspecs
from reportgen.calc.plugin_set import load_plugin_set
from reportgen.calc.sheet import CalcContext
from reportgen.errors import ExitCode, JobError, PluginError, VerificationError
from reportgen.testing import (
    assert_calc_contract,
    assert_equations_reproduce,
    build_package,
    compute,
    job_toml,
    make_job,
)

FIXTURES = Path(__file__).resolve().parent / "plugins"
FIXTURE_DIST = "rg-fixture-plugins"
HOOKS = sorted(n for n, f in vars(hookspecs).items()
               if callable(f) and hasattr(f, f"{hookspecs.PROJECT}_spec"))


def load_fixture(name: str):
    """Import tests/plugins/<name>.py under a private module name."""
    spec = importlib.util.spec_from_file_location(f"_rg_fixture_{name}", FIXTURES / f"{name}.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module  # dataclasses look their module up while the class is made
    spec.loader.exec_module(module)
    return module


def plugins_with(*names: str):
    return load_plugin_set(extra=[(n, load_fixture(n)) for n in names])


def calc_table(plugin: str, **inputs) -> dict:
    return {"id": "c-1", "plugin": plugin, "title": f"Calc of {plugin}",
            "inputs": inputs or {"x": 3}}


def written(folder: Path) -> list[Path]:
    out = folder / "out"
    return sorted(out.iterdir()) if out.exists() else []


def fake_distribution(tmp_path: Path, *plugins: str) -> Path:
    """A site folder with an installed-looking distribution whose entry points name
    modules in tests/plugins/; importlib.metadata finds it on sys.path."""
    site = tmp_path / "site"
    info = site / f"{FIXTURE_DIST.replace('-', '_')}-0.3.0.dist-info"
    info.mkdir(parents=True)
    (info / "METADATA").write_text(f"Metadata-Version: 2.1\nName: {FIXTURE_DIST}\n"
                                   "Version: 0.3.0\n", encoding="utf-8")
    (info / "entry_points.txt").write_text(
        f"[{hookspecs.ENTRY_POINT_GROUP}]\n" + "".join(f"{p} = {p}\n" for p in plugins),
        encoding="utf-8")
    return site


@pytest.fixture
def installed(tmp_path, monkeypatch):
    """``installed(*fixture_names)``: make the fixture plugins an installed package."""

    def install(*names: str) -> Path:
        site = fake_distribution(tmp_path, *names)
        monkeypatch.syspath_prepend(str(site))
        monkeypatch.syspath_prepend(str(FIXTURES))
        return site

    return install


def write_job(folder: Path, *calcs: dict) -> Path:
    path = folder / "job.toml"
    path.write_text(job_toml(make_job(list(calcs))), encoding="utf-8")
    return path


# ------------------------------------------------------------------ the kit is a pytest plugin


def test_kit_is_registered_as_a_pytest_plugin(pytestconfig, rg_plugins):
    eps = {ep.name: ep.value for ep in metadata.entry_points(group="pytest11")}
    assert eps.get("reportgen") == "reportgen.testing"
    import reportgen.testing

    assert pytestconfig.pluginmanager.get_plugin("reportgen") is reportgen.testing
    # rg_plugins came from the kit, not from this suite's conftest
    assert "def rg_plugins" not in (Path(__file__).parent / "conftest.py").read_text()
    assert "free_vibration" in rg_plugins.calcs


def test_rg_build_fixture_builds_through_the_pipeline(rg_build):
    built = rg_build(make_job({"plugin": "free_vibration",
                               "inputs": {"mass": "100 kg", "stiffness": "400 kN/m"}}))
    assert built.exit_code == 0 and built.pdf.is_file()
    # f_n = sqrt(k/m)/2pi (Thomson & Dahleh 5th ed., Ch. 2)
    fn = math.sqrt(400e3 / 100) / (2 * math.pi)
    assert built.results()["natural_frequency"] == pytest.approx(fn, rel=1e-12)


# ------------------------------------------------------------------ the kit's contract assertions


def test_contract_passes_for_a_sound_plugin(tmp_path, rg_plugins):
    # positive control: the assertions below can pass, so their failures mean something
    ct = rg_plugins.calcs["free_vibration"].calc_type
    assert_calc_contract(ct, {"inputs": {"mass": "50 kg", "stiffness": "2e5 N/m",
                                         "damping_ratio": 0.05, "initial_displacement": "5 mm"}},
                         tmp_path, plugins=rg_plugins, pdf=False)


@pytest.mark.parametrize(("calc_type", "complaint"), [
    ("fixture_unprintable", "printed operands give"),
    ("fixture_unverified", "provides no verification"),
    ("fixture_no_symbol", "no symbol"),
    ("fixture_no_sources", "declares no published sources"),
    ("fixture_no_equations", "no equations"),
])
def test_contract_catches_a_broken_plugin(tmp_path, calc_type, complaint):
    plugins = plugins_with("kit_violations")
    ct = plugins.calcs[calc_type].calc_type
    compute(make_job(calc_table(calc_type)), plugins)  # the core builds it ...
    with pytest.raises(AssertionError, match=complaint):  # ... the kit refuses it
        assert_calc_contract(ct, calc_table(calc_type), tmp_path, plugins=plugins, pdf=False)


def test_tampered_equation_is_caught_by_the_kit_and_refused_by_the_core(tmp_path):
    plugins = plugins_with("broken_equation")
    ct = plugins.calcs["fixture_broken_equation"].calc_type
    out = ct.compute(CalcContext(calc_id="c-1", title="t", inputs={"x": 3.0},
                                 given=frozenset({"x"}), criteria={}))
    with pytest.raises(AssertionError, match="stored result 7.0 is not the expression's value 6"):
        assert_equations_reproduce(out)
    with pytest.raises(PluginError) as err:
        build_package(make_job(calc_table("fixture_broken_equation", x="3 m")), tmp_path,
                      plugins=plugins)
    assert err.value.exit_code == ExitCode.FAILURE
    msg = str(err.value)
    for part in ("plugin 'broken_equation'", "calc 'c-1'", "equation y = 2*x", "states 7"):
        assert part in msg
    assert written(tmp_path) == []


# ------------------------------------------------------------------ failure isolation


def test_disagreeing_verification_stops_the_build(tmp_path):
    plugins = plugins_with("verify_disagrees")
    with pytest.raises(VerificationError) as err:
        build_package(make_job(calc_table("fixture_verify_disagrees", x="2 m")), tmp_path,
                      plugins=plugins)
    assert err.value.exit_code == ExitCode.FAILURE
    msg = str(err.value)
    assert "plugin 'verify_disagrees'" in msg and "calc 'c-1'" in msg
    assert "calc type 'fixture_verify_disagrees'" in msg and "disagrees" in msg
    assert written(tmp_path) == []


def test_exception_in_compute_names_plugin_package_and_calc(tmp_path):
    plugins = plugins_with("raises_in_compute")
    with pytest.raises(PluginError) as err:
        build_package(make_job(calc_table("fixture_raises_in_compute", x=0)), tmp_path,
                      plugins=plugins)
    e = err.value
    assert e.exit_code == ExitCode.FAILURE
    assert (e.plugin, e.package, e.calc, e.stage) == (
        "raises_in_compute", "raises_in_compute", "c-1", "compute")
    assert "ZeroDivisionError" in str(e) and isinstance(e.__cause__, ZeroDivisionError)
    assert written(tmp_path) == []


@pytest.mark.parametrize(("calc_type", "complaint"), [
    ("fixture_string_block", "block of type str is not a reportgen block"),
    ("fixture_dict_output", "expected CalcOutput, got dict"),
])
def test_malformed_output_is_refused(tmp_path, calc_type, complaint):
    plugins = plugins_with("returns_non_block")
    with pytest.raises(PluginError, match=complaint) as err:
        build_package(make_job(calc_table(calc_type)), tmp_path, plugins=plugins)
    assert err.value.exit_code == ExitCode.FAILURE and err.value.calc == "c-1"
    assert "plugin 'returns_non_block'" in str(err.value)
    assert written(tmp_path) == []


def test_duplicate_calc_type_is_a_conflict_at_load():
    plugins = plugins_with("duplicate_type")
    (conflict,) = plugins.conflicts
    assert "calc type 'free_vibration'" in conflict
    assert "plugin 'duplicate_type'" in conflict and "plugin 'free_vibration'" in conflict
    assert plugins.calcs["free_vibration"].calc_type.version != "9.9.9"  # first one kept
    with pytest.raises(PluginError) as err:
        plugins.raise_for_conflicts()
    assert err.value.exit_code == ExitCode.INVALID_INPUT


def test_unsupported_api_version_is_refused_with_both_versions(tmp_path):
    plugins = plugins_with("future_api")
    assert "fixture_future_api" not in plugins.calcs
    (broken,) = plugins.broken
    assert broken.plugin == "future_api" and broken.calc_types == ("fixture_future_api",)
    for part in ("plugin 'future_api'", "package future_api", "API 99",
                 f"supports API {hookspecs.API_VERSION}"):
        assert part in broken.error
    with pytest.raises(JobError, match="failed to load.*API 99"):
        compute(make_job(calc_table("fixture_future_api")), plugins, tmp_path)


@pytest.mark.parametrize(("fixture", "complaint"), [
    ("misspelled_hook", "unknown hook(s) reportgen_register_calc_type (misspelled?)"),
    ("register_raises", "RuntimeError: licence server"),
])
def test_a_plugin_that_fails_to_register_is_listed_and_the_rest_load(fixture, complaint):
    plugins = plugins_with(fixture, "raises_in_compute")
    (broken,) = plugins.broken
    assert broken.plugin == fixture and complaint in broken.error
    assert {"free_vibration", "fixture_raises_in_compute"} <= set(plugins.calcs)


def test_import_error_is_listed_as_broken(installed):
    installed("import_error", "raises_in_compute")
    plugins = load_plugin_set()
    (broken,) = [b for b in plugins.broken if b.plugin == "import_error"]
    assert broken.package == FIXTURE_DIST
    assert "ModuleNotFoundError" in broken.error and "qep_missing_site_library" in broken.error
    assert plugins.calcs["fixture_raises_in_compute"].package == FIXTURE_DIST


# ------------------------------------------------------------------ the Jinja2 hook


def test_prepare_jinja_env_reaches_a_firm_template(tmp_path):
    from reportgen.render.assets import render_assets
    from reportgen.render.html import render_html
    from reportgen.render.logo import jinja_hook

    plugins = plugins_with("jinja_filter")
    doc = compute(make_job({"plugin": "free_vibration",
                            "inputs": {"mass": "10 kg", "stiffness": "4000 N/m"}}), plugins)
    theme = tmp_path / "theme"
    theme.mkdir()
    (theme / "running.html").write_text(
        '<div class="running-header">{{ firm_motto }} {{ info.job_number|spaced }}</div>\n'
        '<div class="running-title">{{ info.title }}</div>\n', encoding="utf-8")
    html = render_html(doc, render_assets(doc, use_cache=False), template_dir=theme,
                       extra_hook=jinja_hook(doc, plugins))
    assert f"Measured twice (API {hookspecs.API_VERSION}) T - 1" in html


def test_prepare_jinja_env_failure_names_its_plugin(tmp_path):
    plugins = plugins_with("jinja_raises")
    with pytest.raises(PluginError) as err:
        build_package(make_job({"plugin": "free_vibration",
                                "inputs": {"mass": "10 kg", "stiffness": "4000 N/m"}}),
                      tmp_path, plugins=plugins)
    assert err.value.plugin == "jinja_raises" and err.value.exit_code == ExitCode.FAILURE
    assert "KeyError" in str(err.value) and "reportgen_prepare_jinja_env" in str(err.value)
    assert written(tmp_path) == []


# ------------------------------------------------------------------ the command line


def test_cli_plugins_lists_broken_ones_and_exits_0(installed, capsys):
    installed("import_error", "future_api", "misspelled_hook", "raises_in_compute")
    assert cli.main(["plugins"]) == 0
    out = capsys.readouterr().out
    assert "free_vibration" in out
    assert f"fixture_raises_in_compute  0.0.1  (package {FIXTURE_DIST} 0.3.0" in out
    lines = {ln.split("'")[1]: ln for ln in out.splitlines() if ln.startswith("BROKEN")}
    assert set(lines) == {"import_error", "future_api", "misspelled_hook"}
    assert f"(package {FIXTURE_DIST})" in lines["import_error"]
    assert "ModuleNotFoundError" in lines["import_error"]
    assert "API 99" in lines["future_api"] and "supports API 1" in lines["future_api"]
    assert "reportgen_register_calc_type " in lines["misspelled_hook"]


@pytest.mark.parametrize(("fixture", "calc_type", "inputs", "words"), [
    ("raises_in_compute", "fixture_raises_in_compute", {"x": 0}, "ZeroDivisionError"),
    ("verify_disagrees", "fixture_verify_disagrees", {"x": "2 m"}, "disagrees"),
    ("returns_non_block", "fixture_string_block", {"x": 1}, "not a reportgen block"),
])
def test_cli_build_exits_3_and_writes_nothing(installed, tmp_path, capsys, fixture, calc_type,
                                              inputs, words):
    installed(fixture)
    job = write_job(tmp_path, {"id": "c-9", "plugin": calc_type, "title": "t",
                               "inputs": inputs})
    out = tmp_path / "out"
    assert cli.main(["build", str(job), "--out", str(out)]) == 3
    err = capsys.readouterr().err
    assert f"plugin '{fixture}' (package {FIXTURE_DIST})" in err and "calc 'c-9'" in err
    assert words in err and "Traceback" not in err
    assert not out.exists() or not any(out.iterdir())


def test_cli_duplicate_calc_type_exits_2(installed, tmp_path, capsys):
    installed("duplicate_type")
    job = write_job(tmp_path, {"plugin": "free_vibration",
                               "inputs": {"mass": "10 kg", "stiffness": "4000 N/m"}})
    assert cli.main(["build", str(job), "--out", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err
    assert f"plugin 'duplicate_type' (package {FIXTURE_DIST})" in err
    assert not (tmp_path / "out").exists()
    assert cli.main(["plugins"]) == 2
    assert "CONFLICT: calc type 'free_vibration'" in capsys.readouterr().out


def test_cli_in_a_real_process(tmp_path):
    # importlib.metadata discovers the fixture distribution through PYTHONPATH alone
    site = fake_distribution(tmp_path, "import_error", "raises_in_compute")
    env = {**os.environ, "PYTHONPATH": os.pathsep.join([str(site), str(FIXTURES)])}
    run = [sys.executable, "-m", "reportgen.cli"]
    listed = subprocess.run([*run, "plugins"], env=env, capture_output=True, text=True,
                            timeout=120)
    assert listed.returncode == 0, listed.stderr
    assert "BROKEN plugin 'import_error'" in listed.stdout
    assert "fixture_raises_in_compute" in listed.stdout and "free_vibration" in listed.stdout
    job = write_job(tmp_path, {"id": "c-0", "plugin": "fixture_raises_in_compute",
                               "title": "t", "inputs": {"x": 0}})
    built = subprocess.run([*run, "build", str(job), "--out", str(tmp_path / "out")], env=env,
                           capture_output=True, text=True, timeout=120)
    assert built.returncode == 3
    assert "plugin 'raises_in_compute' (package rg-fixture-plugins), calc 'c-0'" in built.stderr
    assert "Traceback" not in built.stderr
    assert not (tmp_path / "out").exists()


# ------------------------------------------------------------------ meta: the hook specs


def test_there_are_hook_specs():
    assert {"reportgen_register_calc_types", "reportgen_prepare_jinja_env"} <= set(HOOKS)


@pytest.mark.parametrize("hook", HOOKS)
def test_every_hookspec_is_documented(hook):
    func = getattr(hookspecs, hook)
    doc = inspect.getdoc(func) or ""
    summary = doc.split("\n", 1)[0]
    assert summary.endswith(".") and len(summary) > 20, f"{hook}: no one-line summary"
    for param in inspect.signature(func).parameters:
        assert f":param {param}:" in doc, f"{hook}: parameter {param} is not documented"
    assert ":returns:" in doc, f"{hook}: the return value is not documented"
    assert "versionadded" in doc, f"{hook}: no API version note"


@pytest.mark.parametrize("hook", HOOKS)
def test_every_hookspec_is_exercised_by_a_fixture_plugin(hook):
    # each hook has a fixture implementation here, and this module loads that fixture
    this = Path(__file__).read_text(encoding="utf-8")
    users = [p.stem for p in FIXTURES.glob("*.py")
             if f"def {hook}(" in p.read_text(encoding="utf-8")]
    assert users, f"no fixture plugin implements {hook}"
    assert any(f'"{u}"' in this for u in users), f"no test loads a plugin implementing {hook}"


def test_api_version_is_supported_by_this_core():
    assert hookspecs.API_VERSION in hookspecs.SUPPORTED_API_VERSIONS


def test_criteria_registered_by_plugins_are_found_by_any_spelling_of_their_name():
    plugins = plugins_with("core_capabilities")
    from reportgen.calc.criteria import load_criteria

    library = load_criteria(plugins)
    found = library.get("fixture_limit_a")
    assert found is not None and found.value == 1.0
    assert library.get("FIXTURE A") is found  # an alias, case and separators aside
    assert library.get("fixture-limit-b") is None
    assert library.nearest("fixture-limit-b") == ["Fixture-limit-A"]
    clash = types.SimpleNamespace(name="fixture limit a", title="t", source="s", value=2.0)
    twice = load_criteria(plugins, extra=[(clash, "other", "pkg")])
    assert any("registered by plugin 'other'" in p for p in twice.problems)
