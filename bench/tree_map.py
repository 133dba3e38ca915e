"""Benchmark: whole-tree attenuation map on random trees of 10² … 10⁵ sections, chains and reconstruction-like trees.

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

A second table (issue 11) times deep trees, where the passes follow the branching and compose
each unbranched run: chains (one branch of 10³, 10⁴, 10⁵ cylinders 0.2 µm long, diameters
alternating 1 and 1.5 µm, so L ≈ 35 at 10⁵) and reconstruction-like trees (runs of 50–500
cylinders 0.5–2 µm long between branch points, 10³–10⁵ cylinders). For each it prints the map's
time over the floor (cosh + sinh over as many values as the map has sites), its growth per
decade, one whole ``somaward.solve`` (soma, synapse at the far end of the deepest path, default
frequencies) over the floor × the number of Laplace variables the solve evaluates (the
frequencies, the complex step and 0 Hz; the Python work per cylinder, validation and report
assembly, counts too), and the peak memory traced by tracemalloc during that solve.
Targets (issue 11): map ≤ 30× the floor at 10⁵; the chain's solve ≤ 100× its floor; growth
≤ 13× per decade; memory growing no faster than the cylinder count.
"""

import argparse
import time
import tracemalloc

import numpy as np

import somaward
from somaward.maps import map_points, tree_map_logs
from somaward.scenario import default_frequencies_hz
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


def chain_branches(n_sections, rng):
    """One branch of n cylinders 0.2 µm long, diameters alternating 1 and 1.5 µm (rng unused)."""
    del rng
    cyl = [{"length": 0.2, "diameter": 1.0 if i % 2 else 1.5} for i in range(n_sections)]
    return [{"id": "chain", "parent": None, "cylinders": cyl, "end": "sealed"}]


def reconstruction_branches(n_sections, rng):
    """Runs of 50–500 short cylinders (0.5–2 µm) between branch points, tapering diameters."""
    branches, total = [], 0
    while total < n_sections:
        m = int(min(rng.integers(50, 501), max(n_sections - total, 1)))
        parent = None if not branches else branches[int(rng.integers(len(branches)))]["id"]
        d0 = float(rng.uniform(0.8, 3.0))
        secs = [{"length": float(rng.uniform(0.5, 2.0)), "diameter": d0 * (1 - 0.5 * j / m)} for j in range(m)]
        branches.append({"id": f"r{len(branches)}", "parent": parent, "cylinders": secs})
        total += m
    has_child = {b["parent"] for b in branches}
    for b in branches:
        if b["id"] not in has_child:
            b["end"] = "sealed"
    return branches


def far_synapse(branches):
    """The terminal farthest from the soma by path length, at its distal end."""
    by_id = {b["id"]: b for b in branches}
    own = {b["id"]: sum(c["length"] for c in b["cylinders"]) for b in branches}
    reach = {}
    for b in branches:                      # parents come first in these lists
        reach[b["id"]] = own[b["id"]] + (reach[b["parent"]] if b["parent"] else 0.0)
    tip = max((i for i in by_id if "end" in by_id[i]), key=reach.get)
    return {"branch": tip, "distance": own[tip] * (1 - 1e-9)}        # (a sum's rounding kept inside)


def solve_scenario(branches):
    return {"membrane": MEMBRANE, "soma": SOMA, "branches": branches, "synapse": far_synapse(branches)}


def deep_rows(kind, make, sizes, rng, repeat):
    rows = []
    for n in sizes:
        branches = make(n, rng)
        tree = build_tree(branches, MEMBRANE, SOMA)
        t_map, (sites, _, _) = timed(lambda tree=tree: engine_map(tree), repeat)
        t_floor, _ = timed(floor(sites, rng), max(repeat, 3))
        sc = solve_scenario(branches)
        t_solve, _ = timed(lambda sc=sc: somaward.solve(sc), 1)
        tracemalloc.start()
        somaward.solve(sc)
        peak = tracemalloc.get_traced_memory()[1]
        tracemalloc.stop()
        n_s = len(default_frequencies_hz()) + 2          # the frequencies, the complex step, 0 Hz
        rows.append((kind, n, sites, tree.n_sections, t_map, t_floor, t_solve, n_s, peak))
    return rows


def print_deep(rows):
    print(f"\n{'tree':>14} {'cylinders':>9} {'sites':>7} {'map s':>8} {'/floor':>7} {'growth':>7} "
          f"{'solve s':>8} {'/(floor·F)':>10} {'F':>3} {'peak MB':>8} {'MB/10³ cyl':>10}")
    prev = {}
    for kind, _n, sites, n_sec, t_map, t_floor, t_solve, n_s, peak in rows:
        growth = f"{t_map / prev[kind]:7.2f}" if kind in prev else "      -"
        prev[kind] = t_map
        print(f"{kind:>14} {n_sec:>9} {sites:>7} {t_map:8.4f} {t_map / t_floor:7.1f} {growth} "
              f"{t_solve:8.2f} {t_solve / (t_floor * n_s):10.1f} {n_s:>3} {peak / 1e6:8.1f} "
              f"{peak / 1e6 / (n_sec / 1e3):10.2f}")
    by_kind = {}
    for kind, n, _, _, _, _, t_solve, _, _ in rows:
        by_kind.setdefault(kind, []).append((n, t_solve))
    for kind, pts in by_kind.items():
        steps = [f"{b / a:.1f}×" for (_, a), (_, b) in zip(pts, pts[1:], strict=False)]
        print(f"{kind}: whole solve growth per decade {', '.join(steps) or '-'}")


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", default="100,1000,10000,100000")
    ap.add_argument("--deep-sizes", default="1000,10000,100000")
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--seed", type=int, default=1)
    args = ap.parse_args(argv)
    rng = np.random.default_rng(args.seed)
    rows = []
    for n in [int(s) for s in args.sizes.split(",") if s]:
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
    deep = [int(s) for s in args.deep_sizes.split(",") if s]
    if deep:
        rows = deep_rows("chain", chain_branches, deep, rng, args.repeat)
        rows += deep_rows("reconstruction", reconstruction_branches, deep, rng, args.repeat)
        print_deep(rows)


if __name__ == "__main__":
    main()
