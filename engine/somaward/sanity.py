"""Physiological plausibility warnings: odd but legal values are warned about, never rejected.

Ranges (common practice, no single source): Ri ≈ 70–300 Ω·cm; Rm ≈ 5 000–200 000 Ω·cm²;
Cm ≈ 0.5–1.5 µF/cm² (≈ 0.9 µF/cm² measured: Gentet, Stuart & Clements 2000, Biophys J 79:314);
dendrite diameters 0.3–10 µm; soma diameters 5–60 µm. A specific Rm below ~1 000 Ω·cm² or a Cm
above ~5 µF/cm² is almost surely a whole-cell input resistance (MΩ) or capacitance (pF) entered
under the specific name.

Each warning is built from one constant below, and the same constant decides when it fires, so
the range a message states is the range outside which it fires (bounds themselves are usual).
"""

__all__ = ["membrane_warnings", "geometry_warnings", "electrotonic_warnings",
           "RM_USUAL", "RM_SLIP", "CM_USUAL", "CM_SLIP", "RI_USUAL", "DIAMETER_USUAL", "SOMA_DIAMETER_USUAL",
           "ELECTROTONIC_LENGTH_USUAL", "ELECTROTONIC_LENGTH_WARN"]

RM_USUAL = (5000.0, 200000.0)          # Ω·cm²
RM_SLIP = 1000.0                        # Ω·cm²: below this, a whole-cell MΩ typed as Rm
CM_USUAL = (0.5, 1.5)                   # µF/cm²
CM_SLIP = 5.0                           # µF/cm²: above this, a whole-cell pF typed as Cm
RI_USUAL = (70.0, 300.0)                # Ω·cm
DIAMETER_USUAL = (0.3, 10.0)            # µm, dendrites
SOMA_DIAMETER_USUAL = (5.0, 60.0)       # µm
ELECTROTONIC_LENGTH_USUAL = (0.5, 1.5)  # whole-neuron L
ELECTROTONIC_LENGTH_WARN = 2 * ELECTROTONIC_LENGTH_USUAL[1]   # a path beyond twice the usual upper end


def _n(x):
    """A bound as written in a message: 5 000, 0.5, 200 000."""
    return f"{x:,g}".replace(",", " ")


def _span(bounds):
    return f"{_n(bounds[0])}–{_n(bounds[1])}"


def _outside(x, bounds):
    return x < bounds[0] or x > bounds[1]


def membrane_warnings(membrane, soma):
    """Warnings for membrane constants outside their usual ranges, and for whole-cell values typed as specific ones.

    Parameters
    ----------
    membrane : dict
        The validated scenario's ``membrane``: ``Rm`` (Ω·cm²), ``Ri`` (Ω·cm), ``Cm`` (µF/cm²).
    soma : dict or None
        The validated scenario's ``soma`` (its own ``Rm``), or None.

    Returns
    -------
    list of str
        One line per odd value, each stating the range outside which it fires (module docstring).
    """
    rm_ohm_cm2, ri_ohm_cm, cm_uF_cm2 = membrane["Rm"], membrane["Ri"], membrane["Cm"]
    out = []
    if rm_ohm_cm2 < RM_SLIP:
        out.append(f"membrane.Rm = {rm_ohm_cm2:g} Ω·cm² is far below the usual {_span(RM_USUAL)} Ω·cm²: a whole-cell "
                   "input resistance in MΩ may have been entered as the specific membrane resistance.")
    elif _outside(rm_ohm_cm2, RM_USUAL):
        out.append(f"membrane.Rm = {rm_ohm_cm2:g} Ω·cm² is outside the usual {_span(RM_USUAL)} Ω·cm².")
    if cm_uF_cm2 > CM_SLIP:
        out.append(f"membrane.Cm = {cm_uF_cm2:g} µF/cm² is far above the usual {_span(CM_USUAL)} µF/cm²: a whole-cell "
                   "capacitance in pF may have been entered as the specific membrane capacitance.")
    elif _outside(cm_uF_cm2, CM_USUAL):
        out.append(f"membrane.Cm = {cm_uF_cm2:g} µF/cm² is outside the usual {_span(CM_USUAL)} µF/cm².")
    if _outside(ri_ohm_cm, RI_USUAL):
        out.append(f"membrane.Ri = {ri_ohm_cm:g} Ω·cm is outside the usual {_span(RI_USUAL)} Ω·cm.")
    if soma is not None and soma["Rm"] < RM_SLIP and soma["Rm"] != rm_ohm_cm2:
        out.append(f"soma.Rm = {soma['Rm']:g} Ω·cm² is far below the usual {_span(RM_USUAL)} Ω·cm²: a whole-cell "
                   "input resistance in MΩ may have been entered as the specific membrane resistance.")
    return out


def geometry_warnings(branches, soma=None):
    """Warnings for soma and dendrite diameters outside their usual ranges.

    Parameters
    ----------
    branches : list of dict
        The validated scenario's ``branches`` (diameters in µm, per cylinder).
    soma : dict or None, default None
        The validated scenario's ``soma`` (``diameter`` in µm), or None.

    Returns
    -------
    list of str
        At most one line for the soma and one naming the first few odd branches.
    """
    out = []
    if soma is not None and _outside(soma["diameter"], SOMA_DIAMETER_USUAL):
        out.append(f"soma.diameter = {soma['diameter']:g} µm is outside the usual {_span(SOMA_DIAMETER_USUAL)} µm "
                   "of a neuronal soma.")
    odd = []
    for b in branches:
        for s in b.get("cylinders", [b]):
            if _outside(s["diameter"], DIAMETER_USUAL):
                odd.append(f"branch {b['id']!r}: {s['diameter']:g} µm")
                break
    if odd:
        more = f" and {len(odd) - 3} more" if len(odd) > 3 else ""
        out.append(f"dendrite diameters outside the usual {_span(DIAMETER_USUAL)} µm: " + "; ".join(odd[:3])
                   + more + ".")
    return out


def electrotonic_warnings(terminal_x):
    """A warning for a path much longer than the usual whole-neuron L ≈ 0.5–1.5.

    Fires beyond :data:`ELECTROTONIC_LENGTH_WARN`, the threshold the message states (common
    practice, no source).

    Parameters
    ----------
    terminal_x : dict
        Terminal branch id → electrotonic distance X of its distal end (dimensionless), as the
        report's ``terminal_electrotonic_distance``.

    Returns
    -------
    list of str
        Empty, or one line naming the longest path.
    """
    if not terminal_x:
        return []
    longest = max(terminal_x, key=terminal_x.get)
    x_end = terminal_x[longest]
    if x_end > ELECTROTONIC_LENGTH_WARN:
        return [f"the path to {longest!r} is {x_end:.3g} space constants long, more than "
                f"{_n(ELECTROTONIC_LENGTH_WARN)} (twice the upper end of the usual whole-neuron electrotonic "
                f"length, {_span(ELECTROTONIC_LENGTH_USUAL)}): check Rm, Ri and the diameters."]
    return []
