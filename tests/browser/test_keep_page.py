"""Keeping work, in headless Chromium: a link reopens the same inputs in a fresh context (and
a 50-branch tree's link is ≤ 2000 characters), a reload restores the autosave, a bad link or a
corrupt file says what is wrong and leaves the saved work as it was, a file is checked by the
engine before it is taken. Source: derived (the inputs must come back exactly)."""
from __future__ import annotations

import json

import pytest

import somaward
from helpers import shown_report, wait_result, BOOT_TIMEOUT_MS

pytestmark = pytest.mark.browser
SAVE_KEY = "somaward.work.v1"


def fifty_branches() -> dict:
    branches = [{"id": "stem", "parent": None, "length": 120, "diameter": 3.1}]
    for i in range(1, 50):
        parent = "stem" if i < 3 else f"d{(i - 1) // 2}"
        branches.append({"id": f"d{i}", "parent": parent, "length": 40 + (i * 37) % 160,
                         "diameter": round(0.5 + (i * 0.173) % 1.8, 2)})
    return {"membrane": {"Rm": 21000, "Ri": 140, "Cm": 0.9}, "soma": {"diameter": 17},
            "branches": branches, "synapse": {"branch": "d40", "distance": 20}}


def saved(page):
    return page.evaluate(f"localStorage.getItem('{SAVE_KEY}')")


def wait_saved(page, count):
    page.wait_for_selector(f"body[data-saved='{count}']", state="attached", timeout=10000)


def inputs(page):
    return shown_report(page)["scenario"]


def test_link_reopens_inputs_in_a_fresh_context(page, served, browser, tmp_path, artifacts):
    page.goto(served.url)
    wait_result(page)
    page.fill("#f-length", "512")
    page.fill("#eq-tolerance", "0.2")
    page.press("#f-length", "Enter")
    wait_result(page)
    assert inputs(page)["equivalent_cylinder"]["tolerance"] == 0.2
    page.click("#copy-link")
    page.wait_for_selector("#keep-status:has-text('characters')", timeout=10000)
    quick_link = page.url
    # A 50-branch tree, opened from a file, then its link.
    f = tmp_path / "fifty.json"
    f.write_text(json.dumps({**fifty_branches(), "equivalent_cylinder": {"tolerance": 0.125}}))
    page.set_input_files("#import-json", str(f))
    page.wait_for_selector("body[data-imported=ok]", state="attached", timeout=BOOT_TIMEOUT_MS)
    wait_result(page)
    # The file's tolerance is shown in its field, and solved with.
    assert page.input_value("#eq-tolerance") == "0.125"
    assert inputs(page)["equivalent_cylinder"]["tolerance"] == 0.125
    page.click("#copy-link")
    page.wait_for_selector("#keep-status:has-text('characters')", timeout=10000)
    tree_link = page.url
    assert len(tree_link) <= 2000, len(tree_link)
    tree_inputs = inputs(page)
    for link in (quick_link, tree_link):
        ctx = browser.new_context()
        p = ctx.new_page()
        p.goto(link)
        wait_result(p)
        if link == quick_link:
            assert p.input_value("#f-length") == "512"
            assert p.get_attribute("body", "data-mode") == "quick"
            # The equivalent-cylinder tolerance travels in the link, back into its field.
            assert p.input_value("#eq-tolerance") == "0.2"
            assert inputs(p)["equivalent_cylinder"]["tolerance"] == 0.2
        else:
            assert p.get_attribute("body", "data-mode") == "tree"
            assert p.input_value("#eq-tolerance") == "0.125"
            assert inputs(p) == tree_inputs
            assert p.locator("#branch-table tbody").count() == 50
            p.screenshot(path=artifacts / "keep-link-50-branches.png", full_page=True)
        ctx.close()


def test_reload_restores_autosave_and_demo_is_one_click_away(page, served):
    page.goto(served.url)
    wait_result(page)
    page.check("input[name=mode][value=tree]")
    wait_saved(page, 1)
    page.fill('#branch-table tbody[data-b="1"] [data-f="length"]', "175")
    wait_saved(page, 2)
    page.fill("#eq-tolerance", "0.3")
    wait_saved(page, 3)
    page.goto(served.url)  # no fragment: only the autosave can bring it back
    wait_result(page)
    assert page.get_attribute("body", "data-mode") == "tree"
    assert page.input_value('#branch-table tbody[data-b="1"] [data-f="length"]') == "175"
    assert inputs(page)["branches"][1]["length"] == 175
    assert page.input_value("#eq-tolerance") == "0.3"
    assert inputs(page)["equivalent_cylinder"]["tolerance"] == 0.3
    page.click("#back-to-demo")
    wait_result(page)
    assert page.input_value('#branch-table tbody[data-b="1"] [data-f="length"]') == "150"
    assert page.input_value("#eq-tolerance") == ""  # the demo has none: the default applies
    assert inputs(page)["equivalent_cylinder"]["tolerance"] == 0.05  # the engine's default, filled in
    page.click("#back-to-previous")
    wait_result(page)
    assert page.input_value('#branch-table tbody[data-b="1"] [data-f="length"]') == "175"
    assert page.input_value("#eq-tolerance") == "0.3"


def test_bad_link_and_corrupt_file_leave_saved_work(page, served, tmp_path, artifacts):
    page.goto(served.url)
    wait_result(page)
    page.fill("#f-diameter", "1.7")
    wait_saved(page, 1)
    before = saved(page)
    assert json.loads(before)["snapshot"]["scenario"]["branches"][0]["diameter"] == 1.7

    page.goto(served.url + "#s1.AAAAnot-really-a-link")
    wait_result(page)
    assert "This link could not be opened" in page.text_content("#keep-error")
    assert page.input_value("#f-diameter") == "1.7" and saved(page) == before

    bad = tmp_path / "broken.json"
    bad.write_text('{"membrane": {"Rm": 20000, ')
    page.set_input_files("#import-json", str(bad))
    page.wait_for_selector("body[data-imported=bad]", state="attached")
    said = page.text_content("#keep-error")
    # The engine's JSON reader (somaward.jsonin) says where: line and column.
    assert said.startswith("Not opened: broken.json: ") and "not valid JSON" in said, said
    assert "line 1 column 28" in said, said
    assert saved(page) == before

    wrong = tmp_path / "wrong.json"
    s = fifty_branches()
    s["branches"][3]["diameter"] = -1
    wrong.write_text(json.dumps(s))
    page.evaluate("document.body.dataset.imported = ''")
    page.set_input_files("#import-json", str(wrong))
    page.wait_for_selector("body[data-imported=bad]", state="attached")
    said = page.text_content("#keep-error")
    with pytest.raises(somaward.ScenarioError) as err:
        somaward.validate(s)
    # The engine's plain words, and where in the file (its JSON path, as the CLI names it).
    assert err.value.plain in said and "branches[3].diameter" in said, said
    assert saved(page) == before and page.get_attribute("body", "data-mode") == "quick"
    page.screenshot(path=artifacts / "keep-bad-file.png")

    hostile = tmp_path / "hostile.json"
    s = fifty_branches()
    s["branches"][5]["parent"] = "<img src=x onerror=alert(1)>"
    hostile.write_text(json.dumps(s))
    dialogs = []
    page.on("dialog", lambda d: (dialogs.append(d.message), d.dismiss()))
    page.evaluate("document.body.dataset.imported = ''")
    page.set_input_files("#import-json", str(hostile))
    page.wait_for_selector("body[data-imported=bad]", state="attached")
    assert "no branch has id '<img src=x onerror=alert(1)>'" in page.text_content("#keep-error")
    assert page.locator("img").count() == 0 and dialogs == [] and saved(page) == before
