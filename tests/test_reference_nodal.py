"""S10: the engine against an independent nodal-analysis reference, and the reference itself.

The reference (tests/reference/nodal.py) stamps each cylinder's exact two-port
(Y11 = q*coth(q*l)/ri, Y12 = -q/(ri*sinh(q*l)), q = sqrt(1+s*tau)/lambda; Hodgkin & Rushton 1946,
Proc R Soc B 133:444; Rall 1959, Exp Neurol 1:491; Rall 1977, Handbook of Physiology) into the
nodal admittance matrix of the tree and solves it with mpmath.lu_solve at >= 30 digits -- a
different method from the engine's recursion over the tree.

The first part checks the reference against closed forms, so that a bug in it cannot hide. The
second compares every steady-state value, the frequency response and tree-map points of the
engine with it, on invented test trees (made up for these tests; no published cell).
Tolerance: 1e-9 relative or 1e-12 absolute, whichever is looser.
"""

from __future__ import annotations

import copy
import functools
import math
import sys
from pathlib import Path

import pytest
from mpmath import mp

sys.path.insert(0, str(Path(__file__).resolve().parent))
from reference.nodal import NodalTree, membrane_constants, rel_close

FREQS_HZ = [0.0] + [10.0 ** (-1 + 5 * k / 19) for k in range(20)]  # 0 Hz + 20 from 0.1 Hz to 10 kHz


@pytest.fixture(autouse=True)
def _thirty_digits():
    """The closed forms in these tests are evaluated at the reference's own precision."""
    with mp.workdps(30):
        yield


def _cyl(end, length=500, diameter=1.0, rm_ohm_cm2=20000, ri_ohm_cm=200, cm_uF_cm2=1.0, soma=None):
    sc = {"membrane": {"Rm": rm_ohm_cm2, "Ri": ri_ohm_cm, "Cm": cm_uF_cm2},
          "branches": [{"id": "c", "parent": None, "length": length, "diameter": diameter, "end": end}]}
    if soma is not None:
        sc["soma"] = soma
    return sc


def _close(a, b, rel):
    return abs(a - b) <= rel * max(abs(a), abs(b))


# =============================================================== the reference vs closed forms
def test_reference_units_match_checks_C2_C4_C5():
    """C2, C4, C5 (Rall 1959; Rall 1977; Johnston & Wu 1995): d = 1 um, Rm = 20 000, Ri = 200,
    Cm = 1 -> lambda = 500 um, R_inf = 1273.2395 MOhm, tau = 20 ms (*computed* in checks.md);
    sphere D = 20 um, Rm = 20 000 -> 1591.549 MOhm."""
    k = membrane_constants(20000, 200, 1.0, 1.0)
    assert _close(k["lambda_um"], 500, 1e-25)
    assert abs(k["r_inf_Mohm"] - mp.mpf("1273.2395")) < 1e-4
    assert _close(k["tau_ms"], 20, 1e-25)
    t = NodalTree(_cyl("sealed", soma={"diameter": 20}))
    assert abs(1 / t.G_soma_uS - mp.mpf("1591.549")) < 1e-3


@pytest.mark.parametrize("freq_hz", [0.0, 3.0, 250.0, 10000.0])
def test_reference_sealed_cylinder(freq_hz):
    """S2 (Rall 1959; Rall 1977): sealed end, current at X = 0, no soma:
    Z_in = R_inf*coth(kL)/k with k = sqrt(1+s*tau); V(X)/V(0) = cosh(k(L-X))/cosh(kL).
    At 0 Hz and L = 1, V(L)/V(0) = 0.648054 (*computed* in checks.md)."""
    t = NodalTree(_cyl("sealed"), sites=[("c", 200)])
    k = mp.sqrt(1 + t.s_of(freq_hz) * t.tau_ms)
    rinf = t.r_inf_Mohm(1.0)
    assert _close(t.impedance(freq_hz, "root", "root"), rinf / k * mp.coth(k), 1e-25)
    a = t.impedance(freq_hz, ("c", 200), "root") / t.impedance(freq_hz, "root", "root")
    assert _close(a, mp.cosh(k * mp.mpf("0.6")) / mp.cosh(k), 1e-25)
    if freq_hz == 0:
        end = t.impedance(0, ("c", 500), "root") / t.impedance(0, "root", "root")
        assert abs(end - mp.mpf("0.648054")) < 5e-7


@pytest.mark.parametrize("freq_hz", [0.0, 40.0, 5000.0])
def test_reference_killed_cylinder(freq_hz):
    """S3 (Rall 1977): killed end: Z_in = R_inf*tanh(kL)/k, V(X)/V(0) = sinh(k(L-X))/sinh(kL)."""
    t = NodalTree(_cyl("killed", length=800), sites=[("c", 300)])
    k = mp.sqrt(1 + t.s_of(freq_hz) * t.tau_ms)
    L = mp.mpf(800) / 500
    assert _close(t.impedance(freq_hz, "root", "root"), t.r_inf_Mohm(1.0) / k * mp.tanh(k * L), 1e-25)
    a = t.impedance(freq_hz, ("c", 300), "root") / t.impedance(freq_hz, "root", "root")
    assert _close(a, mp.sinh(k * (L - mp.mpf("0.6"))) / mp.sinh(k * L), 1e-25)
    with pytest.raises(ValueError, match="killed"):
        t.node(("c", 800))


@pytest.mark.parametrize("freq_hz", [0.0, 10.0, 1000.0, 10000.0])
def test_reference_semi_infinite_and_unwrapped_phase(freq_hz):
    """S1 (Rall 1977) and F1: semi-infinite cable, current at X = 0: Z_in = R_inf/k,
    V(x)/V(0) = exp(-q x), so the unwrapped phase is exactly -Im(q)*x, many turns at 10 kHz."""
    t = NodalTree(_cyl("infinite", length=700, diameter=0.8), sites=[("c", 650)])
    s = t.s_of(freq_hz)
    k = mp.sqrt(1 + s * t.tau_ms)
    q = k / membrane_constants(20000, 200, 1.0, 0.8)["lambda_um"]
    assert _close(t.impedance(freq_hz, "root", "root"), t.r_inf_Mohm(0.8) / k, 1e-25)
    a = t.impedance(freq_hz, ("c", 650), "root") / t.impedance(freq_hz, "root", "root")
    assert _close(a, mp.exp(-q * 650), 1e-24)
    assert abs(t.path_phase(freq_hz, ("c", 650), False) - (-mp.im(q) * 650)) < 1e-24
    if freq_hz == 10000.0:
        assert -mp.im(q) * 650 < -6 * mp.pi  # the unwrap is really exercised


@pytest.mark.parametrize("end", ["sealed", "killed", "infinite", {"G": 3.0, "C": 4.0}])
@pytest.mark.parametrize("freq_hz", [0.0, 60.0, 8000.0])
def test_reference_root_sealed_site_to_root(end, freq_hz):
    """S3b (derived): current injected at X with the root end sealed and no soma. Between 0 and
    x no current leaves axially at 0, so V(y) = V(0)*cosh(q*y) on [0, x], whatever lies beyond x:
    V(0)/V(x) = 1/cosh(q*x). Its unwrapped phase is -Im(q x) - arg((1+exp(-2 q x))/2), the
    second term continuous because |exp(-2 q x)| < 1."""
    t = NodalTree(_cyl(end, length=600, diameter=1.5), sites=[("c", 420)])
    q = mp.sqrt(1 + t.s_of(freq_hz) * t.tau_ms) / membrane_constants(20000, 200, 1.0, 1.5)["lambda_um"]
    z = q * 420
    v = t.voltages(freq_hz, t.node(("c", 420)))
    assert _close(v[0] / v[t.node(("c", 420))], 1 / mp.cosh(z), 1e-24)
    expected = -mp.im(z) - mp.arg((1 + mp.exp(-2 * z)) / 2)
    assert abs(t.path_phase(freq_hz, ("c", 420), True) - expected) < 1e-24


@pytest.mark.parametrize("soma_rm_ohm_cm2", [20000, 2500])
@pytest.mark.parametrize("freq_hz", [0.0, 1.0, 100.0, 10000.0])
def test_reference_soma_plus_cylinder(soma_rm_ohm_cm2, freq_hz):
    """S9 (Rall 1959; Rall 1969): soma + sealed cylinder,
    Y_in(s) = G_s*(1 + s*tau_soma) + k*tanh(k*L)/R_inf, k = sqrt(1+s*tau); with a somatic shunt
    (soma Rm != membrane Rm) tau_soma = Rm_soma*Cm and G_s = pi*D^2/Rm_soma."""
    sc = _cyl("sealed", length=450, diameter=2.0, rm_ohm_cm2=20000, ri_ohm_cm=150, cm_uF_cm2=0.9,
              soma={"diameter": 22, "Rm": soma_rm_ohm_cm2})
    t = NodalTree(sc)
    s = t.s_of(freq_hz)
    k = mp.sqrt(1 + s * t.tau_ms)
    lam = membrane_constants(20000, 150, 0.9, 2.0)["lambda_um"]
    gs = mp.pi * 22**2 / soma_rm_ohm_cm2 * mp.mpf("0.01")  # uS
    cm_uF_cm2 = mp.mpf(0.9)  # the binary float the scenario holds, not the decimal 0.9
    y = gs * (1 + s * soma_rm_ohm_cm2 * cm_uF_cm2 / 1000) + k * mp.tanh(k * 450 / lam) / t.r_inf_Mohm(2.0)
    assert _close(1 / t.impedance(freq_hz, "soma", "soma"), y, 1e-25)


@pytest.mark.parametrize("freq_hz", [0.0, 30.0, 3000.0])
def test_reference_lumped_load(freq_hz):
    """Derived: a cylinder ending in the load Y_L = G + s*C. With V(x) = V_L cosh(q(l-x)) +
    (I_L*ri/q) sinh(q(l-x)) and I_L = Y_L*V_L, the input admittance is the transmission-line form
    Y_in = Y_c*(Y_L + Y_c*tanh(q l))/(Y_c + Y_L*tanh(q l)), Y_c = q/ri = k/R_inf."""
    t = NodalTree(_cyl({"G": 2.0, "C": 5.0}, length=300, diameter=1.2))
    s = t.s_of(freq_hz)
    k = mp.sqrt(1 + s * t.tau_ms)
    yc = k / t.r_inf_Mohm(1.2)
    yl = mp.mpf("0.002") + s * mp.mpf("0.005")  # 2 nS, 5 pF in uS, nF
    th = mp.tanh(k * 300 / membrane_constants(20000, 200, 1.0, 1.2)["lambda_um"])
    assert _close(1 / t.impedance(freq_hz, "root", "root"), yc * (yl + yc * th) / (yc + yl * th), 1e-25)


def test_reference_splitting_changes_nothing():
    """S8 (derived): a node inside a uniform section (and a branch given as equal sections)
    changes no impedance -- the two-ports compose exactly."""
    one = _cyl({"G": 1.0, "C": 1.0}, length=400, diameter=1.1, soma={"diameter": 15})
    split = copy.deepcopy(one)
    split["branches"][0].pop("length"), split["branches"][0].pop("diameter")
    split["branches"][0]["cylinders"] = [{"length": 150, "diameter": 1.1}, {"length": 250, "diameter": 1.1}]
    a, b = NodalTree(one, sites=[("c", 400)]), NodalTree(split, sites=[("c", 37), ("c", 211)])
    for freq_hz in (0.0, 500.0):
        assert _close(a.impedance(freq_hz, "soma", "soma"), b.impedance(freq_hz, "soma", "soma"), 1e-25)
        assert _close(a.impedance(freq_hz, ("c", 400), "soma"), b.impedance(freq_hz, ("c", 400), "soma"), 1e-25)


# =============================================================== invented test trees
# Each tree below is invented for these tests (no published cell, no course example).
TREES = {
    "pyramid_like": ({  # invented: soma, tapered apical stem with two tufts, two basal stems
        "membrane": {"Rm": 20000, "Ri": 150, "Cm": 1.0},
        "soma": {"diameter": 20},
        "branches": [
            {"id": "apical", "parent": None,
             "cylinders": [{"length": 100, "diameter": 3.0}, {"length": 150, "diameter": 2.4},
                          {"length": 120, "diameter": 1.8}]},
            {"id": "tuft1", "parent": "apical", "length": 280, "diameter": 0.9, "end": "sealed"},
            {"id": "tuft2", "parent": "apical",
             "cylinders": [{"length": 90, "diameter": 1.2}, {"length": 140, "diameter": 0.7}], "end": "killed"},
            {"id": "basal1", "parent": None, "length": 180, "diameter": 1.2, "end": "infinite"},
            {"id": "basal2", "parent": None,
             "cylinders": [{"length": 60, "diameter": 1.5}, {"length": 110, "diameter": 0.8}],
             "end": {"G": 0.4, "C": 1.5}}],
        "synapse": {"branch": "tuft2", "distance": 160,
                    "current": {"shape": "alpha", "tau": 0.5, "peak": 50}},
        "map_spacing_um": 40}, 30),
    "no_soma_root": ({  # invented: no soma, four stems meet at the root node
        "membrane": {"Rm": 15000, "Ri": 100, "Cm": 0.8},
        "soma": None,
        "branches": [
            {"id": "s1", "parent": None, "length": 250, "diameter": 2.0},
            {"id": "c1", "parent": "s1",
             "cylinders": [{"length": 100, "diameter": 1.0}, {"length": 100, "diameter": 0.6}], "end": "sealed"},
            {"id": "c2", "parent": "s1", "length": 150, "diameter": 1.2, "end": "infinite"},
            {"id": "s2", "parent": None, "length": 300, "diameter": 1.0, "end": "killed"},
            {"id": "s3", "parent": None,
             "cylinders": [{"length": 50, "diameter": 2.5}, {"length": 50, "diameter": 1.5},
                          {"length": 50, "diameter": 0.9}], "end": {"G": 2.0, "C": 0.5}},
            {"id": "s4", "parent": None, "length": 120, "diameter": 0.7, "end": "sealed"}],
        "synapse": {"branch": "c1", "distance": 130,
                    "current": {"shape": "alpha", "tau": 0.5, "peak": 50}},
        "map_spacing_um": 30}, 30),
    "somatic_shunt": ({  # invented: leaky soma (soma Rm << membrane Rm), synapse placed by path
        "membrane": {"Rm": 40000, "Ri": 180, "Cm": 0.9},
        "soma": {"diameter": 16, "Rm": 3000},
        "branches": [
            {"id": "trunk", "parent": None,
             "cylinders": [{"length": 200, "diameter": 2.5}, {"length": 200, "diameter": 1.8}]},
            {"id": "brA", "parent": "trunk", "length": 350, "diameter": 0.8, "end": "sealed"},
            {"id": "brB", "parent": "trunk",
             "cylinders": [{"length": 100, "diameter": 1.0}, {"length": 100, "diameter": 0.5}], "end": "infinite"},
            {"id": "basal", "parent": None, "length": 220, "diameter": 1.0, "end": "killed"}],
        "synapse": {"path": "brA", "path_distance": 610,
                    "current": {"shape": "alpha", "tau": 0.5, "peak": 50}},
        "map_spacing_um": 50, "map_frequency_hz": 50}, 30),
    "binary_loads": ({  # invented: small soma, tapered binary tree with lumped loads
        "membrane": {"Rm": 10000, "Ri": 250, "Cm": 1.2},
        "soma": {"diameter": 10},
        "branches": [
            {"id": "stem1", "parent": None, "length": 80, "diameter": 2.0},
            {"id": "l1", "parent": "stem1", "length": 120, "diameter": 1.4},
            {"id": "l1a", "parent": "l1", "length": 150, "diameter": 0.8, "end": {"G": 0.1, "C": 0.2}},
            {"id": "l1b", "parent": "l1",
             "cylinders": [{"length": 50, "diameter": 1.0}, {"length": 70, "diameter": 0.6}], "end": "sealed"},
            {"id": "l2", "parent": "stem1", "length": 100, "diameter": 1.2},
            {"id": "l2a", "parent": "l2", "length": 200, "diameter": 0.5, "end": "killed"},
            {"id": "l2b", "parent": "l2", "length": 90, "diameter": 0.9, "end": "infinite"},
            {"id": "stem2", "parent": None,
             "cylinders": [{"length": 40, "diameter": 1.6}, {"length": 60, "diameter": 1.1}], "end": "sealed"},
            {"id": "stem3", "parent": None, "length": 75, "diameter": 0.6, "end": {"G": 1.0, "C": 0.0}}],
        "synapse": {"branch": "l1b", "distance": 50,  # exactly on a section boundary
                    "current": {"shape": "alpha", "tau": 0.5, "peak": 50}},
        "map_spacing_um": 25}, 30),
    "long_thin": ({  # invented: big soma, long tapering dendrite (X ~ 4) ending killed
        "membrane": {"Rm": 8000, "Ri": 300, "Cm": 1.0},
        "soma": {"diameter": 30},
        "branches": [
            {"id": "dend", "parent": None,
             "cylinders": [{"length": 300, "diameter": 1.0}, {"length": 400, "diameter": 0.6},
                          {"length": 300, "diameter": 0.4}], "end": "killed"},
            {"id": "short", "parent": None, "length": 40, "diameter": 4.0, "end": {"G": 5.0, "C": 10.0}}],
        "synapse": {"branch": "dend", "distance": 850,
                    "current": {"shape": "alpha", "tau": 0.5, "peak": 50}},
        "map_spacing_um": 100}, 60),  # 60 digits: |A| reaches ~1e-45 at 10 kHz
    "branch_point_site": ({  # invented: synapse exactly at a branch point, map at 1 kHz
        "membrane": {"Rm": 25000, "Ri": 120, "Cm": 0.75},
        "soma": {"diameter": 14, "Rm": 60000},
        "branches": [
            {"id": "main", "parent": None,
             "cylinders": [{"length": 70, "diameter": 2.2}, {"length": 130, "diameter": 1.6}]},
            {"id": "left", "parent": "main", "length": 260, "diameter": 1.1, "end": {"G": 0.05, "C": 3.0}},
            {"id": "right", "parent": "main", "length": 90, "diameter": 0.9, "end": "killed"},
            {"id": "thick", "parent": None, "length": 60, "diameter": 3.5, "end": "infinite"}],
        "synapse": {"branch": "main", "distance": 200,
                    "current": {"shape": "alpha", "tau": 0.5, "peak": 50}},
        "map_spacing_um": 35, "map_frequency_hz": 1000}, 30),
    "sealed_tip_site": ({  # invented: synapse on the sealed tip of a thin terminal, no soma
        "membrane": {"Rm": 12000, "Ri": 90, "Cm": 1.1},
        "branches": [
            {"id": "stem", "parent": None, "length": 150, "diameter": 1.8},
            {"id": "tip", "parent": "stem",
             "cylinders": [{"length": 40, "diameter": 0.9}, {"length": 60, "diameter": 0.45}], "end": "sealed"},
            {"id": "side", "parent": "stem", "length": 200, "diameter": 1.3, "end": "infinite"},
            {"id": "other", "parent": None, "length": 90, "diameter": 0.8, "end": {"G": 0.3, "C": 0.0}}],
        "synapse": {"path": "tip", "path_distance": 250,
                    "current": {"shape": "alpha", "tau": 0.5, "peak": 50}},
        "map_spacing_um": 20}, 30),
}
TREE_NAMES = sorted(TREES)


def _synapse_site(name):
    sc, _ = TREES[name]
    syn = sc["synapse"]
    if "branch" in syn:
        return syn["branch"], syn["distance"]
    return NodalTree(sc).site_from_path(syn["path"], syn["path_distance"])


@functools.lru_cache(maxsize=None)
def engine_report(name):
    import somaward  # the engine under test; imported here so the reference tests run alone

    sc = copy.deepcopy(TREES[name][0])
    sc["frequencies_hz"] = list(FREQS_HZ)
    return somaward.solve(sc)


@functools.lru_cache(maxsize=None)
def reference_tree(name, extra_sites=()):
    sc, dps = TREES[name]
    return NodalTree(sc, sites=(_synapse_site(name),) + tuple(extra_sites), dps=dps)


@functools.lru_cache(maxsize=None)
def reference_response(name, freq_hz):
    return reference_tree(name).site_response(freq_hz, _synapse_site(name))


class Mismatches:
    """Collects every value outside the S10 tolerance, so one failure lists them all."""

    def __init__(self, name):
        self.name, self.bad, self.n = name, [], 0

    def check(self, key, value, ref, rel=1e-9, abs_tol=1e-12):
        self.n += 1
        if not rel_close(value, ref, rel, abs_tol):
            self.bad.append(f"{self.name}: {key}: engine {value!r}, reference {mp.nstr(ref, 17)}")

    def done(self):
        assert self.n > 0
        assert not self.bad, "\n".join(self.bad)


# =============================================================== engine vs reference
@pytest.mark.parametrize("name", TREE_NAMES)
def test_S10_steady_state(name):
    """S10: independent computation (mpmath nodal analysis); two-port after Hodgkin & Rushton
    1946, Rall 1959, Rall 1977. Every steady-state value of the report against the nodal
    reference at s = 0: input and transfer resistances, attenuation both ways (ratio, fold, log,
    percent), X of the synapse, rho = G_dendrites(0)/G_soma and rho_inf = sum over the stems of
    G_inf (of each stem's proximal section) / G_soma (Rall 1959)."""
    rep, ref, m = engine_report(name), reference_response(name, 0.0), Mismatches(name)
    t = reference_tree(name)
    site = _synapse_site(name)
    m.check("soma_input_resistance_Mohm", rep["soma_input_resistance_Mohm"], mp.re(ref["z_soma"]))
    m.check("site_input_resistance_Mohm", rep["site_input_resistance_Mohm"], mp.re(ref["z_site"]))
    m.check("transfer_resistance_Mohm", rep["transfer_resistance_Mohm"], mp.re(ref["z_transfer"]))
    ss = rep["attenuation"]["steady_state"]
    for way, a in (("site_to_soma", mp.re(ref["a_site_to_soma"])), ("soma_to_site", mp.re(ref["a_soma_to_site"]))):
        m.check(way, ss[way], a)
        m.check(way + "_fold", ss[way + "_fold"], 1 / a)
        m.check(way + "_log", ss[way + "_log"], -mp.log(a))
        m.check(way + "_percent", ss[way + "_percent"], 100 * a)
    x = t.electrotonic_distance(t.node(site))
    m.check("electrotonic_distance", rep["electrotonic_distance"], x)
    m.check("site.electrotonic_distance", rep["site"]["electrotonic_distance"], x)
    m.check("site.path_distance_um", rep["site"]["path_distance_um"], t.path_distance_um(t.node(site)))
    assert rep["recording_site"] == ("soma" if t.has_soma else "root")
    if t.has_soma:
        m.check("rho", rep["rho"], t.dendritic_conductance_uS() / t.G_soma_uS)
        m.check("rho_inf", rep["rho_inf"], t.stem_g_inf_uS() / t.G_soma_uS)
    else:
        assert rep["rho"] is None and rep["rho_inf"] is None and rep["soma"] is None
    m.done()


@pytest.mark.parametrize("name", TREE_NAMES)
def test_S10_constants_and_geometry(name):
    """S10: independent computation (mpmath) with C1-C5 (Rall 1959; Rall 1977; Johnston & Wu
    1995): tau_m, lambda and L of every branch and section, X at every terminal, and the soma's
    area, resistance, capacitance and tau, recomputed from the scenario with mpmath."""
    rep, (sc, _), m = engine_report(name), TREES[name], Mismatches(name)
    t = reference_tree(name)
    mem = sc["membrane"]
    m.check("tau_m_ms", rep["tau_m_ms"], t.tau_ms)
    for b in sc["branches"]:
        secs = b.get("cylinders") or [{"length": b["length"], "diameter": b["diameter"]}]
        lams = [membrane_constants(mem["Rm"], mem["Ri"], mem["Cm"], s["diameter"])["lambda_um"] for s in secs]
        got = rep["lambda_um"][b["id"]]
        if isinstance(got, list):
            assert len(got) == len(secs), f"lambda_um[{b['id']}]"
            for i, (g, lam) in enumerate(zip(got, lams, strict=True)):
                m.check(f"lambda_um[{b['id']}][{i}]", g, lam)
        else:
            assert len({s["diameter"] for s in secs}) == 1, f"lambda_um[{b['id']}] must be per section"
            m.check(f"lambda_um[{b['id']}]", got, lams[0])
        big_l = mp.fsum(mp.mpf(s["length"]) / lam for s, lam in zip(secs, lams, strict=True))
        m.check(f"electrotonic_length[{b['id']}]", rep["electrotonic_length"][b["id"]], big_l)
        for i, (s, lam) in enumerate(zip(secs, lams, strict=True)):
            if b["id"] in rep.get("cylinders", {}):
                row = rep["cylinders"][b["id"]][i]
                m.check(f"sections[{b['id']}][{i}].lambda_um", row["lambda_um"], lam)
                m.check(f"sections[{b['id']}][{i}].electrotonic_length", row["electrotonic_length"],
                        mp.mpf(s["length"]) / lam)
    terminals = {b["id"] for b in sc["branches"]} - {b["parent"] for b in sc["branches"]}
    assert set(rep["terminal_electrotonic_distance"]) == terminals
    for tid in terminals:  # X at the distal end: every section of the branches root..terminal
        xs = mp.fsum(e.length / t._lam(e.diameter) for e in t.edges if e.branch in _chain(t, tid))
        m.check(f"terminal_electrotonic_distance[{tid}]", rep["terminal_electrotonic_distance"][tid], xs)
    if t.has_soma:
        so, d = rep["soma"], t.soma_diameter
        m.check("soma.area_um2", so["area_um2"], mp.pi * d**2)
        m.check("soma.resistance_Mohm", so["resistance_Mohm"], 1 / t.G_soma_uS)
        m.check("soma.capacitance_pF", so["capacitance_pF"], 1000 * t.C_soma_nF)
        m.check("soma.tau_ms", so["tau_ms"], t.soma_rm_ohm_cm2 * t.cm_uF_cm2 / 1000)
    m.done()


def _chain(t, tid):
    out, bid = set(), tid
    while bid is not None:
        out.add(bid)
        bid = t.branches[bid]["parent"]
    return out


@pytest.mark.parametrize("name", TREE_NAMES)
def test_S10_frequency_response(name):
    """S10: independent computation (mpmath nodal analysis); two-port after Hodgkin & Rushton
    1946, Rall 1959, Rall 1977.
    With F2 (0 Hz = steady state, derived): |A|, log attenuation, unwrapped phase and
    phase delay both ways, and the transfer, site-input and soma-input impedances, at 0 Hz and 20
    log-spaced frequencies from 0.1 Hz to 10 kHz. The reference phase is the continuous phase of
    V along the path (see tests/reference/nodal.py); the transfer impedance's phase is
    arg(Z_in,site) + phase(site->soma)."""
    rep, m = engine_report(name), Mismatches(name)
    fr = rep["frequency_response"]
    assert len(fr["frequencies_hz"]) == len(FREQS_HZ)
    for i, freq_hz in enumerate(FREQS_HZ):
        assert fr["frequencies_hz"][i] == pytest.approx(freq_hz, rel=1e-15)
        ref = reference_response(name, freq_hz)
        for way in ("site_to_soma", "soma_to_site"):
            a, ph, blk = ref["a_" + way], ref["phase_" + way], fr[way]
            m.check(f"{way}.magnitude[{freq_hz:.4g} Hz]", blk["magnitude"][i], abs(a))
            m.check(f"{way}.log_attenuation[{freq_hz:.4g} Hz]", blk["log_attenuation"][i], -mp.log(abs(a)))
            m.check(f"{way}.phase_deg[{freq_hz:.4g} Hz]", blk["phase_deg"][i], ph * 180 / mp.pi)
            if freq_hz > 0:
                m.check(f"{way}.phase_delay_ms[{freq_hz:.4g} Hz]", blk["phase_delay_ms"][i],
                        -ph / (2 * mp.pi * mp.mpf(freq_hz)) * 1000)
        for key, z, ph in (("transfer_impedance_Mohm", ref["z_transfer"], ref["phase_transfer"]),
                           ("site_input_impedance_Mohm", ref["z_site"], mp.arg(ref["z_site"])),
                           ("soma_input_impedance_Mohm", ref["z_soma"], mp.arg(ref["z_soma"]))):
            m.check(f"{key}.magnitude[{freq_hz:.4g} Hz]", fr[key]["magnitude"][i], abs(z))
            m.check(f"{key}.phase_deg[{freq_hz:.4g} Hz]", fr[key]["phase_deg"][i], ph * 180 / mp.pi)
    m.done()


@pytest.mark.parametrize("name", TREE_NAMES)
def test_S10_centroid_delays(name):
    """S10: independent computation (mpmath nodal analysis) and Agmon-Snir & Segev 1993
    (J Neurophysiol 70:2066): the centroid (transfer) delay is
    -d/ds ln A(s) at s = 0, here by mpmath.diff of the nodal solution; it is also the 0 Hz limit
    of phase_delay_ms (DEVELOPERS.md)."""
    rep, m, t = engine_report(name), Mismatches(name), reference_tree(name)
    site = _synapse_site(name)
    d_in = t.centroid_delay_ms(site, True)
    d_out = t.centroid_delay_ms(site, False)
    m.check("centroid_delay_ms", rep["centroid_delay_ms"], d_in)
    m.check("centroid_delay_soma_to_site_ms", rep["centroid_delay_soma_to_site_ms"], d_out)
    fr = rep["frequency_response"]
    m.check("site_to_soma.phase_delay_ms[0 Hz]", fr["site_to_soma"]["phase_delay_ms"][0], d_in)
    m.check("soma_to_site.phase_delay_ms[0 Hz]", fr["soma_to_site"]["phase_delay_ms"][0], d_out)
    m.done()


def _map_picks(tm, t):
    """A handful of tree-map entries spread over the map, skipping points on a killed end."""
    n = len(tm["branch"])
    picks = []
    for i in sorted({0, 1, n // 4, n // 2, (3 * n) // 4, n - 2, n - 1}):
        if 0 <= i < n:
            br, dist = tm["branch"][i], tm["distance_um"][i]
            ends = [x for x, node in t.node_at[br] if node is None]
            if ends and abs(ends[0] - mp.mpf(dist)) < 1e-9:
                continue
            picks.append(i)
    return picks


@pytest.mark.parametrize("name", TREE_NAMES)
def test_S10_tree_map_points(name):
    """S10: independent computation (mpmath nodal analysis); two-port after Hodgkin & Rushton
    1946, Rall 1959, Rall 1977.
    Tree-map entries recomputed by placing a node at each entry's position in
    the reference (positions are read from the map; values never): A and log attenuation both
    ways (|A| where map_frequency_hz > 0), path distance and X."""
    rep, m = engine_report(name), Mismatches(name)
    tm = rep["tree_map"]
    freq_hz = TREES[name][0].get("map_frequency_hz", 0)
    assert tm["frequency_hz"] == freq_hz
    t0 = reference_tree(name)
    picks = _map_picks(tm, t0)
    assert len(picks) >= 4
    sites = tuple((tm["branch"][i], tm["distance_um"][i]) for i in picks)
    t = reference_tree(name, sites)
    for i, site in zip(picks, sites, strict=True):
        node = t.node(site)
        v_in, v_out = t.voltages(freq_hz, node), t.voltages(freq_hz, 0)
        a_in, a_out = abs(v_in[0] / v_in[node]), abs(v_out[node] / v_out[0])
        tag = f"tree_map[{i}] {site[0]}@{site[1]}"
        m.check(tag + ".site_to_soma", tm["site_to_soma"][i], a_in)
        m.check(tag + ".soma_to_site", tm["soma_to_site"][i], a_out)
        m.check(tag + ".site_to_soma_log", tm["site_to_soma_log"][i], -mp.log(a_in))
        m.check(tag + ".soma_to_site_log", tm["soma_to_site_log"][i], -mp.log(a_out))
        m.check(tag + ".path_distance_um", tm["path_distance_um"][i], t.path_distance_um(node))
        m.check(tag + ".electrotonic_distance", tm["electrotonic_distance"][i], t.electrotonic_distance(node))
    m.done()


# =============================================================== the reference's own sanity
@pytest.mark.parametrize("name", ["pyramid_like", "no_soma_root", "binary_loads"])
def test_S6_reciprocity_in_reference(name):
    """S6 (linear network theory; Koch 1999, Biophysics of Computation ch. 3): Z_ij = Z_ji in the
    nodal reference, from two separate solves (current at j, read i; current at i, read j), for
    pairs of nodes that include neither or one of the soma/root, at DC and two frequencies."""
    sc, dps = TREES[name]
    branches = [b["id"] for b in sc["branches"]]
    extra = [(branches[-1], 10), (branches[1], 5)]
    t = NodalTree(sc, sites=[_synapse_site(name)] + extra, dps=dps)
    pts = ["soma", _synapse_site(name)] + extra
    for freq_hz in (0.0, 37.0, 2500.0):
        for i in range(len(pts)):
            for j in range(i + 1, len(pts)):
                zij = t.voltages(freq_hz, t.node(pts[j]))[t.node(pts[i])]
                zji = t.voltages(freq_hz, t.node(pts[i]))[t.node(pts[j])]
                assert abs(zij - zji) <= mp.mpf("1e-25") * abs(zij), (freq_hz, pts[i], pts[j])


@pytest.mark.parametrize("name", TREE_NAMES)
def test_reference_transfer_phase_two_routes(name):
    """Derived from S6: Z_t = Z_in,site * A(site->soma) = Z_in,soma * A(soma->site), so the
    unwrapped transfer phases arg Z_in,site + phi(site->soma) and arg Z_in,soma + phi(soma->site),
    obtained from two different solves and two path traversals, agree at every frequency."""
    for freq_hz in (0.0, 1.0, 316.0, 10000.0):
        ref = reference_response(name, freq_hz)
        other = mp.arg(ref["z_soma"]) + ref["phase_soma_to_site"]
        assert abs(ref["phase_transfer"] - other) < 1e-20, (name, freq_hz)
        assert abs(ref["z_transfer"] - ref["z_transfer_reverse"]) < 1e-20 * abs(ref["z_transfer"])


def test_reference_precision_is_enough_for_long_thin():
    """The reference's own precision check: at 10 kHz the long_thin tree's |A| is ~1e-45; the
    log attenuation from 60 and 80 digits agrees to 1e-25 (and 30 digits would already not be
    far off)."""
    sc, _ = TREES["long_thin"]
    site = _synapse_site("long_thin")
    vals = []
    for dps in (60, 80):
        r = NodalTree(sc, sites=[site], dps=dps).site_response(10000.0, site)
        vals.append((-mp.log(abs(r["a_soma_to_site"])), -mp.log(abs(r["a_site_to_soma"])), r["phase_soma_to_site"]))
    for a, b in zip(*vals, strict=True):
        assert abs(a - b) < 1e-25 * abs(b)
    assert vals[0][0] > 50  # really a steep attenuation
    assert math.isfinite(float(vals[0][2]))


def _long_runs_tree():
    """Invented: soma, a trunk of 40 cylinders, then two tufts of 30 (100 cylinders, long runs)."""
    trunk = [{"length": 10.0, "diameter": 2.0 if i % 2 else 1.6} for i in range(40)]
    tuft_a = [{"length": 12.0, "diameter": 0.9 if i % 2 else 0.7} for i in range(30)]
    tuft_b = [{"length": 8.0, "diameter": 1.1 if i % 2 else 0.8} for i in range(30)]
    return {"membrane": {"Rm": 20000, "Ri": 150, "Cm": 1.0}, "soma": {"diameter": 18},
            "branches": [{"id": "trunk", "parent": None, "cylinders": trunk},
                         {"id": "a", "parent": "trunk", "cylinders": tuft_a, "end": "killed"},
                         {"id": "b", "parent": "trunk", "cylinders": tuft_b, "end": "infinite"}],
            "synapse": {"branch": "a", "distance": 203.0}, "frequencies_hz": [0.0, 100.0, 3000.0],
            "map_spacing_um": 1000.0}


@pytest.mark.slow
def test_S10_hundred_cylinders_in_long_runs():
    """S10: independent computation (mpmath nodal analysis, 30 digits); two-port after Hodgkin &
    Rushton 1946, Rall 1959, Rall 1977. A tree of 10² cylinders in three unbranched runs (so the
    engine composes runs of 40 and 30 two-ports, issue 11): input impedances at the soma and the
    synapse, the transfer impedance and the attenuation both ways, A_site→soma = Z(soma ← site) /
    Z(site ← site) and A_soma→site = Z(site ← soma) / Z(soma ← soma), at 0, 100 and 3000 Hz."""
    import somaward

    sc = _long_runs_tree()
    rep = somaward.solve(copy.deepcopy(sc))
    site = ("a", 203.0)
    ref, m = NodalTree(sc, sites=[site]), Mismatches("long_runs")
    fr = rep["frequency_response"]
    for i, freq_hz in enumerate(sc["frequencies_hz"]):
        z_ss, z_yy = ref.impedance(freq_hz, "soma", "soma"), ref.impedance(freq_hz, site, site)
        z_sy, z_ys = ref.impedance(freq_hz, "soma", site), ref.impedance(freq_hz, site, "soma")
        m.check(f"soma_input_impedance[{freq_hz}]", fr["soma_input_impedance_Mohm"]["magnitude"][i], abs(z_ss))
        m.check(f"site_input_impedance[{freq_hz}]", fr["site_input_impedance_Mohm"]["magnitude"][i], abs(z_yy))
        m.check(f"transfer_impedance[{freq_hz}]", fr["transfer_impedance_Mohm"]["magnitude"][i], abs(z_sy))
        m.check(f"site_to_soma.log_attenuation[{freq_hz}]", fr["site_to_soma"]["log_attenuation"][i],
                -mp.log(abs(z_sy / z_yy)))
        m.check(f"soma_to_site.log_attenuation[{freq_hz}]", fr["soma_to_site"]["log_attenuation"][i],
                -mp.log(abs(z_ys / z_ss)))
    m.check("soma_input_resistance_Mohm", rep["soma_input_resistance_Mohm"], mp.re(ref.impedance(0.0, "soma", "soma")))
    m.done()
