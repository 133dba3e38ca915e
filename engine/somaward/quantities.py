"""Every reported quantity, defined once: its report key, label, unit, definition and precision.

The page, the CLI and every export render their words from this module, so the same number has
the same name everywhere. A label is written once in a small markup and rendered three ways:
``_[x]`` is a subscript, ``^[x]`` a superscript, ``{rec}`` the recording site ("soma", or "root"
for a tree without a soma) and ``{item}`` the branch id of a per-branch entry.

Keys are report paths: dots between object keys, ``[]`` for "every item of a list" and ``.*``
for "every entry of a per-branch object" (``lambda_um.*`` is ``report["lambda_um"][branch_id]``).

The vocabulary of the trade used throughout (Rall & Rinzel 1973, Biophys J 13:648):

* **voltage ratio** (≤ 1): the voltage at the far site over the voltage at the site where the
  current is injected, always written with its two sites, V_soma/V_syn or V_syn/V_soma;
* **attenuation factor** (≥ 1): the inverse of the voltage ratio;
* **log attenuation**: ln of the attenuation factor, in nepers;
* **% reaching**: 100 × the voltage ratio.

Examples
--------
>>> label("attenuation.steady_state.site_to_soma")
'Voltage ratio V_soma/V_syn, synapse → soma'
>>> label("attenuation.steady_state.site_to_soma", "root", "html")
'Voltage ratio V<sub>root</sub>/V<sub>syn</sub>, synapse → root'
>>> unit("transfer_resistance_Mohm")
'MΩ'
>>> format_value(0.123456789, "attenuation.steady_state.site_to_soma")
'0.1235'
"""

import re
from dataclasses import dataclass

__all__ = ["Quantity", "QUANTITIES", "CYLINDER_CONSTANTS", "TERMS", "END_CONDITIONS", "TABLES", "CAUTIONS",
           "RECORDING_SITES",
           "canonical_key", "quantity", "label", "unit", "definition", "format_value", "render_markup",
           "latex_escape", "table_rows", "vocabulary", "input_fields", "input_label"]

RECORDING_SITES = ("soma", "root")


@dataclass(frozen=True)
class Quantity:
    """One reported quantity.

    Parameters
    ----------
    key : str
        Canonical report path (``[]`` for list items, ``.*`` for per-branch entries).
    label : str
        Label in the markup of this module (``_[sub]``, ``^[sup]``, ``{rec}``, ``{item}``).
    unit : str
        Unit in the report's unit system; "" for a dimensionless number or a text value.
    definition : str
        One sentence saying what the number is (same markup).
    digits : int
        Significant digits shown where the number is rounded for reading.
    percent : bool
        The report holds a fraction that is shown as a percentage (× 100, unit "%").
    """

    key: str
    label: str
    unit: str
    definition: str
    digits: int = 4
    percent: bool = False


def _q(key, label, unit, definition, digits=4, percent=False):
    return Quantity(key, label, unit, definition, digits, percent)


_SS = "attenuation.steady_state"
_FR = "frequency_response"
_EQ = "equivalent_cylinder"
_CMP = f"{_EQ}.comparison"

# Directions: (report name, input site, far site, words)
_DIRECTIONS = (
    ("site_to_soma", "syn", "{rec}", "synapse → {rec}", "the synapse", "the {rec}"),
    ("soma_to_site", "{rec}", "syn", "{rec} → synapse", "the {rec}", "the synapse"),
)


def _direction_quantities():
    out = []
    for name, a, b, words, at_in, at_far in _DIRECTIONS:
        ratio = f"V_[{b}]/V_[{a}]"
        out += [
            _q(f"{_SS}.{name}", f"Voltage ratio {ratio}, {words}", "",
               f"Steady voltage at {at_far} divided by the steady voltage at {at_in}, for current injected "
               f"at {at_in} (≤ 1)."),
            _q(f"{_SS}.{name}_fold", f"Attenuation factor V_[{a}]/V_[{b}], {words}", "",
               f"The inverse of the voltage ratio {ratio} (≥ 1; Rall & Rinzel 1973)."),
            _q(f"{_SS}.{name}_log", f"Log attenuation ln(V_[{a}]/V_[{b}]), {words}", "Np",
               "The natural logarithm of the attenuation factor, in nepers; it adds along a path "
               "(Zador, Agmon-Snir & Segev 1995)."),
            _q(f"{_SS}.{name}_percent", f"% of the voltage at {at_in} reaching {at_far}", "%",
               f"100 × the voltage ratio {ratio}, for a steady current injected at {at_in}.", 3),
            _q(f"{_FR}.{name}.magnitude", f"|{ratio}|, {words}", "",
               f"Magnitude of the voltage ratio {ratio} for a sinusoidal current injected at {at_in}."),
            _q(f"{_FR}.{name}.log_attenuation", f"Log attenuation ln|V_[{a}]/V_[{b}]|, {words}", "Np",
               f"ln of the attenuation factor for a sinusoidal current injected at {at_in}, in nepers."),
            _q(f"{_FR}.{name}.phase_deg", f"Phase of {ratio}, {words}", "°",
               f"Phase of the voltage at {at_far} relative to the voltage at {at_in}; negative is a lag.", 4),
            _q(f"{_FR}.{name}.phase_delay_ms", f"Phase delay, {words}", "ms",
               f"−φ/(2πf): how far the voltage at {at_far} lags the voltage at {at_in} at frequency f; at "
               "0 Hz, the centroid delay (Zador, Agmon-Snir & Segev 1995)."),
        ]
    return out


def _impedance_quantities():
    out = []
    for key, words, what in (
            ("transfer_impedance_Mohm", "Transfer impedance synapse ↔ {rec}",
             "voltage at one site per unit sinusoidal current injected at the other"),
            ("site_input_impedance_Mohm", "Input impedance at the synapse",
             "voltage at the synapse per unit sinusoidal current injected there"),
            ("soma_input_impedance_Mohm", "Input impedance at the {rec}",
             "voltage at the {rec} per unit sinusoidal current injected there")):
        out += [_q(f"{_FR}.{key}.magnitude", f"|{words}|", "MΩ", f"Magnitude of the {what}."),
                _q(f"{_FR}.{key}.phase_deg", f"Phase of the {words[0].lower()}{words[1:]}", "°",
                   f"Phase of the {what}; negative is a lag.")]
    return out


_X_DEF = "X = Σℓ/λ: the sum of each cylinder's length over its space constant, along the path from the {rec}."
_RHO_DEF = ("ρ = G_[dend]/G_[soma]: the input conductance of the dendritic tree, seen from the soma, over the "
            "conductance of the soma's own membrane (Rall 1959).")
_RT_DEF = ("R_[T]: the steady voltage at one site per unit current injected at the other; by reciprocity it is "
           "the same in both directions, so V_[{rec}]/V_[syn] = R_[T]/R_[syn] and V_[syn]/V_[{rec}] = "
           "R_[T]/R_[{rec}] (Rall & Rinzel 1973).")

_LIST = [
    _q("engine_version", "Engine version", "", "The version of the Somaward engine that computed the report."),
    _q("stamp.engine_version", "Engine version", "", "The version of the Somaward engine that computed the report."),
    _q("stamp.fingerprint", "Scenario fingerprint", "",
       "The first 12 hex digits of the SHA-256 of the validated scenario's canonical JSON: the same inputs "
       "always give the same fingerprint."),
    _q("stamp.text", "Stamp", "", "The engine version and the scenario fingerprint, as every exported block "
       "carries them."),
    _q("caution", "Caution", "", "What a passive-cable estimate leaves out."),
    _q("recording_site", "Recording site", "",
       "Where the voltage is recorded: the soma, or the root node where the stem branches meet when no soma "
       "is modelled."),
    _q("tau_m_ms", "Membrane time constant τ_[m]", "ms",
       "τ_[m] = R_[m]·C_[m], the time constant of the dendritic membrane (Hodgkin & Rushton 1946)."),
    _q("site.branch", "Branch of the synapse", "", "The id of the branch that holds the synapse."),
    _q("site.distance_um", "Synapse distance along its branch", "µm",
       "Distance of the synapse from its branch's proximal end."),
    _q("site.path_distance_um", "Synapse path distance from the {rec}", "µm",
       "Distance of the synapse from the {rec}, measured along the dendrites."),
    _q("site.electrotonic_distance", "Electrotonic distance X of the synapse", "", _X_DEF),
    _q("electrotonic_distance", "Electrotonic distance X of the synapse", "", _X_DEF),
    _q("site.cylinder", "Cylinder of the synapse's branch that holds it", "",
       "Which of its branch's uniform cylinders holds the synapse, counted from 1 at the branch's proximal end."),
    _q("site.lambda_um", "Space constant λ at the synapse", "µm",
       "λ = √(R_[m]·d/(4R_[i])) of the cylinder that holds the synapse (Rall 1977)."),
    _q("site.branch_electrotonic_length", "Electrotonic length L of the synapse's branch", "",
       "L = Σℓ/λ over the cylinders of the branch that holds the synapse."),
    _q("lambda_um.*", "Space constant λ of branch {item}", "µm",
       "λ = √(R_[m]·d/(4R_[i])) of the branch; for a branch of several cylinders, one value per cylinder."),
    _q("electrotonic_length.*", "Electrotonic length L of branch {item}", "",
       "L = Σℓ/λ over the cylinders of the branch."),
    _q("terminal_electrotonic_distance.*", "Electrotonic distance X of the end of branch {item}", "", _X_DEF),
    _q("cylinders.*[].length_um", "Length of the cylinder", "µm", "Length of one uniform cylinder of a branch."),
    _q("cylinders.*[].diameter_um", "Diameter of the cylinder", "µm",
       "Diameter of one uniform cylinder of a branch."),
    _q("cylinders.*[].lambda_um", "Space constant λ of the cylinder", "µm", "λ = √(R_[m]·d/(4R_[i]))."),
    _q("cylinders.*[].electrotonic_length", "Electrotonic length ℓ/λ of the cylinder", "",
       "The cylinder's length over its space constant."),
    _q("soma_input_resistance_Mohm", "Input resistance at the {rec}", "MΩ",
       "R_[{rec}]: the steady voltage at the {rec} per unit current injected there, with the whole tree "
       "attached."),
    _q("site_input_resistance_Mohm", "Input resistance at the synapse", "MΩ",
       "R_[syn]: the steady voltage at the synapse per unit current injected there."),
    _q("transfer_resistance_Mohm", "Transfer resistance synapse ↔ {rec}", "MΩ", _RT_DEF),
    _q("rho", "Dendritic-to-somatic conductance ratio ρ", "", _RHO_DEF),
    _q("rho_inf", "ρ_[∞], stems as semi-infinite cylinders", "",
       "ρ_[∞] = ΣG_[∞]/G_[soma]: ρ with each stem dendrite replaced by a semi-infinite cylinder of its own "
       "diameter (Rall 1969)."),
    _q("centroid_delay_ms", "Centroid delay synapse → {rec}", "ms",
       "Time from the centroid of the voltage at the synapse to the centroid of the voltage at the {rec}, the "
       "same for any input at the synapse (Agmon-Snir & Segev 1993)."),
    _q("centroid_delay_soma_to_site_ms", "Centroid delay {rec} → synapse", "ms",
       "Time from the centroid of the voltage at the {rec} to the centroid of the voltage at the synapse, for "
       "input at the {rec} (Agmon-Snir & Segev 1993)."),
    _q("soma.diameter_um", "Soma diameter", "µm", "Diameter of the isopotential spherical soma."),
    _q("soma.area_um2", "Soma membrane area πD^[2]", "µm²", "Membrane area of the spherical soma."),
    _q("soma.Rm_ohm_cm2", "Specific membrane resistance of the soma", "Ω·cm²",
       "R_[m] of the soma's membrane; equal to the dendritic R_[m] unless given."),
    _q("soma.resistance_Mohm", "Membrane resistance of the soma alone", "MΩ",
       "R_[m]/(πD^[2]): the resistance of the soma's own membrane, without the dendrites."),
    _q("soma.capacitance_pF", "Membrane capacitance of the soma alone", "pF", "C_[m]·πD^[2]."),
    _q("soma.tau_ms", "Time constant of the soma alone", "ms", "The soma's own R_[m]·C_[m]."),
    _q(f"{_FR}.frequencies_hz", "Frequency", "Hz", "Frequency of the sinusoidal current injected."),
    *_direction_quantities(),
    *_impedance_quantities(),
    _q("path_profile.path_distance_um", "Path distance from the {rec}", "µm",
       "Distance from the {rec} measured along the dendrites."),
    _q("path_profile.electrotonic_distance", "Electrotonic distance X from the {rec}", "", _X_DEF),
    _q("path_profile.branch", "Branch", "", "The branch that holds the point."),
    _q("path_profile.input_at_site", "V/V_[syn], current injected at the synapse", "",
       "Steady voltage at each point of the path from the {rec} to the synapse, over the synapse's own, for "
       "current injected at the synapse."),
    _q("path_profile.input_at_soma", "V/V_[{rec}], current injected at the {rec}", "",
       "Steady voltage at each point of the path from the {rec} to the synapse, over the {rec}'s own, for "
       "current injected at the {rec}."),
    _q("tree_map.frequency_hz", "Frequency of the whole-tree map", "Hz",
       "The frequency at which the map is computed (0 Hz: steady state)."),
    _q("tree_map.branch", "Branch", "", "The branch that holds the point."),
    _q("tree_map.distance_um", "Distance of the point along its branch", "µm",
       "Distance of the point from its branch's proximal end."),
    _q("tree_map.path_distance_um", "Path distance of the point from the {rec}", "µm",
       "Distance of the point from the {rec}, measured along the dendrites."),
    _q("tree_map.electrotonic_distance", "Electrotonic distance X of the point", "", _X_DEF),
    _q("tree_map.site_to_soma", "Voltage ratio V_[{rec}]/V_[point], point → {rec}", "",
       "Voltage at the {rec} over the voltage at the point, for current injected at the point."),
    _q("tree_map.soma_to_site", "Voltage ratio V_[point]/V_[{rec}], {rec} → point", "",
       "Voltage at the point over the voltage at the {rec}, for current injected at the {rec}."),
    _q("tree_map.site_to_soma_log", "Log attenuation ln(V_[point]/V_[{rec}]), point → {rec}", "Np",
       "ln of the attenuation factor from the point to the {rec}, in nepers."),
    _q("tree_map.soma_to_site_log", "Log attenuation ln(V_[{rec}]/V_[point]), {rec} → point", "Np",
       "ln of the attenuation factor from the {rec} to the point, in nepers."),
    # --- the equivalent cylinder (Rall 1962; Rall 1964) ---
    _q(f"{_EQ}.tolerance", "Tolerance on each departure", "%",
       "Largest relative departure from the equivalent-cylinder conditions still counted as met.", 3, True),
    _q(f"{_EQ}.meets_conditions", "Conditions for an equivalent cylinder met", "",
       "Whether every branch point and diameter step obeys the 3/2 power rule, every terminal lies at the same "
       "X and all ends are alike, within the tolerance (Rall 1962; Rall 1964)."),
    _q(f"{_EQ}.end_condition", "End condition of the terminals", "",
       "The terminals' common end condition, or mixed."),
    _q(f"{_EQ}.max_rule_departure", "Largest departure from the 3/2 power rule", "%",
       "The largest |ratio − 1| over branch points and diameter steps.", 3, True),
    _q(f"{_EQ}.branch_points[].parent", "At the end of", "", "The parent branch whose distal end is the branch point."),
    _q(f"{_EQ}.branch_points[].children", "Children", "", "The child branches that start at the branch point."),
    _q(f"{_EQ}.branch_points[].parent_diameter_um", "d_[parent]", "µm",
       "Diameter of the parent branch's last cylinder."),
    _q(f"{_EQ}.branch_points[].child_diameters_um", "d_[child]", "µm",
       "Diameter of each child branch's first cylinder."),
    _q(f"{_EQ}.branch_points[].ratio", "d_[parent]^[3/2]/Σd_[child]^[3/2]", "",
       "The 3/2 power rule holds where this ratio is 1 (Rall 1962)."),
    _q(f"{_EQ}.branch_points[].departure", "Departure from the 3/2 power rule", "%",
       "ratio − 1.", 3, True),
    _q(f"{_EQ}.branch_points[].ok", "Within tolerance", "", "Whether |ratio − 1| is within the tolerance."),
    _q(f"{_EQ}.cylinder_joins[].branch", "Branch", "", "The branch with a diameter step between two cylinders."),
    _q(f"{_EQ}.cylinder_joins[].cylinder", "Cylinder after the step", "",
       "The step lies between this cylinder and the one before it, counted from 1 at the branch's proximal end."),
    _q(f"{_EQ}.cylinder_joins[].diameter_before_um", "d before the step", "µm", "Diameter before the step."),
    _q(f"{_EQ}.cylinder_joins[].diameter_after_um", "d after the step", "µm", "Diameter after the step."),
    _q(f"{_EQ}.cylinder_joins[].ratio", "(d_[before]/d_[after])^[3/2]", "",
       "A diameter step is a branch point with one child; the 3/2 power rule holds where this ratio is 1."),
    _q(f"{_EQ}.cylinder_joins[].departure", "Departure from the 3/2 power rule", "%", "ratio − 1.", 3, True),
    _q(f"{_EQ}.cylinder_joins[].ok", "Within tolerance", "", "Whether |ratio − 1| is within the tolerance."),
    _q(f"{_EQ}.terminals[].branch", "Terminal branch", "", "A branch without children."),
    _q(f"{_EQ}.terminals[].electrotonic_distance", "X at the terminal's end", "", _X_DEF),
    _q(f"{_EQ}.terminals[].membrane_area_um2", "Membrane area of the terminal branch", "µm²",
       "Its weight in the cylinder's L."),
    _q(f"{_EQ}.terminals[].departure", "X/L − 1", "%",
       "How far the terminal's X departs from the cylinder's L.", 3, True),
    _q(f"{_EQ}.terminals[].end", "End condition", "", "The terminal's end condition."),
    _q(f"{_EQ}.terminals[].ok", "Within tolerance", "", "Whether X/L − 1 is within the tolerance and the end "
       "is like the others."),
    _q(f"{_EQ}.terminal_electrotonic_distance_min", "Smallest terminal X", "", _X_DEF),
    _q(f"{_EQ}.terminal_electrotonic_distance_max", "Largest terminal X", "", _X_DEF),
    _q(f"{_EQ}.terminal_electrotonic_distance_spread", "Spread of terminal X (largest − smallest)", "", _X_DEF),
    _q(f"{_EQ}.terminal_electrotonic_distance_relative_spread", "Spread of terminal X relative to L", "%",
       "(largest − smallest terminal X)/L.", 3, True),
    _q(f"{_EQ}.cylinder.diameter_um", "Equivalent cylinder diameter d_[eq] = (Σd_[stem]^[3/2])^[2/3]", "µm",
       "The diameter of the one cylinder that stands for the tree: the 3/2-power sum over the stems (Rall 1962)."),
    _q(f"{_EQ}.cylinder.electrotonic_length", "Equivalent cylinder electrotonic length L", "",
       "The membrane-area-weighted mean of the terminals' X; with infinite ends, the largest terminal X."),
    _q(f"{_EQ}.cylinder.electrotonic_length_min", "Smallest terminal X", "", _X_DEF),
    _q(f"{_EQ}.cylinder.electrotonic_length_max", "Largest terminal X", "", _X_DEF),
    _q(f"{_EQ}.cylinder.lambda_um", "Space constant λ of the equivalent cylinder", "µm",
       "λ = √(R_[m]·d_[eq]/(4R_[i]))."),
    _q(f"{_EQ}.cylinder.length_um", "Equivalent cylinder length L·λ", "µm", "The cylinder's physical length."),
    _q(f"{_EQ}.cylinder.end", "Far end of the equivalent cylinder", "", "The end condition of the cylinder."),
    _q(f"{_EQ}.cylinder.stems", "Stems joined at the {rec}", "", "The branches that leave the {rec}."),
    _q(f"{_EQ}.cylinder.curve.electrotonic_distance", "Electrotonic distance X along the cylinder", "", _X_DEF),
    _q(f"{_EQ}.cylinder.curve.soma_to_site", "Voltage ratio V_[X]/V_[{rec}] on the cylinder", "",
       "Steady voltage at X over the voltage at the {rec}, for current injected at the {rec}: cosh(L − X)/cosh L "
       "for a sealed end."),
    _q(f"{_CMP}.electrotonic_distance", "Electrotonic distance X of the synapse", "", _X_DEF),
    _q(f"{_CMP}.site_beyond_cylinder", "Synapse beyond the cylinder's end", "",
       "Whether the synapse's X exceeds the cylinder's L, so that the cylinder has no point there."),
    _q(f"{_CMP}.note", "Note on the comparison", "", "How the full tree and the cylinder are compared."),
    _q(f"{_CMP}.not_given_by_cylinder.note", "Why the cylinder does not give these", "",
       "A point on the cylinder stands for the same input spread over every branch at that X."),
    _q(f"{_EQ}.terminals", "Terminals: electrotonic distance X of each end", "",
       "One row per terminal branch: its X from the {rec}, its departure from L and its end condition."),
    _q(f"{_EQ}.cylinder", "The equivalent cylinder", "",
       "The one cylinder that stands for the whole tree (Rall 1962; Rall 1964)."),
    _q(_CMP, "Full tree and equivalent cylinder at the synapse", "",
       "The full tree's values beside the cylinder's at the synapse's X, at 0 Hz."),
    _q(f"{_CMP}.not_given_by_cylinder", "From the full tree only", "",
       "Values at the synapse that the cylinder does not give, taken from the full tree."),
    _q(f"{_EQ}.branch_points", "3/2 power rule at each branch point", "",
       "One row per branch point (Rall 1962)."),
    _q(f"{_EQ}.cylinder_joins", "Diameter steps inside a branch", "",
       "One row per step in diameter between two cylinders of a branch."),
    _q(f"{_EQ}.messages", "What breaks the conditions", "", "One sentence per broken condition."),
    _q(f"{_EQ}.conditions.three_halves_rule_at_branch_points", "3/2 power rule at every branch point", "",
       "d_[parent]^[3/2] = Σd_[child]^[3/2] at every branch point, within the tolerance (Rall 1962)."),
    _q(f"{_EQ}.conditions.three_halves_rule_at_cylinder_joins", "No diameter step inside a branch", "",
       "A step between two cylinders of a branch is checked as a branch point with one child."),
    _q(f"{_EQ}.conditions.equal_terminal_electrotonic_distance",
       "Every terminal at the same electrotonic distance X", "",
       "Every terminal's X within the tolerance of the cylinder's L."),
    _q(f"{_EQ}.conditions.equal_terminal_electrotonic_distance_required", "Equal terminal X needed", "",
       "Equal terminal X is not needed when every end goes on for ever."),
    _q(f"{_EQ}.conditions.uniform_membrane", "The same membrane and cytoplasm everywhere", "",
       "A scenario holds one R_[m], R_[i] and C_[m] for the whole tree, so this condition always holds."),
    _q(f"{_EQ}.conditions.like_ends", "Alike ends", "",
       "All ends sealed, all killed, all going on for ever, or lumped loads in proportion to d^[3/2]."),
    _q(f"{_EQ}.breaks.branch_points", "Branch points that break the 3/2 power rule", "",
       "The parent branches of the failing branch points."),
    _q(f"{_EQ}.breaks.cylinder_joins", "Branches with a failing diameter step", "",
       "The branches whose diameter steps break the 3/2 power rule."),
    _q(f"{_EQ}.breaks.terminals", "Terminals that break the conditions", "",
       "Terminals whose X or end condition departs from the others."),
    _q(f"{_EQ}.terminals[].x_ok", "X within tolerance", "", "Whether |X/L − 1| is within the tolerance."),
    _q(f"{_EQ}.terminals[].end_ok", "End like the others", "",
       "Whether the terminal's end condition is like the other terminals'."),
    _q(f"{_EQ}.cylinder.end.G", "Load conductance G of the cylinder's end", "nS",
       "The lumped conductance at the cylinder's end: the terminals' loads summed."),
    _q(f"{_EQ}.cylinder.end.C", "Load capacitance C of the cylinder's end", "pF",
       "The lumped capacitance at the cylinder's end: the terminals' loads summed."),
    _q(f"{_EQ}.cylinder.length_rule", "How L is chosen", "", "The rule that sets the cylinder's L."),
    _q(f"{_EQ}.cylinder.taper_rule", "Tapers", "", "How a diameter step inside a branch is treated."),
    _q("soma", "Soma", "", "The isopotential spherical soma at the recording site; none when it is not modelled."),
]

for _key, _words in (("soma_to_site", "Voltage ratio V_[syn]/V_[{rec}], {rec} → synapse"),
                     ("transfer_resistance_Mohm", "Transfer resistance synapse ↔ {rec}"),
                     ("soma_input_resistance_Mohm", "Input resistance at the {rec}")):
    _unit = "" if _key == "soma_to_site" else "MΩ"
    _LIST += [
        _q(f"{_CMP}.{_key}.tree", f"{_words}, full tree", _unit, "The value from the full tree, at 0 Hz."),
        _q(f"{_CMP}.{_key}.cylinder", f"{_words}, equivalent cylinder", _unit,
           "The value from the equivalent cylinder at the synapse's X, at 0 Hz."),
        _q(f"{_CMP}.{_key}.relative_error", f"{_words}, error of the cylinder", "%",
           "(cylinder − full tree)/full tree.", 3, True),
    ]
_LIST += [
    _q(f"{_CMP}.not_given_by_cylinder.site_to_soma", "Voltage ratio V_[{rec}]/V_[syn], synapse → {rec}", "",
       "From the full tree: the cylinder has no single synapse, so it does not give this ratio."),
    _q(f"{_CMP}.not_given_by_cylinder.site_input_resistance_Mohm", "Input resistance at the synapse", "MΩ",
       "From the full tree: the cylinder has no single synapse, so it does not give this resistance."),
]

QUANTITIES = {q.key: q for q in _LIST}
if len(QUANTITIES) != len(_LIST):                       # pragma: no cover (a typo in the table above)
    raise RuntimeError("quantities: a key is defined twice")

# The numbers `somaward constants` prints for one uniform cylinder. They are not report keys (that
# command solves no scenario), so they live apart from QUANTITIES; same fields, same markup.
CYLINDER_CONSTANTS = {_c.key: _c for _c in [
    _q("lambda_um", "Space constant λ", "µm", "λ = √(R_[m]·d/(4R_[i])) (Hodgkin & Rushton 1946; Rall 1977).", 6),
    _q("tau_m_ms", "Membrane time constant τ_[m]", "ms", QUANTITIES["tau_m_ms"].definition, 6),
    _q("input_resistance_infinite_Mohm", "Input resistance of a semi-infinite cylinder R_[∞]", "MΩ",
       "R_[∞] = (2/π)·√(R_[m]·R_[i])·d^[−3/2]: the input resistance at the end of a cylinder of the same "
       "diameter that goes on for ever (Rall 1959).", 6),
    _q("electrotonic_length", "Electrotonic length L", "", "L = ℓ/λ: the cylinder's length over its space constant.",
       6),
    _q("input_resistance_sealed_Mohm", "Input resistance, far end sealed, R_[∞]·coth L", "MΩ",
       "Input resistance at one end of the cylinder when no current leaves its far end (Rall 1959).", 6),
    _q("input_resistance_killed_Mohm", "Input resistance, far end killed, R_[∞]·tanh L", "MΩ",
       "Input resistance at one end of the cylinder when its far end is held at the resting potential, V = 0 "
       "(Rall 1959).", 6),
]}

TERMS = {
    "attenuation": ("Attenuation", "The loss of voltage between two sites of the cell, in either direction."),
    "voltage_ratio": ("Voltage ratio", "The voltage at the far site over the voltage at the site where the "
                      "current is injected (≤ 1), written with its two sites, e.g. V_[soma]/V_[syn]."),
    "attenuation_factor": ("Attenuation factor", "The inverse of the voltage ratio (≥ 1; Rall & Rinzel 1973)."),
    "log_attenuation": ("Log attenuation", "ln of the attenuation factor, in nepers; it adds along a path."),
    "percent_reaching": ("% reaching", "100 × the voltage ratio."),
    "input_resistance": ("Input resistance", "The steady voltage at a site per unit current injected there."),
    "transfer_resistance": ("Transfer resistance", _RT_DEF),
    "rho": ("ρ", _RHO_DEF),
    "electrotonic_distance": ("Electrotonic distance X", _X_DEF),
    "electrotonic_length": ("Electrotonic length L", "A branch's or cylinder's length in space constants, Σℓ/λ."),
    "centroid_delay": ("Centroid delay", QUANTITIES["centroid_delay_ms"].definition),
    "phase_delay": ("Phase delay", QUANTITIES[f"{_FR}.site_to_soma.phase_delay_ms"].definition),
}

END_CONDITIONS = {
    "sealed": "no current leaves the end (zero axial current)",
    "killed": "the end is held at the resting potential (V = 0)",
    "infinite": "the cylinder goes on for ever with the same diameter",
    "load": "a lumped conductance G (nS) and capacitance C (pF) at the end",
}

CAUTIONS = (
    "A passive-cable estimate, not a measurement: active conductances, spines and cell-to-cell variability "
    "change real attenuation.",
    "The synapse is modelled as a current source: a conductance synapse also loses driving force as its "
    "voltage rises.",
    "The recording electrode (series resistance, pipette capacitance) is not modelled.",
)

# Tables rendered alike by the page and the exports: a caption and the keys of their rows.
TABLES = {
    "steady_state": {
        "caption": "Steady-state attenuation",
        "keys": [f"{_SS}.site_to_soma", f"{_SS}.site_to_soma_fold", f"{_SS}.site_to_soma_percent",
                 f"{_SS}.soma_to_site", f"{_SS}.soma_to_site_fold", f"{_SS}.soma_to_site_percent"],
    },
    "constants": {
        "caption": "Cable constants, resistances and delays",
        "keys": ["site.branch", "site.distance_um", "site.cylinder", "site.path_distance_um",
                 "site.electrotonic_distance", "site.lambda_um", "site.branch_electrotonic_length", "tau_m_ms",
                 "soma_input_resistance_Mohm", "site_input_resistance_Mohm", "transfer_resistance_Mohm", "rho",
                 "rho_inf", "centroid_delay_ms"],
    },
    "equivalent_cylinder": {
        "caption": "Equivalent cylinder (Rall 1962; Rall 1964)",
        "keys": [f"{_EQ}.meets_conditions", f"{_EQ}.tolerance", f"{_EQ}.cylinder.diameter_um",
                 f"{_EQ}.cylinder.electrotonic_length", f"{_EQ}.cylinder.electrotonic_length_min",
                 f"{_EQ}.cylinder.electrotonic_length_max",
                 f"{_CMP}.soma_input_resistance_Mohm.cylinder", f"{_CMP}.soma_input_resistance_Mohm.relative_error",
                 f"{_CMP}.transfer_resistance_Mohm.cylinder", f"{_CMP}.transfer_resistance_Mohm.relative_error",
                 f"{_CMP}.soma_to_site.cylinder", f"{_CMP}.soma_to_site.relative_error"],
    },
    "branches": {
        "caption": "Branches",
        "keys": ["lambda_um.*", "electrotonic_length.*"],
    },
}

_INDEX = re.compile(r"\[\d+\]")


def canonical_key(key):
    """The vocabulary key of a concrete report path: list indices become ``[]``.

    Per-branch entries (``lambda_um.trunk``) are not recognised from the path alone, since branch
    ids may hold dots; :func:`quantity` tries the ``.*`` form for them.

    Parameters
    ----------
    key : str
        A report path.

    Returns
    -------
    str

    Examples
    --------
    >>> canonical_key("equivalent_cylinder.branch_points[3].ratio")
    'equivalent_cylinder.branch_points[].ratio'
    """
    return _INDEX.sub("[]", key)


def quantity(key):
    """The :class:`Quantity` of a report path (concrete or canonical).

    An item of a list of numbers (``frequency_response.frequencies_hz[3]``) is the list's
    quantity.

    Parameters
    ----------
    key : str
        A report path, concrete (``equivalent_cylinder.branch_points[3].ratio``, ``lambda_um.trunk``)
        or canonical (``…branch_points[].ratio``, ``lambda_um.*``).

    Returns
    -------
    Quantity

    Raises
    ------
    KeyError
        When no quantity is defined for the key.
    """
    k = canonical_key(key)
    if k in QUANTITIES:
        return QUANTITIES[k]
    if k.endswith("[]") and k[:-2] in QUANTITIES:
        return QUANTITIES[k[:-2]]
    for wild in QUANTITIES:
        if ".*" in wild:
            head, tail = wild.split(".*", 1)
            if k.startswith(head + ".") and k.endswith(tail) and len(k) > len(head) + 1 + len(tail):
                return QUANTITIES[wild]
    raise KeyError(f"no quantity is defined for the report key {key!r}")


_MARK = re.compile(r"([_^])\[([^\]]*)\]")


def latex_escape(text):
    """Escape LaTeX's special characters and spell the symbols we use in math mode.

    Parameters
    ----------
    text : str
        Plain text (any object is turned into text first).

    Returns
    -------
    str

    Examples
    --------
    >>> latex_escape("R_in 50 % µm")
    'R\\\\_in 50 \\\\% $\\\\mu$m'
    """
    return "".join(_LATEX_SPECIAL.get(ch) or _LATEX_UNICODE.get(ch) or ch for ch in str(text))


_LATEX_SPECIAL = {"\\": r"\textbackslash{}", "&": r"\&", "%": r"\%", "$": r"\$", "#": r"\#",
                  "_": r"\_", "{": r"\{", "}": r"\}", "~": r"\textasciitilde{}", "^": r"\textasciicircum{}"}
_LATEX_UNICODE = {"µ": r"$\mu$", "Ω": r"$\Omega$", "λ": r"$\lambda$", "τ": r"$\tau$", "ρ": r"$\rho$",
                  "∞": r"$\infty$", "→": r"$\rightarrow$", "↔": r"$\leftrightarrow$", "·": r"$\cdot$",
                  "²": r"$^{2}$", "×": r"$\times$", "–": "--", "—": "---", "≤": r"$\leq$", "≥": r"$\geq$",
                  "√": r"$\surd$", "≈": r"$\approx$", "Σ": r"$\Sigma$", "φ": r"$\varphi$", "π": r"$\pi$",
                  "°": r"$^{\circ}$", "−": r"$-$", "∂": r"$\partial$", "ℓ": r"$\ell$"}


def _html_escape(text):
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


def render_markup(text, form="plain", recording_site="soma", item=None):
    """Render this module's label markup as ``plain`` text, ``html`` or ``latex``.

    ``_[x]`` is a subscript, ``^[x]`` a superscript, ``{rec}`` the recording site and ``{item}``
    a branch id, which goes in after the markup is read, escaped for the form.

    Parameters
    ----------
    text : str
        A label or definition in the markup.
    form : {"plain", "html", "latex"}, default "plain"
        How the markup is written.
    recording_site : {"soma", "root"}, default "soma"
        The report's ``recording_site``: without a soma, labels name the root node.
    item : str, optional
        The branch id for ``{item}`` (left as ``{item}`` when None).

    Returns
    -------
    str

    Examples
    --------
    >>> render_markup("d_[parent]^[3/2]", "html")
    'd<sub>parent</sub><sup>3/2</sup>'
    >>> render_markup("V_[{rec}]", "latex", "root")
    'V\\\\textsubscript{root}'
    """
    if recording_site not in RECORDING_SITES:
        raise ValueError(f"recording_site: must be 'soma' or 'root', got {recording_site!r}")
    # A branch id is the user's text: it goes in after the markup is read, escaped for the form.
    text = text.replace("{rec}", recording_site).replace("{item}", "\x00")
    if form == "plain":
        out = _MARK.sub(lambda m: f"{m.group(1)}{m.group(2)}", text)
        escape = str
    elif form == "html":
        escape = _html_escape
        out = _render(text, escape, lambda sub, t: f"<{'sub' if sub else 'sup'}>{t}</{'sub' if sub else 'sup'}>")
    elif form == "latex":
        escape = latex_escape
        out = _render(text, escape, lambda sub, t: f"\\text{'sub' if sub else 'super'}script{{{t}}}")
    else:
        raise ValueError(f"form: must be 'plain', 'html' or 'latex', got {form!r}")
    return out.replace("\x00", "{item}" if item is None else escape(str(item)))


def _render(text, escape, wrap):
    parts, pos = [], 0
    for m in _MARK.finditer(text):
        parts += [escape(text[pos:m.start()]), wrap(m.group(1) == "_", escape(m.group(2)))]
        pos = m.end()
    return "".join(parts) + escape(text[pos:])


def label(key, recording_site="soma", form="plain", item=None):
    """The label of a report key, for a report whose recording site is ``recording_site``.

    Parameters
    ----------
    key : str
        A report path, concrete (``equivalent_cylinder.branch_points[3].ratio``, ``lambda_um.trunk``)
        or canonical (``…branch_points[].ratio``, ``lambda_um.*``).
    recording_site : {"soma", "root"}, default "soma"
        The report's ``recording_site``: without a soma, labels name the root node.
    form : {"plain", "html", "latex"}, default "plain"
        How the markup is written.
    item : str, optional
        The branch id of a per-branch entry (``lambda_um.*``).

    Returns
    -------
    str

    Examples
    --------
    >>> label("lambda_um.*", item="trunk")
    'Space constant λ of branch trunk'
    """
    return render_markup(quantity(key).label, form, recording_site, item)


def definition(key, recording_site="soma", form="plain"):
    """The one-sentence definition of a report key.

    Parameters
    ----------
    key : str
        A report path, concrete (``equivalent_cylinder.branch_points[3].ratio``, ``lambda_um.trunk``)
        or canonical (``…branch_points[].ratio``, ``lambda_um.*``).
    recording_site : {"soma", "root"}, default "soma"
        The report's ``recording_site``: without a soma, labels name the root node.
    form : {"plain", "html", "latex"}, default "plain"
        How the markup is written.

    Returns
    -------
    str
    """
    return render_markup(quantity(key).definition, form, recording_site)


_UNIT_LATEX = {"%": r"\%"}


def unit(key, form="plain"):
    """The unit of a report key as shown ("" for dimensionless numbers and text).

    Parameters
    ----------
    key : str
        A report path, concrete (``equivalent_cylinder.branch_points[3].ratio``, ``lambda_um.trunk``)
        or canonical (``…branch_points[].ratio``, ``lambda_um.*``).
    form : {"plain", "html", "latex"}, default "plain"
        "latex" escapes the unit for LaTeX; "plain" and "html" give it as it is.

    Returns
    -------
    str

    Examples
    --------
    >>> unit("soma_input_resistance_Mohm")
    'MΩ'
    """
    u = quantity(key).unit
    if form == "latex":
        return _UNIT_LATEX.get(u) or latex_escape(u)
    return u


def format_value(value, key=None, digits=None):
    """A value rounded for reading: the quantity's significant digits; '—' for None.

    Fractions shown as percentages (``Quantity.percent``) are multiplied by 100. Booleans are
    "yes"/"no", lists are joined with ", ".

    Parameters
    ----------
    value : number, str, bool, list or None
        A report value.
    key : str, optional
        Its report key; its quantity sets the digits and the percentage (4 digits without one).
    digits : int, optional
        Significant digits, overriding the quantity's.

    Returns
    -------
    str

    Examples
    --------
    >>> format_value(0.0512, "equivalent_cylinder.branch_points[0].departure")
    '5.12'
    >>> format_value(None)
    '—'
    """
    if value is None:
        return "—"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, str):
        return value
    if isinstance(value, (list, tuple)):
        return ", ".join(format_value(v, key, digits) for v in value)
    q = quantity(key) if key is not None else None
    if q is not None and q.percent:
        value = 100.0 * value
    n = digits or (q.digits if q is not None else 4)
    if value == 0:
        return "0"
    text = f"{value:.{n}g}"
    if "e" in text:
        mant, exp = text.split("e")
        return f"{mant}e{int(exp)}"
    return text


def _lookup(report, path):
    value = report
    for name, index in re.findall(r"([^.\[\]]+)|\[(\d+)\]", path):
        if value is None:
            return None
        value = value[int(index)] if index else value.get(name)
    return value


def table_rows(report, name):
    """The rows of one of :data:`TABLES` for a report: ``[(key, label, value, unit)]``.

    ``key`` is the concrete report path, ``label`` plain text for the report's recording site,
    ``value`` the report's own value (a number, text, bool, list or None). Rows whose value the
    report does not hold (ρ without a soma) are left out; a per-branch key gives one row per
    branch.

    Parameters
    ----------
    report : dict
        A report from :func:`somaward.solve`.
    name : str
        A key of :data:`TABLES`.

    Returns
    -------
    list of (str, str, object, str)
    """
    rec = report.get("recording_site", "soma")
    rows = []
    for key in TABLES[name]["keys"]:
        if key.endswith(".*"):
            head = key[:-2]
            for bid, value in (report.get(head) or {}).items():
                rows.append((f"{head}.{bid}", label(key, rec, item=bid), value, unit(key)))
            continue
        value = _lookup(report, key)
        if value is None and key in ("rho", "rho_inf"):
            continue
        rows.append((key, label(key, rec), value, unit(key)))
    return rows


def input_fields(recording_site="soma"):
    """The scenario's input fields, labelled from their one source, the scenario schema.

    Parameters
    ----------
    recording_site : {"soma", "root"}, default "soma"
        The report's ``recording_site``: without a soma, labels name the root node.

    Returns
    -------
    dict
        Canonical path (``membrane.Ri``, ``branches[].cylinders[].diameter``) →
        ``{label, label_html, unit, description, default}`` (``default`` None where the engine
        fills in none).
    """
    from .schema_check import schema_fields
    return {path: {"label": render_markup(field["label"], "plain", recording_site),
                   "label_html": render_markup(field["label"], "html", recording_site),
                   "unit": field["unit"], "description": field["description"], "default": field["default"]}
            for path, field in schema_fields().items()}


def input_label(path):
    """Plain label of the input field a concrete JSON path names, or of its nearest labelled parent.

    Parameters
    ----------
    path : str
        A JSON path of the scenario (``branches[2].diameter``); "" for the whole scenario.

    Returns
    -------
    str
        The label, or "" for the whole scenario.

    Examples
    --------
    >>> input_label("membrane.Ri")
    'Axial resistivity R_i'
    """
    from .schema_check import field_of_path, schema_fields
    field = field_of_path(path or "")
    return render_markup(schema_fields()[field]["label"]) if field else ""


def vocabulary(recording_site="soma"):
    """Every definition as JSON-ready data for the page (labels in plain text and HTML).

    Parameters
    ----------
    recording_site : {"soma", "root"}, default "soma"
        The report's ``recording_site``: without a soma, labels name the root node.

    Returns
    -------
    dict
        ``quantities``: key → {label, label_html, unit, definition, definition_html, digits,
        percent}; ``terms``: name → {label, definition}; ``end_conditions``; ``tables``;
        ``cautions``; ``inputs``: :func:`input_fields`.
    """
    qs = {}
    for key, q in QUANTITIES.items():
        qs[key] = {"label": render_markup(q.label, "plain", recording_site),
                   "label_html": render_markup(q.label, "html", recording_site),
                   "unit": q.unit, "digits": q.digits, "percent": q.percent,
                   "definition": render_markup(q.definition, "plain", recording_site),
                   "definition_html": render_markup(q.definition, "html", recording_site)}
    return {"recording_site": recording_site, "quantities": qs,
            "terms": {k: {"label": render_markup(t, "plain", recording_site),
                          "definition": render_markup(d, "plain", recording_site)} for k, (t, d) in TERMS.items()},
            "end_conditions": dict(END_CONDITIONS),
            "tables": {k: {"caption": v["caption"], "keys": list(v["keys"])} for k, v in TABLES.items()},
            "cautions": list(CAUTIONS), "inputs": input_fields(recording_site)}
