"""``solve(scenario) -> report``: the one entry point used by the page, the CLI and the tests.

The report is a JSON-serialisable dict whose keys carry their units (see DEVELOPERS.md).
Words and ratios follow :mod:`somaward.quantities`: the voltage ratio (V_soma/V_syn for current
injected at the synapse, V_syn/V_soma for current injected at the soma) is ≤ 1; ``_fold`` is the
attenuation factor, its inverse (Rall & Rinzel 1973); ``_log`` the log attenuation in nepers,
computed without forming the ratio.
"""

import math
from itertools import chain, compress, repeat

import numpy as np

from ._version import __version__
from .equivalent import equivalent_cylinder
from .errors import InternalError
from .frequency import centroid_delays_ms, complex_step_per_ms, laplace_of_hz, site_response
from .export import fingerprint
from .maps import map_points, path_points, tree_map_logs
from .quantities import CAUTIONS
from .sanity import electrotonic_warnings, geometry_warnings, membrane_warnings
from .scenario import locate_synapse, rename_old_keys, validate
from .schema_check import check_depth, join_path
from .sites import point_terms
from .topology import electrotonic_distance, locate_point, sections_of_branch
from .tree import build_tree, solve_tree

__all__ = ["solve", "non_finite"]

_LOG_UNDERFLOW = -708.0          # exp() below this is subnormal or 0


def _num(x):
    """A finite float (−0.0 written as 0.0), or None."""
    x = float(x) + 0.0
    return x if math.isfinite(x) else None


def _ratio_block(name, log_ratio, warnings, what):
    """A, fold, log and percent for one direction from ln A (real, ≤ 0)."""
    lr = float(log_ratio)
    if lr == -math.inf:
        return {name: 0.0, f"{name}_fold": None, f"{name}_log": None, f"{name}_percent": 0.0}
    if lr < _LOG_UNDERFLOW:
        warnings.append(f"{what}: the ratio e^{lr:.1f} underflows double precision and is reported as 0; "
                        "its log attenuation is exact.")
        return {name: 0.0, f"{name}_fold": None, f"{name}_log": -lr, f"{name}_percent": 0.0}
    a = math.exp(lr)
    return {name: a, f"{name}_fold": _num(math.exp(-lr)), f"{name}_log": _num(-lr), f"{name}_percent": 100.0 * a}


def _magnitudes(log_values):
    re = np.real(log_values)
    with np.errstate(under="ignore"):
        mag = np.where(re < _LOG_UNDERFLOW, 0.0, np.exp(np.maximum(re, _LOG_UNDERFLOW)))
    return [float(v) for v in mag]


def _listed(values):
    return [_num(v) for v in values]


def _direction(log_a, freqs_hz, centroid_ms):
    """Magnitude, log attenuation, unwrapped phase and phase delay of one direction."""
    omega_rad_ms = 2.0 * math.pi * np.asarray(freqs_hz) * 1e-3
    phase = np.imag(log_a)
    with np.errstate(divide="ignore", invalid="ignore"):
        delay = np.where(omega_rad_ms > 0, -phase / np.where(omega_rad_ms > 0, omega_rad_ms, 1.0), centroid_ms)
    return {"magnitude": _magnitudes(log_a), "log_attenuation": _listed(-np.real(log_a)),
            "phase_deg": _listed(np.degrees(phase)), "phase_delay_ms": _listed(delay)}


def _impedance(ln_z):
    return {"magnitude": _magnitudes(ln_z), "phase_deg": _listed(np.degrees(np.imag(ln_z)))}


def _branch_tables(tree):
    lambda_um, elec, secs, term_x = {}, {}, {}, {}
    for b in range(len(tree.branch_ids)):
        idx = sections_of_branch(tree, b)
        bid = tree.branch_ids[b]
        rows = [{"length_um": float(tree.length_um[i]), "diameter_um": float(tree.diameter_um[i]),
                 "lambda_um": float(tree.lambda_um[i]),
                 "electrotonic_length": float(tree.electrotonic_length[i])} for i in idx]
        secs[bid] = rows
        lambda_um[bid] = rows[0]["lambda_um"] if len(rows) == 1 else [r["lambda_um"] for r in rows]
        elec[bid] = math.fsum(r["electrotonic_length"] for r in rows)
        if tree.terminal_branch[b]:
            term_x[bid] = float(electrotonic_distance(tree, idx[-1]))
    return lambda_um, elec, secs, term_x


def _soma_block(tree, scenario):
    soma = scenario["soma"]
    if soma is None:
        return None
    area_um2 = math.pi * soma["diameter"] ** 2
    return {"diameter_um": float(soma["diameter"]), "area_um2": area_um2, "Rm_ohm_cm2": float(soma["Rm"]),
            "resistance_Mohm": 1.0 / tree.soma_g_uS, "capacitance_pF": tree.soma_c_nF * 1e3,
            "tau_ms": tree.soma_c_nF / tree.soma_g_uS}


def _steady_state(tree, sec, y_um, warnings):
    sol = solve_tree(tree, np.array([0.0]))
    t = point_terms(sol, [sec], [y_um])
    up, down, y_node = float(t["up"][0, 0]), float(t["down"][0, 0]), float(t["y_node_uS"][0, 0])
    ss = {}
    ss.update(_ratio_block("site_to_soma", up, warnings, "steady-state site→soma attenuation"))
    ss.update(_ratio_block("soma_to_site", down, warnings, "steady-state soma→site attenuation"))
    g_dend = float(sol.yload_uS[-1, 0])
    values = {
        "soma_input_resistance_Mohm": 1.0 / float(sol.y_root_uS[0]),
        "site_input_resistance_Mohm": 1.0 / y_node,
        "transfer_resistance_Mohm": _num(math.exp(up) / y_node) if up > _LOG_UNDERFLOW else 0.0,
        "rho": g_dend / tree.soma_g_uS if tree.has_soma else None,
        "rho_inf": (float(tree.g_inf_uS[tree.parent < 0].sum()) / tree.soma_g_uS) if tree.has_soma else None,
    }
    return sol, ss, values


def _frequency(tree, sec, y_um, freqs_hz, warnings):
    """Frequency response at the site, and the centroid delays from one extra complex step."""
    s_per_ms = np.concatenate([laplace_of_hz(freqs_hz), [1j * complex_step_per_ms(tree)]])
    both = site_response(tree, sec, y_um, s_per_ms)
    centroid = centroid_delays_ms(tree, sec, y_um, {k: v[-1:] for k, v in both.items()})
    r = {k: v[:-1] for k, v in both.items()}
    out = {"frequencies_hz": [float(freq_hz) for freq_hz in freqs_hz],
           "site_to_soma": _direction(r["up"], freqs_hz, centroid[0]),
           "soma_to_site": _direction(r["down"], freqs_hz, centroid[1]),
           "transfer_impedance_Mohm": _impedance(r["up"] + r["ln_z_site"]),
           "site_input_impedance_Mohm": _impedance(r["ln_z_site"]),
           "soma_input_impedance_Mohm": _impedance(r["ln_z_root"])}
    for key in ("site_to_soma", "soma_to_site"):
        zero = [freq_hz for freq_hz, m in zip(freqs_hz, out[key]["magnitude"], strict=True) if m == 0.0]
        if zero:
            warnings.append(f"frequency response {key.replace('_', ' ')}: |A| underflows double precision at "
                            f"{len(zero)} frequencies from {min(zero):g} Hz and is reported as 0 there; "
                            "log attenuation and phase stay exact.")
    return out, centroid


def _tree_map(tree, scenario, sol_dc):
    sec, y_um = map_points(tree, scenario["map_spacing_um"])
    freq_hz = scenario["map_frequency_hz"]
    sol = sol_dc if freq_hz == 0 else solve_tree(tree, laplace_of_hz([freq_hz]))
    up, down = tree_map_logs(sol, sec, y_um)
    x = electrotonic_distance(tree, sec, y_um)
    return {"frequency_hz": float(freq_hz),
            "branch": [tree.branch_ids[b] for b in tree.branch_of[sec]],
            "distance_um": [float(v) for v in tree.start_um[sec] + y_um],
            "path_distance_um": [float(v) for v in tree.path_start_um[sec] + y_um],
            "electrotonic_distance": [float(v) for v in x],
            "site_to_soma": _magnitudes(up), "soma_to_site": _magnitudes(down),
            "site_to_soma_log": _listed(-np.real(up)), "soma_to_site_log": _listed(-np.real(down))}


def _path_profile(tree, sol_dc, sec, y_um, spacing_um):
    psec, py_um = path_points(tree, sec, y_um, spacing_um)
    t = point_terms(sol_dc, psec, py_um)
    u_site = point_terms(sol_dc, [sec], [y_um])["up"][0, 0]
    return {"path_distance_um": [float(v) for v in tree.path_start_um[psec] + py_um],
            "electrotonic_distance": [float(v) for v in electrotonic_distance(tree, psec, py_um)],
            "branch": [tree.branch_ids[b] for b in tree.branch_of[psec]],
            "input_at_site": _magnitudes(u_site - t["up"][:, 0]),
            "input_at_soma": _magnitudes(t["down"][:, 0])}


def solve(scenario):
    """Solve a scenario: steady state, frequency response, maps and profile at the synapse.

    Parameters
    ----------
    scenario : dict
        See ``scenario.schema.json`` (units: µm, ms, pA, nS, pF, Hz; Rm Ω·cm², Ri Ω·cm,
        Cm µF/cm²).

    Returns
    -------
    dict
        The report (JSON-serialisable; no NaN or inf). Keys are listed in DEVELOPERS.md.

    Raises
    ------
    ScenarioError
        One line naming the field and what is allowed.
    """
    check_depth(scenario)                      # before anything recursive
    scenario, warnings = rename_old_keys(scenario)
    sc = validate(scenario)
    warnings += membrane_warnings(sc["membrane"], sc["soma"]) + geometry_warnings(sc["branches"], sc["soma"])
    tree = build_tree(sc["branches"], sc["membrane"], sc["soma"])
    index = {b["id"]: i for i, b in enumerate(sc["branches"])}
    b, distance_um = locate_synapse(sc["synapse"], sc["branches"], index)
    sec, y_um, cylinder = locate_point(tree, b, distance_um)
    sol_dc, steady, values = _steady_state(tree, sec, y_um, warnings)
    frequency, centroid = _frequency(tree, sec, y_um, sc["frequencies_hz"], warnings)
    lambda_um, elec, secs, term_x = _branch_tables(tree)
    warnings += electrotonic_warnings(term_x)
    x_site = float(electrotonic_distance(tree, sec, y_um))
    report = {
        "engine_version": __version__,
        "recording_site": "soma" if tree.has_soma else "root",
        "tau_m_ms": float(tree.tau_ms),
        "lambda_um": lambda_um, "electrotonic_length": elec, "cylinders": secs,
        "terminal_electrotonic_distance": term_x,
        **values,
        "electrotonic_distance": x_site,
        "site": {"branch": tree.branch_ids[b], "distance_um": float(distance_um),
                 "path_distance_um": float(tree.path_start_um[sec] + y_um), "electrotonic_distance": x_site,
                 "cylinder": cylinder, "lambda_um": float(tree.lambda_um[sec]),
                 "branch_electrotonic_length": elec[tree.branch_ids[b]]},
        "soma": _soma_block(tree, sc),
        "attenuation": {"steady_state": steady},
        "frequency_response": frequency,
        "centroid_delay_ms": _num(centroid[0]),
        "centroid_delay_soma_to_site_ms": _num(centroid[1]),
        "path_profile": _path_profile(tree, sol_dc, sec, y_um, sc["map_spacing_um"]),
        "tree_map": _tree_map(tree, sc, sol_dc),
        "equivalent_cylinder": equivalent_cylinder(tree, sc, sec, y_um, sol_dc),
    }
    report["warnings"] = warnings
    report["caution"] = list(CAUTIONS)
    report["scenario"] = sc
    report["stamp"] = {"engine_version": __version__, "fingerprint": fingerprint(sc),
                       "text": f"Somaward {__version__}, scenario {fingerprint(sc)}"}
    report["defaults_applied"] = defaults_applied(scenario, sc)
    bad = non_finite({k: v for k, v in report.items() if k != "scenario"})   # (the input: checked finite)
    if bad is not None:                        # the last guard: a bug, never a number
        raise InternalError(bad, report["stamp"]["fingerprint"])
    return report


def non_finite(value):
    """Where ``value`` (a report) holds a NaN or an infinity, e.g. ``'a NaN at tau_m_ms'``, or None.

    Iterative. Each level of the report is checked as one batch (all lists and objects at that
    depth together, with C-level iteration: ``map``, ``compress``), which is fast for the
    report's many small rows; only when a batch holds a non-finite number is the report walked
    item by item to name the place.

    Parameters
    ----------
    value : dict or list
        A report (or any JSON-like value of dicts, lists, numbers, strings, booleans and None).

    Returns
    -------
    str or None

    Examples
    --------
    >>> non_finite({"tau_m_ms": 20.0, "site": {"lambda_um": float("inf")}})
    'an infinity at site.lambda_um'
    """
    if _all_finite(value):
        return None
    stack = [(value, None, None)]                  # (node, parent entry, key in parent)
    while stack:
        entry = stack.pop()
        node = entry[0]
        for key, sub in (node.items() if isinstance(node, dict) else enumerate(node)):
            if isinstance(sub, (list, dict)):
                stack.append((sub, entry, key))
            elif isinstance(sub, float) and not math.isfinite(sub):
                keys = [key]
                while entry[1] is not None:
                    keys.append(entry[2])
                    entry = entry[1]
                path = ""
                for k in reversed(keys):
                    path = join_path(path, k, root="report")
                return f"{'a NaN' if sub != sub else 'an infinity'} at {path}"
    return None


_NO_FLOATS = frozenset({str, bool, int, type(None)})
_NUMBERS = frozenset({float, bool, int, type(None)})


def _all_finite(value):
    lists = [value] if isinstance(value, list) else []
    dicts = [value] if isinstance(value, dict) else []
    while lists or dicts:
        rest = []
        for seq in lists:                       # long lists of plain numbers or text: sum or skip
            kinds = set(map(type, seq)) if len(seq) > 32 else None
            if kinds is None or not kinds <= _NUMBERS | _NO_FLOATS:
                rest.append(seq)
            elif not kinds <= _NO_FLOATS and not math.isfinite(sum(filter(None, seq), 0.0)) \
                    and not all(map(math.isfinite, filter(None, seq))):       # (a sum may overflow)
                return False
        items = list(chain(chain.from_iterable(rest), chain.from_iterable(map(dict.values, dicts))))
        if not all(map(math.isfinite, compress(items, map(isinstance, items, repeat(float))))):
            return False
        lists = list(compress(items, map(isinstance, items, repeat(list))))
        dicts = list(compress(items, map(isinstance, items, repeat(dict))))
    return True


def defaults_applied(given, validated, path=""):
    """JSON paths that the validation filled in with a default (absent in ``given``)."""
    out = []
    if isinstance(validated, dict) and isinstance(given, dict):
        for key, value in validated.items():
            sub = f"{path}.{key}" if path else key
            if key not in given:
                out.append(sub)
            else:
                out.extend(defaults_applied(given[key], value, sub))
    elif isinstance(validated, list) and isinstance(given, list):
        for i, (g, v) in enumerate(zip(given, validated, strict=True)):
            out.extend(defaults_applied(g, v, f"{path}[{i}]"))
    return out
