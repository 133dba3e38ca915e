"""Physiological plausibility warnings: odd but legal values are warned about, never rejected.

Ranges (common practice, no single source): Ri ≈ 70–300 Ω·cm; Rm ≈ 5 000–200 000 Ω·cm²;
dendrite diameters 0.3–10 µm. A specific Rm below ~1 000 Ω·cm² or a Cm above ~5 µF/cm² is almost
surely a whole-cell input resistance (MΩ) or capacitance (pF) entered under the specific name.
Cm ≈ 0.9 µF/cm² (Gentet, Stuart & Clements 2000, Biophys J 79:314).
"""

__all__ = ["membrane_warnings", "geometry_warnings", "electrotonic_warnings"]


def membrane_warnings(membrane, soma):
    rm, ri, cm = membrane["Rm"], membrane["Ri"], membrane["Cm"]
    out = []
    if rm < 1000:
        out.append(f"membrane.Rm = {rm:g} Ω·cm² is far below the usual 5 000–200 000 Ω·cm²: a whole-cell "
                   "input resistance in MΩ may have been entered as the specific membrane resistance.")
    elif rm < 5000 or rm > 200000:
        out.append(f"membrane.Rm = {rm:g} Ω·cm² is outside the usual 5 000–200 000 Ω·cm².")
    if cm > 5:
        out.append(f"membrane.Cm = {cm:g} µF/cm² is far above the usual ≈0.9 µF/cm²: a whole-cell "
                   "capacitance in pF may have been entered as the specific membrane capacitance.")
    elif cm < 0.3 or cm > 2:
        out.append(f"membrane.Cm = {cm:g} µF/cm² is outside the usual 0.5–1.5 µF/cm².")
    if ri < 70 or ri > 300:
        out.append(f"membrane.Ri = {ri:g} Ω·cm is outside the usual 70–300 Ω·cm.")
    if soma is not None and soma["Rm"] < 1000 and soma["Rm"] != rm:
        out.append(f"soma.Rm = {soma['Rm']:g} Ω·cm² is far below the usual range: a whole-cell input "
                   "resistance in MΩ may have been entered as the specific membrane resistance.")
    return out


def geometry_warnings(branches, soma=None):
    out = []
    if soma is not None and not 5 <= soma["diameter"] <= 60:
        out.append(f"soma.diameter = {soma['diameter']:g} µm is outside the usual 5–60 µm of a neuronal soma.")
    odd = []
    for i, b in enumerate(branches):
        for s in b.get("cylinders", [b]):
            if not 0.3 <= s["diameter"] <= 10:
                odd.append(f"branches[{i}] ({b['id']}): {s['diameter']:g} µm")
                break
    if odd:
        more = f" and {len(odd) - 3} more" if len(odd) > 3 else ""
        out.append("dendrite diameters outside the usual 0.3–10 µm: " + "; ".join(odd[:3]) + more + ".")
    return out


def electrotonic_warnings(terminal_x):
    """A cell much longer than the usual whole-neuron L ≈ 0.5–1.5 (common practice, no source)."""
    if not terminal_x:
        return []
    longest = max(terminal_x, key=terminal_x.get)
    x = terminal_x[longest]
    if x > 3:
        return [f"the path to {longest!r} is {x:.3g} space constants long, beyond the usual whole-neuron "
                "electrotonic length of 0.5–1.5: check Rm, Ri and the diameters."]
    return []
