"""Whole-tree map and path profile: attenuation to and from the recording site along the tree.

The map evaluates every section at its ends and at points no farther apart than the chosen
spacing, for one frequency, in one pass over the tree (O(N)). The path profile gives the voltage
along the path from the recording site to the synapse, for current injected at the synapse and
at the soma, each normalised to its input site: for a point p between the soma and the synapse,
V_p/V_site = e^{U(site) − U(p)} (current at the site) and V_p/V_soma = e^{D(p)} (current at the
soma), in the notation of :mod:`sites`.
"""

import math

import numpy as np

from .sites import point_terms
from .topology import section_path

__all__ = ["map_points", "tree_map_logs", "path_points"]


def _pieces(length_um, spacing_um):
    return np.maximum(1, np.ceil(length_um / spacing_um - 1e-9)).astype(np.intp)


def map_points(tree, spacing_um):
    """Points (section, y) of the whole-tree map: every section end and interior points ≤ spacing apart.

    The first section of every branch also gets its proximal end, so each branch's curve starts
    at its branch point. Points are ordered by branch, then along it.

    Parameters
    ----------
    tree : Tree
        From :func:`somaward.tree.build_tree`.
    spacing_um : float
        Largest distance between neighbouring points on a section (µm); the scenario's
        ``map_spacing_um``.

    Returns
    -------
    sec : ndarray of int
        Section index of each point.
    y_um : ndarray
        Distance of each point from its section's proximal end (µm).
    """
    n = _pieces(tree.length_um, spacing_um)
    first = np.zeros(tree.n_sections, dtype=bool)
    for first_section, _ in tree.branch_sections:
        first[first_section] = True
    counts = n + first
    sec = np.repeat(np.arange(tree.n_sections), counts)
    start_j = np.repeat(np.where(first, 0, 1), counts)
    offsets = np.arange(len(sec)) - np.repeat(np.cumsum(counts) - counts, counts)
    j = start_j + offsets
    y = tree.length_um[sec] * j / n[sec]
    order = np.lexsort((y, tree.start_um[sec], tree.branch_of[sec]))
    return sec[order], y[order]


def tree_map_logs(sol, sec, y_um):
    """Log voltage ratios at the map points for the first Laplace variable of ``sol``.

    Parameters
    ----------
    sol : TreeSolution
        From :func:`somaward.tree.solve_tree` over the whole tree.
    sec : array of int
        Section index of each point (:func:`map_points`).
    y_um : array of float
        Distance of each point from its section's proximal end (µm).

    Returns
    -------
    up, down : ndarray
        ln(V_root/V_P) for current at each point P, and ln(V_P/V_root) for current at the root
        (:func:`somaward.sites.point_terms`).
    """
    t = point_terms(sol, sec, y_um)
    return t["up"][:, 0], t["down"][:, 0]


def path_points(tree, sec, y_um, spacing_um):
    """Points from the recording site out to the point (``sec``, ``y_um``), ≤ spacing apart.

    Parameters
    ----------
    tree : Tree
        From :func:`somaward.tree.build_tree`.
    sec : int
        Section of the end point (the synapse's).
    y_um : float
        Distance of the end point from that section's proximal end (µm).
    spacing_um : float
        Largest distance between neighbouring points (µm).

    Returns
    -------
    sec : ndarray of int
        Section index of each point, starting with the recording site (distance 0 on the first
        section of the path).
    y_um : ndarray
        Distance of each point from its section's proximal end (µm).
    """
    chain = section_path(tree, sec)
    out_sec, out_y = [chain[0]], [0.0]
    for i in chain:
        end_um = float(y_um) if i == int(sec) else float(tree.length_um[i])
        if end_um <= 0.0:
            continue
        n = max(1, math.ceil(end_um / spacing_um - 1e-9))
        out_sec.extend([i] * n)
        out_y.extend(end_um * j / n for j in range(1, n + 1))
    return np.array(out_sec, dtype=np.intp), np.array(out_y)
