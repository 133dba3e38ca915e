"""S1–S4, S3b and S8 of docs/checks.md: one cylinder, no soma, through ``solve``.

Test cable (invented): d = 1 µm, Rm = 20 000 Ω·cm², Ri = 200 Ω·cm, Cm = 1 µF/cm², so λ = 500 µm
and R∞ = (2/π)√(Rm·Ri)·d^(−3/2) = 1273.2395… MΩ (C2, C4). Without a soma the recording site is
the root node, i.e. the cylinder's X = 0 end, which is then itself a sealed end for current
injected elsewhere. Closed forms: Rall 1959, Exp Neurol 1:491; Rall 1977, Handbook of
Physiology sec. 1 vol. 1. References are evaluated with mpmath (30 digits).
"""

import math

import mpmath
import pytest

import somaward

LAM_UM = 500.0
RINF = float(2 / mpmath.pi * mpmath.sqrt(20000 * 200) * mpmath.mpf(10) ** 6 * mpmath.mpf("1e-6"))
TOL = 1e-9


def cylinder(big_l, end="sealed", x=None, sections=None, freqs=(0.0,)):
    """Scenario: one invented cylinder of electrotonic length big_l, synapse at X = x."""
    length = big_l * LAM_UM
    x = big_l if x is None else x
    branch = {"id": "cyl", "parent": None, "end": end}
    if sections is None:
        branch.update(length=length, diameter=1.0)
    else:
        branch["cylinders"] = [{"length": length * fraction, "diameter": 1.0} for fraction in sections]
    return {"membrane": {"Rm": 20000.0, "Ri": 200.0, "Cm": 1.0}, "soma": None, "branches": [branch],
            "synapse": {"branch": "cyl", "distance": x * LAM_UM},
            "frequencies_hz": list(freqs), "map_spacing_um": max(length, 1.0)}


def ss(report, key):
    return report["attenuation"]["steady_state"][key]


XS = [0.1, 0.5, 1.0, 1.7]


@pytest.mark.parametrize("x", XS)
def test_s1_semi_infinite(x):
    """S1 — semi-infinite cylinder: V(X)/V(0) = e^(−X), R_in = R∞ (Rall 1977). The 'infinite'
    end continues the cylinder beyond its length, so any length gives the same cable."""
    r = somaward.solve(cylinder(2.0, "infinite", x=x))
    assert ss(r, "soma_to_site") == pytest.approx(math.exp(-x), rel=TOL)
    assert ss(r, "soma_to_site_log") == pytest.approx(x, rel=TOL)
    assert r["soma_input_resistance_Mohm"] == pytest.approx(RINF, rel=TOL)
    assert r["recording_site"] == "root"


@pytest.mark.parametrize("big_l", [0.3, 1.0, 2.5])
@pytest.mark.parametrize("frac", [0.25, 0.6, 1.0])
def test_s2_sealed(big_l, frac):
    """S2 — sealed end: V(X)/V(0) = cosh(L−X)/cosh L, R_in = R∞ coth L (Rall 1959; Rall 1977).
    Derived as well: the transfer resistance is R∞ cosh(L−X)/sinh L (= R_in·V(X)/V(0))."""
    x = big_l * frac
    r = somaward.solve(cylinder(big_l, "sealed", x=x))
    ref = mpmath.cosh(big_l - x) / mpmath.cosh(big_l)
    assert ss(r, "soma_to_site") == pytest.approx(float(ref), rel=TOL)
    assert r["soma_input_resistance_Mohm"] == pytest.approx(RINF / math.tanh(big_l), rel=TOL)
    assert r["transfer_resistance_Mohm"] == pytest.approx(
        RINF * float(mpmath.cosh(big_l - x) / mpmath.sinh(big_l)), rel=TOL)


def test_s2_reference_value_l1():
    """S2 — L = 1: V(L)/V(0) = 1/cosh 1 = 0.648054 (checks.md, *computed* from the formula)."""
    r = somaward.solve(cylinder(1.0, "sealed"))
    assert ss(r, "soma_to_site") == pytest.approx(0.648054, abs=5e-7)
    assert ss(r, "soma_to_site_percent") == pytest.approx(64.8054, abs=5e-5)
    assert ss(r, "soma_to_site_fold") == pytest.approx(float(mpmath.cosh(1)), rel=TOL)


@pytest.mark.parametrize("big_l", [0.3, 1.0, 2.5])
@pytest.mark.parametrize("frac", [0.2, 0.5, 0.9])
def test_s3_killed(big_l, frac):
    """S3 — killed end: V(X)/V(0) = sinh(L−X)/sinh L, R_in = R∞ tanh L (Rall 1977)."""
    x = big_l * frac
    r = somaward.solve(cylinder(big_l, "killed", x=x))
    assert ss(r, "soma_to_site") == pytest.approx(float(mpmath.sinh(big_l - x) / mpmath.sinh(big_l)), rel=TOL)
    assert r["soma_input_resistance_Mohm"] == pytest.approx(RINF * math.tanh(big_l), rel=TOL)


@pytest.mark.parametrize("end", ["sealed", "killed", "infinite", {"G": 0.4, "C": 3.0}, {"G": 50.0}])
@pytest.mark.parametrize("x", [0.2, 0.8, 1.3])
def test_s3b_site_to_root_independent_of_distal_end(end, x):
    """S3b — current injected at X, root end sealed (no soma): V(0)/V(X) = 1/cosh X whatever the
    distal end (derived: the segment [0, X] carries no current into the root, so V on it obeys
    V'' = V with V'(0) = 0, V ∝ cosh X). Holds in the Laplace domain with X → kX (same argument);
    checked at 0 Hz here and at 50 Hz against mpmath."""
    r = somaward.solve(cylinder(1.5, end, x=x, freqs=(0.0, 50.0)))
    assert ss(r, "site_to_soma") == pytest.approx(1 / math.cosh(x), rel=TOL)
    k = mpmath.sqrt(1 + 2j * mpmath.pi * 50 * mpmath.mpf("0.020"))
    ref = 1 / mpmath.cosh(k * x)
    got = r["frequency_response"]["site_to_soma"]
    assert got["magnitude"][1] == pytest.approx(float(abs(ref)), rel=TOL)
    assert math.radians(got["phase_deg"][1]) == pytest.approx(float(mpmath.arg(ref)), rel=TOL)


@pytest.mark.parametrize("x_frac", [0.3, 0.7, 0.95])
def test_s4_ordering(x_frac):
    """S4 — at equal L and X > 0: killed < semi-infinite < sealed (derived from S1–S3; the
    'infinite' case is the semi-infinite cable, e^(−X))."""
    big_l = 1.2
    x = big_l * x_frac
    a = {end: ss(somaward.solve(cylinder(big_l, end, x=x)), "soma_to_site")
         for end in ("killed", "infinite", "sealed")}
    assert a["killed"] < a["infinite"] < a["sealed"]
    assert a["infinite"] == pytest.approx(math.exp(-x), rel=TOL)


@pytest.mark.parametrize("end", ["sealed", "killed", "infinite", {"G": 2.0, "C": 5.0}])
def test_s8_splitting_changes_nothing(end):
    """S8 — splitting the branch into sections of equal diameter changes nothing (derived: the
    two-port of a uniform cylinder composes, cosh/sinh addition theorems). Compared key by key
    at 1e-9 on every steady-state and frequency-response number."""
    freqs = (0.0, 1.0, 30.0, 900.0)
    whole = somaward.solve(cylinder(1.4, end, x=1.0, freqs=freqs))
    split = somaward.solve(cylinder(1.4, end, x=1.0, sections=[0.13, 0.4, 0.2, 0.27], freqs=freqs))
    for key in ("soma_input_resistance_Mohm", "site_input_resistance_Mohm", "transfer_resistance_Mohm",
                "electrotonic_distance", "centroid_delay_ms", "centroid_delay_soma_to_site_ms"):
        assert split[key] == pytest.approx(whole[key], rel=TOL), key
    for key, value in whole["attenuation"]["steady_state"].items():
        assert split["attenuation"]["steady_state"][key] == pytest.approx(value, rel=TOL), key
    for block in ("site_to_soma", "soma_to_site", "transfer_impedance_Mohm", "site_input_impedance_Mohm",
                  "soma_input_impedance_Mohm"):
        for key, values in whole["frequency_response"][block].items():
            assert split["frequency_response"][block][key] == pytest.approx(values, rel=TOL, abs=1e-12), (block, key)
    assert split["electrotonic_length"]["cyl"] == pytest.approx(1.4, rel=1e-12)


def test_s8_one_branch_tree_equals_closed_forms():
    """S8 — a one-branch tree equals S1–S3: input resistance at the synapse of a sealed cylinder
    with sealed root is R∞ cosh X cosh(L−X)/sinh L (derived: the two sides of X in parallel,
    R∞ coth X ∥ R∞ coth(L−X))."""
    big_l, x = 1.1, 0.45
    r = somaward.solve(cylinder(big_l, "sealed", x=x))
    ref = RINF * mpmath.cosh(x) * mpmath.cosh(big_l - x) / mpmath.sinh(big_l)
    assert r["site_input_resistance_Mohm"] == pytest.approx(float(ref), rel=TOL)
    # killed end: R∞ coth X ∥ R∞ tanh(L−X) = R∞ cosh X sinh(L−X)/cosh L (derived)
    r = somaward.solve(cylinder(big_l, "killed", x=x))
    ref = RINF * mpmath.cosh(x) * mpmath.sinh(big_l - x) / mpmath.cosh(big_l)
    assert r["site_input_resistance_Mohm"] == pytest.approx(float(ref), rel=TOL)


@pytest.mark.parametrize("big_l", [5.0, 20.0, 50.0])
def test_long_sealed_cylinder_log_attenuation_exact(big_l):
    """Numerically safe for L up to 50: ln(cosh L) from mpmath equals the reported log
    attenuation at the sealed tip (S2), and A underflows only where e^(−L) does (derived)."""
    r = somaward.solve(cylinder(big_l, "sealed", freqs=(0.0, 10000.0)))
    assert ss(r, "soma_to_site_log") == pytest.approx(float(mpmath.log(mpmath.cosh(big_l))), rel=TOL)
    k = mpmath.sqrt(1 + 2j * mpmath.pi * 10000 * mpmath.mpf("0.020"))
    ref = mpmath.log(mpmath.cosh(k * big_l))
    got = r["frequency_response"]["soma_to_site"]["log_attenuation"][1]
    assert got == pytest.approx(float(mpmath.re(ref)), rel=TOL)
