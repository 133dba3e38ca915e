"""Plausibility warnings: odd but legal values warn, never reject.

Ranges: common practice, no single source (Ri ≈ 70–300 Ω·cm; Rm ≈ 5 000–200 000 Ω·cm²; dendrite
diameters 0.3–10 µm; whole-neuron L ≈ 0.5–1.5), as collected in ../shared/checks.md. The
whole-cell slip (MΩ entered as Rm, pF as Cm) is the frequent error checks.md names.
"""

import pytest

import somaward


def scenario(rm=20000.0, ri=150.0, cm=1.0, diameter=1.0, length=300.0, soma=20.0):
    return {"membrane": {"Rm": rm, "Ri": ri, "Cm": cm},
            "soma": None if soma is None else {"diameter": soma},
            "branches": [{"id": "d", "parent": None, "length": length, "diameter": diameter}],
            "synapse": {"branch": "d", "distance": length / 2}}


def test_plausible_cell_gives_no_warning():
    assert somaward.solve(scenario())["warnings"] == []


@pytest.mark.parametrize("kwargs,phrase", [
    ({"rm": 150.0}, "whole-cell input resistance in MΩ"),     # 150 MΩ typed as Rm
    ({"cm": 40.0}, "whole-cell capacitance in pF"),            # 40 pF typed as Cm
    ({"rm": 300000.0}, "outside the usual 5 000–200 000"),
    ({"ri": 20.0}, "outside the usual 70–300 Ω·cm"),
    ({"diameter": 0.1}, "outside the usual 0.3–10 µm"),
    ({"soma": 150.0}, "outside the usual 5–60 µm"),
    ({"length": 20000.0, "diameter": 0.5}, "space constants long"),
])
def test_odd_values_warn_not_reject(kwargs, phrase):
    report = somaward.solve(scenario(**kwargs))
    assert any(phrase in w for w in report["warnings"]), report["warnings"]


def test_slip_is_named_once():
    warnings = somaward.solve(scenario(rm=150.0))["warnings"]
    assert sum("whole-cell input resistance" in w for w in warnings) == 1
