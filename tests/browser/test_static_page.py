"""The page's sources hold no words about a quantity of their own (issue 8.2): no unit is written
in ``site_src/`` (JavaScript, templates, the bridge, CSS content) — every unit the page shows comes
from the engine's vocabulary (``somaward.quantities``, the scenario schema), which build.py embeds
and ``site_src/js/render.js`` renders; and no script builds markup from text (innerHTML and its
kin), so user text stays text. No browser needed. Source: derived (the house rules in
DEVELOPERS.md, "The page")."""
from __future__ import annotations

import re
from pathlib import Path

import pytest

SRC = Path(__file__).resolve().parents[2] / "site_src"

# The units of the report and of the scenario (DEVELOPERS.md, "Units"), as the page would write
# them. "ms" only as a word of its own; "%" only as a unit: after a number, or at the edge of a
# string ("% of …", "… %").
UNITS = [r"µm", r"µF", r"µS", r"MΩ", r"GΩ", r"kΩ", r"Ω", r"\bpF\b", r"\bnF\b", r"\bnS\b", r"\bpA\b", r"\bnA\b",
         r"\bmV\b", r"\bk?Hz\b", r"(?<![\w.])ms\b", r"\bNp\b", r"°", r"cm²", r"\d\s?%(?![\w{])", r"[\"'`(]\s?%",
         r"%\s?[\"'`)]"]
UNIT = re.compile("|".join(f"(?:{u})" for u in UNITS))
JINJA_TAG = re.compile(r"\{%.*?%\}|\{\{.*?\}\}", re.S)


def sources():
    return [p for p in sorted(SRC.rglob("*")) if p.is_file() and p.suffix in (".js", ".j2", ".py", ".css", ".svg")]


def unit_strings(path: Path, text: str) -> list[str]:
    found = []
    for n, line in enumerate(text.splitlines(), 1):
        if path.suffix == ".css" and "content:" not in line:
            continue  # layout percentages are CSS, not units of a quantity
        if path.suffix == ".j2":
            line = JINJA_TAG.sub(" ", line)
        found += [f"{path.relative_to(SRC)}:{n}: {m.group(0)!r} in {line.strip()[:100]!r}" for m in UNIT.finditer(line)]
    return found


def test_no_unit_is_written_in_the_page_sources():
    found = [hit for p in sources() for hit in unit_strings(p, p.read_text(encoding="utf-8"))]
    assert found == [], "units belong to the engine's vocabulary:\n" + "\n".join(found)


@pytest.mark.parametrize("text, hits", [
    ('label.textContent = `${value} µm`;', 1), ("return '5 %';", 1), ('"% reaching"', 1), ("// 250 ms", 1),
    ('unit: "MΩ"', 1), ('"Ω·cm²"', 2), ("i % n", 0), ("timeout_ms = 5", 0), ("items", 0), ("width: 100%;", 0),
])
def test_the_scan_finds_units(text, hits):
    """The scan itself can fail: it finds units written the ways a page would write them."""
    path = SRC / ("x.css" if "width" in text else "x.js")
    assert len(unit_strings(path, text)) == hits


def test_no_script_builds_markup_from_text():
    found = [f"{p.relative_to(SRC)}:{n}" for p in sources() if p.suffix == ".js"
             for n, line in enumerate(p.read_text(encoding="utf-8").splitlines(), 1)
             if re.search(r"\.(innerHTML|outerHTML)\s*=|insertAdjacentHTML|document\.write", line)]
    assert found == []
