"""The worked checks of "How to check this sheet" (sheet/selfcheck.py)."""

from __future__ import annotations

import math

from phasorbench.sheet.selfcheck import kcl_example, ohm_example, power_check
from phasorbench.workflow import solve_text

from .conftest import RL_LOAD, ROOT


def sample(name: str) -> dict:
    return solve_text((ROOT / "samples" / f"{name}.circuit").read_text(encoding="utf-8"))


def phasor(d: dict) -> complex:
    return complex(d["re"], d["im"])


def test_power_check_against_ieee_1459_example():
    check = power_check(solve_text(RL_LOAD))
    # check-values C4: P = 634.8 W, Q = 846.4 var delivered by the source and taken
    # by the load (IEEE Std 1459-2010, 3.1, from memory).
    values = check["values"]
    assert math.isclose(values["delivered_p"], 634.8, rel_tol=1e-6)
    assert math.isclose(values["taken_p"], 634.8, rel_tol=1e-6)
    assert math.isclose(values["delivered_q"], 846.4, rel_tol=1e-6)
    assert math.isclose(values["taken_q"], 846.4, rel_tol=1e-6)
    assert check["delivered_p"] == "634.8 W" and check["taken_q"] == "846.4 var"


def test_kcl_example_closes_and_names_every_terminal():
    result = sample("bakery-feeder")
    kcl = kcl_example(result)
    node = kcl["node"]
    assert node == "bus"                         # 4 terminals, the most of any node
    touching = [n for n, e in result["elements"].items() if node in (e["from"], e["to"])]
    assert sorted(t["label"] for t in kcl["terms"]) == sorted(f"I({n})" for n in touching)
    # Kirchhoff's current law: the currents leaving a node add to zero (to round-off),
    # summed here from the contract directly.
    total = sum((1 if result["elements"][n]["from"] == node else -1)
                * phasor(result["elements"][n]["current"]) for n in touching)
    assert abs(kcl["values"]["sum"] - total) <= 1e-12 * kcl["values"]["largest"]
    assert abs(total) <= 1e-9 * kcl["values"]["largest"]
    signs = {t["label"]: t["sign"] for t in kcl["terms"]}
    assert signs["I(Lcable)"] == "−" and signs["I(Ccorr)"] == "+"   # Lcable runs dist -> bus


def test_kcl_example_counts_a_transformer_secondary():
    # The low-voltage side of the pump station is reached only through the secondary:
    # KCL there closes only if the secondary current is counted with its direction.
    kcl = kcl_example(sample("pump-station-transformer"))
    assert kcl["node"] == "lv"                   # the first node with the most terminals
    assert [t["label"] for t in kcl["terms"]] == ["I(Tx secondary)", "I(Pump)", "I(Heater)"]
    assert abs(kcl["values"]["sum"]) <= 1e-9 * kcl["values"]["largest"]   # Kirchhoff's current law


def test_ohm_example_is_v_equals_z_times_i():
    ohm = ohm_example(solve_text(RL_LOAD))
    # The first element with a reactive impedance: Ll, Z = j40 Ω (formula XL = 2πfL).
    assert ohm["element"] == "Ll" and ohm["z"] == "40 Ω ∠90.00°"
    # V = Z·I: 40 × 4.6 = 184 V at −53.13° + 90° = 36.87° (check-values C4 current).
    assert ohm["product"] == ohm["v"] == "184 V ∠36.87°"
    assert ohm["angle_sum"] == "36.87°"


def test_no_example_without_a_node_or_an_impedance():
    # One source into one current-source load: no impedance anywhere, and the one node
    # besides ground still closes KCL with its two terminals (common practice, no source).
    result = solve_text("frequency 50 Hz\nV1: voltage a -> 0 10 V\nI1: current a -> 0 2 A\n")
    assert ohm_example(result) is None
    kcl = kcl_example(result)
    assert kcl["node"] == "a" and abs(kcl["values"]["sum"]) <= 1e-12
