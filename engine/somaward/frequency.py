"""Frequency response at a site: attenuation both ways, impedances, phase and delays.

With V ∝ e^{iωt} the Laplace variable is s = iω; ``freq_hz`` is turned into s in 1/ms. Phases
are the imaginary parts of log-ratios summed section by section along the path (each term's
principal logarithm is continuous because |Γe^{−2κ}| < 1), so they are unwrapped by
construction. The phase delay is −φ/ω (Zador, Agmon-Snir & Segev 1995, J Neurosci 15:1669).

The centroid (transfer) delay of Agmon-Snir & Segev 1993 (J Neurophysiol 70:2066) between the
voltage at the input site and at the recording site is −d/ds ln A(s) at s = 0, A the attenuation
ratio. It is computed by the complex step, −Im ln A(ih)/h with h ≪ 1/τ: exact to O(h²) with no
subtractive cancellation, since ln A is real on the real axis (Squire & Trapp 1998, SIAM Rev
40:110). This is also the 0 Hz limit of the phase delay.
"""

import math

import numpy as np

from .sites import point_terms
from .topology import section_path
from .tree import solve_tree

__all__ = ["laplace_of_hz", "site_response", "centroid_delays_ms", "complex_step_per_ms", "CHUNK_VALUES"]

CHUNK_VALUES = 400_000       # sections × frequencies held in memory at once


def laplace_of_hz(freq_hz):
    """The Laplace variable s = i·2πf of a sinusoid, in 1/ms.

    Parameters
    ----------
    freq_hz : float or array
        Frequency f (Hz).

    Returns
    -------
    complex or ndarray
        s (1/ms), purely imaginary.

    Examples
    --------
    >>> complex(laplace_of_hz(1000.0 / (2 * 3.141592653589793)))
    1j
    """
    return 2j * math.pi * np.asarray(freq_hz, dtype=float) * 1e-3


def site_response(tree, sec, y_um, s_per_ms):
    """Complex logs at one site for Laplace variables ``s_per_ms``, computed in chunks of them.

    The down pass runs along the path to the site only (module docstring); both passes compose
    unbranched runs (:mod:`somaward.runs`), so a chunk costs O(N) work in a number of numpy steps
    set by the branching, not the cylinder count. Chunks of :data:`CHUNK_VALUES` sections ×
    frequencies bound the memory, whatever the number of frequencies.

    Parameters
    ----------
    tree : Tree
        From :func:`somaward.tree.build_tree`.
    sec : int
        Section of the site.
    y_um : float
        Distance of the site from the section's proximal end (µm).
    s_per_ms : array_like
        Laplace variables s (1/ms), e.g. :func:`laplace_of_hz` of the frequencies.

    Returns
    -------
    dict of (F,) complex arrays
        ``up`` = ln A_site→soma, ``down`` = ln A_soma→site (A the voltage ratio, ≤ 1 in modulus),
        ``ln_z_site`` = ln Z_in at the site, ``ln_z_root`` = ln Z_in at the recording site (Z in
        MΩ; imaginary parts the phases in rad, unwrapped).
    """
    s = np.atleast_1d(np.asarray(s_per_ms, dtype=complex))
    chunk = max(1, CHUNK_VALUES // max(tree.n_sections, 1))
    path = section_path(tree, sec)
    parts = []
    for lo in range(0, len(s), chunk):
        sol = solve_tree(tree, s[lo:lo + chunk], path=path)
        t = point_terms(sol, [sec], [y_um])
        parts.append((t["up"][0], t["down"][0], -np.log(t["y_node_uS"][0]), -np.log(sol.y_root_uS)))
    keys = ("up", "down", "ln_z_site", "ln_z_root")
    return {k: np.concatenate([p[j] for p in parts]) for j, k in enumerate(keys)}


def complex_step_per_ms(tree):
    """The step h of the complex-step derivative at s = 0, in 1/ms: h·τ = 1e-10 for the slowest τ.

    The slowest of the membrane time constant, the soma's and each lumped load's C/(G + G∞), so
    that h is ≪ 1/τ for every pole near the origin (Squire & Trapp 1998, SIAM Rev 40:110).

    Parameters
    ----------
    tree : Tree
        From :func:`somaward.tree.build_tree`.

    Returns
    -------
    float
        h (1/ms).
    """
    return 1e-10 / max(tree.tau_ms, _slowest_load_ms(tree), 1e-6)


def centroid_delays_ms(tree, sec, y_um, response=None):
    """Centroid transfer delays site→soma and soma→site, by the complex step at s = 0 (ms).

    The delay between the centroids of the input and the output voltage, −d/ds ln A(s) at s = 0
    for the voltage ratio A (Agmon-Snir & Segev 1993, J Neurophysiol 70:2066); exact to O(h²)
    as −Im ln A(ih)/h, with no subtractive cancellation. Also the 0 Hz limit of the phase delay.

    Parameters
    ----------
    tree : Tree
        From :func:`somaward.tree.build_tree`.
    sec : int
        Section of the site.
    y_um : float
        Distance of the site from the section's proximal end (µm).
    response : dict, optional
        A :func:`site_response` at s = i·h, h from :func:`complex_step_per_ms`, if the caller has
        computed it beside other frequencies; computed here when None (default).

    Returns
    -------
    site_to_soma_ms, soma_to_site_ms : float
    """
    h = complex_step_per_ms(tree)
    r = site_response(tree, sec, y_um, [1j * h]) if response is None else response
    return float(-r["up"][0].imag / h), float(-r["down"][0].imag / h)


def _slowest_load_ms(tree):
    """Slowest time constant of a lumped load, C/(G + G∞ of its section): finite even for G = 0."""
    t = tree.end_c_nF / (tree.end_g_uS + tree.g_inf_uS)
    soma_t = tree.soma_c_nF / tree.soma_g_uS if tree.soma_g_uS > 0 else 0.0
    return float(max(t.max(initial=0.0), soma_t))
