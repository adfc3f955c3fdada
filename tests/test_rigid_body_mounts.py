"""rigid_body_mounts as a calc type (issue 18): jobs with the fixed names built through the
real loader and pipeline, results.json values against closed forms, failing checks that are
content, catalogue errors with exit 2, and the sample job's selection, build and verify."""

from __future__ import annotations

import copy
import json
import math
import shutil
from pathlib import Path

import numpy as np
import pytest
from conftest import REPO
from rigid_body_cases import rotation, wave2_case

from reportgen.cli import main
from reportgen.errors import JobError
from reportgen.testing import (
    assert_calc_contract,
    assert_equations_reproduce,
    compute,
    make_job,
    result,
    section_checks,
)

G = 9.80665  # standard gravity (CGPM 1901)
SAMPLE = REPO / "sample_jobs" / "qep-118-ahu-rooftop.toml"
CATALOGUE = REPO / "sample_jobs" / "catalogues" / "tollbrook-ts.csv"


def q(value: float, unit: str) -> str:
    return f"{float(value)!r} {unit}"


def case_calc(case: dict, *, datum=(0.0, 0.0, 0.0), turn: np.ndarray | None = None) -> dict:
    """A job's calc table for a wave-2 case (positions relative to the CG), the CG put at
    ``datum`` and the whole layout turned by ``turn`` (a rotation about z keeps a mount's
    horizontal stiffness horizontal, so k_x = k_y mounts stay valid)."""
    turn = np.eye(3) if turn is None else turn
    i = case["inputs"]["inertia_about_CG"]["value"]
    j = np.array([[i["Ixx"], -i["Ixy"], -i["Ixz"]], [-i["Ixy"], i["Iyy"], -i["Iyz"]],
                  [-i["Ixz"], -i["Iyz"], i["Izz"]]])
    j = turn @ j @ turn.T
    rows = []
    for m in case["inputs"]["mounts"]["value"]:
        r = turn @ np.asarray(m["r"]) + np.asarray(datum)
        kx, ky, kz = m["k"]
        row = {"x": q(r[0], "m"), "y": q(r[1], "m"), "z": q(r[2], "m")}
        if kx == ky:
            row.update(k_vertical=q(kz, "N/m"), k_horizontal=q(kx, "N/m"))
        else:
            row.update(k_x=q(kx, "N/m"), k_y=q(ky, "N/m"), k_z=q(kz, "N/m"))
        rows.append(row)
    return {"plugin": "rigid_body_mounts", "inputs": {
        "mass": q(case["inputs"]["m"]["value"], "kg"),
        "cg_x": q(datum[0], "m"), "cg_y": q(datum[1], "m"), "cg_z": q(datum[2], "m"),
        "inertia_xx": q(j[0, 0], "kg*m**2"), "inertia_yy": q(j[1, 1], "kg*m**2"),
        "inertia_zz": q(j[2, 2], "kg*m**2"), "inertia_xy": q(-j[0, 1], "kg*m**2"),
        "inertia_xz": q(-j[0, 2], "kg*m**2"), "inertia_yz": q(-j[1, 2], "kg*m**2"),
        "mounts": rows}}


def frequencies(doc) -> list[float]:
    return [result(doc, f"natural_frequency_{i}") for i in range(1, 7)]


# ------------------------------------------------------------------ closed forms


def test_symmetric_mounts_in_the_cg_plane_decouple(rg_plugins):
    # Harris' Shock and Vibration Handbook, Ch. 3 (Eqs. 3.31 with every coupling term zero,
    # f_z = √(Σk_z/m)/2π, Eq. 3.37): each frequency from one stiffness sum over one inertia.
    case = wave2_case("R1_rigid_body_4_mounts_CG_plane_decoupled")
    doc = compute(make_job(case_calc(case, datum=(1.3, 0.8, 0.9))), rg_plugins)
    m = case["inputs"]["m"]["value"]
    i = case["inputs"]["inertia_about_CG"]["value"]
    mounts = case["inputs"]["mounts"]["value"]
    kx = sum(mt["k"][0] for mt in mounts)
    ky = sum(mt["k"][1] for mt in mounts)
    kz = sum(mt["k"][2] for mt in mounts)
    k_rx = sum(mt["k"][2] * mt["r"][1] ** 2 for mt in mounts)
    k_ry = sum(mt["k"][2] * mt["r"][0] ** 2 for mt in mounts)
    k_rz = sum(mt["k"][0] * mt["r"][1] ** 2 + mt["k"][1] * mt["r"][0] ** 2 for mt in mounts)
    hand = sorted(math.sqrt(k / inertia) / (2 * math.pi) for k, inertia in (
        (kx, m), (ky, m), (kz, m), (k_rx, i["Ixx"]), (k_ry, i["Iyy"]), (k_rz, i["Izz"])))
    assert frequencies(doc) == pytest.approx(hand, rel=1e-9)
    assert frequencies(doc) == pytest.approx(case["expected"]["f_sorted"]["value"], rel=1e-6)
    for n in range(1, 7):  # a decoupled mode is all in one coordinate
        assert result(doc, f"mode_{n}_dominant_share") == pytest.approx(1.0, abs=1e-9)
    for n in range(1, 5):  # symmetric layout: W/4 on each mount, δ = W/(4k_z)
        assert result(doc, f"mount_load_{n}") == pytest.approx(m * G / 4, rel=1e-9)
        assert result(doc, f"mount_deflection_{n}") == pytest.approx(m * G / kz, rel=1e-9)
    assert abs(result(doc, "tilt_x")) < 1e-12 and abs(result(doc, "tilt_y")) < 1e-12
    assert assert_equations_reproduce(doc) > 10


def test_mounts_below_the_cg_give_the_coupled_lateral_rocking_pair(rg_plugins):
    # Two degrees of freedom x and θy (Harris Ch. 3, coupled pair for two planes of
    # symmetry; Thomson & Dahleh Ch. 5, 2-DOF eigenvalues): mounts a height h below the CG,
    # K = [[Σk_x, −h·Σk_x], [−h·Σk_x, h²·Σk_x + Σk_z·x²]], M = diag(m, I_yy), roots of
    # m·I·λ² − (m·K22 + I·K11)·λ + K11·K22 − K12² = 0. The case file's status for the pair
    # is "from_memory" (the formula re-derived from the equations of motion).
    case = wave2_case("R2_rigid_body_4_mounts_below_CG_coupled_rocking")
    doc = compute(make_job(case_calc(case)), rg_plugins)
    m = case["inputs"]["m"]["value"]
    iyy = case["inputs"]["inertia_about_CG"]["value"]["Iyy"]
    mounts = case["inputs"]["mounts"]["value"]
    h = -mounts[0]["r"][2]
    kx = sum(mt["k"][0] for mt in mounts)
    k11, k12 = kx, -h * kx
    k22 = h * h * kx + sum(mt["k"][2] * mt["r"][0] ** 2 for mt in mounts)
    b, c = m * k22 + iyy * k11, k11 * k22 - k12 ** 2
    disc = math.sqrt(b * b - 4 * m * iyy * c)
    pair = [math.sqrt((b + s * disc) / (2 * m * iyy)) / (2 * math.pi) for s in (-1, 1)]
    got = frequencies(doc)
    for f in pair:
        assert min(abs(g - f) / f for g in got) < 1e-9
    assert got == pytest.approx(case["expected"]["f_sorted"]["value"], rel=1e-6)


def test_three_mounts_carry_the_weight_by_hand_statics(rg_plugins):
    # Statically determinate: ΣP = W and the moments of the loads about the CG vanish
    # (the horizontal spring forces have no moment arm difference when the mounts share one
    # height); the hand solution for a right triangle (0,0), (2,0), (0,1.5):
    # P2 = W·x_G/2, P3 = W·y_G/1.5, P1 = W − P2 − P3. Hibbeler, Statics, Ch. 5 (3-D
    # equilibrium of a rigid body on three supports).
    mass, xg, yg = 1200.0, 0.6, 0.5
    mounts = [{"x": f"{x} m", "y": f"{y} m", "z": "0 m", "k_vertical": f"{kz} N/m",
               "k_horizontal": "200000 N/m"}
              for (x, y), kz in zip([(0, 0), (2, 0), (0, 1.5)], (4e5, 2.5e5, 3e5), strict=True)]
    calc = {"plugin": "rigid_body_mounts", "inputs": {
        "mass": f"{mass} kg", "cg_x": f"{xg} m", "cg_y": f"{yg} m", "cg_z": "0.4 m",
        "box_length": "2 m", "box_width": "1.5 m", "box_height": "0.8 m", "mounts": mounts}}
    doc = compute(make_job(calc), rg_plugins)
    w = mass * G
    p2, p3 = w * xg / 2.0, w * yg / 1.5
    assert [result(doc, f"mount_load_{i}") for i in (1, 2, 3)] == pytest.approx(
        [w - p2 - p3, p2, p3], rel=1e-9)
    for i, kz in zip((1, 2, 3), (4e5, 2.5e5, 3e5), strict=True):  # δ = P/k_z (Hooke)
        assert result(doc, f"mount_deflection_{i}") == pytest.approx(
            result(doc, f"mount_load_{i}") / kz, rel=1e-9)


@pytest.mark.parametrize("angle", [0.5236, 2.2])
def test_turning_and_moving_the_datum_leaves_the_frequencies(rg_plugins, angle):
    # Physical invariant: the natural frequencies do not depend on the frame the job is
    # written in (the inertia tensor turned as J' = R·J·Rᵀ, products of inertia included).
    # The R2 layout (coupled modes) with equal horizontal stiffness in x and y, so that a
    # mount's stiffness is the same in any horizontal direction and the body is unchanged.
    case = copy.deepcopy(wave2_case("R2_rigid_body_4_mounts_below_CG_coupled_rocking"))
    for m in case["inputs"]["mounts"]["value"]:
        m["k"][1] = m["k"][0]
    base = frequencies(compute(make_job(case_calc(case)), rg_plugins))
    turned = frequencies(compute(make_job(case_calc(
        case, datum=(4.0, -2.5, 1.1), turn=rotation("z", angle))), rg_plugins))
    assert turned == pytest.approx(base, rel=1e-9)


# ------------------------------------------------------------------ checks are content


def _tension_calc() -> dict:
    # the CG 0.15 m beyond the mount line x = 1 m: the mounts at x = 0 must pull
    mounts = [{"x": f"{x} m", "y": f"{y} m", "z": "0 m", "k_vertical": "300 kN/m",
               "k_horizontal": "300 kN/m"} for x in (0, 1) for y in (0, 1)]
    return {"plugin": "rigid_body_mounts", "inputs": {
        "mass": "500 kg", "cg_x": "1.15 m", "cg_y": "0.5 m", "cg_z": "0.05 m",
        "inertia_xx": "60 kg*m**2", "inertia_yy": "60 kg*m**2", "inertia_zz": "80 kg*m**2",
        "mounts": mounts}}


def test_a_mount_in_tension_is_a_failing_check_not_an_input_error(rg_plugins):
    doc = compute(make_job(_tension_calc()), rg_plugins)
    # rigid-base statics (Hibbeler, Statics, Ch. 5): the line x = 0 carries
    # W·(1 − x_G)/1 = −0.15·W, shared by two mounts
    assert result(doc, "mount_load_1") == pytest.approx(-0.075 * 500 * G, rel=1e-6)
    assert section_checks(doc.sections[0])["mounts-in-compression"] == "fail"


def test_frequency_ratio_default_and_rated_load_checks(rg_plugins):
    # f ≤ f_run/√2 (Thomson & Dahleh §3.5: T < 1 only above r = √2)
    case = wave2_case("R1_rigid_body_4_mounts_CG_plane_decoupled")
    calc = case_calc(case)
    calc["inputs"]["running_speed"] = "1480 rpm"
    calc["inputs"]["mounts"][0]["rated_load"] = "1.5 kN"  # W/4 = 2.08 kN: over
    doc = compute(make_job(calc), rg_plugins)
    checks = section_checks(doc.sections[0])
    top = max(frequencies(doc))
    assert checks["frequency-6"] == ("pass" if top <= 1480 / 60 / math.sqrt(2) else "fail")
    assert checks["rated-load-1"] == "fail"
    assert "rated-load-2" not in checks


# ------------------------------------------------------------------ catalogue errors


HEADER = ("model,rated_load [lbf],spring_rate [lbf/in],rated_deflection [in],"
          "solid_deflection [in],horizontal_ratio")


def _catalogue_job(folder: Path, csv_text: str) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    (folder / "springs.csv").write_text(csv_text, encoding="utf-8")
    calc = _tension_calc()
    calc["inputs"]["cg_x"] = "0.5 m"
    calc["inputs"]["catalogue"] = "springs.csv"
    for row in calc["inputs"]["mounts"]:
        del row["k_vertical"], row["k_horizontal"]
    from reportgen.testing import job_toml

    path = folder / "job.toml"
    path.write_text(job_toml(make_job(calc)), encoding="utf-8")
    return path


@pytest.mark.parametrize("lines, where, what", [
    ([HEADER.replace(",horizontal_ratio", ""), "A-1,300,150,2.0,3.0"],
     "row 1, column 'horizontal_ratio'", "missing column"),
    ([HEADER, "A-1,300,-150,2.0,3.0,1.0"], "row 2, column 'spring_rate [lbf/in]'",
     "must be positive"),
    ([HEADER.replace("rated_load [lbf]", "rated_load"), "A-1,300,150,2.0,3.0,1.0"],
     "row 2, column 'rated_load'", "needs a unit"),
])
def test_catalogue_errors_exit_2_naming_file_row_and_column(tmp_path, capsys, lines, where,
                                                            what):
    path = _catalogue_job(tmp_path / "job", "\n".join(lines) + "\n")
    code = main(["build", str(path), "--out", str(tmp_path / "out"), "--jobs", "1"])
    err = capsys.readouterr().err
    assert code == 2
    assert f"springs.csv, {where}" in err and what in err and "inputs.catalogue" in err
    assert "Traceback" not in err
    assert not (tmp_path / "out").exists() or not any((tmp_path / "out").iterdir())


def test_an_unknown_model_names_the_mounts_row(tmp_path, rg_plugins):
    path = _catalogue_job(tmp_path / "job", CATALOGUE.read_text(encoding="utf-8"))
    text = path.read_text(encoding="utf-8").replace(
        'z = "0 m"', 'z = "0 m"\nmodel = "TS-9999"', 1)
    path.write_text(text, encoding="utf-8")
    from reportgen.job.load import load_job

    with pytest.raises(JobError) as exc:
        load_job(path, rg_plugins)
    assert "inputs.mounts[1]" in str(exc.value) and "TS-9999" in str(exc.value)


# ------------------------------------------------------------------ the sample job


def _sample_doc(rg_plugins, tmp_path):
    folder = tmp_path / "sample"
    shutil.copytree(REPO / "sample_jobs" / "catalogues", folder / "catalogues")
    shutil.copy(SAMPLE, folder / SAMPLE.name)
    from reportgen.document.compute import compute_document
    from reportgen.job.load import load_job

    return compute_document(load_job(folder / SAMPLE.name, rg_plugins), rg_plugins)


def test_sample_air_handler_heavy_corner_gets_the_bigger_spring(rg_plugins, tmp_path):
    doc = _sample_doc(rg_plugins, tmp_path)
    sec = doc.sections[0]
    table = next(b for b in sec.blocks if getattr(b, "title", "") == "Spring selection per mount")
    assert [row[2] for row in table.rows] == ["TS-2100"] + ["TS-1600"] * 5
    checks = section_checks(sec)
    assert set(checks.values()) == {"pass"}
    # every fixed results key, SI
    keys = {r.key for r in sec.results}
    for n in range(1, 7):
        assert {f"natural_frequency_{n}", f"mode_{n}_dominant_share", f"mount_load_{n}",
                f"mount_deflection_{n}", f"transmitted_force_{n}"} <= keys
    assert {"tilt_x", "tilt_y", "total_transmitted_force"} <= keys
    # the loads carry the weight: 8700 lb (NIST SP 811: 1 lb = 0.45359237 kg)
    loads = [result(doc, f"mount_load_{n}") for n in range(1, 7)]
    assert sum(loads) == pytest.approx(8700 * 0.45359237 * G, rel=1e-9)
    assert max(loads) == loads[0]  # the fan corner
    assert sec.verification and all(v.agrees for v in sec.verification)
    assert {v.quantity for v in sec.verification} >= {"natural_frequency_1", "mount_load_1",
                                                       "tilt_x", "total_transmitted_force"}


def test_contract_of_the_calc_type(tmp_path, rg_plugins):
    from reportgen_plugins.rigid_body_mounts import RigidBodyMounts

    calc = case_calc(wave2_case("R2_rigid_body_4_mounts_below_CG_coupled_rocking"))
    calc["inputs"].update(running_speed="1480 rpm", force_amplitude="400 N",
                          force_direction="x", force_z="0.3 m")
    assert_calc_contract(RigidBodyMounts(), calc, tmp_path, plugins=rg_plugins, pdf=False)


def test_sample_builds_and_verify_reruns_it(tmp_path, capsys):
    folder = tmp_path / "sample"
    shutil.copytree(REPO / "sample_jobs" / "catalogues", folder / "catalogues")
    shutil.copy(SAMPLE, folder / SAMPLE.name)
    out = tmp_path / "out"
    assert main(["build", str(folder / SAMPLE.name), "--out", str(out), "--jobs", "1"]) == 0
    pdf = next(out.glob("*.pdf"))
    data = json.loads(next(out.glob("*.results.json")).read_text(encoding="utf-8"))
    assert data["calcs"][0]["plugin"] == "rigid_body_mounts"
    capsys.readouterr()
    shutil.rmtree(folder)  # verify reads the catalogue embedded in the package, not the folder
    assert main(["verify", str(pdf)]) == 0
    assert "OK" in capsys.readouterr().out


def test_a_catalogue_in_the_firms_template_folder_is_found_and_embedded(tmp_path, rg_plugins):
    from reportgen.job.load import load_job

    folder = tmp_path / "job"
    (folder / "firm" / "catalogues").mkdir(parents=True)
    shutil.copy(CATALOGUE, folder / "firm" / "catalogues" / "tollbrook-ts.csv")
    text = SAMPLE.read_text(encoding="utf-8").replace(
        'units = "SI"', 'units = "SI"\ntemplate_dir = "firm"')
    (folder / "job.toml").write_text(text, encoding="utf-8")
    job = load_job(folder / "job.toml", rg_plugins)
    data = job.calcs[0].files["catalogue"]
    assert data.name == "catalogues/tollbrook-ts.csv"
    assert data.read_bytes() == CATALOGUE.read_bytes()
    assert any(a.path == "catalogues/tollbrook-ts.csv" for a in job.attachments)
    (folder / "firm" / "catalogues" / "tollbrook-ts.csv").unlink()  # neither place: exit 2
    with pytest.raises(JobError) as exc:
        load_job(folder / "job.toml", rg_plugins)
    assert "inputs.catalogue" in str(exc.value) and "not found" in str(exc.value)


def test_every_fixed_name_and_the_vertical_force_transmissibility(rg_plugins):
    # All the names issue 18 fixes, in one job. R1 decouples, so a vertical force at the CG
    # drives the vertical mode alone, and the force through the mounts is the single-degree
    # transmissibility with structural damping, |F_T|/F = |(1 + 2iζ)/(1 + 2iζ − r²)|,
    # r = f/f_z (Thomson & Dahleh, 5th ed., §3.9 structural damping; Rao §9.10). A rotor
    # spinning about z at the CG adds a force turning in the horizontal plane that the
    # vertical term does not see; its peak adds (the stated bound for unknown phase).
    case = wave2_case("R1_rigid_body_4_mounts_CG_plane_decoupled")
    calc = case_calc(case, datum=(0.5, 0.7, 0.3))
    calc["inputs"]["mounts"][0]["rated_load"] = "5 kN"
    calc["inputs"].update(damping_ratio=0.04, running_speed="1480 rpm",
                          force_amplitude="600 N", force_direction="z", force_x="0.5 m",
                          force_y="0.7 m", force_z="0.3 m", unbalance="0.002 kg*m",
                          rotor_x="0.5 m", rotor_y="0.7 m", rotor_z="0.3 m", rotor_axis="z")
    calc["criteria"] = {"min_frequency_ratio": 2.0, "min_mount_load": "1 kN",
                        "max_tilt": "0.2 deg", "min_decoupling_share": 0.9}
    doc = compute(make_job(calc), rg_plugins)
    m = case["inputs"]["m"]["value"]
    w = 2 * math.pi * 1480 / 60

    def trans(k: float) -> complex:  # (1 + 2iζ)/(1 + 2iζ − r²), r² = m·ω²/k
        return (1 + 0.08j) / (1 + 0.08j - m * w * w / k)

    kx, ky, kz = (sum(mt["k"][j] for mt in case["inputs"]["mounts"]["value"]) for j in range(3))
    vertical = 600 * abs(trans(kz))
    # the unbalance force U·ω²·(x̂ − i·ŷ) through the decoupled x and y modes; its largest
    # magnitude over a cycle found by sampling the cycle
    amp = np.array([0.002 * w * w * trans(kx), -1j * 0.002 * w * w * trans(ky)])
    phase = np.linspace(0, 2 * np.pi, 200_001)
    turning = float(np.max(np.hypot(*(amp[:, None] * np.exp(1j * phase)).real)))
    assert result(doc, "total_transmitted_force") == pytest.approx(vertical + turning, rel=1e-8)
    for n in range(1, 5):  # the symmetric layout shares both equally
        assert result(doc, f"transmitted_force_{n}") == pytest.approx(
            (vertical + turning) / 4, rel=1e-8)
    checks = section_checks(doc.sections[0])
    assert checks["decoupling"] == "pass" and checks["tilt"] == "pass"
    assert checks["min-mount-load"] == "pass" and checks["rated-load-1"] == "pass"
    # f ≤ f_run/2 with the stated ratio 2
    assert all(checks[f"frequency-{n}"] == ("pass" if result(doc, f"natural_frequency_{n}")
                                            <= 1480 / 60 / 2 else "fail")
               for n in range(1, 7))


def test_elastomer_ratio_scales_every_mode_by_its_root_and_leaves_the_statics(rg_plugins):
    # Every mount rate times κ_d makes K → κ_d·K with M unchanged, so each eigenvalue of
    # K·φ = ω²·M·φ scales by κ_d and each frequency by √κ_d (Thomson & Dahleh Ch. 6, the
    # eigenvalue problem); the static loads (ratios of stiffnesses) do not change, while the
    # deflections of the static rates do not change either (statics use the maker's rates).
    case = wave2_case("R2_rigid_body_4_mounts_below_CG_coupled_rocking")
    calc = case_calc(case)
    steel = compute(make_job(calc), rg_plugins)
    ratio = 1.5
    rubber = compute(make_job({**calc, "inputs": {
        **calc["inputs"], "mount_type": "elastomer", "dynamic_stiffness_ratio": ratio}}),
        rg_plugins)
    assert frequencies(rubber) == pytest.approx(
        [f * math.sqrt(ratio) for f in frequencies(steel)], rel=1e-9)
    for n in range(1, 5):
        for key in (f"mount_load_{n}", f"mount_deflection_{n}"):
            assert result(rubber, key) == pytest.approx(result(steel, key), rel=1e-9,
                                                        abs=1e-12)
    sec = rubber.sections[0]
    assert sec.verification and all(v.agrees for v in sec.verification)
    assert assert_equations_reproduce(rubber) > 10
    # an elastomer without its ratio is refused, naming the field (exit 2 at build)
    from reportgen import JobError
    with pytest.raises(JobError, match="dynamic_stiffness_ratio"):
        compute(make_job({**calc, "inputs": {**calc["inputs"], "mount_type": "elastomer"}}),
                rg_plugins)


def test_running_speed_takes_excitation_orders(rg_plugins):
    """Issue 17: a calc type with a running speed takes orders; for rigid_body_mounts the
    speed is `running_speed`. Each mode must sit below the excitation / r_min (r_min = √2,
    the isolation threshold of T = 1, Thomson & Dahleh §3.5); a half order (four-stroke
    firing) excites at half the speed, so every frequency check governs there, against a
    limit of 0.5·f_run/√2."""
    calc = case_calc(wave2_case("R1"))
    calc["inputs"].update(running_speed="1500 rpm", orders=[1, 0.5])
    doc = compute(make_job(calc), rg_plugins)
    f_run = 25.0
    freqs = frequencies(doc)
    for i, f in enumerate(freqs, start=1):
        c = next(c for c in doc.sections[0].checks if c.id == f"frequency-{i}")
        assert c.limit.value == pytest.approx(f_run / math.sqrt(2), rel=1e-12)
        assert dict(c.governing.inputs)["order"].value == 0.5
        half = "pass" if f <= 0.5 * f_run / math.sqrt(2) else "fail"
        assert c.governing.status == half
    assert doc.sections[0].envelope.orders == ((1.0, ""), (0.5, ""))
