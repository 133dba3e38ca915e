"""Composed runs (issue 11): the passes over unbranched runs as composed two-ports equal the passes
one level of sections at a time.

Source: derived. Through one uniform cylinder the input admittance is the linear-fractional map
Yin = (YL + Y0·t)/((t/Y0)·YL + 1) of its load, t = tanh κ (Rall 1959, Exp Neurol 1:491, the
recursion of input admittances; cosh/sinh form of Rall 1977). Linear-fractional maps compose as
the products of their 2×2 matrices, and a common factor of a matrix does not change its map, so
the product over a run, normalised at every step, gives the same admittances as applying the
maps one cylinder after another; the Yup recursion of the down pass is the same map. Everything
downstream (Γ, the ln-ratio sums D and U) is then the same formula on the same admittances. The
reference is the per-level code kept in ``solve_tree(..., reference=True)``; the independent
check of both against mpmath is S10 (tests/test_reference_nodal.py).

Tolerances: admittances elementwise 1e-12 relative; reflection terms (|Γ| ≤ 1) 1e-12 absolute; log voltage
ratios (nepers + i·rad) 1e-12 relative to the largest |ln| of their frequency, since a sum of n
logs carries an absolute rounding error of the size of its terms, whatever its value.
"""

import numpy as np
import pytest

from somaward.frequency import laplace_of_hz, site_response
from somaward.sites import point_terms
from somaward.topology import section_path
from somaward.tree import build_tree, solve_tree

MEMBRANE = {"Rm": 20000.0, "Ri": 150.0, "Cm": 1.0}
FREQS_HZ = np.array([0.0, 1.0, 37.0, 500.0, 3000.0, 10000.0])
ENDS = ["sealed", "killed", "infinite", {"G": 0.5, "C": 2.0}]


def random_branches(n_sections, rng, run=(1, 40)):
    """Invented random trees: runs of ``run`` cylinders between branch points, mixed ends."""
    branches, total = [], 0
    while total < n_sections:
        m = int(min(rng.integers(*run), max(n_sections - total, 1)))
        parent = None if not branches or rng.random() < 0.05 else branches[int(rng.integers(len(branches)))]["id"]
        cyl = [{"length": float(rng.uniform(0.5, 40)), "diameter": float(rng.uniform(0.3, 4))} for _ in range(m)]
        branches.append({"id": f"b{len(branches)}", "parent": parent, "cylinders": cyl})
        total += m
    has_child = {b["parent"] for b in branches}
    for b in branches:
        if b["id"] not in has_child:
            b["end"] = ENDS[int(rng.integers(len(ENDS)))]
    return branches


def chain(n, total_l, end="sealed"):
    """One branch of n cylinders, diameters alternating 1 and 2 µm, electrotonic length ≈ total_l."""
    lam_mean_um = 0.5 * (577.35 + 816.5)          # λ of 1 and 2 µm cylinders for MEMBRANE (C2's formula)
    cyl = [{"length": total_l * lam_mean_um / n, "diameter": 1.0 if i % 2 else 2.0} for i in range(n)]
    return [{"id": "chain", "parent": None, "cylinders": cyl, "end": end}]


def _assert_same(a, b, rows, what):
    a, b = np.asarray(a)[rows], np.asarray(b)[rows]
    if what == "log":                              # −inf (a killed end's voltage) must match exactly
        inf = ~np.isfinite(b)
        assert np.array_equal(inf, ~np.isfinite(a)) and np.all(a[inf].real == b[inf].real)
        a, b = np.where(inf, 1j * np.imag(a), a), np.where(inf, 1j * np.imag(b), b)   # the phase still compared
        scale = np.max(np.abs(b), axis=0, keepdims=True)
        err = np.abs(a - b) / np.maximum(scale, 1e-300)
    elif what == "reflection":                     # |Γ| ≤ 1: absolute (Γ near 0 has no relative precision)
        err = np.abs(a - b)
    else:
        err = np.abs(a - b) / np.maximum(np.abs(b), 1e-300)
        err[np.isinf(b) & (a == b)] = 0.0
    assert np.all(err <= 1e-12), f"{what}: {np.max(err):.2e}"


def _compare(tree, s, path=None):
    new, ref = solve_tree(tree, s, path=path), solve_tree(tree, s, path=path, reference=True)
    every = slice(None)
    on_path = every if path is None else np.asarray(path)
    _assert_same(new.yin_uS, ref.yin_uS, every, "admittance")
    for key in ("gamma_distal", "one_plus_gamma_distal", "one_minus_gamma_distal"):
        _assert_same(getattr(new, key), getattr(ref, key), every, "reflection")
    _assert_same(new.yload_uS, ref.yload_uS, every, "admittance")
    _assert_same(new.y_root_uS, ref.y_root_uS, every, "admittance")
    for key in ("gamma_proximal", "one_plus_gamma_proximal", "one_minus_gamma_proximal"):
        _assert_same(getattr(new, key), getattr(ref, key), on_path, "reflection")
    for key in ("down_log", "up_log"):
        _assert_same(getattr(new, key), getattr(ref, key), on_path, "log")
    return new, ref


@pytest.mark.parametrize("seed", range(6))
@pytest.mark.parametrize("soma", [None, {"diameter": 18.0}])
def test_composed_passes_equal_per_level_passes_random_trees(seed, soma):
    """Derived (module docstring): random invented trees with mixed ends, whole tree and one path."""
    rng = np.random.default_rng(seed)
    tree = build_tree(random_branches(int(rng.integers(5, 400)), rng), MEMBRANE, soma)
    s = laplace_of_hz(FREQS_HZ)
    _compare(tree, s)
    _compare(tree, s, section_path(tree, int(rng.integers(tree.n_sections))))
    _compare(tree, np.array([0.0]))                 # real arithmetic


@pytest.mark.parametrize(("n", "total_l", "end"), [(10, 0.5, "sealed"), (1000, 5.0, "killed"),
                                                   (3000, 20.0, "infinite"), (10_000, 50.0, "sealed")])
def test_composed_chains_equal_per_level_passes(n, total_l, end):
    """Derived (module docstring): chains of up to 10⁴ cylinders with alternating diameters, L up to
    50, frequencies up to 10 kHz (ln A reaches hundreds of nepers), soma at the root."""
    tree = build_tree(chain(n, total_l, end), MEMBRANE, {"diameter": 20.0})
    new, ref = _compare(tree, laplace_of_hz(FREQS_HZ))
    # the attenuation ratios themselves, where ln A reaches hundreds of nepers: 1e-11
    a, b = np.exp(new.up_log[-1]), np.exp(ref.up_log[-1])
    ok = np.abs(b) > 0
    assert np.all(np.abs(a[ok] - b[ok]) <= 1e-11 * np.abs(b[ok]))


def test_site_response_equals_per_level_points():
    """Derived: the path-only frequency response at a site equals the point terms of the per-level
    whole-tree solution (ln A both ways, ln Z at the site and at the root)."""
    rng = np.random.default_rng(11)
    tree = build_tree(random_branches(300, rng), MEMBRANE, {"diameter": 12.0})
    sec = tree.n_sections - 1
    y_um = 0.3 * float(tree.length_um[sec])
    s = laplace_of_hz(FREQS_HZ)
    got = site_response(tree, sec, y_um, s)
    ref_sol = solve_tree(tree, s, reference=True)
    ref = point_terms(ref_sol, [sec], [y_um])
    for key, want in (("up", ref["up"][0]), ("down", ref["down"][0]), ("ln_z_site", -np.log(ref["y_node_uS"][0])),
                      ("ln_z_root", -np.log(ref_sol.y_root_uS))):
        assert np.max(np.abs(got[key] - want)) <= 1e-12 * np.max(np.abs(want)), key


def test_composed_passes_stay_finite_at_the_schema_bounds():
    """Derived: the normalised products never overflow. A chain at the schema's extremes (lengths
    1e6 µm, diameters 1e-3 and 1e3 µm, 1 MHz) gives finite admittances and finite logs, and a
    chain of 2·10⁴ thin cylinders (L ≈ 4·10⁴) finite log attenuations equal to the per-level
    passes'."""
    cyl = [{"length": 1e6 if i % 3 == 0 else 0.01, "diameter": (1e-3, 1e3, 1.0)[i % 3]} for i in range(30)]
    tree = build_tree([{"id": "x", "parent": None, "cylinders": cyl, "end": "killed"}], MEMBRANE, {"diameter": 1e3})
    for s in (np.array([0.0]), laplace_of_hz([1e6])):
        sol = solve_tree(tree, s)
        for values in (sol.yin_uS, sol.up_log, sol.y_root_uS):
            assert np.all(np.isfinite(values))
    thin = [{"length": 1e3, "diameter": 1e-3 if i % 2 else 2e-3} for i in range(20_000)]
    tree = build_tree([{"id": "t", "parent": None, "cylinders": thin, "end": "sealed"}], MEMBRANE, None)
    s = laplace_of_hz([0.0, 1e4])
    new, ref = solve_tree(tree, s), solve_tree(tree, s, reference=True)
    assert np.all(np.isfinite(new.up_log)) and np.all(np.isfinite(new.down_log))
    _assert_same(new.up_log, ref.up_log, slice(None), "log")
    _assert_same(new.down_log, ref.down_log, slice(None), "log")


def _long_run_tree(soma):
    rng = np.random.default_rng(5)
    return build_tree(random_branches(1500, rng, run=(50, 300)), MEMBRANE, soma)


def _random_points(tree, rng, n):
    secs = rng.integers(tree.n_sections, size=n)
    return [(int(s), float(rng.uniform(0, 1) * tree.length_um[s])) for s in secs]


@pytest.mark.parametrize("soma", [None, {"diameter": 16.0}])
def test_S6_reciprocity_with_composed_runs(soma):
    """S6 — Z_ij = Z_ji (linear network theory; Koch 1999 ch. 3), from two separate injections
    (transfer_log at i and at j), on an invented tree of 1500 cylinders in runs of 50–300, whose
    passes compose the runs: 20 random pairs, DC and up to 10 kHz, 1e-9 (the tolerance of
    tests/test_tree_identities.py)."""
    from somaward.sites import transfer_log

    tree = _long_run_tree(soma)
    sol = solve_tree(tree, laplace_of_hz(FREQS_HZ))
    rng = np.random.default_rng(2)
    pts = _random_points(tree, rng, 40)
    for a, b in zip(pts[::2], pts[1::2], strict=True):
        zab, zba = transfer_log(sol, a, b), transfer_log(sol, b, a)
        ok = np.isfinite(zab.real)                      # a point on a killed end: V = 0 both ways
        assert np.array_equal(ok, np.isfinite(zba.real))
        assert np.max(np.abs(np.exp(zab[ok] - zba[ok]) - 1), initial=0.0) < 1e-9, (a, b)


def test_F3_additivity_with_composed_runs():
    """F3 — Zador, Agmon-Snir & Segev 1995, J Neurosci 15:1669: for j on the path from i to k,
    ln(V_k/V_i | I at i) = ln(V_j/V_i | I at i) + ln(V_k/V_j | I at j), each ratio from its own
    injection (ln Z_ab − ln Z_aa), on the tree of 1500 cylinders in long runs: j inside a run,
    at the soma side of a branch point, and paths both ways, DC and up to 10 kHz, 1e-9."""
    from somaward.sites import transfer_log

    tree = _long_run_tree({"diameter": 16.0})
    sol = solve_tree(tree, laplace_of_hz(FREQS_HZ))
    ratio = lambda a, b: transfer_log(sol, a, b) - transfer_log(sol, a, a)  # noqa: E731
    rng = np.random.default_rng(4)
    deep = [int(s) for s in rng.integers(tree.n_sections, size=6) if tree.end_code[s] != 2]
    checked = 0
    for sec in deep:
        path = section_path(tree, sec)
        if len(path) < 3:
            continue
        mid, root = path[len(path) // 2], path[0]
        i, j, k = (sec, 0.5 * float(tree.length_um[sec])), (mid, 0.3 * float(tree.length_um[mid])), (root, 0.0)
        for a, b, c in ((i, j, k), (k, j, i)):
            lhs, rhs = ratio(a, c), ratio(a, b) + ratio(b, c)
            assert np.max(np.abs(np.exp(lhs - rhs) - 1)) < 1e-9, (a, b, c)
            checked += 1
    assert checked >= 4
