"""Exports for the paper: every table parses back with a real parser, its words are the
quantities' own, and every format carries the stamp and the cautions.

Format rules: LaTeX special characters (Lamport 1994, LaTeX: A Document Preparation System,
§2.2.1); CSV quoting (RFC 4180); booktabs rules (the booktabs package manual). These are contract
tests of the engine's words and layout (common practice, no source), not physics: the expected
labels, units and roundings are read from ``somaward.quantities`` and the report, never typed here.
The scenarios are invented for these tests.
"""

import csv
import io
import json
import re

import pytest

import somaward
from somaward import quantities as Q
from somaward.export import (RESULT_TABLES, fingerprint, format_value, latex_escape, methods_text, render,
                             rule_table, stamp, table)

ODD_ID = 'odd "id"\twith|tab & 50%_$#{}~^\\'
SCENARIO = {"membrane": {"Rm": 20000, "Ri": 150},                     # no soma: the recording site is the root
            "branches": [{"id": ODD_ID, "parent": None, "length": 300, "diameter": 1.0}],
            "synapse": {"branch": ODD_ID, "distance": 100}}
CELL = {"membrane": {"Rm": 20000, "Ri": 150, "Cm": 0.8},
        "soma": {"diameter": 16, "Rm": 8000},
        "branches": [{"id": "trunk", "parent": None, "cylinders": [{"length": 100, "diameter": 3},
                                                                  {"length": 100, "diameter": 2}]},
                     {"id": "a", "parent": "trunk", "length": 200, "diameter": 1.2, "end": "sealed"},
                     {"id": "b", "parent": "trunk", "length": 150, "diameter": 1.0, "end": "killed"},
                     {"id": "c", "parent": "trunk", "length": 100, "diameter": 0.8, "end": "infinite"},
                     {"id": "basal", "parent": None, "length": 120, "diameter": 1.0, "end": {"G": 0.5, "C": 1}}],
        "synapse": {"branch": "a", "distance": 150}}


@pytest.fixture(scope="module")
def report():
    return somaward.solve(SCENARIO)


@pytest.fixture(scope="module", params=["root", "soma"])
def any_report(request):
    return somaward.solve(SCENARIO if request.param == "root" else CELL)


def expected_rows(rep, form):
    """(caption, [(label, value, unit)]) per results table, straight from quantities."""
    rec = rep["recording_site"]
    out = []
    for name in RESULT_TABLES:
        rows = []
        for key, _, value, _ in Q.table_rows(rep, name):
            q = Q.quantity(key)
            item = key[len(q.key) - 1:] if q.key.endswith(".*") else None
            rows.append((Q.label(key, rec, form, item), Q.format_value(value, key), Q.unit(key, form)))
        out.append((Q.render_markup(Q.TABLES[name]["caption"], form, rec), rows))
    return out


def flat(groups, caption_row, row=list):
    """The rows a table should have: each group's caption row, then its rows through ``row``."""
    rows = []
    for caption, body in groups:
        rows.append(caption_row(caption))
        rows += [row(r) for r in body]
    return rows


def without_comments(text):
    return [line for line in text.splitlines(keepends=True) if not line.startswith("#")]


def test_latex_escape_specials():
    assert latex_escape("a_b & 50% $x$ #1 {y} ~ ^ \\") == (
        r"a\_b \& 50\% \$x\$ \#1 \{y\} \textasciitilde{} \textasciicircum{} \textbackslash{}")
    assert latex_escape("λ = 5 µm") == r"$\lambda$ = 5 $\mu$m"


def test_tsv_rows_are_the_quantities_and_end_with_the_cautions(any_report):
    rows = list(csv.reader(io.StringIO(table(any_report, "tsv")), delimiter="\t"))
    assert rows[0] == ["Quantity", "Value", "Unit"]
    n = len(Q.CAUTIONS)
    assert [r[0] for r in rows[-n:]] == [f"Caution: {c}" for c in Q.CAUTIONS]      # the last rows
    assert rows[-n - 1][0] == stamp(any_report)
    assert rows[1:-n - 1] == flat(expected_rows(any_report, "plain"), lambda c: [c, "", ""], list)


def test_csv_parses_with_comment_lines_skipped(any_report):
    text = table(any_report, "csv")
    rows = list(csv.reader(without_comments(text)))
    assert rows[0] == ["Quantity", "Value", "Unit"]
    assert rows[1:] == flat(expected_rows(any_report, "plain"), lambda c: [c, "", ""], list)
    comments = [line[2:] for line in text.splitlines() if line.startswith("# ")]
    assert comments[0] == stamp(any_report)
    assert comments[1:] == [f"Caution: {c}" for c in Q.CAUTIONS]
    assert text.splitlines()[-1].startswith("#")                                   # trailing lines


_TABULAR = re.compile(r"\\begin\{tabular\}\{(?P<cols>[lrc]+)\}\n(?P<body>.*?)\\end\{tabular\}", re.S)
_CAPTION = re.compile(r"\\caption\[[^\]]*\]\{(?P<text>.*)\}\n\\end\{table\}")
_GROUP = re.compile(r"\\multicolumn\{\d+\}\{l\}\{\\textit\{(?P<caption>.*)\}\}$")


def latex_cells(text):
    """Rows of a booktabs tabular as lists of cells (rules dropped; group rows as [caption])."""
    m = _TABULAR.search(text)
    assert m, text
    rows = []
    for line in m.group("body").splitlines():
        line = line.strip()
        if line in ("\\toprule", "\\midrule", "\\bottomrule"):
            continue
        assert line.endswith(r"\\"), line
        line = line[:-2].rstrip()
        g = _GROUP.fullmatch(line)
        rows.append([g.group("caption")] if g else [c.strip() for c in re.split(r"(?<!\\)&", line)])
    return m.group("cols"), rows


def test_latex_table_parses_back_and_its_caption_has_the_cautions(any_report):
    text = table(any_report, "latex")
    cols, rows = latex_cells(text)
    assert cols == "lrl" and rows[0] == ["Quantity", "Value", "Unit"]
    expected = [(cap, [(lab, latex_escape(v), u) for lab, v, u in body])
                for cap, body in expected_rows(any_report, "latex")]
    assert rows[1:] == flat(expected, lambda c: [c], list)
    caption = _CAPTION.search(text).group("text")
    assert latex_escape(stamp(any_report)) in caption
    for c in Q.CAUTIONS:
        assert latex_escape(c) in caption
    assert "\\toprule" in text and "\\bottomrule" in text


def md_rows(text):
    return [[c.strip() for c in re.split(r"(?<!\\)\|", line.strip())[1:-1]]
            for line in text.splitlines() if line.startswith("| ")]


def test_markdown_rows_are_the_quantities_with_a_visible_caution(any_report):
    text = table(any_report, "md")
    rows = md_rows(text)
    assert rows[0] == ["Quantity", "Value", "Unit"]
    md = lambda c: c.replace("\\", "\\\\").replace("|", "\\|")          # noqa: E731 (the md cell escape)
    assert rows[1:] == flat(expected_rows(any_report, "plain"), lambda c: [f"**{c}**", "", ""],
                            lambda r: [md(c).strip() for c in r])
    line = next(ln for ln in text.splitlines() if ln.startswith("**Caution:**"))
    for c in Q.CAUTIONS:
        assert c in line
    assert f"*{stamp(any_report)}.*" in text and "<!--" not in text


def test_markdown_escapes_pipes(report):
    text = table(report, "md")
    row = next(line for line in text.splitlines() if line.startswith("| Branch of the synapse"))
    assert row.count("|") - row.count("\\|") == 4


def test_without_a_soma_no_export_names_a_soma(report):
    """The recording site is the root: labels, captions and sentences say so."""
    assert report["recording_site"] == "root"
    for fmt in ("md", "tsv", "csv", "latex"):
        text = render(report, fmt)
        prose = text.replace(ODD_ID, "")
        assert not re.search(r"\bsoma\b", prose.split("## Methods")[0].lower()), fmt
    methods = methods_text(report)
    assert "V_root/V_syn = R_T/R_syn" in methods and "V_syn/V_root = R_T/R_root" in methods
    assert "No soma was modelled" in methods
    assert not re.search(r"\bsoma\b", methods.replace("No soma was modelled", "").lower())


@pytest.mark.parametrize("fmt", ["md", "tsv", "csv", "latex"])
def test_one_vocabulary(any_report, fmt):
    text = render(any_report, fmt)
    for word in ("V_out", "V_in", "V_site", "(default)", "misestimated", "fold attenuation", "sections"):
        assert word not in text, word


def test_rule_table_heads_are_the_quantities():
    rep = somaward.solve(CELL)
    rows = list(csv.reader(io.StringIO(rule_table(rep, "tsv")), delimiter="\t"))
    heads = [r for r in rows if r and r[-1] == Q.label("equivalent_cylinder.branch_points[].ok")]
    assert len(heads) == 2
    prefixes = ("equivalent_cylinder.branch_points[]", "equivalent_cylinder.cylinder_joins[]")
    for head, prefix in zip(heads, prefixes, strict=True):
        keys = [k for k in Q.QUANTITIES if k.startswith(prefix + ".") and k.count(".") == 2]
        by_label = {Q.label(k) + (f" ({Q.unit(k)})" if Q.unit(k) else ""): k for k in keys}
        for h in head:
            assert h in by_label, (h, sorted(by_label))
    step = rows[rows.index(heads[1]) + 1]
    assert step[:2] == ["trunk", "2"]                                        # named by id, counted from 1
    assert rows[-1][0] == f"Caution: {Q.CAUTIONS[-1]}"


def test_fingerprint_tracks_the_scenario(report):
    other = dict(SCENARIO, membrane={"Rm": 20001, "Ri": 150})
    assert fingerprint(report["scenario"]) == fingerprint(somaward.solve(SCENARIO)["scenario"])
    assert fingerprint(report["scenario"]) != fingerprint(somaward.solve(other)["scenario"])
    assert re.fullmatch(r"[0-9a-f]{12}", fingerprint(report["scenario"]))


@pytest.mark.parametrize("x,text", [(0.123456, "0.1235"), (1234567.0, "1.235e6"), (None, "—"), (0, "0"),
                                    (2.5e-7, "2.5e-7")])
def test_format_value(x, text):
    assert format_value(x) == text


def test_fingerprint_ignores_how_numbers_are_written(report):
    """4 and 4.0 are one JSON number (RFC 8259 §6): a scenario re-saved by another writer keeps
    its fingerprint."""
    as_floats = json.loads(json.dumps(report["scenario"]), parse_int=float)
    assert fingerprint(as_floats) == fingerprint(report["scenario"])


def test_md_report_ends_with_the_methods_text(report):
    """The page copies methods_text(); the CLI's md report must end with the same words."""
    assert render(report, "md").endswith(methods_text(report))


@pytest.mark.parametrize("fmt", ["tsv", "csv", "latex", "md"])
def test_every_rendered_format_carries_stamp_and_cautions(any_report, fmt):
    text = render(any_report, fmt)
    esc = latex_escape if fmt == "latex" else (lambda t: t)
    assert esc(stamp(any_report)) in text
    for c in Q.CAUTIONS:
        assert esc(c) in text
    if fmt == "tsv":
        assert list(csv.reader(io.StringIO(text), delimiter="\t"))[-1][0] == f"Caution: {Q.CAUTIONS[-1]}"
    if fmt == "csv":
        assert text.splitlines()[-1] == f"# Caution: {Q.CAUTIONS[-1]}"


# ------------------------------------------------------------------ the methods paragraph
@pytest.fixture(scope="module")
def cell():
    return somaward.solve(CELL)


def test_methods_defines_what_it_uses(cell):
    """Input resistance, transfer resistance and ρ are defined in the quantities' words, with
    V_soma/V_syn = R_T/R_syn and V_syn/V_soma = R_T/R_soma (Rall & Rinzel 1973)."""
    text = methods_text(cell)
    assert "V_soma/V_syn = R_T/R_syn" in text and "V_syn/V_soma = R_T/R_soma" in text
    assert "The input resistance (R_soma at the soma, R_syn at the synapse) is the steady voltage" in text
    rt_what = Q.definition("transfer_resistance_Mohm").partition(": ")[2].rstrip(".")
    assert "R_T, is " + rt_what in text
    rho_what = Q.definition("rho").partition(": ")[2].rstrip(".")
    assert "ρ = G_dend/G_soma, is " + rho_what in text
    centroid = Q.definition("centroid_delay_ms").rstrip(".")
    assert "is the " + centroid[0].lower() + centroid[1:] in text


def test_methods_states_the_soma_and_no_program_words(cell):
    text = methods_text(cell)
    assert "(default)" not in text
    assert "its own specific membrane resistance of 8000 Ω·cm²" in text
    assert "a specific membrane capacitance equal to the dendritic C_m (0.8 µF/cm²)" in text
    assert f"a capacitance of {Q.format_value(cell['soma']['capacitance_pF'], 'soma.capacitance_pF')} pF" in text
    plain = somaward.solve(dict(CELL, soma={"diameter": 16}))
    assert "a specific membrane resistance equal to the dendritic R_m" in methods_text(plain)


def test_methods_names_each_end_condition_once(cell):
    """sealed, killed, infinite and load: the scenario's own names, with what they mean."""
    text = methods_text(cell)
    for kind, meaning in Q.END_CONDITIONS.items():
        assert f" {kind if kind != 'load' else 'a load'}: {meaning}" in text, kind
    assert "G = 0.5 nS, C = 1 pF" in text


def test_methods_counts_agree():
    one = somaward.solve({"membrane": {"Rm": 20000, "Ri": 150}, "soma": {"diameter": 20},
                          "branches": [{"id": "d", "parent": None, "length": 300, "diameter": 1}],
                          "synapse": {"branch": "d", "distance": 100}, "frequencies_hz": [0]})
    text = methods_text(one)
    assert "1 branch made of 1 uniform cylinder," in text and "1 frequency, 0 Hz" in text
    assert "branch(es)" not in text and "point(s)" not in text
    assert "5 branches made of 6 uniform cylinders," in methods_text(somaward.solve(CELL))


def test_methods_says_under_or_over_estimated(cell):
    text = methods_text(cell)
    err = cell["equivalent_cylinder"]["comparison"]["soma_input_resistance_Mohm"]["relative_error"]
    word = "overestimated" if err > 0 else "underestimated"
    pct = abs(100 * err)
    shown = f"{pct:.0f}" if pct >= 10 else f"{pct:.2g}"
    assert f"{word} the input resistance at the soma by {shown} %" in text
    assert "misestimated" not in text
    assert "between cylinders 1 and 2 of trunk" in text                      # the failing taper step


def test_methods_mentions_no_synaptic_current(cell):
    """No reported number depends on the synaptic current's time course yet."""
    text = methods_text(cell)
    assert "synaptic current" not in text and "alpha" not in text and " pA" not in text


def test_methods_references_match_the_citations(cell):
    """Every citation in the paragraph has its reference and every reference is cited; Rall 1977
    is cited in full (editor and publisher)."""
    text = methods_text(cell)
    paragraph, refs = text.split("\n\nReferences\n")
    cited = set(re.findall(r"\b((?:[A-Z][\w-]+, )*[A-Z][\w-]+(?: & [A-Z][\w-]+)? \d{4})\b", paragraph))
    listed = refs.strip().splitlines()
    for cite in cited:
        first = cite.split()[0].rstrip(",")
        year = cite.split()[-1]
        assert any(r.startswith(first) and f"({year})" in r for r in listed), cite
    assert len(listed) == len(set(listed))
    rall77 = next(r for r in listed if r.startswith("Rall W (1977)"))
    assert "Kandel ER (ed)" in rall77 and "American Physiological Society" in rall77 and "Bethesda" in rall77
    for c in Q.CAUTIONS:
        assert c in paragraph
