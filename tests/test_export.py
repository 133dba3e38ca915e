"""Exports for the paper: escaping, quoting and round trips of the results table.

Format rules: LaTeX special characters (Lamport 1994, LaTeX: A Document Preparation System,
§2.2.1); CSV quoting (RFC 4180); booktabs rules (the booktabs package manual). Numbers in the
tables are the report's values rounded to 4 significant digits (common practice, no source).
"""

import csv
import io
import re

import pytest

import somaward
from somaward.export import fingerprint, format_value, latex_escape, methods_text, results_rows, table

SCENARIO = {"membrane": {"Rm": 20000, "Ri": 150},
            "branches": [{"id": 'odd "id"\twith|tab & 50%_$#{}~^\\', "parent": None, "length": 300, "diameter": 1.0}],
            "synapse": {"branch": 'odd "id"\twith|tab & 50%_$#{}~^\\', "distance": 100}}


@pytest.fixture(scope="module")
def report():
    return somaward.solve(SCENARIO)


def test_latex_escape_specials():
    assert latex_escape("a_b & 50% $x$ #1 {y} ~ ^ \\") == (
        r"a\_b \& 50\% \$x\$ \#1 \{y\} \textasciitilde{} \textasciicircum{} \textbackslash{}")
    assert latex_escape("λ = 5 µm") == r"$\lambda$ = 5 $\mu$m"


@pytest.mark.parametrize("fmt,delim", [("tsv", "\t"), ("csv", ",")])
def test_tsv_csv_round_trip(report, fmt, delim):
    rows = list(csv.reader(io.StringIO(table(report, fmt)), delimiter=delim))
    assert rows[0] == ["Quantity", "Value", "Unit"]
    expected = [[q, format_value(v), u] for q, v, u in results_rows(report)]
    assert rows[1:-1] == expected
    assert rows[-1][0].startswith(f"Somaward {somaward.__version__}, scenario {fingerprint(report['scenario'])}")


def test_latex_parses_back(report):
    text = table(report, "latex")
    assert "\\toprule" in text and "\\midrule" in text and "\\bottomrule" in text
    body = text.split("\\midrule\n")[1].split("\\bottomrule")[0]
    cells = [[c.strip() for c in re.split(r"(?<!\\)&", line.rstrip().removesuffix("\\\\"))]
             for line in body.strip().splitlines()]
    expected = [[latex_escape(c).strip() for c in (q, format_value(v), u)] for q, v, u in results_rows(report)]
    assert cells == expected


def test_markdown_escapes_pipes(report):
    text = table(report, "md")
    row = next(line for line in text.splitlines() if line.startswith("| Synapse branch"))
    assert row.count("|") - row.count("\\|") == 4


def test_fingerprint_tracks_the_scenario(report):
    other = dict(SCENARIO, membrane={"Rm": 20001, "Ri": 150})
    assert fingerprint(report["scenario"]) == fingerprint(somaward.solve(SCENARIO)["scenario"])
    assert fingerprint(report["scenario"]) != fingerprint(somaward.solve(other)["scenario"])
    assert re.fullmatch(r"[0-9a-f]{12}", fingerprint(report["scenario"]))


def test_methods_states_defaults(report):
    text = methods_text(report)
    assert "Cm = 1 µF/cm² (default)" in text
    assert "No soma was modelled" in text
    assert "passive-cable estimates, not measurements" in text


@pytest.mark.parametrize("x,text", [(0.123456, "0.1235"), (1234567.0, "1.235e6"), (None, "—"), (0, "0"),
                                    (2.5e-7, "2.5e-7")])
def test_format_value(x, text):
    assert format_value(x) == text


def test_fingerprint_ignores_how_numbers_are_written(report):
    """4 and 4.0 are one JSON number (RFC 8259 §6): a scenario re-saved by another writer keeps
    its fingerprint."""
    import json

    as_floats = json.loads(json.dumps(report["scenario"]), parse_int=float)
    assert fingerprint(as_floats) == fingerprint(report["scenario"])


def test_md_report_ends_with_the_methods_text(report):
    """The page copies methods_text(); the CLI's md report must end with the same words."""
    from somaward.export import render

    assert render(report, "md").endswith(methods_text(report))
