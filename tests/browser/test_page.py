"""The built page in headless Chromium: boot under its CSP, the quick-cable flow against
CPython's somaward.solve, bad input, scipy after the first result, offline reload,
a corrupted vendored file, file://, and the tablet width. Screenshots go to test-artifacts/.

Physics is not checked here (the engine's own tests do that, with their sources); these
tests check that the page computes exactly what the engine computes — source: derived,
the page holds no physics.
"""
from __future__ import annotations

import json

import pytest

import somaward
from helpers import (differences, open_page, page_eq_tolerance, quick_scenario, report_value,
                     shown, shown_report, submit, wait_result, BOOT_TIMEOUT_MS)

pytestmark = pytest.mark.browser

# Values that differ from the form's defaults (300, 600, 2, 20, sealed, 20000, 150, 1).
TYPED = {"distance": "175", "length": "450", "diameter": "1.25", "soma_diameter": "16",
         "Rm": "32000", "Ri": "110", "Cm": "0.85"}


def type_values(page, values: dict):
    for name, text in values.items():
        page.fill(f"#f-{name}", text)


def test_boots_ready_without_console_errors(page, served, artifacts):
    open_page(page, served.url)
    csp = page.get_attribute("meta[http-equiv=Content-Security-Policy]", "content")
    assert "'wasm-unsafe-eval'" in csp and "'unsafe-eval'" not in csp.replace("'wasm-unsafe-eval'", "")
    assert page.get_attribute("body", "data-state") == "ready"
    assert "passive-cable estimate" in page.text_content("#caution")
    page.screenshot(path=artifacts / "page-ready-1280x800.png")
    page.screenshot(path=artifacts / "page-ready-full.png", full_page=True)
    assert page.log.errors == []


def test_typed_values_give_cpythons_report(page, served, artifacts):
    open_page(page, served.url)
    type_values(page, TYPED)
    page.check("input[name=end][value=killed]")
    assert page.get_attribute("body", "data-results") == "stale"
    submit(page, "f-Cm")
    wait_result(page)
    report = shown_report(page)

    mine = quick_scenario(distance=175, length=450, diameter=1.25, soma_diameter=16,
                          end="killed", Rm=32000, Ri=110, Cm=0.85,
                          eq_tolerance=page_eq_tolerance(page))
    expected = json.loads(json.dumps(somaward.solve(mine)))
    assert differences(report, expected) == []

    buttons = page.locator("#results-body button.num")
    assert buttons.count() >= 15
    for i in range(buttons.count()):
        b = buttons.nth(i)
        key, text = b.get_attribute("data-key"), b.text_content()
        value = report_value(expected, key)
        assert text == shown(value, key), f"{key}: shown {text!r}, value {value!r}"
        assert float(b.get_attribute("data-value")) == pytest.approx(value, rel=1e-12, abs=1e-12)
    # A click shows the full value.
    first = buttons.first
    first.click()
    assert first.text_content() == first.get_attribute("data-full")
    page.screenshot(path=artifacts / "page-typed-values.png", full_page=True)
    assert page.log.errors == []


def test_no_scipy_file_before_first_result(page, served):
    open_page(page, served.url)
    first_epoch = float(page.get_attribute("body", "data-t-first-result-epoch"))
    page.wait_for_selector("body[data-scipy=ready]", state="attached", timeout=BOOT_TIMEOUT_MS)
    scipy = [r for r in page.log.requests if "/scipy-" in r["url"] or "/openblas-" in r["url"]]
    assert len({r["url"] for r in scipy}) == 2, page.log.requests
    early = [r for r in scipy if r["start_epoch_ms"] < first_epoch]
    assert early == [], f"fetched before the first result at {first_epoch}: {early}"
    assert page.log.urls("/numpy-")


def test_bad_value_message_beside_field_keeps_old_result(page, served, artifacts):
    open_page(page, served.url)
    good = page.locator("#results-body").inner_text()
    page.fill("#f-diameter", "-1")
    submit(page, "f-diameter")
    page.wait_for_selector("#f-diameter-msg:not(:empty)", timeout=30_000)
    bad = quick_scenario(distance=300, length=600, diameter=-1, soma_diameter=20, end="sealed",
                         Rm=20000, Ri=150, Cm=1)
    with pytest.raises(somaward.ScenarioError) as err:
        somaward.solve(bad)
    # The engine's plain words, naming the field by the label the form shows.
    assert page.text_content("#f-diameter-msg") == err.value.plain
    assert page.text_content("label[for=f-diameter]") in err.value.plain
    assert page.get_attribute("#f-diameter", "aria-invalid") == "true"
    assert page.get_attribute("body", "data-results") == "stale"
    assert page.locator("#results-body").inner_text() == good
    assert page.is_visible("#results .stale-badge")
    page.screenshot(path=artifacts / "page-bad-value.png", full_page=True)

    # A value past the end of the dendrite is the synapse field's business.
    page.fill("#f-diameter", "2")
    page.fill("#f-distance", "700")
    submit(page, "f-distance")
    page.wait_for_selector("#f-distance-msg:not(:empty)", timeout=30_000)
    assert page.text_content("#f-diameter-msg") == ""
    assert page.text_content("#f-distance-msg").startswith(page.text_content("label[for=f-distance]") + ":")
    # Fixing it brings a fresh result and clears the message.
    page.fill("#f-distance", "300")
    submit(page, "f-distance")
    wait_result(page)
    assert page.text_content("#f-distance-msg") == ""
    assert page.log.errors == []


def test_engine_warnings_are_shown(page, served):
    open_page(page, served.url)
    page.fill("#f-soma_diameter", "200")
    submit(page, "f-soma_diameter")
    wait_result(page)
    expected = somaward.solve(quick_scenario(distance=300, length=600, diameter=2,
                                             soma_diameter=200, end="sealed",
                                             Rm=20000, Ri=150, Cm=1,
                                             eq_tolerance=page_eq_tolerance(page)))["warnings"]
    assert expected, "this scenario should warn about the soma"
    assert page.locator("#warnings li").all_text_contents() == expected
    # No soma at all: an empty field.
    page.fill("#f-soma_diameter", "")
    submit(page, "f-soma_diameter")
    wait_result(page)
    report = shown_report(page)
    assert report["scenario"]["soma"] is None and report["rho"] is None
    # No ρ without a soma: its row is left out, as in the exports.
    assert page.locator("#results-body [data-key=rho]").count() == 0


def test_recomputes_while_typing(page, served):
    open_page(page, served.url)
    before = shown_report(page)["attenuation"]["steady_state"]["site_to_soma"]
    page.fill("#f-distance", "")
    page.locator("#f-distance").press_sequentially("550", delay=40)
    assert page.get_attribute("body", "data-results") == "stale"
    # On a loaded machine a pause between keys can outlast the debounce, so "5" or "55" may be
    # answered first: the newest input's answer is the one that counts.
    for _ in range(100):
        wait_result(page)
        report = shown_report(page)
        if report["scenario"]["synapse"]["path_distance"] == 550:
            break
        page.wait_for_timeout(100)
    assert report["scenario"]["synapse"]["path_distance"] == 550
    assert report["attenuation"]["steady_state"]["site_to_soma"] < before


def test_offline_reload_still_computes(context, site_copy, serve, artifacts):
    served = serve(site_copy)
    page = context.new_page()
    open_page(page, served.url)
    page.wait_for_selector("body[data-offline=ready]", state="attached", timeout=60_000)
    served.stop()
    context.set_offline(True)
    page.reload()
    wait_result(page)
    assert page.get_attribute("body", "data-state") == "ready"
    page.fill("#f-length", "800")
    submit(page, "f-length")
    wait_result(page)
    assert shown_report(page)["scenario"]["branches"][0]["length"] == 800
    page.screenshot(path=artifacts / "page-offline-reload.png")
    context.set_offline(False)


def test_corrupted_vendored_file_names_it(page, site_copy, serve, artifacts):
    info = json.loads((site_copy / "build-info.json").read_text())
    numpy_file = info["science"]["numpy"]
    path = site_copy / "pyodide" / numpy_file
    data = bytearray(path.read_bytes())
    for i in range(len(data) // 2, len(data) // 2 + 64):
        data[i] ^= 0xFF
    path.write_bytes(bytes(data))
    served = serve(site_copy)
    page.goto(served.url)
    page.wait_for_selector("body[data-state=error]", state="attached", timeout=BOOT_TIMEOUT_MS)
    assert page.is_visible("#boot-error")
    text = page.text_content("#boot-error-text")
    assert numpy_file in text and "differs from the lock file" in text
    page.screenshot(path=artifacts / "page-corrupted-file.png")


def test_missing_engine_wheel_names_it(page, site_copy, serve):
    wheel = json.loads((site_copy / "build-info.json").read_text())["engine_wheel"]
    (site_copy / "pyodide" / wheel).unlink()
    served = serve(site_copy)
    page.goto(served.url)
    page.wait_for_selector("body[data-state=error]", state="attached", timeout=BOOT_TIMEOUT_MS)
    text = page.text_content("#boot-error-text")
    assert f"{wheel}: HTTP 404" in text


def test_boot_that_hangs_times_out_with_a_message(page, site_copy, serve, artifacts):
    index = site_copy / "index.html"
    index.write_text(index.read_text().replace('"bootTimeoutMs": 90000', '"bootTimeoutMs": 3000'))
    held = []
    # Hold the Wasm module forever: Python never starts, nothing rejects.
    page.context.route("**/pyodide.asm.wasm", lambda route: held.append(route))
    served = serve(site_copy)
    page.goto(served.url)
    page.wait_for_selector("body[data-state=error]", state="attached", timeout=60_000)
    assert held, "the Wasm request was not held"
    text = page.text_content("#boot-error-text")
    assert "did not start within 3 s" in text
    page.screenshot(path=artifacts / "page-boot-timeout.png")


def test_file_url_shows_how_to_serve(page, site_dir, artifacts):
    page.goto((site_dir / "index.html").as_uri())
    page.wait_for_selector("#file-notice:not([hidden])", timeout=30_000)
    assert page.get_attribute("body", "data-state") == "error"
    assert "http.server" in page.text_content("#file-notice")
    page.screenshot(path=artifacts / "page-file-url.png")


def test_tablet_width_and_keyboard(browser, served, artifacts):
    context = browser.new_context(viewport={"width": 768, "height": 1024})
    page = context.new_page()
    try:
        open_page(page, served.url)
        width = page.evaluate("() => document.documentElement.scrollWidth")
        assert width <= 768
        # The first Tab reaches the input switch (one dendrite / branch table), the keeping-work
        # buttons follow, then the first field; its label is tied to it.
        page.keyboard.press("Tab")
        assert page.evaluate("() => document.activeElement.name") == "mode"
        for _ in range(6):
            if page.evaluate("() => document.activeElement.id") == "f-distance":
                break
            page.keyboard.press("Tab")
        assert page.evaluate("() => document.activeElement.id") == "f-distance"
        assert page.locator("label[for=f-distance]").count() == 1
        page.keyboard.press("Control+A")
        page.keyboard.type("120")
        page.keyboard.press("Enter")
        wait_result(page)
        assert shown_report(page)["scenario"]["synapse"]["path_distance"] == 120
        num = page.locator("#results-body .num").first
        num.focus()
        page.keyboard.press("Enter")
        assert num.text_content() == num.get_attribute("data-full")
        page.screenshot(path=artifacts / "page-tablet-768.png", full_page=True)
    finally:
        context.close()
