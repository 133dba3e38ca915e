"""The `somaward` command: same report as solve(), every format, and its error paths.

Physics values checked here come from closed forms: λ = √(Rm·d/(4Ri)) = 500 µm for d = 1 µm,
Rm = 20 000 Ω·cm², Ri = 200 Ω·cm (Rall 1977; computed), and R∞·coth(1) = 1671.81 MΩ (Rall 1959;
computed with mpmath below).
"""

import json
import subprocess
import sys

import mpmath
import pytest

import somaward

EXAMPLE = {"membrane": {"Rm": 20000, "Ri": 150, "Cm": 1.0},
           "soma": {"diameter": 20},
           "branches": [{"id": "trunk", "parent": None, "length": 400, "diameter": 3.0},
                        {"id": "tuft", "parent": "trunk", "length": 300, "diameter": 1.0, "end": "sealed"}],
           "synapse": {"branch": "tuft", "distance": 250,
                       "current": {"shape": "alpha", "tau": 0.5, "peak": 50}}}


def run(*args, stdin=None):
    return subprocess.run([sys.executable, "-m", "somaward", *args], input=stdin,
                          capture_output=True, text=True, timeout=120)


def test_report_equals_solve(tmp_path):
    path = tmp_path / "cell.json"
    path.write_text(json.dumps(EXAMPLE))
    out = run("report", str(path))
    assert out.returncode == 0, out.stderr
    assert json.loads(out.stdout) == json.loads(json.dumps(somaward.solve(EXAMPLE)))


def test_importing_the_command_runs_nothing(monkeypatch):
    """pytest --doctest-modules imports every engine module: somaward.__main__ and somaward.cli
    must not run the command on import (the arguments below would make it exit with code 2)."""
    import importlib

    monkeypatch.setattr(sys, "argv", ["somaward", "--no-such-option"])
    for name in ("somaward.cli", "somaward.__main__"):
        sys.modules.pop(name, None)
        importlib.import_module(name)          # a SystemExit here fails the test


def test_report_reads_stdin():
    out = run("report", "-", stdin=json.dumps(EXAMPLE))
    assert out.returncode == 0
    assert json.loads(out.stdout)["transfer_resistance_Mohm"] == pytest.approx(
        somaward.solve(EXAMPLE)["transfer_resistance_Mohm"], rel=1e-15)


@pytest.mark.parametrize("fmt", ["md", "tsv", "csv", "latex"])
def test_every_format(fmt):
    out = run("report", "-", "--format", fmt, stdin=json.dumps(EXAMPLE))
    assert out.returncode == 0 and out.stdout.strip()
    assert "Somaward" in out.stdout


def test_md_has_methods_paragraph():
    text = run("report", "-", "--format", "md", stdin=json.dumps(EXAMPLE)).stdout
    assert "## Methods" in text and "Rall 1959" in text and "R_i = 150 Ω·cm" in text


def test_md_uses_the_quantities_words():
    """Common practice, no source: each row of the md results table is a quantity's own label,
    rounded value and unit (somaward.quantities), as the page shows them."""
    from somaward import quantities as q

    text = run("report", "-", "--format", "md", stdin=json.dumps(EXAMPLE)).stdout
    results = text.split("### ")[0]
    shown = {}
    for line in results.splitlines():
        if line.startswith("| ") and not line.startswith("| **"):
            label, value, unit = [c.strip() for c in line.strip("|").split(" | ")]
            shown[label] = (value, unit)
    report = somaward.solve(EXAMPLE)
    expected = {}
    for name in ("steady_state", "constants", "equivalent_cylinder", "branches"):
        for key, label, value, unit in q.table_rows(report, name):
            expected[label] = (q.format_value(value, key), unit)
    expected["Quantity"] = ("Value", "Unit")
    assert shown == expected


@pytest.mark.parametrize("args", [["report", "-"], ["report", "-", "--format", "md"],
                                  ["report", "-", "--format", "tsv"], ["report", "-", "--format", "csv"],
                                  ["report", "-", "--format", "latex"],
                                  ["demo"], ["demo", "--format", "json"], ["demo", "--format", "csv"],
                                  ["constants", "--Rm", "20000", "--Ri", "150", "--diameter", "2"],
                                  ["constants", "--Rm", "20000", "--Ri", "150", "--diameter", "2", "--format", "json"]])
def test_every_output_carries_the_cautions(args):
    """Issue 8.7: every CLI output except `schema` states what a passive-cable estimate leaves out."""
    from somaward.export import latex_escape
    from somaward.quantities import CAUTIONS

    out = run(*args, stdin=json.dumps(EXAMPLE))
    assert out.returncode == 0, out.stderr
    if "json" in args or args == ["report", "-"]:
        assert json.loads(out.stdout)["caution"] == list(CAUTIONS)
        return
    for caution in CAUTIONS:
        assert (latex_escape(caution) if "latex" in args else caution) in out.stdout


def test_schema_is_bare_json():
    out = run("schema")
    assert out.returncode == 0 and "caution" not in json.loads(out.stdout)


def test_demo_runs_and_says_invented():
    out = run("demo", "--format", "json")
    assert out.returncode == 0
    assert "Invented" in json.loads(out.stdout)["scenario"]["title"]


def test_constants_closed_forms():
    """λ = 500 µm (Rall 1977; computed); R∞ = (2/π)√(Rm·Ri)·d^−3/2 and R∞·coth L, R∞·tanh L at
    L = 1 (Rall 1959) via mpmath."""
    args = ("constants", "--Rm", "20000", "--Ri", "200", "--Cm", "1", "--diameter", "1", "--length", "500")
    out = run(*args, "--format", "json")
    assert out.returncode == 0, out.stderr
    values = json.loads(out.stdout)
    assert values["lambda_um"] == pytest.approx(500.0, rel=1e-12)
    assert values["electrotonic_length"] == pytest.approx(1.0, rel=1e-12)
    assert values["tau_m_ms"] == pytest.approx(20.0, rel=1e-12)            # Rm·Cm = 20 000 Ω·cm² · 1 µF/cm²
    r_inf = 2 / mpmath.pi * mpmath.sqrt(20000 * 200) * mpmath.mpf("1e-4") ** mpmath.mpf(-1.5) * 1e-6
    assert values["input_resistance_infinite_Mohm"] == pytest.approx(float(r_inf), rel=1e-12)
    assert values["input_resistance_sealed_Mohm"] == pytest.approx(float(r_inf * mpmath.coth(1)), rel=1e-12)
    assert values["input_resistance_killed_Mohm"] == pytest.approx(float(r_inf * mpmath.tanh(1)), rel=1e-12)


def test_constants_text_uses_the_quantities_words():
    """Common practice, no source: each line is a quantity's label, its value to the quantity's
    digits and its unit, as in somaward.quantities.CYLINDER_CONSTANTS."""
    from somaward.quantities import CYLINDER_CONSTANTS, format_value, render_markup

    args = ("constants", "--Rm", "20000", "--Ri", "200", "--diameter", "1", "--length", "500")
    values = json.loads(run(*args, "--format", "json").stdout)
    lines = run(*args).stdout.splitlines()
    table = lines[:lines.index("")]
    assert len(table) == len(CYLINDER_CONSTANTS)
    for line, (key, q) in zip(table, CYLINDER_CONSTANTS.items(), strict=True):
        label, rest = line[:line.rindex("  ")].rstrip(), line[line.rindex("  "):].split()
        assert label == render_markup(q.label)
        assert rest[0] == format_value(values[key], digits=q.digits)
        assert (rest[1] if len(rest) > 1 else "") == q.unit


@pytest.mark.parametrize("args", [["--help"], ["report", "--help"], ["demo", "--help"],
                                  ["constants", "--help"], ["schema", "--help"]])
def test_help_everywhere(args):
    out = run(*args)
    assert out.returncode == 0 and "usage" in out.stdout


def _bad(mutate):
    sc = json.loads(json.dumps(EXAMPLE))
    mutate(sc)
    return json.dumps(sc)


@pytest.mark.parametrize("stdin,message", [
    (_bad(lambda s: s["branches"][1].__setitem__("diameter", -1)),
     r"^somaward: error: branches\[1\]\.diameter: must be > 0 µm, got -1$"),
    (_bad(lambda s: s["branches"][1].__setitem__("parent", "trnk")),
     r"branches\[1\]\.parent: no branch has id 'trnk'; did you mean 'trunk'\?"),
    (_bad(lambda s: s["branches"][1].__setitem__("diamter", 1)),
     r"branches\[1\]\.diamter: unknown key; did you mean 'diameter'\?"),
    (_bad(lambda s: s["branches"][1].__setitem__("id", "trunk")), r"branches\[1\]\.id: duplicate id 'trunk'"),
    (_bad(lambda s: s["branches"][0].__setitem__("parent", "tuft")), r"parent: the parent chain loops back"),
    (_bad(lambda s: s["synapse"].__setitem__("distance", 301)), r"synapse\.distance: must be ≤ 300 µm"),
    (_bad(lambda s: s["membrane"].__setitem__("Ri", "150")), r"membrane\.Ri: must be a number \(Ω·cm\), got '150'"),
    ('{"membrane": ', r"stdin: not valid JSON: .* at line 1 column"),
    ("[1, 2]", r"scenario: must be a JSON object"),
])
def test_error_paths(stdin, message):
    """One line on stderr naming the JSON path, exit code 2, no traceback (common practice)."""
    out = run("report", "-", stdin=stdin)
    assert out.returncode == 2
    assert out.stdout == ""
    err = out.stderr.rstrip("\n")
    assert "\n" not in err and "Traceback" not in err
    assert __import__("re").search(message, err), err


def test_missing_file():
    out = run("report", "/nonexistent/cell.json")
    assert out.returncode == 2 and "cannot read the file" in out.stderr


def test_bad_constant_argument():
    out = run("constants", "--Rm", "-5", "--Ri", "100", "--diameter", "1")
    assert out.returncode == 2 and "must be a finite number > 0, got -5" in out.stderr


@pytest.mark.parametrize("args, option", [
    (["--Rm", "1e308", "--Ri", "100", "--diameter", "2"], "--Rm"),
    (["--Rm", "2e4", "--Ri", "100", "--diameter", "1e250"], "--diameter"),
    (["--Rm", "2e4", "--Ri", "1e-300", "--diameter", "2"], "--Ri"),
    (["--Rm", "2e4", "--Ri", "100", "--diameter", "2", "--length", "1e300"], "--length"),
])
def test_constants_rejects_absurd_magnitudes(args, option):
    """Issue 9: the scenario schema's plausible bounds apply to the constants command's options:
    exit 2, one line naming the option (common practice, no source)."""
    r = run("constants", *args)
    assert r.returncode == 2 and r.stdout == ""
    lines = r.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith(f"somaward: error: {option}: "), r.stderr
