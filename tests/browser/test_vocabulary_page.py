"""One vocabulary (issue 8), in headless Chromium: every number and unit the page shows sits in an
element carrying its report key, and every label and unit is the engine's own definition for
that key (``somaward.quantities``: the vocabulary of the report's recording site, the scenario's
input fields, the trade's terms); definitions show on demand; a scenario saved from the page gives
the CLI's report with the same fingerprint; a figure carries the stamp of the report it was drawn
from; colours keep one meaning; old files with ``sections`` open.

Source for every comparison: derived — the page holds no words and no physics of its own, so what
it shows must be the engine's (numbers to 1e-12 relative between Pyodide and CPython).
"""
from __future__ import annotations

import colorsys
import json
import re
import subprocess
import sys
from pathlib import Path

import pytest

import somaward
from somaward import quantities
from helpers import (BOOT_TIMEOUT_MS, defined_key, differences, html_text, open_page, report_value, shown,
                     shown_report, submit, wait_result)

pytestmark = pytest.mark.browser

DEMO = json.loads((Path(somaward.__file__).parent / "demo" / "invented_pyramid.json").read_text())

# Every visible text node holding a digit or a unit, and not under an element that carries a key:
# data-key (a value, or engine text naming its source), data-label-for / data-unit-for (a label or
# unit of a key), data-definition-for (a definition); text inside a plot whose axes carry the keys
# of what is plotted (its tick numbers) counts as keyed. Then every label, unit and number as shown.
WALK = r"""() => {
  const KEYED = "[data-key], [data-label-for], [data-unit-for], [data-definition-for]";
  const UNIT = /\d|µ|Ω|pF|nS|pA|mV|Hz|\bms\b|\bNp\b|%|°/;
  const visible = (el) => el.checkVisibility({ checkOpacity: false, checkVisibilityCSS: true });
  const where = (el) => {
    const parts = [];
    for (let e = el; e && e !== document.body && parts.length < 4; e = e.parentElement) {
      const cls = e.className && typeof e.className === "string" ? `.${e.className.split(" ")[0]}` : "";
      parts.unshift(e.id ? `#${e.id}` : e.tagName.toLowerCase() + cls);
    }
    return parts.join(" > ");
  };
  const unkeyed = [];
  const walker = document.createTreeWalker(document.body, NodeFilter.SHOW_TEXT);
  for (let node = walker.nextNode(); node; node = walker.nextNode()) {
    const text = node.textContent;
    const el = node.parentElement;
    if (!text.trim() || !UNIT.test(text) || el.closest("script, style, select, option, textarea, noscript")) continue;
    if (!visible(el) || el.closest(KEYED)) continue;
    const svg = el.closest("svg");
    if (svg && svg.dataset.keyX && svg.dataset.keyY) continue;
    unkeyed.push(`${JSON.stringify(text.trim().slice(0, 80))} in ${where(el)}`);
  }
  const all = (sel) => [...document.querySelectorAll(sel)].filter(visible);
  return {
    unkeyed,
    labels: all("[data-label-for]").map((e) => ({
      key: e.dataset.labelFor, text: e.textContent, inSentence: e.classList.contains("in-sentence"),
      where: where(e) })),
    units: all("[data-unit-for]").map((e) => ({ key: e.dataset.unitFor, text: e.textContent, where: where(e) })),
    definitions: all("[data-definition-for]").map((e) => ({
      key: e.dataset.definitionFor, text: e.textContent, where: where(e) })),
    numbers: all("button.num[data-key]").map((e) => ({
      key: e.dataset.key, value: e.dataset.value, text: e.textContent, where: where(e) })),
    keys: all("[data-key]").map((e) => e.dataset.key),
  };
}"""

# data-key values that name a source other than the report: the build, the engine's renaming of
# old keys, the methods paragraph, a scenario input (scenario.* is a report path too).
OTHER_SOURCES = ("build.", "upgrade.", "methods")


def engine_label(key: str, rec: str, inputs: dict, vocab: dict) -> str:
    """The engine's label of a key, as the text it shows (sub/superscripts flattened)."""
    if key.startswith("scenario."):
        return html_text(inputs[quantities.canonical_key(key[len("scenario."):])]["label_html"])
    if key.startswith("terms."):
        return vocab["terms"][key[len("terms."):]]["label"]
    q = quantities.quantity(defined_key(key))
    item = None
    if ".*" in q.key:
        head, tail = q.key.split(".*", 1)
        item = re.sub(re.escape(tail).replace(r"\[\]", r"\[\d+\]") + "$", "", key[len(head) + 1:])
    return html_text(quantities.label(key, rec, "html", item=item))


def engine_unit(key: str, inputs: dict) -> str:
    if key.startswith("scenario."):
        return inputs[quantities.canonical_key(key[len("scenario."):])]["unit"]
    return quantities.unit(defined_key(key))


def check_page_words(page) -> dict:
    """Walk the page: no unkeyed number or unit, every label and unit the engine's, every number
    the report's (full value to 1e-12, rounded as the engine rounds). Returns the walk."""
    report = shown_report(page)
    rec = report["recording_site"]
    vocab = quantities.vocabulary(rec)
    inputs = quantities.input_fields(rec)
    walk = page.evaluate(WALK)
    assert walk["unkeyed"] == [], "numbers or units without a key:\n" + "\n".join(walk["unkeyed"])
    wrong = []
    for lab in walk["labels"]:
        want = engine_label(lab["key"], rec, inputs, vocab)
        got = lab["text"]
        if lab["inSentence"] and got[:1].islower():
            want = want[:1].lower() + want[1:]
        if got != want:
            wrong.append(f"label {lab['key']} at {lab['where']}: {got!r} != engine's {want!r}")
    for u in walk["units"]:
        want = engine_unit(u["key"], inputs)
        if u["text"] != want:
            wrong.append(f"unit {u['key']} at {u['where']}: {u['text']!r} != engine's {want!r}")
    for d in walk["definitions"]:
        if d["key"].startswith("scenario."):
            want = inputs[quantities.canonical_key(d["key"][len("scenario."):])]["description"]
        elif d["key"].startswith("end_conditions."):
            want = vocab["end_conditions"][d["key"][len("end_conditions."):]]
        else:
            want = html_text(quantities.definition(defined_key(d["key"]), rec, "html"))
        if " ".join(d["text"].split()) != " ".join(want.split()):
            wrong.append(f"definition {d['key']} at {d['where']}: {d['text']!r} != engine's {want!r}")
    for n in walk["numbers"]:
        if n["key"].startswith(OTHER_SOURCES):
            continue
        value = report_value(report, n["key"])
        if value is None:
            ok = n["value"] == "—" and n["text"] == "—"
        else:
            ok = (differences(float(n["value"]), value) == [] and n["text"] in (shown(value, n["key"]),
                                                                                  n["value"]))
        if not ok:
            wrong.append(f"number {n['key']} at {n['where']}: shown {n['text']!r} (full {n['value']!r}), "
                         f"report {value!r} → {shown(value, n['key']) if value is not None else '—'!r}")
    for key in walk["keys"]:
        if key.startswith(OTHER_SOURCES) or key.startswith("scenario.") and "[]" in key:
            continue
        try:
            report_value(report, key)
        except (KeyError, IndexError, TypeError):
            wrong.append(f"data-key {key!r} names nothing in the report")
    assert wrong == [], "\n".join(wrong)
    assert len(walk["labels"]) > 40 and len(walk["numbers"]) > 15
    return walk


def open_tree(page, url):
    open_page(page, url)
    page.check("input[name=mode][value=tree]")
    page.press("#t-Rm", "Enter")
    wait_result(page)


def test_every_number_and_unit_is_keyed_and_every_label_the_engines(page, served, artifacts):
    open_page(page, served.url)
    walk = check_page_words(page)
    # The tables of the results are the engine's: its captions, its rows in its order.
    vocab = quantities.vocabulary("soma")
    for name in ("steady_state", "constants"):
        table = page.locator(f"#results-body table[data-table={name}]")
        assert table.locator("caption").text_content() == vocab["tables"][name]["caption"]
        assert table.locator("tbody tr").evaluate_all("rows => rows.map(r => r.dataset.key)") == \
            [k for k in vocab["tables"][name]["keys"]]
    assert {"tree_map.path_distance_um", "frequency_response.frequencies_hz"} <= {u["key"] for u in walk["units"]}

    # The demo tree (tapers, a path synapse, the whole-tree map with many branches).
    page.check("input[name=mode][value=tree]")
    page.press("#t-Rm", "Enter")
    wait_result(page)
    assert len(shown_report(page)["scenario"]["branches"]) > 3
    check_page_words(page)
    page.screenshot(path=artifacts / "vocabulary-demo-tree.png", full_page=True)
    assert page.log.errors == []


def test_without_a_soma_every_word_names_the_root(page, served, artifacts):
    open_page(page, served.url)
    page.fill("#f-soma_diameter", "")
    submit(page, "f-soma_diameter")
    wait_result(page)
    report = shown_report(page)
    assert report["recording_site"] == "root"
    walk = check_page_words(page)
    headline = page.text_content("#results-summary")
    assert "root" in headline and "soma" not in headline
    labels = " ".join(lab["text"] for lab in walk["labels"] if not lab["key"].startswith("scenario."))
    assert "root" in labels and "soma" not in labels.replace("V_soma", "")
    # ρ is not defined without a soma: no row, as in the exports.
    assert page.locator("#results-body [data-key=rho]").count() == 0
    page.locator("#results").screenshot(path=artifacts / "vocabulary-no-soma-results.png")


@pytest.mark.parametrize("key, where", [
    ("rho", "#results-body"), ("rho_inf", "#results-body"), ("soma_input_resistance_Mohm", "#results-body"),
    ("site_input_resistance_Mohm", "#results-body"), ("transfer_resistance_Mohm", "#results-body"),
    ("centroid_delay_ms", "#results-body"), ("site.electrotonic_distance", "#results-body"),
    ("frequency_response.site_to_soma.phase_delay_ms", "#plot-delay figcaption"),
])
def test_definitions_on_focus_and_hover(page, served, key, where):
    open_page(page, served.url)
    term = page.locator(f"{where} .term[data-label-for='{key}']").first
    tip_id = term.get_attribute("aria-describedby")
    tip = page.locator(f"#{tip_id}")
    assert tip.get_attribute("role") == "tooltip"
    assert not tip.is_visible()
    want = html_text(quantities.definition(key, "soma", "html"))
    assert tip.text_content() == want
    # By keyboard: focus shows it, Escape hides it.
    term.focus()
    assert tip.is_visible()
    assert page.evaluate("document.activeElement.getAttribute('aria-describedby')") == tip_id
    page.keyboard.press("Escape")
    assert not tip.is_visible()
    page.locator("h1").click()
    # By pointer.
    term.hover()
    assert tip.is_visible()


def cli_report(path: Path) -> dict:
    out = subprocess.run([sys.executable, "-m", "somaward.cli", "report", str(path), "--format", "json"],
                         capture_output=True, text=True, check=True).stdout
    return json.loads(out)


@pytest.mark.parametrize("mode", ["quick", "tree"])
def test_saved_scenario_gives_the_clis_report(page, served, tmp_path, mode):
    if mode == "quick":
        open_page(page, served.url)
        page.fill("#f-distance", "410")
        submit(page, "f-distance")
        wait_result(page)
    else:
        open_tree(page, served.url)
    report = shown_report(page)
    with page.expect_download() as dl:
        page.click("#export-json")
    path = tmp_path / "scenario.json"
    dl.value.save_as(path)
    saved = json.loads(path.read_text())
    # The page sends only what was typed or loaded: the engine's defaults apply (no frequencies).
    assert "frequencies_hz" not in saved
    cli = cli_report(path)
    assert differences(report, cli) == []
    assert report["stamp"]["fingerprint"] == cli["stamp"]["fingerprint"]
    engine = somaward.solve(saved)
    assert report["frequency_response"]["frequencies_hz"] == engine["frequency_response"]["frequencies_hz"]


def svg_words(svg: str) -> str:
    return " ".join(re.sub(r"<[^>]+>", " ", svg).split())


def test_a_figure_carries_the_stamp_of_the_report_it_shows(page, served, tmp_path):
    open_page(page, served.url)
    first = shown_report(page)["stamp"]["text"]
    page.fill("#f-length", "700")
    submit(page, "f-length")
    wait_result(page)       # every view drawn; the paper texts are still to come
    report = shown_report(page)
    assert report["stamp"]["text"] != first
    for fig in ("plot-gain", "plot-tree-map"):
        with page.expect_download() as dl:
            page.click(f"#{fig} button[data-download=svg]")
        path = tmp_path / dl.value.suggested_filename
        dl.value.save_as(path)
        assert report["stamp"]["fingerprint"] in dl.value.suggested_filename
        words = svg_words(html_unescape(path.read_text()))
        assert report["stamp"]["text"] in words and first not in words
        assert " ".join(report["caution"][0].split()) in words
    assert page.get_attribute("#paper-stamp", "data-key") == "stamp.text"
    assert page.text_content("#paper-stamp") == report["stamp"]["text"]


def html_unescape(text: str) -> str:
    import html
    return html.unescape(text)


def hue(colour: str) -> float:
    r, g, b = (int(colour[i:i + 2], 16) / 255 for i in (1, 3, 5))
    return 360 * colorsys.rgb_to_hls(r, g, b)[0]


def hue_gap(a: float, b: float) -> float:
    d = abs(a - b) % 360
    return min(d, 360 - d)


def many_branches(n: int) -> dict:
    branches = [{"id": "stem", "parent": None, "length": 100, "diameter": 3}]
    branches += [{"id": f"b{i}", "parent": "stem", "length": 50 + 7 * i, "diameter": 0.6} for i in range(1, n)]
    return {"membrane": {"Rm": 20000, "Ri": 150}, "soma": {"diameter": 15}, "branches": branches,
            "synapse": {"branch": "b3", "distance": 20}}


@pytest.mark.parametrize("n", [10, 40])
def test_colours_keep_one_meaning(page, served, tmp_path, n):
    open_page(page, served.url)
    f = tmp_path / "many.json"
    f.write_text(json.dumps(many_branches(n)))
    page.set_input_files("#import-json", str(f))
    page.wait_for_selector("body[data-imported=ok]", state="attached", timeout=BOOT_TIMEOUT_MS)
    wait_result(page)
    colours = page.evaluate("async () => (await import('./js/palette.js')).COLOURS")
    reserved = [colours["synapse"], colours["soma"], colours["cylinder"]]
    strokes = page.locator("#plot-tree-map svg [aria-label=line] path").evaluate_all(
        "ps => ps.map(p => p.getAttribute('stroke'))")
    assert len(strokes) == n
    for s in set(strokes):
        assert s.lower() not in reserved
        if s != colours["tree"]:
            assert min(hue_gap(hue(s), hue(r)) for r in reserved) >= 30, s
    # Every legend entry drawn in the synapse's colour is a signal from the synapse (or the
    # synapse itself); the cylinder has its own colour.
    entries = page.locator(".legend li").evaluate_all("""lis => lis.map(li => ({
        colour: li.querySelector('[data-colour]').dataset.colour,
        key: li.querySelector('[data-label-for]')?.dataset.labelFor
             ?? li.querySelector('[data-key]').dataset.key }))""")
    from_synapse = {"path_profile.input_at_site", "frequency_response.site_to_soma.magnitude",
                    "frequency_response.site_to_soma.phase_delay_ms",
                    "equivalent_cylinder.comparison.soma_to_site.tree"}
    assert {e["key"] for e in entries if e["colour"] == colours["synapse"]} == from_synapse
    assert [e["colour"] for e in entries if e["key"] == "equivalent_cylinder.cylinder.curve.soma_to_site"] == \
        [colours["cylinder"]]
    dashed = page.locator("#eq-plot svg [aria-label=line][stroke-dasharray]")
    assert dashed.count() == 1 and dashed.get_attribute("stroke") == colours["cylinder"]


def test_old_sections_file_opens_with_the_engines_warning(page, served, tmp_path):
    open_page(page, served.url)
    old = json.loads(json.dumps(DEMO))
    for b in old["branches"]:
        if "cylinders" in b:
            b["sections"] = b.pop("cylinders")
    f = tmp_path / "old.json"
    f.write_text(json.dumps(old))
    page.set_input_files("#import-json", str(f))
    page.wait_for_selector("body[data-imported=ok]", state="attached", timeout=BOOT_TIMEOUT_MS)
    wait_result(page)
    renamed, warnings = somaward.scenario.rename_old_keys(old)
    assert warnings and "cylinders" in warnings[0]
    status = page.text_content("#keep-status")
    assert "'cylinders'" in status and "branches[" not in status
    rows = page.locator('#branch-table tbody[data-b="0"] tr.cylinder-row').count()
    assert rows == len(DEMO["branches"][0]["cylinders"]) - 1
    report = shown_report(page)
    expected = json.loads(json.dumps(somaward.solve(renamed)))
    # The table writes every terminal's end, so fewer defaults are applied; the solved scenario
    # (and its fingerprint) is the same.
    del report["defaults_applied"], expected["defaults_applied"]
    assert differences(report, expected) == []

    # An autosave from before the rename comes back the same way.
    page.evaluate("s => localStorage.setItem('somaward.work.v1', "
                  "JSON.stringify({savedAt: '', snapshot: {mode: 'tree', scenario: s}}))", old)
    page.goto(served.url)
    wait_result(page)
    page.wait_for_function(
        "() => document.querySelectorAll('#branch-table tbody[data-b=\"0\"] tr.cylinder-row').length > 0")
    assert "'cylinders'" in page.text_content("#keep-status")
    assert shown_report(page)["scenario"]["branches"][0]["cylinders"] == DEMO["branches"][0]["cylinders"]


def test_caution_and_plain_words_on_the_page(page, served):
    open_page(page, served.url)
    report = shown_report(page)
    assert page.locator("#cautions li").all_text_contents() == report["caution"]
    assert page.locator("#cautions li").evaluate_all("lis => lis.map(l => l.dataset.key)") == \
        [f"caution[{i}]" for i in range(len(report["caution"]))]
    page.wait_for_selector("body[data-scipy]", state="attached", timeout=BOOT_TIMEOUT_MS)
    words = page.inner_text("body")
    for developer in ("scipy", "numpy", "build.py", "Traceback", "Error:", "undefined", "NaN"):
        assert developer not in words, developer
