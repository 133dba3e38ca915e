"""Benchmark: whole-tree attenuation map on random trees of 10² … 10⁵ sections.

Prints seconds per map site, the growth factor per decade, and two ratios measured side by side
in this run:
  (a) against the arithmetic floor: one vectorised numpy evaluation of complex cosh and sinh
      over as many values as the map has sites;
  (b) against a baseline that discretises the same tree on the same nodes (a compartmental
      conductance matrix), factorises it once with scipy's splu and solves once per site
      (10² and 10³ sections only).
Targets (issue 2): growth ≤ 13× per decade from 10³ up; ≤ 30× the floor at 10⁵; ≥ 100× faster
than the baseline at 10³. Nothing here is asserted: it prints.

Trees are invented: random attachment, 10–20 sections per unbranched branch (so depth grows
with size), diameters 0.5–4 µm, lengths 5–30 µm per section.
"""

import argparse
import time

import numpy as np

from somaward.maps import map_points, tree_map_logs
from somaward.tree import build_tree, solve_tree

MEMBRANE = {"Rm": 20000.0, "Ri": 150.0, "Cm": 1.0}
SOMA = {"diameter": 20.0}


def random_branches(n_sections, rng):
    branches, total = [], 0
    while total < n_sections:
        m = int(min(rng.integers(10, 21), max(n_sections - total, 1)))
        parent = None if not branches else branches[int(rng.integers(len(branches)))]["id"]
        secs = [{"length": float(rng.uniform(5, 30)), "diameter": float(rng.uniform(0.5, 4))} for _ in range(m)]
        branches.append({"id": f"b{len(branches)}", "parent": parent, "cylinders": secs})
        total += m
    has_child = {b["parent"] for b in branches}
    for b in branches:
        if b["id"] not in has_child:
            b["end"] = "sealed"
    return branches


def timed(fn, repeat):
    best = np.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    return best, out


def engine_map(tree):
    sec, y = map_points(tree, spacing_um=1e9)      # section ends only: one site per section end
    sol = solve_tree(tree, np.array([0.0]))
    up, down = tree_map_logs(sol, sec, y)
    return len(sec), up, down


def floor(n_values, rng):
    z = rng.uniform(0.1, 2.0, n_values) + 1j * rng.uniform(0.0, 2.0, n_values)
    return lambda: (np.cosh(z), np.sinh(z))


def baseline(tree, sec):
    """Compartmental matrix on the same nodes; one splu, one solve per site (scipy)."""
    import scipy.sparse as sp
    from scipy.sparse.linalg import splu

    n = tree.n_sections
    g_ax = 1.0 / (tree.length_um / (tree.g_inf_uS * tree.lambda_um))      # µS, ri·ℓ = ℓ/(λ G∞)
    g_m = tree.g_inf_uS * tree.length_um / tree.lambda_um                  # µS, ℓ/(rm) = G∞ ℓ/λ
    rows = np.arange(n) + 1
    par = np.where(tree.parent >= 0, tree.parent + 1, 0)
    diag = np.zeros(n + 1)
    diag[0] = tree.soma_g_uS
    np.add.at(diag, rows, g_m / 2 + g_ax)
    np.add.at(diag, par, g_m / 2 + g_ax)
    a = sp.coo_matrix((np.concatenate([diag, -g_ax, -g_ax]),
                       (np.concatenate([np.arange(n + 1), rows, par]),
                        np.concatenate([np.arange(n + 1), par, rows]))), shape=(n + 1, n + 1)).tocsc()
    lu = splu(a)
    sites = sec + 1

    def run():
        out = np.empty(len(sites))
        e = np.zeros(n + 1)
        for j, site in enumerate(sites):
            e[:] = 0.0
            e[site] = 1.0
            v = lu.solve(e)
            out[j] = v[0] / v[site]
        return out

    return run


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", default="100,1000,10000,100000")
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--seed", type=int, default=1)
    args = ap.parse_args(argv)
    rng = np.random.default_rng(args.seed)
    rows = []
    for n in [int(s) for s in args.sizes.split(",")]:
        tree = build_tree(random_branches(n, rng), MEMBRANE, SOMA)
        t_map, (sites, _, _) = timed(lambda tree=tree: engine_map(tree), args.repeat)
        t_floor, _ = timed(floor(sites, rng), args.repeat)
        t_base = None
        if n <= 1000:
            sec, _ = map_points(tree, spacing_um=1e9)
            t_base, _ = timed(baseline(tree, sec), 1)
        depth = len(tree.levels)
        rows.append((n, sites, depth, t_map, t_floor, t_base))
    print(f"{'cylinders':>9} {'sites':>7} {'levels':>6} {'map s':>9} {'s/site':>9} {'growth':>7} "
          f"{'/floor':>7} {'baseline/map':>13}")
    prev = None
    for n, sites, depth, t_map, t_floor, t_base in rows:
        growth = f"{t_map / prev:7.2f}" if prev else "      -"
        base = f"{t_base / t_map:13.1f}" if t_base else "            -"
        print(f"{n:>9} {sites:>7} {depth:>6} {t_map:9.4f} {t_map / sites:9.2e} {growth} "
              f"{t_map / t_floor:7.1f} {base}")
        prev = t_map


if __name__ == "__main__":
    main()
