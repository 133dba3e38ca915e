"""S5, S6, S7, S9, F2, F3 and centroid delays of docs/checks.md, on branched trees.

All trees and membrane values here are invented for the tests. References are closed forms from
the papers named beside each test, or identities derived in the docstrings, evaluated with
mpmath (30 digits) where a number is needed.
"""

import math
import random

import mpmath
import numpy as np
import pytest

import somaward
from somaward import frequency
from somaward.sites import point_terms, transfer_log
from somaward.tree import build_tree, solve_tree

RM_OHM_CM2, RI_OHM_CM, CM_UF_CM2 = 20000.0, 150.0, 1.0            # invented membrane
TAU_MS = RM_OHM_CM2 * CM_UF_CM2 * 1e-3
TOL = 1e-9
FREQS_HZ = [0.0] + [float(freq_hz) for freq_hz in np.logspace(-1, 4, 20)]     # 0 Hz and 20 log-spaced 0.1 Hz–10 kHz


def lam_um(d_um):
    """λ = √(Rm·d/(4Ri)) (C2, Rall 1977), d in cm inside, µm out."""
    return math.sqrt(RM_OHM_CM2 * d_um * 1e-4 / (4 * RI_OHM_CM)) * 1e4


def r_inf_Mohm(d_um):
    """R∞ = (2/π)√(Rm·Ri)·d^(−3/2) (C4, Rall 1959), in MΩ."""
    return 2 / math.pi * math.sqrt(RM_OHM_CM2 * RI_OHM_CM) * (d_um * 1e-4) ** -1.5 * 1e-6


def g_soma_uS(d_um, rm_ohm_cm2=RM_OHM_CM2):
    """Sphere conductance πD²/Rm (C5), µS."""
    return math.pi * (d_um * 1e-4) ** 2 / rm_ohm_cm2 * 1e6


def s_of_hz(freq_hz):
    return 2j * math.pi * freq_hz * 1e-3       # 1/ms


def scenario(branches, synapse, soma=None, freqs_hz=FREQS_HZ, **extra):
    sc = {"membrane": {"Rm": RM_OHM_CM2, "Ri": RI_OHM_CM, "Cm": CM_UF_CM2}, "soma": soma, "branches": branches,
          "synapse": synapse, "frequencies_hz": list(freqs_hz), "map_spacing_um": 1000.0}
    sc.update(extra)
    return sc


def br(bid, parent, d_um, big_l, **kw):
    """A branch of diameter d and electrotonic length L (length = L·λ(d))."""
    return {"id": bid, "parent": parent, "length": big_l * lam_um(d_um), "diameter": d_um, **kw}


def z_complex(block):
    """Complex values from a reported {magnitude, phase_deg} block."""
    pairs = zip(block["magnitude"], block["phase_deg"], strict=True)
    return np.array([m * np.exp(1j * math.radians(p)) for m, p in pairs])


# ---------------------------------------------------------------------------------------- S5
def rall_tree(two_stems=True):
    """Invented 3/2-rule tree, every terminal sealed at X = 1.0 (Rall 1962's conditions).

    Stem A: trunk (L 0.4) → c1 (d 1.2, L 0.6) and c2 (d 0.8, L 0.2) → c21 (d 0.5), c22 (L 0.4 each),
    with d_parent^(3/2) = Σ d_child^(3/2) at each branch point. Stem B: d 1.5, L 1.0, given as two
    sections of equal diameter.
    """
    d22 = (0.8**1.5 - 0.5**1.5) ** (2 / 3)
    d_trunk = (1.2**1.5 + 0.8**1.5) ** (2 / 3)
    branches = [br("trunk", None, d_trunk, 0.4), br("c1", "trunk", 1.2, 0.6), br("c2", "trunk", 0.8, 0.2),
                br("c21", "c2", 0.5, 0.4), br("c22", "c2", d22, 0.4)]
    stems = [d_trunk]
    if two_stems:
        lb = lam_um(1.5)
        branches.append({"id": "stemB", "parent": None,
                         "cylinders": [{"length": 0.35 * lb, "diameter": 1.5}, {"length": 0.65 * lb, "diameter": 1.5}]})
        stems.append(1.5)
    return branches, (sum(d**1.5 for d in stems)) ** (2 / 3)


@pytest.mark.parametrize("soma", [None, {"diameter": 14.0}, {"diameter": 14.0, "Rm": 3000.0}],
                         ids=["no_soma", "soma", "soma_shunt"])
@pytest.mark.parametrize("two_stems", [False, True], ids=["one_stem", "two_stems"])
def test_s5_equivalent_cylinder_rall_1962(soma, two_stems):
    """S5 — Rall 1962, Ann NY Acad Sci 96:1071: the 3/2-rule tree with equal terminal X has the
    soma input impedance of one cylinder of d = (Σ d_stem^(3/2))^(2/3) and the same L = 1, at
    0 Hz and 20 log-spaced frequencies 0.1 Hz–10 kHz, magnitude and phase, rel 1e-9."""
    branches, d_eq = rall_tree(two_stems)
    tree = somaward.solve(scenario(branches, {"branch": "c1", "distance": 10.0}, soma))
    cyl = somaward.solve(scenario([br("eq", None, d_eq, 1.0)], {"branch": "eq", "distance": 10.0}, soma))
    for name in ("magnitude", "phase_deg"):
        got = tree["frequency_response"]["soma_input_impedance_Mohm"][name]
        ref = cyl["frequency_response"]["soma_input_impedance_Mohm"][name]
        assert got == pytest.approx(ref, rel=TOL, abs=1e-12), name
    assert tree["soma_input_resistance_Mohm"] == pytest.approx(cyl["soma_input_resistance_Mohm"], rel=TOL)
    for tid, x in tree["terminal_electrotonic_distance"].items():
        assert x == pytest.approx(1.0, rel=1e-12), tid
    # and the cylinder itself is the closed form of S9 (no soma: Y = tanh(kL)/R∞, Rall 1959)
    if soma is None:
        zc = z_complex(tree["frequency_response"]["soma_input_impedance_Mohm"])
        for freq_hz, z in zip(FREQS_HZ, zc, strict=True):
            k = mpmath.sqrt(1 + s_of_hz(freq_hz) * TAU_MS)
            ref = r_inf_Mohm(d_eq) / (k * mpmath.tanh(k))
            assert abs(z / complex(ref) - 1) < TOL


def test_s5_breaking_the_rule_changes_the_impedance():
    """S5's conditions matter (derived): with c2's diameter off the 3/2 rule the tree no longer
    matches the equivalent cylinder — so the S5 test above can fail."""
    branches, d_eq = rall_tree(False)
    branches[2]["diameter"] = 0.9
    tree = somaward.solve(scenario(branches, {"branch": "c1", "distance": 10.0}))
    cyl = somaward.solve(scenario([br("eq", None, d_eq, 1.0)], {"branch": "eq", "distance": 10.0}))
    assert abs(tree["soma_input_resistance_Mohm"] / cyl["soma_input_resistance_Mohm"] - 1) > 1e-3


# ---------------------------------------------------------------------------------------- S6
def mixed_tree():
    """Invented tree: soma-less or soma variants, tapers, killed / infinite / lumped / sealed ends."""
    return [
        {"id": "apical", "parent": None, "cylinders": [{"length": 120, "diameter": 3.0},
                                                      {"length": 90, "diameter": 2.2},
                                                      {"length": 60, "diameter": 1.6}]},
        {"id": "obl", "parent": "apical", "length": 180, "diameter": 0.7, "end": "killed"},
        {"id": "tuft", "parent": "apical", "length": 260, "diameter": 1.1},
        {"id": "t1", "parent": "tuft", "length": 140, "diameter": 0.5, "end": {"G": 0.8, "C": 2.0}},
        {"id": "t2", "parent": "tuft", "cylinders": [{"length": 70, "diameter": 0.8}, {"length": 90, "diameter": 0.4}]},
        {"id": "basal", "parent": None, "length": 150, "diameter": 1.3, "end": "infinite"},
        {"id": "basal2", "parent": None, "length": 200, "diameter": 0.9},
    ]


def solved(soma, freqs_hz=FREQS_HZ):
    sc = somaward.validate(scenario(mixed_tree(), {"branch": "t2", "distance": 100.0}, soma))
    tree = build_tree(sc["branches"], sc["membrane"], sc["soma"])
    s = np.array([s_of_hz(freq_hz) for freq_hz in freqs_hz])
    return tree, solve_tree(tree, s)


def random_points(tree, rng, n):
    """Random points (section, y); the recording site is (a root section, 0); never a killed end."""
    pts = [(int(np.flatnonzero(tree.parent < 0)[0]), 0.0)]
    while len(pts) < n:
        sec = rng.randrange(tree.n_sections)
        y = rng.choice([0.0, 1.0, rng.random()]) * float(tree.length_um[sec])
        if tree.end_code[sec] == 2 and y >= tree.length_um[sec] * 0.999:
            continue
        pts.append((sec, y))
    return pts


@pytest.mark.parametrize("soma", [None, {"diameter": 18.0}], ids=["no_soma", "soma"])
def test_s6_reciprocity_two_injections(soma):
    """S6 — Z_ij = Z_ji in a passive tree at every frequency (linear network theory; Koch 1999,
    Biophysics of Computation ch. 3): transfer_log injects at i for Z_ij and at j for Z_ji —
    two separate computations — at DC and 20 frequencies, 40 random pairs incl. the soma, 1e-9."""
    tree, sol = solved(soma)
    rng = random.Random(7)
    pts = random_points(tree, rng, 12)
    pairs = [(pts[0], p) for p in pts[1:]] + [tuple(rng.sample(pts, 2)) for _ in range(28)]
    for a, b in pairs:
        zab, zba = transfer_log(sol, a, b), transfer_log(sol, b, a)
        assert np.all(np.isfinite(zab)) and np.all(np.isfinite(zba))
        assert np.max(np.abs(np.exp(zab - zba) - 1)) < TOL, (a, b)


# ---------------------------------------------------------------------------------------- S7
def test_s7_asymmetry_rall_rinzel_1973():
    """S7 — A_site→soma / A_soma→site = Z_in,soma / Z_in,site (Rall & Rinzel 1973, Biophys J
    13:648; identity derived from S6: V_soma = Z_ss·I for current at the site gives
    A_up = V_soma/V_site = Z_is/Z_ii, and current at the soma gives A_down = Z_si/Z_ss, so
    A_up/A_down = Z_ss/Z_ii when Z_is = Z_si).
    Checked on the report at DC and at every frequency (magnitudes and phases)."""
    for soma in (None, {"diameter": 16.0}):
        for syn in ({"branch": "t1", "distance": 140.0}, {"branch": "apical", "distance": 200.0},
                    {"path": "t2", "path_distance": 600.0}):
            r = somaward.solve(scenario(mixed_tree(), syn, soma))
            st = r["attenuation"]["steady_state"]
            assert st["site_to_soma"] / st["soma_to_site"] == pytest.approx(
                r["soma_input_resistance_Mohm"] / r["site_input_resistance_Mohm"], rel=TOL)
            fr = r["frequency_response"]
            lhs = z_complex(fr["site_to_soma"]) / z_complex(fr["soma_to_site"])
            rhs = z_complex(fr["soma_input_impedance_Mohm"]) / z_complex(fr["site_input_impedance_Mohm"])
            assert np.max(np.abs(lhs / rhs - 1)) < TOL


def test_s7_thin_terminal_branch_site_to_soma_far_stronger():
    """S7 — for a thin terminal branch Z_in,site ≫ Z_in,soma, so site→soma attenuation is far
    stronger than soma→site (Rall & Rinzel 1973). Invented cell: trunk 4 µm, tip 0.4 µm."""
    branches = [{"id": "trunk", "parent": None, "length": 300, "diameter": 4.0},
                {"id": "thin", "parent": "trunk", "length": 200, "diameter": 0.4},
                {"id": "thick", "parent": "trunk", "length": 500, "diameter": 3.0}]
    r = somaward.solve(scenario(branches, {"branch": "thin", "distance": 200.0}, {"diameter": 20.0}))
    st = r["attenuation"]["steady_state"]
    assert r["site_input_resistance_Mohm"] > 10 * r["soma_input_resistance_Mohm"]
    assert st["site_to_soma"] < 0.1 * st["soma_to_site"]


# ---------------------------------------------------------------------------------------- S9
@pytest.mark.parametrize("end", ["sealed"])
@pytest.mark.parametrize("soma_rm", [RM_OHM_CM2, 4000.0], ids=["uniform_Rm", "somatic_shunt"])
def test_s9_soma_plus_sealed_cylinder_rall_1959(end, soma_rm):
    """S9 — Y_in(s) = (πD²/Rm)(1+sτ) + √(1+sτ)·tanh(√(1+sτ)L)/R∞ (Rall 1959; Rall 1969); with a
    somatic shunt the soma term is πD²(1/Rm_soma + s·Cm) (derived: same sphere, own Rm).
    ρ∞ = G∞/G_soma and ρ = G_dend(0)/G_soma = tanh(L)/(R∞·G_soma) (Rall 1959). Magnitude and
    phase of 1/Y_in vs the report at 0 Hz and 20 frequencies, rel 1e-9 (mpmath)."""
    d, big_l, dsoma = 2.0, 0.8, 18.0
    r = somaward.solve(scenario([br("cyl", None, d, big_l, end=end)], {"branch": "cyl", "distance": 100.0},
                                {"diameter": dsoma, "Rm": soma_rm}))
    area_cm2 = math.pi * (dsoma * 1e-4) ** 2
    fr = r["frequency_response"]["soma_input_impedance_Mohm"]
    for freq_hz, mag, ph in zip(FREQS_HZ, fr["magnitude"], fr["phase_deg"], strict=True):
        s = mpmath.mpc(s_of_hz(freq_hz))
        k = mpmath.sqrt(1 + s * TAU_MS)
        y_soma = area_cm2 * (1 / mpmath.mpf(soma_rm) + s * CM_UF_CM2 * 1e-3) * 1e6      # µS (µF·1/ms = 1e-3 S)
        y = y_soma + k * mpmath.tanh(k * big_l) / r_inf_Mohm(d)
        assert mag == pytest.approx(float(abs(1 / y)), rel=TOL), freq_hz
        assert ph == pytest.approx(float(mpmath.degrees(-mpmath.arg(y))), rel=TOL, abs=1e-10), freq_hz
    g_s = g_soma_uS(dsoma, soma_rm)
    assert r["rho_inf"] == pytest.approx(1 / r_inf_Mohm(d) / g_s, rel=TOL)
    assert r["rho"] == pytest.approx(math.tanh(big_l) / r_inf_Mohm(d) / g_s, rel=TOL)
    if soma_rm == RM_OHM_CM2:      # the uniform-Rm form exactly as printed in S9: (πD²/Rm)(1 + sτ), numpy
        k = np.sqrt(1 + np.array([s_of_hz(freq_hz) for freq_hz in FREQS_HZ]) * TAU_MS)
        y = g_soma_uS(dsoma) * k**2 + k * np.tanh(k * big_l) / r_inf_Mohm(d)
        np.testing.assert_allclose(fr["magnitude"], np.abs(1 / y), rtol=TOL)


@pytest.mark.parametrize("end", ["sealed", "killed", "infinite", {"G": 1.0, "C": 4.0}])
def test_site_to_soma_with_soma_independent_of_distal_end(end):
    """Derived (S3b with a soma): for current at X on a cylinder leaving a soma of admittance
    Ys(s), V on [0, X] is V(0)[cosh kY + (R∞Ys/k) sinh kY], so A_site→soma =
    1/(cosh kX + (R∞Ys/k) sinh kX) whatever the distal end; mpmath, 1e-9 in magnitude."""
    d, big_l, dsoma, x = 1.5, 1.3, 15.0, 0.7
    r = somaward.solve(scenario([br("cyl", None, d, big_l, end=end)], {"branch": "cyl", "distance": x * lam_um(d)},
                                {"diameter": dsoma}))
    for freq_hz, mag in zip(FREQS_HZ, r["frequency_response"]["site_to_soma"]["magnitude"], strict=True):
        s = mpmath.mpc(s_of_hz(freq_hz))
        k = mpmath.sqrt(1 + s * TAU_MS)
        ys = g_soma_uS(dsoma) * (1 + s * TAU_MS)
        ref = 1 / (mpmath.cosh(k * x) + r_inf_Mohm(d) * ys / k * mpmath.sinh(k * x))
        assert mag == pytest.approx(float(abs(ref)), rel=TOL), freq_hz


# ---------------------------------------------------------------------------------------- F2
def test_f2_zero_hz_equals_steady_state():
    """F2 — the frequency response at 0 Hz equals the steady state (derived: s = 0)."""
    for soma in (None, {"diameter": 12.0}):
        r = somaward.solve(scenario(mixed_tree(), {"branch": "t1", "distance": 70.0}, soma))
        fr, st = r["frequency_response"], r["attenuation"]["steady_state"]
        assert fr["frequencies_hz"][0] == 0.0
        for key in ("site_to_soma", "soma_to_site"):
            assert fr[key]["magnitude"][0] == pytest.approx(st[key], rel=TOL)
            assert fr[key]["log_attenuation"][0] == pytest.approx(st[f"{key}_log"], rel=TOL)
            assert fr[key]["phase_deg"][0] == 0.0
        assert fr["transfer_impedance_Mohm"]["magnitude"][0] == pytest.approx(r["transfer_resistance_Mohm"], rel=TOL)
        for where in ("site", "soma"):
            assert fr[f"{where}_input_impedance_Mohm"]["magnitude"][0] == pytest.approx(
                r[f"{where}_input_resistance_Mohm"], rel=TOL)


@pytest.mark.parametrize("x_frac", [0.3, 1.0])
def test_f2_monotonic_fall_with_frequency_sealed_cylinder(x_frac):
    """F2 — |A| falls monotonically with frequency for a sealed cylinder (derived). No soma,
    current at X: A_site→root = 1/cosh(kX) (S3b); with kX = a + ib, a² − b² = X²,
    |cosh|² = sinh²a + cos²b and d/dω|cosh|² = sinh(2a)a' − sin(2b)b' = b'[sinh(2a)b/a − sin 2b]
    (a' = b b'/a) > 0 because sinh(2a)/(2a) ≥ 1 ≥ sin(2b)/(2b). At the sealed tip X = L the
    soma→site ratio is 1/cosh(kL), the same function."""
    big_l = 1.6
    d = 1.0
    freqs_hz = [0.0] + [float(freq_hz) for freq_hz in np.logspace(-1, 4, 60)]
    r = somaward.solve(scenario([br("cyl", None, d, big_l)], {"branch": "cyl", "distance": x_frac * big_l * lam_um(d)},
                                freqs_hz=freqs_hz))
    up = np.array(r["frequency_response"]["site_to_soma"]["magnitude"])
    assert np.all(np.diff(up) < 0)
    if x_frac == 1.0:
        down = np.array(r["frequency_response"]["soma_to_site"]["magnitude"])
        assert np.all(np.diff(down) < 0)
    k = np.sqrt(1 + np.array([s_of_hz(freq_hz) for freq_hz in freqs_hz]) * TAU_MS)
    np.testing.assert_allclose(up, np.abs(1 / np.cosh(k * x_frac * big_l)), rtol=TOL)


# ---------------------------------------------------------------------------------------- F3
def test_f3_log_attenuation_additive_along_path():
    """F3 — Zador, Agmon-Snir & Segev 1995, J Neurosci 15:1669: for j on the path from i to k,
    ln(V_k/V_i | I at i) = ln(V_j/V_i | I at i) + ln(V_k/V_j | I at j), at every frequency.
    Each ratio comes from its own injection: ln(V_b/V_a | I at a) = ln Z_ab − ln Z_aa (transfer_log).
    Paths run distal→proximal, proximal→distal, and across a branch point and the soma."""
    for soma in (None, {"diameter": 14.0}):
        tree, sol = solved(soma)
        sec = {tree.branch_ids[b]: tree.branch_sections[b] for b in range(len(tree.branch_ids))}
        t1 = (sec["t1"][1], 100.0)
        tuft_end = (sec["tuft"][1], float(tree.length_um[sec["tuft"][1]]))
        t2 = (sec["t2"][1], 50.0)
        apical_mid = (int(tree.parent[sec["apical"][1]]), 30.0)   # the middle section of the taper
        root = (sec["apical"][0], 0.0)
        basal = (sec["basal2"][0], 120.0)
        ratio = lambda a, b, sol=sol: transfer_log(sol, a, b) - transfer_log(sol, a, a)  # noqa: E731
        for i, j, k in [(t1, tuft_end, t2), (t2, tuft_end, t1), (t1, apical_mid, root), (root, apical_mid, t1),
                        (t1, root, basal), (basal, root, t2), (t1, tuft_end, root)]:
            lhs = ratio(i, k)
            rhs = ratio(i, j) + ratio(j, k)
            assert np.max(np.abs(np.exp(lhs - rhs) - 1)) < TOL, (i, j, k)


def test_f3_soma_to_site_via_point_terms():
    """F3 with the recording site as i: soma→site log attenuation = ln(V_j/V_soma | I at soma) +
    ln(V_site/V_j | I at j); the second factor from transfer_log at j (a separate injection)."""
    tree, sol = solved({"diameter": 14.0})
    sec = {tree.branch_ids[b]: tree.branch_sections[b] for b in range(len(tree.branch_ids))}
    j = (sec["tuft"][0], 100.0)
    site = (sec["t2"][1], 40.0)
    d_j = point_terms(sol, [j[0]], [j[1]])["down"][0]
    d_site = point_terms(sol, [site[0]], [site[1]])["down"][0]
    second = transfer_log(sol, j, site) - transfer_log(sol, j, j)
    assert np.max(np.abs(np.exp(d_site - (d_j + second)) - 1)) < TOL


# ---------------------------------------------------------------------- centroid delays
def _site_response_fn(sc, branch_id, y_um, key):
    v = somaward.validate(sc)
    tree = build_tree(v["branches"], v["membrane"], v["soma"])
    b = tree.branch_ids.index(branch_id)
    first, last = tree.branch_sections[b]
    assert first == last                   # one-section branch: y is the branch distance
    return lambda s: float(np.real(frequency.site_response(tree, first, y_um, [complex(s)])[key][0]))


@pytest.mark.parametrize("soma", [None, {"diameter": 14.0}], ids=["no_soma", "soma"])
@pytest.mark.parametrize("syn_branch, y_um", [("t1", 100.0), ("basal2", 150.0), ("obl", 90.0)])
def test_centroid_delay_is_derivative_and_phase_delay_limit(soma, syn_branch, y_um):
    """Centroid delay = −d/ds ln A(s) at s = 0 (Agmon-Snir & Segev 1993, J Neurophysiol 70:2066):
    compared with mpmath.diff (central difference, h = 1e-4/τ) of the engine's own ln A on the
    real s axis — a different route from the engine's complex step — rel 1e-6; and equal to
    the low-frequency limit of the phase delay −φ/ω (derived: φ = −ω·centroid + O(ω³))."""
    sc = scenario(mixed_tree(), {"branch": syn_branch, "distance": y_um}, soma, freqs_hz=[1e-4])
    r = somaward.solve(sc)
    for key, rep in (("up", "centroid_delay_ms"), ("down", "centroid_delay_soma_to_site_ms")):
        f = _site_response_fn(sc, syn_branch, y_um, key)
        ref = -float(mpmath.diff(f, 0, h=mpmath.mpf(1e-4) / TAU_MS))
        assert r[rep] == pytest.approx(ref, rel=1e-6), key
        assert r[rep] > 0
    delay_0hz = r["frequency_response"]["site_to_soma"]["phase_delay_ms"][0]
    assert delay_0hz == pytest.approx(r["centroid_delay_ms"], rel=1e-6)
    assert r["frequency_response"]["soma_to_site"]["phase_delay_ms"][0] == pytest.approx(
        r["centroid_delay_soma_to_site_ms"], rel=1e-6)


@pytest.mark.parametrize("x", [0.3, 1.0, 2.0])
def test_centroid_delay_semi_infinite_cylinder(x):
    """Semi-infinite cylinder, no soma (root end sealed for current injected at X):
    soma→site (current at X = 0): A = e^{−kX}, delay = (dk/ds)·X = τX/2 — the infinite-cylinder
    transfer delay of Agmon-Snir & Segev 1993 (value from memory; derived here as well);
    site→soma: A = 1/cosh(kX) (S3b), delay = (τ/2)·X·tanh X (derived)."""
    d = 1.0
    r = somaward.solve(scenario([br("cyl", None, d, 3.0, end="infinite")], {"branch": "cyl", "distance": x * lam_um(d)},
                                freqs_hz=[0.0]))
    assert r["centroid_delay_soma_to_site_ms"] == pytest.approx(TAU_MS * x / 2, rel=1e-8)
    assert r["centroid_delay_ms"] == pytest.approx(TAU_MS * x * math.tanh(x) / 2, rel=1e-8)
    assert r["frequency_response"]["soma_to_site"]["phase_delay_ms"][0] == pytest.approx(TAU_MS * x / 2, rel=1e-8)


@pytest.mark.parametrize("end", ["sealed", "killed", {"G": 2.0, "C": 30.0}])
def test_centroid_delay_soma_plus_cylinder_closed_form(end):
    """Site→soma centroid delay for a soma + cylinder, current at X (derived): with
    A = 1/(cosh kX + (R∞Ys/k) sinh kX), Ys = G_s(1 + sτ), independent of the distal end, the
    delay is d/ds ln(cosh kX + (R∞Ys/k) sinh kX) at s = 0, evaluated with mpmath.diff at 30
    digits on the closed form (Agmon-Snir & Segev 1993 define the delay)."""
    d, big_l, dsoma, x = 1.2, 1.5, 16.0, 0.9
    r = somaward.solve(scenario([br("cyl", None, d, big_l, end=end)], {"branch": "cyl", "distance": x * lam_um(d)},
                                {"diameter": dsoma}, freqs_hz=[0.0]))

    def ln_inv_a(s):
        k = mpmath.sqrt(1 + s * TAU_MS)
        ys = g_soma_uS(dsoma) * (1 + s * TAU_MS)
        return mpmath.log(mpmath.cosh(k * x) + r_inf_Mohm(d) * ys / k * mpmath.sinh(k * x))

    with mpmath.workdps(30):
        ref = float(mpmath.diff(ln_inv_a, 0))
    assert r["centroid_delay_ms"] == pytest.approx(ref, rel=1e-8)


def _capacitive_end_delay(x, big_l, d, c_pF, g_nS):
    """Soma→site centroid delay, no soma, current at X = 0, lumped load G + sC at X = L (derived):
    A = [cosh k(L−X) + g sinh k(L−X)]/[cosh kL + g sinh kL], g = YL·R∞/k (Rall 1977's loaded
    cylinder); delay = −d/ds ln A at s = 0 by mpmath.diff at 30 digits."""
    r_inf = r_inf_Mohm(d)

    def ln_a(s):
        k = mpmath.sqrt(1 + s * TAU_MS)
        g = (mpmath.mpf(g_nS) * 1e-3 + s * mpmath.mpf(c_pF) * 1e-3) * r_inf / k
        return mpmath.log((mpmath.cosh(k * (big_l - x)) + g * mpmath.sinh(k * (big_l - x)))
                          / (mpmath.cosh(k * big_l) + g * mpmath.sinh(k * big_l)))

    with mpmath.workdps(30):
        return -float(mpmath.diff(ln_a, 0))


def _loaded_cylinder(g_nS, c_pF=5.0):
    d = 1.0
    return scenario([{"id": "a", "parent": None, "length": 300.0, "diameter": d, "end": {"G": g_nS, "C": c_pF}}],
                    {"branch": "a", "distance": 100.0}, freqs_hz=[0.0])


@pytest.mark.parametrize("g_nS", [0.0, 1e-12, 0.5])
def test_centroid_delay_capacitive_load_closed_form(g_nS):
    """Centroid delay with a lumped G + sC end equals the loaded-cylinder closed form (derived)."""
    d = 1.0
    r = somaward.solve(_loaded_cylinder(g_nS))
    ref = _capacitive_end_delay(100.0 / lam_um(d), 300.0 / lam_um(d), d, 5.0, g_nS)
    assert r["centroid_delay_soma_to_site_ms"] == pytest.approx(ref, rel=1e-8)


def test_centroid_delay_subnormal_load_conductance():
    """A legal load {"G": 1e-310 nS, "C": 5 pF} (schema: G ≥ 0) must give the G → 0 value of the
    closed form (derived: the load G + sC is continuous in G), not null."""
    d = 1.0
    with np.errstate(all="ignore"):
        r = somaward.solve(_loaded_cylinder(1e-310))
    ref = _capacitive_end_delay(100.0 / lam_um(d), 300.0 / lam_um(d), d, 5.0, 0.0)
    assert r["centroid_delay_soma_to_site_ms"] == pytest.approx(ref, rel=1e-8)
