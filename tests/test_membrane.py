"""C1–C5 and F1 of docs/checks.md: cable constants of a uniform cylinder.

Every reference value in checks.md marked *computed* was worked out from the formula, not quoted
from a paper: the formula (with the paper that gives it) is the source, and each number is also
re-evaluated here with mpmath at 40 digits, an independent library, and compared at rel 1e-12.
The test cable (d = 1 µm, Rm = 20 000 Ω·cm², Ri = 200 Ω·cm, Cm = 1 µF/cm²) is invented.
"""

import math

import mpmath
import numpy as np
import pytest

import somaward
from somaward import membrane



@pytest.fixture(autouse=True)
def _forty_digits():
    with mpmath.workdps(40):
        yield

D_UM, RM_OHM_CM2, RI_OHM_CM, CM_UF_CM2 = 1.0, 20000.0, 200.0, 1.0
UM_PER_CM = 10**4   # exact integer; mpmath values are made inside the tests


def _mp_constants(d_um, rm_ohm_cm2, ri_ohm_cm, cm_uF_cm2):
    """rm = Rm/(πd), ri = 4Ri/(πd²), cm = Cm·πd (Hodgkin & Rushton 1946; Rall 1977), in mpmath."""
    d = mpmath.mpf(d_um) / UM_PER_CM
    pi = mpmath.pi
    return {"rm_ohm_cm": mpmath.mpf(rm_ohm_cm2) / (pi * d),
            "ri_ohm_per_cm": 4 * mpmath.mpf(ri_ohm_cm) / (pi * d**2),
            "cm_uF_per_cm": mpmath.mpf(cm_uF_cm2) * pi * d}


@pytest.mark.parametrize("d_um, rm_ohm_cm2, ri_ohm_cm, cm_uF_cm2", [
    (1.0, 20000.0, 200.0, 1.0),      # invented test cable
    (0.37, 55000.0, 90.0, 0.8),      # invented, odd values on purpose
    (6.5, 8000.0, 310.0, 1.7),       # invented
])
def test_c1_per_unit_length_hodgkin_rushton_1946(d_um, rm_ohm_cm2, ri_ohm_cm, cm_uF_cm2):
    """C1 — Hodgkin & Rushton 1946, Proc R Soc B 133:444; Rall 1977. Reference: mpmath."""
    got = somaward.per_unit_length(d_um, rm_ohm_cm2, ri_ohm_cm, cm_uF_cm2)
    ref = _mp_constants(d_um, rm_ohm_cm2, ri_ohm_cm, cm_uF_cm2)
    for key, value in ref.items():
        assert float(got[key]) == pytest.approx(float(value), rel=1e-12), key


@pytest.mark.parametrize("d_um, rm_ohm_cm2, ri_ohm_cm, cm_uF_cm2", [(1.0, 20000.0, 200.0, 1.0),
                                                                    (2.3, 12000.0, 150.0, 0.9)])
def test_c1_cable_equation_constants_rall_1977(d_um, rm_ohm_cm2, ri_ohm_cm, cm_uF_cm2):
    """C1 — λ² = rm/ri and τ = rm·cm (Rall 1977): the engine's λ and τ equal those built from C1.

    Units (derived): rm/ri is cm², so λ = √(rm/ri)·1e4 µm; rm·cm is Ω·µF = µs, so τ = rm·cm·1e-3 ms.
    """
    c = _mp_constants(d_um, rm_ohm_cm2, ri_ohm_cm, cm_uF_cm2)
    lam_ref = mpmath.sqrt(c["rm_ohm_cm"] / c["ri_ohm_per_cm"]) * UM_PER_CM
    tau_ref = c["rm_ohm_cm"] * c["cm_uF_per_cm"] * mpmath.mpf("1e-3")
    assert float(somaward.space_constant_um(d_um, rm_ohm_cm2, ri_ohm_cm)) == pytest.approx(float(lam_ref), rel=1e-12)
    assert somaward.membrane_time_constant_ms(rm_ohm_cm2, cm_uF_cm2) == pytest.approx(float(tau_ref), rel=1e-12)
    # R∞ = √(rm·ri) (Rall 1959), Ω → MΩ
    rinf_ref = mpmath.sqrt(c["rm_ohm_cm"] * c["ri_ohm_per_cm"]) * mpmath.mpf("1e-6")
    rinf = float(somaward.input_resistance_infinite_Mohm(d_um, rm_ohm_cm2, ri_ohm_cm))
    assert rinf == pytest.approx(float(rinf_ref), rel=1e-12)


def test_c2_space_constant_500_um():
    """C2 — λ = √(Rm·d/(4Ri)) (Rall 1977; Johnston & Wu 1995 ch. 4); 500 µm is *computed*."""
    lam = float(somaward.space_constant_um(D_UM, RM_OHM_CM2, RI_OHM_CM))
    ref = mpmath.sqrt(mpmath.mpf(RM_OHM_CM2) * (mpmath.mpf(D_UM) / UM_PER_CM) / (4 * RI_OHM_CM)) * UM_PER_CM
    assert lam == pytest.approx(500.0, rel=1e-12)          # checks.md C2 (computed)
    assert lam == pytest.approx(float(ref), rel=1e-12)     # mpmath


def test_c3_time_constant_20_ms():
    """C3 — τm = Rm·Cm (Rall 1977); 20 000 Ω·cm² × 1 µF/cm² = 20 ms is *computed*."""
    assert somaward.membrane_time_constant_ms(RM_OHM_CM2, CM_UF_CM2) == pytest.approx(20.0, rel=1e-12)
    assert somaward.membrane_time_constant_ms(RM_OHM_CM2, CM_UF_CM2) == pytest.approx(
        float(mpmath.mpf(RM_OHM_CM2) * CM_UF_CM2 * mpmath.mpf("1e-6") * 1000), rel=1e-12)   # s → ms, mpmath


def test_c4_input_resistance_infinite():
    """C4 — R∞ = (2/π)√(Rm·Ri)·d^(−3/2) (Rall 1959, Exp Neurol 1:491; Jack, Noble & Tsien 1975).

    1273.2395 MΩ is *computed* (checks.md, 8 digits); mpmath gives the full value.
    """
    got = float(somaward.input_resistance_infinite_Mohm(D_UM, RM_OHM_CM2, RI_OHM_CM))
    d = mpmath.mpf(D_UM) / UM_PER_CM
    ref = 2 / mpmath.pi * mpmath.sqrt(mpmath.mpf(RM_OHM_CM2) * RI_OHM_CM) * d ** mpmath.mpf(-1.5) * mpmath.mpf("1e-6")
    assert got == pytest.approx(1273.2395, abs=5e-5)       # checks.md C4 (computed)
    assert got == pytest.approx(float(ref), rel=1e-12)     # mpmath


def test_c5_sphere_input_resistance():
    """C5 — isopotential sphere R = Rm/(πD²) (Johnston & Wu 1995 ch. 2); 1591.549 MΩ *computed*."""
    got = float(somaward.sphere_input_resistance_Mohm(20.0, RM_OHM_CM2))
    ref = mpmath.mpf(RM_OHM_CM2) / (mpmath.pi * (mpmath.mpf(20) / UM_PER_CM) ** 2) * mpmath.mpf("1e-6")
    assert got == pytest.approx(1591.549, abs=5e-4)        # checks.md C5 (computed)
    assert got == pytest.approx(float(ref), rel=1e-12)     # mpmath


def test_c5_sphere_capacitance():
    """Sphere capacitance C = Cm·πD² (basic membrane theory); D = 20 µm, 1 µF/cm² → 4π pF (derived)."""
    got = float(membrane.sphere_capacitance_pF(20.0, 1.0))
    assert got == pytest.approx(float(mpmath.pi * 4), rel=1e-12)


@pytest.mark.parametrize("freq_hz, ratio", [
    (10.0, 0.876053),      # checks.md F1 (computed from the formula)
    (100.0, 0.383397),     # checks.md F1 (computed)
    (1000.0, 0.125656),    # checks.md F1 (computed)
])
def test_f1_ac_space_constant(freq_hz, ratio):
    """F1 — λ_AC = 1/Re(q), q = √(1+iωτ)/λ (derived from C1; Koch 1999 ch. 2; Zador, Agmon-Snir &
    Segev 1995, J Neurosci 15:1669), τ = 20 ms. Reference: mpmath, both as 1/Re√(1+iωτ) and as
    √(2/(1+√(1+(ωτ)²))), and the 6-digit values of checks.md (computed)."""
    lam = float(somaward.space_constant_um(D_UM, RM_OHM_CM2, RI_OHM_CM))
    got = float(somaward.ac_space_constant_um(D_UM, RM_OHM_CM2, RI_OHM_CM, CM_UF_CM2, freq_hz)) / lam
    wt = 2 * mpmath.pi * mpmath.mpf(freq_hz) * mpmath.mpf("0.020")
    ref_q = 1 / mpmath.re(mpmath.sqrt(1 + 1j * wt))
    ref_closed = mpmath.sqrt(2 / (1 + mpmath.sqrt(1 + wt**2)))
    assert abs(ref_q - ref_closed) < mpmath.mpf("1e-35")
    assert got == pytest.approx(float(ref_q), rel=1e-12)
    assert got == pytest.approx(ratio, abs=5e-7)


def test_f1_dc_limit_and_vectorised():
    """λ_AC(0 Hz) = λ (derived: q = 1/λ at ω = 0); arrays in, arrays out."""
    freqs = np.array([0.0, 10.0, 100.0])
    got = somaward.ac_space_constant_um(D_UM, RM_OHM_CM2, RI_OHM_CM, CM_UF_CM2, freqs)
    assert got.shape == (3,)
    assert got[0] == pytest.approx(500.0, rel=1e-12)
    assert np.all(np.diff(got) < 0)


def test_vectorised_diameters_scale_laws():
    """Derived from C1–C4: λ ∝ d^(1/2), R∞ ∝ d^(−3/2), rm ∝ d^(−1), ri ∝ d^(−2), cm ∝ d."""
    d = np.array([0.5, 1.0, 4.0])
    lam = somaward.space_constant_um(d, RM_OHM_CM2, RI_OHM_CM)
    rinf = somaward.input_resistance_infinite_Mohm(d, RM_OHM_CM2, RI_OHM_CM)
    np.testing.assert_allclose(lam / 500.0, np.sqrt(d), rtol=1e-12)
    np.testing.assert_allclose(rinf / rinf[1], d**-1.5, rtol=1e-12)
    c = somaward.per_unit_length(d, RM_OHM_CM2, RI_OHM_CM, CM_UF_CM2)
    np.testing.assert_allclose(c["rm_ohm_cm"] / c["rm_ohm_cm"][1], 1 / d, rtol=1e-12)
    np.testing.assert_allclose(c["ri_ohm_per_cm"] / c["ri_ohm_per_cm"][1], d**-2, rtol=1e-12)
    np.testing.assert_allclose(c["cm_uF_per_cm"] / c["cm_uF_per_cm"][1], d, rtol=1e-12)
    assert math.isclose(float(lam[1]), 500.0, rel_tol=1e-12)
