"""Values at points of a solved tree: input and transfer impedance, attenuation both ways.

A point is (section index, distance y in µm from the section's proximal end). The recording
site itself is the point (any root section, 0). For a point P in section i at electrotonic
distance Y = y/λ_i from its proximal end (notation of :mod:`cable` and :mod:`tree`):

* ln(V_P/V_root), current at the root:  D_parent − kY + ln(1 + Γ e^{−2k(L−Y)}) − ln(1 + Γ e^{−2kL})
* ln(V_root/V_P), current at P:          U_parent − kY + ln(1 + Γ') − ln(1 + Γ' e^{−2kY})
* admittance at P: Y0(1 − Γe^{−2k(L−Y)})/(1 + Γe^{−2k(L−Y)}) + Y0(1 − Γ'e^{−2kY})/(1 + Γ'e^{−2kY})

so soma→site attenuation is e^{D}, site→soma attenuation e^{U}, the input impedance 1/Y_P and
the transfer impedance Z_in(P)·e^{U} (Rall & Rinzel 1973, Biophys J 13:648 for the asymmetry
A_site→soma / A_soma→site = Z_in,soma / Z_in,site that these satisfy).
"""

import numpy as np

from . import cable
from .topology import section_path

__all__ = ["point_terms", "transfer_log"]


def _parent_rows(sol, sec, table):
    p = sol.tree.parent[sec]
    base = table[np.maximum(p, 0)]
    return np.where((p < 0)[:, None], 0.0, base)


def point_terms(sol, sec, y_um):
    """Log voltage ratios and node admittance at points (``sec[j]``, ``y_um[j]``) of a solved tree.

    The formulas of the module docstring (Rall 1959; Rall 1977, in the bounded form of
    :mod:`somaward.cable`): soma→site from current injected at the root, site→soma from current
    injected at the point, two separate injections.

    Parameters
    ----------
    sol : TreeSolution
        From :func:`somaward.tree.solve_tree`; with a ``path``, only points on it.
    sec : int or array of int
        Section index of each point.
    y_um : float or array of float
        Distance of each point from its section's proximal end (µm); clipped to the section.

    Returns
    -------
    dict of (P, F) arrays
        ``down`` = ln(V_P/V_root) for current at the root; ``up`` = ln(V_root/V_P) for current
        at P (real parts in nepers, imaginary parts phases in rad); ``y_node_uS`` = total
        admittance at P (µS; inf at a killed end).
    """
    t = sol.tree
    sec = np.atleast_1d(np.asarray(sec, dtype=np.intp))
    y_um = np.clip(np.atleast_1d(np.asarray(y_um, dtype=float)), 0.0, t.length_um[sec])   # rounding of j·ℓ/n
    lam = t.lambda_um[sec]
    ky = (y_um / lam)[:, None] * sol.propagation[None, :]
    kr = ((t.length_um[sec] - y_um) / lam)[:, None] * sol.propagation[None, :]
    mr, my = np.expm1(-2.0 * kr), np.expm1(-2.0 * ky)
    y0, m = sol.y0_uS[sec], sol.round_trip_m1[sec]
    gam, opg, omg = sol.gamma_distal[sec], sol.one_plus_gamma_distal[sec], sol.one_minus_gamma_distal[sec]
    gup, opu, omu = sol.gamma_proximal[sec], sol.one_plus_gamma_proximal[sec], sol.one_minus_gamma_proximal[sec]
    down = _parent_rows(sol, sec, sol.down_log) + cable.log_voltage_ratio(ky, gam, opg, mr, m)
    zero = np.zeros_like(my)
    up = _parent_rows(sol, sec, sol.up_log) + cable.log_voltage_ratio(ky, gup, opu, zero, my)
    with np.errstate(divide="ignore", invalid="ignore"):
        y_down = cable.through_admittance(y0, gam, omg, opg, mr)
    y_up = cable.through_admittance(y0, gup, omu, opu, my)
    y_node = np.where(np.isfinite(y_down), y_down, np.inf) + y_up
    return {"down": down, "up": up, "y_node_uS": y_node}


def transfer_log(sol, a, b):
    """ln Z_ab: the voltage at point ``b`` per unit current injected at point ``a``, shape (F,).

    Computed for the injection at ``a``: Z_aa times the voltage ratio along the path a → c → b,
    c the lowest common point, going proximally from a (ratios with the loads Yup) and distally
    to b (ratios set by the distal subtrees). Z_ab = Z_ba is then reciprocity (Koch 1999 ch. 3;
    check S6), which nothing here assumes.

    Parameters
    ----------
    sol : TreeSolution
        From :func:`somaward.tree.solve_tree` over the whole tree (no ``path``).
    a, b : (int, float)
        The injection point and the recording point, each (section index, distance in µm from
        the section's proximal end).

    Returns
    -------
    ndarray
        ln Z_ab (Z in MΩ; imaginary part the phase in rad), one per Laplace variable.
    """
    t = sol.tree
    (sa, ya), (sb, yb) = a, b
    terms = point_terms(sol, [sa, sb], [ya, yb])
    up, down, y_node = terms["up"], terms["down"], terms["y_node_uS"]
    anc_a, anc_b = section_path(t, sa)[::-1], section_path(t, sb)
    common = next((s for s in anc_a if s in set(anc_b)), None)
    base = -np.log(y_node[0])
    if common is None:                      # different stems: c is the recording site
        return base + up[0] + down[1]
    if common == sa and (sa != sb or ya <= yb):   # b lies distal to a: c = a
        return base + down[1] - down[0]
    if common == sb:                              # a lies distal to b: c = b
        return base + up[0] - up[1]
    c = point_terms(sol, [common], [t.length_um[common]])
    return base + up[0] - c["up"][0] + down[1] - c["down"][0]
