"""Exports for the paper: the results table (Markdown, TSV, CSV, LaTeX) and a methods paragraph.

All text is produced here from the report, so the CLI and the page give the same words. Every
label, unit and precision of a number comes from :mod:`somaward.quantities` (the tables are its
``TABLES``); this module only lays them out. Every block carries the engine version and a short
scenario fingerprint (the first 12 hex digits of the SHA-256 of the validated scenario's
canonical JSON), so a pasted number can be traced to its inputs, and the cautions of a
passive-cable estimate (``quantities.CAUTIONS``):

* Markdown: a visible "Caution:" line under the table;
* TSV: the last rows (they paste into a spreadsheet);
* CSV: trailing lines starting with ``#`` (readers that skip comment lines get the bare table);
* LaTeX: the table's caption.
"""

import csv
import hashlib
import io
import json

from . import quantities as Q
from .equivalent import methods_sentence, rule_table_rows

__all__ = ["fingerprint", "stamp", "results_groups", "format_value", "table", "rule_table", "methods_text", "render",
           "latex_escape", "FORMATS", "RESULT_TABLES", "REFERENCES"]

FORMATS = ("json", "md", "tsv", "csv", "latex")
RESULT_TABLES = ("steady_state", "constants", "equivalent_cylinder", "branches")     # keys of quantities.TABLES
_HEADER = ("Quantity", "Value", "Unit")

latex_escape = Q.latex_escape


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

    Parameters
    ----------
    scenario : dict
        A validated scenario (the report's ``scenario``).

    Returns
    -------
    str

    Examples
    --------
    >>> fingerprint({"a": 4.0}) == fingerprint({"a": 4})
    True
    """
    text = json.dumps(_canonical(scenario), sort_keys=True, separators=(",", ":"), ensure_ascii=False)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()[:12]


def format_value(value, key=None, digits=None):
    """A value rounded for reading, as :func:`somaward.quantities.format_value` ('—' for None).

    Parameters
    ----------
    value : number, str, bool, list or None
        The report's value.
    key : str, optional
        Its report key, whose quantity sets the digits and whether it is shown in %.
    digits : int, optional
        Significant digits, overriding the quantity's.

    Returns
    -------
    str
    """
    return Q.format_value(value, key, digits)


def stamp(report):
    """The line every exported block carries: 'Somaward <version>, scenario <fingerprint>'.

    As the report itself states it (``report["stamp"]["text"]``).

    Parameters
    ----------
    report : dict
        A report from :func:`somaward.solve` (or its JSON read back).

    Returns
    -------
    str
    """
    return report["stamp"]["text"]


def _rec(report):
    return report.get("recording_site", "soma")


def results_groups(report, form="plain"):
    """The results table as groups: ``[(caption, [(key, label, value, unit)])]``.

    One group per table of :data:`RESULT_TABLES` (``quantities.TABLES``), rows from
    ``quantities.table_rows``; ``label``, ``unit`` and ``caption`` rendered in ``form`` for the
    report's recording site; ``value`` the report's own value.

    Parameters
    ----------
    report : dict
        A report from :func:`somaward.solve` (or its JSON read back).
    form : {"plain", "latex"}, default "plain"
        How labels, units and captions are written ("latex": escaped for LaTeX).

    Returns
    -------
    list of (str, list of (str, str, object, str))
    """
    rec = _rec(report)
    groups = []
    for name in RESULT_TABLES:
        rows = []
        for key, _label, value, _unit in Q.table_rows(report, name):
            q = Q.quantity(key)
            item = key[len(q.key) - 1:] if q.key.endswith(".*") else None     # the branch id
            rows.append((key, Q.label(key, rec, form, item), value, Q.unit(key, form)))
        groups.append((Q.render_markup(Q.TABLES[name]["caption"], form, rec), rows))
    return groups


# ------------------------------------------------------------------ one renderer for every table
def _md_cell(text):
    return str(text).replace("\\", "\\\\").replace("|", "\\|").replace("\n", " ")


def _md_table(head, rows, align):
    bar = {"l": "---", "r": "---:"}
    return (["| " + " | ".join(_md_cell(h) for h in head) + " |", "|" + "|".join(bar[a] for a in align) + "|"]
            + ["| " + " | ".join(_md_cell(c) for c in r) + " |" for r in rows])


def _render(blocks, fmt, report, title, header=None, align=None, cautions=True):
    """Lay out a table in one format, with its stamp and (if ``cautions``) the cautions.

    ``blocks`` is ``[(caption, head, rows)]`` of display strings already in the format's form
    (LaTeX-escaped for "latex"). With a ``header``, blocks have ``head=None`` and become groups of
    one table under it, each opened by a caption row; without, each block is a caption, its own
    head row and its rows.
    """
    st = stamp(report)
    n = len(header) if header else max([len(h) for _, h, _ in blocks if h] or [1])
    align = align or "l" * n
    pad = lambda cells: list(cells) + [""] * (n - len(cells))      # noqa: E731
    caution = [f"Caution: {c}" for c in Q.CAUTIONS]
    if fmt == "md":
        lines = []
        if header:
            rows = []
            for caption, _, body in blocks:
                rows += [pad([f"**{caption}**"])] + [list(r) for r in body]
            lines = _md_table(header, rows, align)
        else:
            for caption, head, body in blocks:
                lines += ([""] if lines else []) + [f"**{caption}**"]
                if head:
                    lines += [""] + _md_table(head, body, align)
        text = "\n".join(lines) + f"\n\n*{st}.*\n"
        return text + (f"\n**Caution:** {' '.join(Q.CAUTIONS)}\n" if cautions else "")
    if fmt in ("tsv", "csv"):
        buf = io.StringIO()
        writer = csv.writer(buf, delimiter="\t" if fmt == "tsv" else ",", lineterminator="\n")
        if header:
            writer.writerow(header)
        for caption, head, body in blocks:
            writer.writerow(pad([caption]))
            if head:
                writer.writerow(head)
            writer.writerows(pad(r) for r in body)
        if fmt == "tsv":
            writer.writerow(pad([st]))
            if cautions:
                writer.writerows(pad([c]) for c in caution)
            return buf.getvalue()
        tail = [st] + (caution if cautions else [])
        return buf.getvalue() + "".join(f"# {line}\n" for line in tail)
    if fmt == "latex":
        group = lambda caption: f"\\multicolumn{{{n}}}{{l}}{{\\textit{{{caption}}}}} \\\\"      # noqa: E731
        lines = ["\\toprule"]
        if header:
            lines += [" & ".join(header) + r" \\"]
        for i, (caption, head, body) in enumerate(blocks):
            lines += ["\\midrule"] if header or i else []
            lines += [group(caption)]
            if head:
                lines += [" & ".join(head) + r" \\", "\\midrule"]
            lines += [" & ".join(r) + r" \\" for r in body]
        lines += ["\\bottomrule"]
        words = f"{title}. {st}." + (" Caution: " + " ".join(Q.CAUTIONS) if cautions else "")
        return (f"% {latex_escape(st)}; needs \\usepackage{{booktabs}}\n"
                "\\begin{table}[htbp]\n\\centering\n"
                f"\\begin{{tabular}}{{{align}}}\n" + "\n".join(lines) + "\n\\end{tabular}\n"
                f"\\caption[{latex_escape(title)}]{{{latex_escape(words)}}}\n\\end{{table}}\n")
    raise ValueError(f"format: must be one of {', '.join(FORMATS[1:])}, got {fmt!r}")


def _cell(text, fmt):
    return latex_escape(text) if fmt == "latex" else text


def _check(fmt):
    if fmt not in FORMATS[1:]:
        raise ValueError(f"format: must be one of {', '.join(FORMATS[1:])}, got {fmt!r}")


def table(report, fmt, cautions=True):
    """The results table as ``md``, ``tsv``, ``csv`` or ``latex`` text, with its stamp and cautions.

    Rows are the tables of :data:`RESULT_TABLES` in turn, each opened by its caption; every label,
    unit and rounding is the quantity's own (:mod:`somaward.quantities`).

    Parameters
    ----------
    report : dict
        A report from :func:`somaward.solve` (or its JSON read back).
    fmt : {"md", "tsv", "csv", "latex"}
        The text format.
    cautions : bool, default True
        Whether the block carries the cautions of a passive-cable estimate (``quantities.CAUTIONS``).

    Returns
    -------
    str
    """
    _check(fmt)
    form = "latex" if fmt == "latex" else "plain"
    blocks = [(caption, None, [(label, _cell(Q.format_value(value, key), fmt), unit)
                               for key, label, value, unit in rows])
              for caption, rows in results_groups(report, form)]
    title = f"Passive-cable attenuation between the synapse and the {_rec(report)}"
    return _render(blocks, fmt, report, title, header=_HEADER, align="lrl", cautions=cautions)


def _head(key, rec, form):
    u = Q.unit(key, form)
    return Q.label(key, rec, form) + (f" ({u})" if u else "")


def rule_table(report, fmt, cautions=True):
    """The 3/2-rule table (Rall 1962) as ``md``, ``tsv``, ``csv`` or ``latex`` text.

    A block of branch points, then a block of the diameter steps between the cylinders of a
    branch; column heads are the quantities' labels and units.

    Parameters
    ----------
    report : dict
        A report from :func:`somaward.solve` (or its JSON read back).
    fmt : {"md", "tsv", "csv", "latex"}
        The text format.
    cautions : bool, default True
        Whether the block carries the cautions of a passive-cable estimate (``quantities.CAUTIONS``).

    Returns
    -------
    str
    """
    _check(fmt)
    rec, form = _rec(report), ("latex" if fmt == "latex" else "plain")
    blocks = []
    for caption, cols, rows in rule_table_rows(report):
        blocks.append((Q.render_markup(caption, form, rec), [_head(c, rec, form) for c in cols],
                       [[_cell(Q.format_value(v, c), fmt) for v, c in zip(r, cols, strict=True)] for r in rows]))
    if not blocks:
        blocks = [(_cell("The tree has no branch point and no diameter step: the 3/2 power rule has nothing "
                         "to apply to.", fmt), None, [])]
    title = "The 3/2 power rule at each branch point and diameter step (Rall 1962)"
    align = "llrrrrl" if len(blocks[0][1] or ()) == 7 else None
    return _render(blocks, fmt, report, title, align=align, cautions=cautions)


# ------------------------------------------------------------------ the methods paragraph
# Full references of every work the paragraph may cite, keyed by the citation as written in the text.
# Rall 1977: editor, volume, publisher and pages are from memory, not re-read in the volume.
REFERENCES = {
    "Agmon-Snir & Segev 1993": "Agmon-Snir H, Segev I (1993) Signal delay and input synchronization in passive "
                               "dendritic structures. J Neurophysiol 70:2066–2085.",
    "Hodgkin & Rushton 1946": "Hodgkin AL, Rushton WAH (1946) The electrical constants of a crustacean nerve fibre. "
                              "Proc R Soc Lond B 133:444–479.",
    "Rall 1959": "Rall W (1959) Branching dendritic trees and motoneuron membrane resistivity. Exp Neurol 1:491–527.",
    "Rall 1962": "Rall W (1962) Theory of physiological properties of dendrites. Ann NY Acad Sci 96:1071–1092.",
    "Rall 1964": "Rall W (1964) Theoretical significance of dendritic trees for neuronal input-output relations. "
                 "In: Reiss RF (ed) Neural Theory and Modeling. Stanford University Press, Stanford, CA, pp 73–97.",
    "Rall 1969": "Rall W (1969) Time constants and electrotonic length of membrane cylinders and neurons. "
                 "Biophys J 9:1483–1508.",
    "Rall 1977": "Rall W (1977) Core conductor theory and cable properties of neurons. In: Kandel ER (ed) Handbook of "
                 "Physiology, The Nervous System, sec. 1, vol. 1, part 1. American Physiological Society, Bethesda, "
                 "MD, pp 39–97.",
    "Rall & Rinzel 1973": "Rall W, Rinzel J (1973) Branch input resistance and steady attenuation for input to one "
                          "branch of a dendritic neuron model. Biophys J 13:648–688.",
    "Zador, Agmon-Snir & Segev 1995": "Zador AM, Agmon-Snir H, Segev I (1995) The morphoelectrotonic transform: a "
                                      "graphical approach to dendritic function. J Neurosci 15:1669–1682.",
}


def _lower_first(text):
    """Lower-case the first letter of a word ('Time from' → 'time from'), never of a symbol ('X =', 'R_T')."""
    return text[:1].lower() + text[1:] if text[1:2].islower() else text


def _the(clause):
    return clause if clause.startswith("the ") else "the " + clause


def _clause(text):
    """A definition sentence as a clause: first letter lower case, no final full stop."""
    return _lower_first(text.rstrip().removesuffix("."))


def _is(subject, definition):
    """'<subject> is <definition>', for a quantities definition written 'SYMBOL: what it is' or 'What it is'.

    A label ending in the symbol that the definition opens with drops it, so that the symbol is
    written once: ("the transfer resistance", "R_T: the steady…") → "the transfer resistance, R_T, is the steady…".
    """
    sym, sep, rest = definition.partition(": ")
    if sep and len(sym) <= 24:
        first = sym.split()[0]
        if subject.endswith(" " + first):
            subject = subject[:-len(first) - 1]
        return f"{subject}, {sym}, is {_clause(rest)}"
    return f"{subject} is {_the(_clause(definition))}"


def _count(n, singular, plural=None):
    return f"{n} {singular if n == 1 else (plural or singular + 's')}"


def _and(items, limit=8):
    items = [str(i) for i in items]
    if len(items) > limit:
        items = items[:limit - 1] + [f"{len(items) - limit + 1} more"]
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " and " + items[-1]


def _input_units():
    from .schema_check import schema_fields
    return {path: field["unit"] for path, field in schema_fields().items()}


def _ends_sentences(scenario):
    """One sentence per end condition, named as in the scenario (sealed, killed, infinite, load)."""
    units = _input_units()
    kinds = {}
    for b in scenario["branches"]:
        if "end" in b:
            e = b["end"]
            kinds.setdefault(e if isinstance(e, str) else "load", []).append((b["id"], e))
    total = sum(len(v) for v in kinds.values())
    out = []
    for kind, members in kinds.items():
        ids = [bid for bid, _ in members]
        meaning = Q.END_CONDITIONS[kind]
        if kind == "load":
            g, c = units["branches[].end.G"], units["branches[].end.C"]
            loads = "; ".join(f"{bid}: G = {e['G']:g} {g}, C = {e.get('C', 0):g} {c}" for bid, e in members[:8])
            loads += f"; and {len(members) - 8} more" if len(members) > 8 else ""
        if len(kinds) == 1 and total > 1:
            head = f"All {total} terminal ends were {kind if kind != 'load' else 'loads'}"
        elif total == 1:
            head = f"The terminal end, at {ids[0]}, was {kind if kind != 'load' else 'a load'}"
        else:
            what = kind if kind != "load" else ("a load" if len(ids) == 1 else "loads")
            one = len(ids) == 1
            head = f"The {'end' if one else 'ends'} of {_and(ids)} {'was' if one else 'were'} {what}"
        out.append(f"{head}: {meaning}" + (f" ({loads})." if kind == "load" else "."))
    return " ".join(out)


def methods_text(report):
    """A methods paragraph for a paper, and the references it cites.

    It states the model (passive cables solved exactly in the Laplace domain, Rall 1959; 1977),
    every parameter with its unit, the quantities reported (defined in the words of
    :mod:`somaward.quantities`), the equivalent-cylinder test (Rall 1962; 1964) and the cautions.

    Parameters
    ----------
    report : dict
        A report from :func:`somaward.solve` (or its JSON read back).

    Returns
    -------
    str
        The paragraph, a blank line, "References" and one full reference per line.
    """
    sc, site, rec = report["scenario"], report["site"], _rec(report)
    mem, soma = sc["membrane"], sc["soma"]
    units = _input_units()
    P = lambda markup: Q.render_markup(markup, "plain", rec)          # noqa: E731
    rm_label, ri_label, cm_label, tau_label = P("R_[m]"), P("R_[i]"), P("C_[m]"), P("τ_[m]")
    u_rm, u_ri, u_cm = units["membrane.Rm"], units["membrane.Ri"], units["membrane.Cm"]
    um = units["branches[].length"]
    n_b = len(sc["branches"])
    n_c = sum(len(b.get("cylinders", [b])) for b in sc["branches"])
    fmt = Q.format_value
    where = "the soma" if rec == "soma" else "the root of the dendritic tree"

    text = [
        f"Attenuation between a dendritic synapse and {where} was estimated with a passive cable model "
        f"({stamp(report)}).",
        f"The dendritic tree comprised {_count(n_b, 'branch', 'branches')} made of {_count(n_c, 'uniform cylinder')}, "
        f"with specific membrane resistance {rm_label} = {mem['Rm']:g} {u_rm}, "
        f"axial resistivity {ri_label} = {mem['Ri']:g} {u_ri} "
        f"and specific membrane capacitance {cm_label} = {mem['Cm']:g} {u_cm}, uniform over the tree, so that the "
        f"membrane time constant {tau_label} = {rm_label}·{cm_label} = {fmt(report['tau_m_ms'], 'tau_m_ms')} "
        f"{Q.unit('tau_m_ms')}.",
    ]
    if soma:
        s = report["soma"]
        rm_words = (f"a specific membrane resistance equal to the dendritic {rm_label}" if soma["Rm"] == mem["Rm"] else
                    f"its own specific membrane resistance of {soma['Rm']:g} {units['soma.Rm']}")
        text.append(
            f"The recording site was an isopotential spherical soma of diameter {soma['diameter']:g} "
            f"{units['soma.diameter']} (membrane area πD² = {fmt(s['area_um2'], 'soma.area_um2')} "
            f"{Q.unit('soma.area_um2')}), with {rm_words} and a specific membrane capacitance equal to the dendritic "
            f"{cm_label} ({mem['Cm']:g} {u_cm}), so that the soma's own membrane had a resistance of "
            f"{fmt(s['resistance_Mohm'], 'soma.resistance_Mohm')} {Q.unit('soma.resistance_Mohm')} and a capacitance "
            f"of {fmt(s['capacitance_pF'], 'soma.capacitance_pF')} {Q.unit('soma.capacitance_pF')}.")
    else:
        text.append("No soma was modelled: the recording site was the root of the tree, the node where its stem "
                    "branches meet, and every quantity named for the root refers to that node.")
    text.append(_ends_sentences(sc))
    text.append(
        f"Each cylinder obeys the cable equation λ²∂²V/∂x² − {tau_label}∂V/∂t − V = 0, with space constant "
        f"λ = √({rm_label}·d/(4{ri_label})) for a cylinder of diameter d (Hodgkin & Rushton 1946; Rall 1977); it was "
        "solved exactly in the Laplace domain and the cylinders were combined through the tree by the recursion of "
        "input admittances (Rall 1959), with no spatial discretisation.")
    n_cyl_syn = len(report["cylinders"].get(site["branch"], [None]))
    in_cyl = f", in its cylinder {site['cylinder']} (counted from its proximal end)" if n_cyl_syn > 1 else ""
    x_sym, _, x_what = Q.definition("site.electrotonic_distance", rec).partition(": ")
    text.append(
        f"The synapse lay on branch {site['branch']}{in_cyl}, {fmt(site['distance_um'], 'site.distance_um')} {um} "
        f"from the branch's proximal end and {fmt(site['path_distance_um'], 'site.path_distance_um')} {um} from "
        f"the {rec} along the dendrites, at electrotonic distance X = "
        f"{fmt(site['electrotonic_distance'], 'site.electrotonic_distance')}, where {x_sym} is {_clause(x_what)}.")

    # The quantities reported, defined in the words of somaward.quantities.
    ss = "attenuation.steady_state"
    up, down = P("V_[{rec}]/V_[syn]"), P("V_[syn]/V_[{rec}]")
    text.append(
        f"For a steady current injected at one site, the voltage ratio {up} (synapse → {rec}) is "
        f"{_the(_clause(Q.definition(f'{ss}.site_to_soma', rec)))}, and {down} ({rec} → synapse) is "
        f"{_the(_clause(Q.definition(f'{ss}.soma_to_site', rec)))}; the attenuation factor is "
        f"{_clause(Q.TERMS['attenuation_factor'][1])}, and the % reaching is "
        f"{_clause(Q.TERMS['percent_reaching'][1])}.")
    text.append(
        f"The input resistance ({P('R_[{rec}]')} at the {rec}, {P('R_[syn]')} at the synapse) is "
        f"{_clause(Q.TERMS['input_resistance'][1])}.")
    text.append(_is(f"The {_lower_first(Q.label('transfer_resistance_Mohm', rec))}",
                    Q.definition("transfer_resistance_Mohm", rec)) + ".")
    if report.get("rho") is not None:
        text.append(_is(f"The {_lower_first(Q.label('rho', rec))}", Q.definition("rho", rec)) + ".")
    text.append(_is(f"The {_lower_first(Q.label('centroid_delay_ms', rec))}",
                    Q.definition("centroid_delay_ms", rec)) + ".")

    freqs_hz = sc["frequencies_hz"]
    hz = units["frequencies_hz"]
    span = f"{freqs_hz[0]:g} {hz}" if len(freqs_hz) == 1 else f"from {min(freqs_hz):g} to {max(freqs_hz):g} {hz}"
    text.append(
        f"Frequency responses were evaluated at {_count(len(freqs_hz), 'frequency', 'frequencies')}, {span}; the "
        f"whole-tree map used points at most {sc['map_spacing_um']:g} {units['map_spacing_um']} apart, at "
        f"{sc['map_frequency_hz']:g} {units['map_frequency_hz']}.")
    text.append(methods_sentence(report))
    text += list(Q.CAUTIONS)
    paragraph = " ".join(text)
    refs = [full for cite, full in sorted(REFERENCES.items(), key=lambda kv: kv[1]) if cite in paragraph]
    return paragraph + "\n\nReferences\n" + "\n".join(refs) + "\n"


def render(report, fmt="json"):
    """The whole report in one format: JSON, or the tables (+ warnings and methods for md).

    The cautions close every format: the JSON's ``caution`` key, the last rows of TSV, the last
    ``#`` lines of CSV, the 3/2-rule table's caption in LaTeX, and in Markdown the line under the
    results table and the methods paragraph.

    Parameters
    ----------
    report : dict
        A report from :func:`somaward.solve` (or its JSON read back).
    fmt : {"json", "md", "tsv", "csv", "latex"}, default "json"
        The output format (the CLI's ``--format``).

    Returns
    -------
    str
    """
    if fmt == "json":
        return json.dumps(report, indent=1, ensure_ascii=False, allow_nan=False) + "\n"
    _check(fmt)
    if fmt != "md":
        return table(report, fmt, cautions=False) + "\n" + rule_table(report, fmt)
    results, rule = table(report, fmt), rule_table(report, fmt, cautions=False)
    warnings = "".join(f"- {w}\n" for w in report["warnings"])
    return (f"## Results\n\n{results}\n"
            + (f"### Warnings\n\n{warnings}\n" if warnings else "")
            + f"### Equivalent cylinder: the 3/2 power rule\n\n{rule}\n"
            + f"## Methods\n\n{methods_text(report)}")
