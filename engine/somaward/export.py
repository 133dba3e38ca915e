"""Exports for the paper: the results table (Markdown, TSV, CSV, LaTeX) and a methods paragraph.

All text is produced here from the report, so the CLI and the page give the same words. Every
block carries the engine version and a short scenario fingerprint (the first 12 hex digits of the
SHA-256 of the validated scenario's canonical JSON), so a pasted number can be traced to its
inputs.
"""

import csv
import hashlib
import io
import json

from .equivalent import comparison_rows, methods_sentence, rule_table_rows

__all__ = ["fingerprint", "stamp", "results_rows", "format_value", "table", "rule_table", "methods_text", "render",
           "latex_escape", "FORMATS"]

FORMATS = ("json", "md", "tsv", "csv", "latex")


def _canonical(value):
    """Numbers as written by any JSON writer: 4.0 and 4 (and −0.0 and 0) are the same number."""
    if isinstance(value, dict):
        return {k: _canonical(v) for k, v in value.items()}
    if isinstance(value, list):
        return [_canonical(v) for v in value]
    if isinstance(value, float) and value.is_integer():
        return int(value)
    return value


def fingerprint(scenario):
    """12 hex digits of SHA-256 over the canonical JSON of a scenario.

    Canonical: sorted keys, no spaces, and integral numbers written as integers, so that the same
    cell gives the same fingerprint whether a program wrote 4 or 4.0.
    """
    text = json.dumps(_canonical(scenario), sort_keys=True, separators=(",", ":"), ensure_ascii=False)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()[:12]


def format_value(x, digits=4):
    """A number rounded for reading: ``digits`` significant digits; '—' for None."""
    if x is None:
        return "—"
    if isinstance(x, str):
        return x
    if x == 0:
        return "0"
    text = f"{x:.{digits}g}"
    if "e" in text:
        mant, exp = text.split("e")
        return f"{mant}e{int(exp)}"
    return text


def results_rows(report):
    """(quantity, value, unit) rows of the results table, values as numbers (None: not defined)."""
    ss = report["attenuation"]["steady_state"]
    site = report["site"]
    rows = [
        ("Synapse branch", site["branch"], ""),
        ("Synapse distance along its branch", site["distance_um"], "µm"),
        ("Synapse path distance from the soma", site["path_distance_um"], "µm"),
        ("Electrotonic distance X of the synapse", report["electrotonic_distance"], ""),
        ("Membrane time constant τm", report["tau_m_ms"], "ms"),
        ("Soma input resistance", report["soma_input_resistance_Mohm"], "MΩ"),
        ("Synapse input resistance", report["site_input_resistance_Mohm"], "MΩ"),
        ("Transfer resistance synapse–soma", report["transfer_resistance_Mohm"], "MΩ"),
        ("Steady-state attenuation synapse→soma (V_soma/V_syn)", ss["site_to_soma"], ""),
        ("  fold attenuation synapse→soma", ss["site_to_soma_fold"], "×"),
        ("  reaching the soma", ss["site_to_soma_percent"], "%"),
        ("Steady-state attenuation soma→synapse (V_syn/V_soma)", ss["soma_to_site"], ""),
        ("  fold attenuation soma→synapse", ss["soma_to_site_fold"], "×"),
        ("Centroid delay synapse→soma", report["centroid_delay_ms"], "ms"),
    ]
    if report["rho"] is not None:
        rows += [("Dendritic-to-somatic conductance ratio ρ", report["rho"], ""),
                 ("ρ∞ (stems as semi-infinite cylinders)", report["rho_inf"], "")]
    rows += comparison_rows(report)
    for bid, lam in report["lambda_um"].items():
        value = lam if not isinstance(lam, list) else f"{format_value(min(lam))}–{format_value(max(lam))}"
        rows.append((f"λ of branch {bid}", value, "µm"))
        rows.append((f"Electrotonic length L of branch {bid}", report["electrotonic_length"][bid], ""))
    return rows


def stamp(report):
    """'Somaward <version>, scenario <fingerprint>': the line every exported block carries, as the
    report itself states it (``report["stamp"]["text"]``)."""
    return report["stamp"]["text"]


def _display_rows(report):
    return [(q, format_value(v), u) for q, v, u in results_rows(report)]


def _render_table(header, rows, fmt, stamp):
    """One table (header + rows of display strings) as md, tsv, csv or latex, with its stamp."""
    if fmt == "md":
        lines = ["| " + " | ".join(header) + " |", "|" + "|".join(["---"] + ["---:"] * (len(header) - 1)) + "|"]
        lines += ["| " + " | ".join(_md_cell(c) for c in r) + " |" for r in rows]
        return "\n".join(lines) + f"\n\n*{stamp}; passive-cable estimate.*\n"
    if fmt in ("tsv", "csv"):
        buf = io.StringIO()
        writer = csv.writer(buf, delimiter="\t" if fmt == "tsv" else ",", lineterminator="\n")
        writer.writerow(header)
        writer.writerows(rows)
        writer.writerow([stamp] + [""] * (len(header) - 1))
        return buf.getvalue()
    if fmt == "latex":
        cols = "l" + "r" * (len(header) - 2) + "l" if len(header) > 2 else "l" * len(header)
        head = " & ".join(latex_escape(h) for h in header) + r" \\"
        body = "\n".join(" & ".join(latex_escape(c) for c in r) + r" \\" for r in rows)
        return (f"\\begin{{tabular}}{{{cols}}}\n\\toprule\n{head}\n\\midrule\n"
                f"{body}\n\\bottomrule\n\\end{{tabular}}\n% {latex_escape(stamp)}; needs \\usepackage{{booktabs}}\n")
    raise ValueError(f"format: must be one of {', '.join(FORMATS[1:])}, got {fmt!r}")


def table(report, fmt):
    """The results table as ``md``, ``tsv``, ``csv`` or ``latex`` text, with its stamp."""
    return _render_table(("Quantity", "Value", "Unit"), _display_rows(report), fmt, stamp(report))


def rule_table(report, fmt):
    """The 3/2-rule table, one row per branch point and diameter step (Rall 1962), with its stamp."""
    header, rows = rule_table_rows(report)
    shown = [[format_value(c) if not isinstance(c, str) else c for c in r] for r in rows]
    return _render_table(tuple(header), shown, fmt, stamp(report))


def _md_cell(text):
    return str(text).replace("\\", "\\\\").replace("|", "\\|").replace("\n", " ")


_LATEX_SPECIAL = {"\\": r"\textbackslash{}", "&": r"\&", "%": r"\%", "$": r"\$", "#": r"\#",
                  "_": r"\_", "{": r"\{", "}": r"\}", "~": r"\textasciitilde{}", "^": r"\textasciicircum{}"}
_LATEX_UNICODE = {"µ": r"$\mu$", "Ω": r"$\Omega$", "λ": r"$\lambda$", "τ": r"$\tau$", "ρ": r"$\rho$",
                  "∞": r"$\infty$", "→": r"$\rightarrow$", "·": r"$\cdot$", "²": r"$^{2}$", "×": r"$\times$",
                  "–": "--", "—": "---", "≤": r"$\leq$", "≥": r"$\geq$", "√": r"$\surd$", "≈": r"$\approx$"}


def latex_escape(text):
    """Escape LaTeX's special characters and spell the symbols we use in math mode."""
    out = []
    for ch in str(text):
        out.append(_LATEX_SPECIAL.get(ch) or _LATEX_UNICODE.get(ch) or ch)
    return "".join(out)


def _ends_sentence(scenario):
    ends = {}
    for b in scenario["branches"]:
        if "end" in b:
            e = b["end"]
            name = e if isinstance(e, str) else f"a lumped load (G = {e['G']:g} nS, C = {e.get('C', 0):g} pF)"
            ends.setdefault(name, []).append(b["id"])
    parts = [f"{name} ({', '.join(ids)})" for name, ids in ends.items()]
    return "Terminal ends were " + "; ".join(parts) + "."


def _defaulted(report, path):
    return " (default)" if path in report.get("defaults_applied", []) else ""


def methods_text(report):
    """A methods paragraph stating the model, every parameter with its unit, equations, references."""
    sc, site = report["scenario"], report["site"]
    mem = sc["membrane"]
    n_sections = sum(len(b.get("cylinders", [b])) for b in sc["branches"])
    soma = sc["soma"]
    soma_text = ("The recording site was an isopotential spherical soma of diameter "
                 f"{soma['diameter']:g} µm with specific membrane resistance {soma['Rm']:g} Ω·cm²"
                 f"{_defaulted(report, 'soma.Rm')}." if soma else
                 "No soma was modelled; the recording site was the root node where the stem branches meet.")
    cur = sc["synapse"].get("current", {})
    paragraph = (
        f"Attenuation between the synapse and the soma was estimated with a passive cable model "
        f"({stamp(report)}). The dendrites were {len(sc['branches'])} branches made of {n_sections} "
        f"uniform cylindrical sections with specific membrane resistance Rm = {mem['Rm']:g} Ω·cm², axial "
        f"resistivity Ri = {mem['Ri']:g} Ω·cm and specific membrane capacitance Cm = {mem['Cm']:g} µF/cm²"
        f"{_defaulted(report, 'membrane.Cm')}, uniform over the tree, so that τm = Rm·Cm = "
        f"{format_value(report['tau_m_ms'])} ms. {soma_text} {_ends_sentence(sc)} "
        "Each section obeys the cable equation λ²∂²V/∂x² − τm∂V/∂t − V = 0 with λ = √(Rm·d/(4Ri)) "
        "(Hodgkin & Rushton 1946; Rall 1977); it was solved exactly in the Laplace domain and the "
        "sections were combined through the tree by the recursion of input admittances (Rall 1959), "
        "with no spatial discretisation. "
        f"The synapse sat on branch {site['branch']} at {format_value(site['distance_um'])} µm from its "
        f"proximal end, {format_value(site['path_distance_um'])} µm from the soma along the dendrite "
        f"(electrotonic distance X = Σℓ/λ = {format_value(report['electrotonic_distance'])}). "
        "Attenuation is the ratio of the voltage at the far site to that at the site of current "
        "injection; the synapse-to-soma and soma-to-synapse ratios differ as the input "
        "impedances of the two sites (Rall & Rinzel 1973). Delays are centroid delays "
        "(Agmon-Snir & Segev 1993). "
        f"Frequency responses were evaluated at {len(sc['frequencies_hz'])} frequencies from "
        f"{min(sc['frequencies_hz']):g} to {max(sc['frequencies_hz']):g} Hz"
        f"{_defaulted(report, 'frequencies_hz')}; the whole-tree map used points at most "
        f"{sc['map_spacing_um']:g} µm apart{_defaulted(report, 'map_spacing_um')} at "
        f"{sc['map_frequency_hz']:g} Hz{_defaulted(report, 'map_frequency_hz')}. "
        f"The synaptic current was {_current_words(cur)}{_defaulted(report, 'synapse.current')}. "
        "These are passive-cable estimates, not measurements: active conductances, spines and "
        "cell-to-cell variability change real attenuation. "
        + methods_sentence(report)
    )
    refs = [
        "Agmon-Snir H, Segev I (1993) Signal delay and input synchronization in passive dendritic structures. J Neurophysiol 70:2066–2085.",
        "Hodgkin AL, Rushton WAH (1946) The electrical constants of a crustacean nerve fibre. Proc R Soc Lond B 133:444–479.",
        "Rall W (1959) Branching dendritic trees and motoneuron membrane resistivity. Exp Neurol 1:491–527.",
        "Rall W (1962) Theory of physiological properties of dendrites. Ann NY Acad Sci 96:1071–1092.",
        "Rall W (1964) Theoretical significance of dendritic trees for neuronal input-output relations. In: Reiss RF (ed) Neural Theory and Modeling. Stanford University Press, pp 73–97.",
        "Rall W (1977) Core conductor theory and cable properties of neurons. In: Handbook of Physiology, sec. 1, vol. 1, pp 39–97.",
        "Rall W, Rinzel J (1973) Branch input resistance and steady attenuation for input to one branch of a dendritic neuron model. Biophys J 13:648–688.",
    ]
    return paragraph + "\n\nReferences\n" + "\n".join(refs) + "\n"


def _current_words(cur):
    if cur.get("shape") == "alpha":
        return f"an alpha function with τ = {cur['tau']:g} ms and peak {cur['peak']:g} pA"
    if cur.get("shape") == "dual_exponential":
        return (f"a difference of exponentials with τrise = {cur['tau_rise']:g} ms, τdecay = "
                f"{cur['tau_decay']:g} ms and peak {cur['peak']:g} pA")
    return "not specified"


def render(report, fmt="json"):
    """The whole report in one format: JSON, or the tables (+ warnings and methods for md)."""
    if fmt == "json":
        return json.dumps(report, indent=1, ensure_ascii=False, allow_nan=False) + "\n"
    results, rule = table(report, fmt), rule_table(report, fmt)
    if fmt != "md":
        return results + "\n" + rule
    warnings = "".join(f"- {w}\n" for w in report["warnings"])
    return (f"## Results\n\n{results}\n"
            + (f"### Warnings\n\n{warnings}\n" if warnings else "")
            + f"### Equivalent cylinder: the 3/2 rule\n\n{rule}\n"
            + f"## Methods\n\n{methods_text(report)}")
