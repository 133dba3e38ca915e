"""Plausibility warnings: odd but legal values warn, never reject.

Ranges: common practice, no single source (Ri ≈ 70–300 Ω·cm; Rm ≈ 5 000–200 000 Ω·cm²; dendrite
diameters 0.3–10 µm; whole-neuron L ≈ 0.5–1.5), as collected in docs/checks.md. The
whole-cell slip (MΩ entered as Rm, pF as Cm) is the frequent error checks.md names.
"""

import pytest

import somaward


def scenario(rm_ohm_cm2=20000.0, ri_ohm_cm=150.0, cm_uF_cm2=1.0, diameter=1.0, length=300.0, soma=20.0):
    return {"membrane": {"Rm": rm_ohm_cm2, "Ri": ri_ohm_cm, "Cm": cm_uF_cm2},
            "soma": None if soma is None else {"diameter": soma},
            "branches": [{"id": "d", "parent": None, "length": length, "diameter": diameter}],
            "synapse": {"branch": "d", "distance": length / 2}}


def test_plausible_cell_gives_no_warning():
    assert somaward.solve(scenario())["warnings"] == []


@pytest.mark.parametrize("kwargs,phrase", [
    ({"rm_ohm_cm2": 150.0}, "whole-cell input resistance in MΩ"),     # 150 MΩ typed as Rm
    ({"cm_uF_cm2": 40.0}, "whole-cell capacitance in pF"),            # 40 pF typed as Cm
    ({"rm_ohm_cm2": 300000.0}, "outside the usual 5 000–200 000"),
    ({"ri_ohm_cm": 20.0}, "outside the usual 70–300 Ω·cm"),
    ({"diameter": 0.1}, "outside the usual 0.3–10 µm"),
    ({"soma": 150.0}, "outside the usual 5–60 µm"),
    ({"length": 20000.0, "diameter": 0.5}, "space constants long"),
])
def test_odd_values_warn_not_reject(kwargs, phrase):
    report = somaward.solve(scenario(**kwargs))
    assert any(phrase in w for w in report["warnings"]), report["warnings"]


def test_slip_is_named_once():
    warnings = somaward.solve(scenario(rm_ohm_cm2=150.0))["warnings"]
    assert sum("whole-cell input resistance" in w for w in warnings) == 1


# --------------------------------------------------------------- the range a warning states is where it fires
_RANGE = r"usual (?P<lo>[\d.  ]+)–(?P<hi>[\d.  ]+) "


def _bounds(message):
    import re

    m = re.search(_RANGE, message)
    assert m, message
    return tuple(float(m.group(k).replace(" ", "").replace("\u2009", "")) for k in ("lo", "hi"))


@pytest.mark.parametrize("field,odd,make", [
    ("membrane.Rm", 3000.0, lambda v: scenario(rm_ohm_cm2=v)),
    ("membrane.Cm", 0.3, lambda v: scenario(cm_uF_cm2=v)),
    ("membrane.Ri", 20.0, lambda v: scenario(ri_ohm_cm=v)),
    ("dendrite diameters", 0.1, lambda v: scenario(diameter=v, length=30.0)),
    ("soma.diameter", 150.0, lambda v: scenario(soma=v)),
])
def test_warning_fires_on_the_range_it_states(field, odd, make):
    """Derived (consistency, no physics): the range a warning quotes ("outside the usual a–b") is
    read from the message itself, then values at a and b do not warn and values 10⁻⁶ outside
    either bound do. The ranges themselves are common practice, no source."""
    def warned(value):
        return [w for w in somaward.solve(make(value))["warnings"] if w.startswith(field)]

    first = warned(odd)
    assert len(first) == 1, first
    lo, hi = _bounds(first[0])
    assert lo < hi
    for inside in (lo, hi):
        assert warned(inside) == [], (inside, warned(inside))
    for outside in (lo * (1 - 1e-6), hi * (1 + 1e-6)):
        hits = warned(outside)
        assert len(hits) == 1 and _bounds(hits[0]) == (lo, hi), (outside, hits)


def test_long_path_warning_fires_beyond_the_length_it_states():
    """Derived: λ = √(Rm·d/(4Ri)) (Rall 1977; computed here, not taken from the engine) gives the
    length of a cylinder of chosen L; the threshold is read from the message ("more than T")."""
    import math
    import re

    rm_ohm_cm2, ri_ohm_cm, d = 20000.0, 150.0, 0.5
    lam_um = math.sqrt(rm_ohm_cm2 * d * 1e-4 / (4 * ri_ohm_cm)) * 1e4

    def warned(L):
        sc = scenario(rm_ohm_cm2=rm_ohm_cm2, ri_ohm_cm=ri_ohm_cm, diameter=d, length=L * lam_um)
        return [w for w in somaward.solve(sc)["warnings"] if "space constants long" in w]

    first = warned(10.0)
    assert len(first) == 1
    threshold = float(re.search(r"more than ([\d.]+)", first[0]).group(1))
    assert warned(threshold * (1 - 1e-6)) == []
    assert len(warned(threshold * (1 + 1e-6))) == 1
