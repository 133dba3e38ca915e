"""Into the paper, in headless Chromium: the copied results table (TSV, Markdown, LaTeX, CSV)
is the engine's text for the shown report, carries its stamp, holds the displayed numbers and
parses back; the methods paragraph equals `somaward report --format md`'s methods part; figures
download as SVG and PNG; on plain http under a non-localhost name copying falls back to
select-and-copy and still works.

Source: derived — the page formats nothing itself; every text is somaward.export's.
"""
from __future__ import annotations

import csv
import io
import json
import re
import subprocess
import sys

import pytest

from conftest import CHROMIUM_ARGS, chromium_path
from somaward import quantities
from helpers import shown_report, wait_result

pytestmark = pytest.mark.browser


def open_demo_tree(page, url):
    page.goto(url)
    wait_result(page)
    page.check("input[name=mode][value=tree]")
    page.press("#t-Rm", "Enter")
    wait_result(page)
    page.wait_for_selector("#paper[data-texts=ready]", state="attached")


def copy(page, kind, fmt=None):
    sel = f'#paper button[data-copy="{kind}"]' + (f'[data-fmt="{fmt}"]' if fmt else "")
    page.click(sel)
    return page.evaluate("navigator.clipboard.readText()")


def displayed(page) -> dict:
    """The numbers on screen (as rounded for reading) by report key."""
    return {b.get_attribute("data-key"): b.text_content() for b in page.locator("#results-body button.num").all()}


def test_tables_and_methods_from_the_engine(page, served, context, tmp_path, artifacts):
    context.grant_permissions(["clipboard-read", "clipboard-write"], origin=served.url.rstrip("/"))
    open_demo_tree(page, served.url)
    report = shown_report(page)
    stamp = page.text_content("#paper-stamp")
    assert re.fullmatch(r"Somaward \S+, scenario [0-9a-f]{12}", stamp) and stamp == report["stamp"]["text"]
    on_screen = displayed(page)
    # The same quantity has the same words and the same rounding on the page and in the table.
    keys = ["soma_input_resistance_Mohm", "transfer_resistance_Mohm", "site.electrotonic_distance",
            "attenuation.steady_state.site_to_soma_percent", "site.lambda_um", "rho"]
    wanted = {quantities.label(k, report["recording_site"]): k for k in keys}

    tsv = copy(page, "table", "tsv")
    rows = list(csv.reader(io.StringIO(tsv), delimiter="\t"))
    assert rows[0] == ["Quantity", "Value", "Unit"] and any(stamp in r[0] for r in rows)
    by_name = {r[0]: r[1] for r in rows[1:] if len(r) > 1 and r[1]}
    for name, key in wanted.items():
        assert by_name[name] == on_screen[key], (name, by_name[name], on_screen[key])
    assert by_name[quantities.label("site.branch")] == report["site"]["branch"]
    assert any(report["caution"][0] in r[0] for r in rows)

    csv_text = copy(page, "table", "csv")
    data = [r for r in csv.reader(io.StringIO(csv_text)) if r and not r[0].startswith("#")]
    assert {r[0]: r[1] for r in data[1:] if len(r) > 1 and r[1]} == by_name
    assert stamp in csv_text

    md = copy(page, "table", "md")
    assert stamp in md
    for name, key in wanted.items():
        assert f"| {name} | {on_screen[key]} |" in md, name

    latex = copy(page, "table", "latex")
    assert "\\toprule" in latex and "\\bottomrule" in latex and stamp in latex
    for name, key in wanted.items():
        assert f"& {on_screen[key]} &" in latex, name

    rule = copy(page, "rule_table", "tsv")
    assert stamp in rule and len(rule.splitlines()) >= 3

    # The methods paragraph is the CLI's: the scenario saved from the page, through `somaward report`.
    with page.expect_download() as dl:
        page.click("#export-json")
    scenario_file = tmp_path / "scenario.json"
    dl.value.save_as(scenario_file)
    assert json.loads(scenario_file.read_text())["branches"][0]["id"] == "apical_trunk"
    md_cli = subprocess.run([sys.executable, "-m", "somaward.cli", "report", str(scenario_file), "--format", "md"],
                            capture_output=True, text=True, check=True).stdout
    cli_methods = md_cli.split("## Methods\n\n", 1)[1]
    methods = copy(page, "methods")
    assert methods == cli_methods
    assert page.get_attribute("#methods-text", "data-text") == cli_methods
    assert stamp in methods
    page.locator("#paper").screenshot(path=artifacts / "paper-section.png")
    assert page.log.errors == []


def test_figures_download_as_svg_and_png(page, served, tmp_path):
    open_demo_tree(page, served.url)
    for fig in ("plot-tree-map", "plot-gain", "schematic-figure"):
        for kind in ("svg", "png"):
            with page.expect_download() as dl:
                page.click(f"#{fig} button[data-download={kind}]")
            path = tmp_path / dl.value.suggested_filename
            dl.value.save_as(path)
            data = path.read_bytes()
            if kind == "svg":
                text = data.decode()
                assert text.startswith("<svg") and "http://www.w3.org/2000/svg" in text
                assert page.text_content("#paper-stamp") in text
                assert page.get_attribute(f"#{fig}", "data-stamp") == page.text_content("#paper-stamp")
            else:
                assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 2000
    assert page.log.errors == []


def test_copy_falls_back_on_plain_http(served, browser, artifacts):
    """somaward.test → 127.0.0.1: plain http and not localhost, so no secure context."""
    port = served.url.rstrip("/").rsplit(":", 1)[1]
    if True:
        b = browser.browser_type.launch(executable_path=chromium_path(), headless=True,
                                        args=CHROMIUM_ARGS + ["--host-resolver-rules=MAP somaward.test 127.0.0.1"])
        try:
            ctx = b.new_context(viewport={"width": 1280, "height": 800})
            page = ctx.new_page()
            open_demo_tree(page, f"http://somaward.test:{port}/")
            assert page.evaluate("window.isSecureContext") is False
            page.click('#paper button[data-copy="table"][data-fmt="tsv"]')
            assert page.is_visible("#copy-fallback")
            words = page.text_content("#copy-fallback-words")
            assert "plain http" in words or "Ctrl+C" in words
            area = page.locator("#copy-fallback-text")
            text = area.input_value()
            assert text.startswith("Quantity\tValue\tUnit\n") and page.text_content("#paper-stamp") in text
            selected = page.evaluate("() => { const a = document.getElementById('copy-fallback-text');"
                                     " return [a.selectionStart, a.selectionEnd, a.value.length]; }")
            assert selected == [0, len(text), len(text)]
            method = page.get_attribute("#copy-fallback", "data-method")
            page.screenshot(path=artifacts / "paper-copy-fallback-http.png")
            if method == "selection":
                # The select-and-copy put it on the browser's clipboard: read it from a secure page.
                ctx2 = b.new_context()
                ctx2.grant_permissions(["clipboard-read"], origin=served.url.rstrip("/"))
                p2 = ctx2.new_page()
                p2.goto(served.url + "favicon.svg")
                assert p2.evaluate("navigator.clipboard.readText()") == text
                ctx2.close()
            else:
                assert method == "manual"
        finally:
            b.close()
