"""The branch table in headless Chromium: a 3-branch tree typed cell by cell and pasted as
TSV gives exactly CPython's somaward.solve of a scenario written here from the same values;
rows copied out parse back; engine errors land beside their cell; a hostile branch id stays
text everywhere. Screenshots go to test-artifacts/.

Source for every comparison: derived — the page holds no physics, so its report must equal
the engine's for the same scenario (to 1e-12).
"""
from __future__ import annotations

import csv
import io
import json
from pathlib import Path

import pytest

import somaward
from helpers import differences, shown_report, wait_result, BOOT_TIMEOUT_MS

pytestmark = pytest.mark.browser

DEMO = json.loads((Path(somaward.__file__).parent / "demo" / "invented_pyramid.json").read_text())
HOSTILE = "<img src=x onerror=alert(1)>"


def carried_from_demo(scenario: dict) -> dict:
    """The demo's keys the table keeps but does not edit (its note on the page says so)."""
    scenario = {"title": DEMO["title"], "notes": DEMO["notes"], **scenario}
    scenario["synapse"]["current"] = DEMO["synapse"]["current"]
    return scenario


def three_branch_scenario() -> dict:
    return carried_from_demo({
        "membrane": {"Rm": 18000, "Ri": 120, "Cm": 0.95},
        "soma": {"diameter": 15},
        "branches": [
            {"id": "trunk", "parent": None, "cylinders": [{"length": 200, "diameter": 3},
                                                          {"length": 100, "diameter": 2}]},
            {"id": "d1", "parent": "trunk", "length": 150, "diameter": 1.2, "end": "killed"},
            {"id": "d2", "parent": "trunk", "length": 250, "diameter": 0.9, "end": {"G": 2, "C": 5}},
        ],
        "synapse": {"branch": "d2", "distance": 180},
    })


def open_tree(page, url):
    page.on("dialog", lambda d: (page.dialogs.append(d.message), d.dismiss()))
    page.dialogs = []
    page.goto(url)
    wait_result(page)
    page.check("input[name=mode][value=tree]")
    page.press("#t-Rm", "Enter")
    wait_result(page)


def cell(page, b, field, s=0):
    return page.locator(f'#branch-table tbody[data-b="{b}"] [data-s="{s}"][data-f="{field}"]')


def action(page, b, act, s=None):
    sel = f'#branch-table tbody[data-b="{b}"] button[data-act="{act}"]'
    if s is not None:
        sel += f'[data-s="{s}"]'
    page.click(sel)


def type_three_branches(page):
    while page.locator("#branch-table tbody").count() > 1:
        action(page, 1, "remove")
    while page.locator('#branch-table tbody[data-b="0"] tr.cylinder-row').count() > 0:
        action(page, 0, "remove-cylinder", s=1)
    cell(page, 0, "id").fill("trunk")
    cell(page, 0, "length").fill("200")
    cell(page, 0, "diameter").fill("3")
    action(page, 0, "add-cylinder")
    cell(page, 0, "length", 1).fill("100")
    cell(page, 0, "diameter", 1).fill("2")
    action(page, 0, "add-child")
    cell(page, 1, "id").fill("d1")
    cell(page, 1, "length").fill("150")
    cell(page, 1, "diameter").fill("1.2")
    cell(page, 1, "end").select_option("killed")
    page.click("#add-branch")
    cell(page, 2, "id").fill("d2")
    cell(page, 2, "parent").select_option("trunk")
    cell(page, 2, "length").fill("250")
    cell(page, 2, "diameter").fill("0.9")
    cell(page, 2, "end").select_option("load")
    cell(page, 2, "G").fill("2")
    cell(page, 2, "C").fill("5")
    page.check("input[name=t-syn-mode][value=branch]")
    page.select_option("#t-syn-branch", "d2")
    page.fill("#t-syn-distance", "180")
    page.fill("#t-soma_diameter", "15")
    page.fill("#t-Rm", "18000")
    page.fill("#t-Ri", "120")
    page.fill("#t-Cm", "0.95")


def with_page_tolerance(page, scenario):
    """The equivalent-cylinder section adds its tolerance field's value to every scenario."""
    if page.locator("#eq-tolerance").count() and page.input_value("#eq-tolerance").strip():
        scenario["equivalent_cylinder"] = {"tolerance": float(page.input_value("#eq-tolerance"))}
    return scenario


def expected_report(page, scenario):
    return json.loads(json.dumps(somaward.solve(with_page_tolerance(page, scenario))))


def test_typed_tree_gives_cpythons_report(page, served, artifacts):
    open_tree(page, served.url)
    assert "invented" in page.text_content("#tree-table .hint").lower()
    type_three_branches(page)
    page.press("#t-Cm", "Enter")
    wait_result(page)
    assert differences(shown_report(page), expected_report(page, three_branch_scenario())) == []
    # The drawing follows the table: one label per branch, the synapse marked.
    labels = page.locator("#schematic svg text").all_text_contents()
    assert {"trunk", "d1", "d2"} <= set(labels)
    assert page.locator("#schematic .synapse-mark").count() == 1
    # The whole-tree map: one line per branch.
    assert page.get_attribute("#plot-tree-map .plot", "data-branches") == "3"
    page.screenshot(path=artifacts / "tree-typed.png", full_page=True)
    assert page.log.errors == [] and page.dialogs == []


TSV = ("id\tparent\tlength (µm)\tdiameter (µm)\tend\tG (nS)\tC (pF)\n"
       "trunk\t\t200\t3\t\t\t\n"
       "trunk\t\t100\t2\t\t\t\n"
       "d1\ttrunk\t150\t1.2\tkilled\t\t\n"
       "d2\ttrunk\t250\t0.9\tload\t2\t5\n")


def test_pasted_tsv_gives_cpythons_report_and_copies_back(page, served, context, artifacts):
    context.grant_permissions(["clipboard-read", "clipboard-write"], origin=served.url.rstrip("/"))
    open_tree(page, served.url)
    page.click(".paste-box summary")
    page.fill("#paste-text", TSV)
    page.click("#paste-replace")
    assert "3 branches (4 rows)" in page.text_content("#paste-msg")
    page.check("input[name=t-syn-mode][value=branch]")
    page.select_option("#t-syn-branch", "d2")
    for field, value in (("t-syn-distance", "180"), ("t-soma_diameter", "15"), ("t-Rm", "18000"),
                         ("t-Ri", "120"), ("t-Cm", "0.95")):
        page.fill(f"#{field}", value)
    page.press("#t-Cm", "Enter")
    wait_result(page)
    assert differences(shown_report(page), expected_report(page, three_branch_scenario())) == []
    page.screenshot(path=artifacts / "tree-pasted.png", full_page=True)

    # Rows copied out parse back into the same rows.
    page.click("#copy-rows")
    copied = page.evaluate("navigator.clipboard.readText()")
    rows = list(csv.reader(io.StringIO(copied), delimiter="\t"))
    assert rows[0][:4] == ["id", "parent", "length_um", "diameter_um"]
    assert [r[:4] for r in rows[1:]] == [["trunk", "", "200", "3"], ["trunk", "", "100", "2"],
                                         ["d1", "trunk", "150", "1.2"], ["d2", "trunk", "250", "0.9"]]
    assert rows[3][4] == "killed" and rows[4][4:] == ["load", "2", "5"]

    # A spreadsheet paste straight into a cell (clipboard, Ctrl+V) replaces the table.
    page.evaluate("t => navigator.clipboard.writeText(t)", "x1\t\t80\t1.5\tsealed\nx2\tx1\t60\t0.7\tkilled\n")
    cell(page, 0, "length").focus()
    page.keyboard.press("Control+V")
    assert page.locator("#branch-table tbody").count() == 2
    assert cell(page, 1, "parent").input_value() == "x1"
    page.click("#paste-undo")
    assert page.locator("#branch-table tbody").count() == 3
    assert page.log.errors == []


def test_engine_error_beside_its_cell_and_last_result_kept(page, served, artifacts):
    open_tree(page, served.url)
    before = shown_report(page)
    cell(page, 2, "diameter").fill("-1")
    page.press("#t-Rm", "Enter")
    page.wait_for_selector("body[data-input=invalid]", state="attached", timeout=BOOT_TIMEOUT_MS)
    msg = page.text_content("#t-b2-msg")
    bad = json.loads(json.dumps(DEMO))
    bad["branches"][2]["diameter"] = -1
    with pytest.raises(somaward.ScenarioError) as err:
        somaward.validate(bad)
    # The row as the table shows it (counted from 1, with its id), then the engine's plain words.
    assert msg == f"Branch 3 ({before['scenario']['branches'][2]['id']}) — {err.value.plain}", msg
    assert cell(page, 2, "diameter").get_attribute("aria-invalid") == "true"
    assert page.get_attribute("body", "data-results") == "stale"
    assert page.is_visible("#tree-map .stale-badge")
    assert shown_report(page) == before  # the last good result stays, marked out of date
    page.screenshot(path=artifacts / "tree-error-beside-cell.png", full_page=False)
    cell(page, 2, "diameter").fill("1.5")
    page.press("#t-Rm", "Enter")
    wait_result(page)
    assert page.text_content("#t-b2-msg") == ""


def test_hostile_branch_id_stays_text(page, served, artifacts):
    open_tree(page, served.url)
    # Accepted as an id: shown as text in the table, the drawing, the choices and the results.
    cell(page, 1, "id").fill(HOSTILE)
    page.check("input[name=t-syn-mode][value=branch]")
    page.select_option("#t-syn-branch", HOSTILE)
    page.fill("#t-syn-distance", "100")
    page.press("#t-Rm", "Enter")
    wait_result(page)
    assert shown_report(page)["site"]["branch"] == HOSTILE
    assert HOSTILE in page.locator("#schematic svg text").all_text_contents()
    assert HOSTILE in page.locator("#t-syn-branch option").all_text_contents()
    page.wait_for_selector("#paper[data-texts=ready]", state="attached")
    assert HOSTILE in page.text_content("#methods-text")
    # Echoed in an error: a second branch with the same id.
    cell(page, 2, "id").fill(HOSTILE)
    page.press("#t-Rm", "Enter")
    page.wait_for_selector("body[data-input=invalid]", state="attached")
    msg = page.text_content("#t-b2-msg")
    assert msg.startswith(f"Branch 3 ({HOSTILE}) — ") and f"'{HOSTILE}'" in msg, msg
    assert "branches[" not in msg
    assert page.locator("img").count() == 0
    page.screenshot(path=artifacts / "tree-hostile-id.png", full_page=False)
    assert page.dialogs == [] and page.log.errors == []
