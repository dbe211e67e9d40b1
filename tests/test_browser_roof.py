"""A roof from scratch in a real browser: `python -m widgets --new`, a template, a tree, undo.

Voila serves the packaged planner notebook with ``EAVELINE_NEW`` set, as ``python -m widgets
--new`` does; headless Chromium (through Playwright) types a site, builds a 40 × 28 ft hip roof
at 6 in 12 from the template form, adds a surveyed tree south of it, reads a shade loss above
zero, undoes twice (the tree with the button, then the building and its modules with Ctrl+Z
over the plan) and redoes once (Ctrl+Shift+Z).

Outside reference: the hip roof's module count is the one the core's own fill gives for the same
typed values (:func:`layout.fill.placement.fill_building` on the template's building), and the
shade loss shown is the one a fresh evaluation by the core gives for the project the page built
(:func:`layout.study.analysis.evaluate`), so the page and the core agree.
"""

import re
from pathlib import Path

import pytest
from test_browser import CHROMIUM_ARGS, open_planner, require_browser_tools

from layout.scene.templates import template_from_text
from widgets.__main__ import planner_notebook, require_notebook, voila_command, voila_environment

NONE = re.compile(r"(^|\D)0 modules")
HIP = {"length-m": "40 ft", "width-m": "28 ft", "pitch-deg": "6/12", "eave-height-m": "10 ft"}
# a tree 10 ft south of the eave, sighted from 60 ft south of the house looking north
TREE = {"name": "test oak", "station-x-m": "20 ft", "station-y-m": "-60 ft",
        "eye-height-m": "5.5 ft", "bearing-deg": "0", "distance-m": "50 ft",
        "top-angle-deg": "17", "crown-radius-m": "10 ft", "crown-base-m": "8 ft"}


@pytest.fixture(scope="module")
def new_project_url(tmp_path_factory, local_server):
    require_browser_tools()
    notebook = require_notebook(Path(str(planner_notebook())))
    log = tmp_path_factory.mktemp("voila-new") / "voila.log"
    env = {**voila_environment(), "EAVELINE_NEW": "1"}
    with local_server(lambda port: voila_command(notebook, port=port), log=log,
                      cwd=tmp_path_factory.getbasetemp(), env=env) as url:
        yield url


def _start_project(browser, url, latitude: str, longitude: str, zone: str, *,
                   units: str | None = None):
    """Open the planner on --new, type the site, check the zone found, start; return page."""
    from playwright.sync_api import expect

    page, _ = open_planner(browser, url)
    start = page.locator("button.eaveline-new-project")
    start.wait_for(timeout=60_000)
    page.locator(".eaveline-new-latitude input").fill(latitude)
    page.locator(".eaveline-new-longitude input").fill(longitude)
    expect(page.locator(".eaveline-new-timezone input")).to_have_value(zone, timeout=15_000)
    if units:
        page.locator(".eaveline-new-units select").select_option(label=units)
    start.click()
    expect(page.locator(".eaveline-count")).to_contain_text(NONE, timeout=20_000)
    return page


def _count(page) -> int:
    return int(re.search(r"(\d+)\s+modules", page.locator(".eaveline-count").inner_text())[1])


def test_a_hip_roof_from_the_template_a_tree_and_undo(new_project_url, tmp_path):
    from playwright.sync_api import expect, sync_playwright

    chromium = require_browser_tools()
    template, problems = template_from_text(
        "hip", {k.replace("-", "_"): v for k, v in HIP.items()}, default_unit="ft")
    assert problems == {}

    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=chromium, args=CHROMIUM_ARGS)
        try:
            page = _start_project(browser, new_project_url, "39° 44' 21\" N", "104° 59' 24\" W",
                                  "America/Denver", units="feet and inches")

            for key, text in HIP.items():
                page.locator(f".eaveline-template-{key} input").fill(text)
            add = page.locator("button.eaveline-add-building")
            expect(add).to_be_enabled(timeout=15_000)
            add.click()
            page.wait_for_function(
                "() => /[1-9]\\d*\\s+modules/.test("
                "document.querySelector('.eaveline-count').innerText)", timeout=30_000)
            filled = _count(page)
            assert filled == _core_layout(template).count > 0

            page.locator(".eaveline-side .lm-TabBar-tab", has_text="Survey").click()
            for key, text in TREE.items():
                field = page.locator(f".eaveline-survey-{key} input").first
                field.fill(text)
                field.press("Enter")  # continuous_update=False: sent on Enter
            expect(page.locator(".eaveline-survey-list")).to_contain_text("test oak",
                                                                          timeout=20_000)
            loss = page.locator(".eaveline-shade-loss")
            page.wait_for_function(
                "() => parseFloat(document.querySelector('.eaveline-shade-loss').innerText) > 0",
                timeout=30_000)
            assert float(loss.inner_text()) > 0.1
            page.screenshot(path=str(tmp_path / "roof-from-scratch.png"), full_page=True)

            undo, redo = page.locator("button.eaveline-undo"), page.locator("button.eaveline-redo")
            undo.click()  # the tree goes: the whole entry was one step
            page.wait_for_function(
                "() => parseFloat(document.querySelector('.eaveline-shade-loss').innerText)"
                " === 0", timeout=30_000)
            assert _count(page) == filled
            # the keys, with the pointer over the plan (widgets/undo_keys.py)
            plan = page.locator(".eaveline-plan")
            plan.scroll_into_view_if_needed()
            plan.hover()
            page.keyboard.press("Control+z")  # the building and its modules go
            expect(page.locator(".eaveline-count")).to_contain_text(NONE, timeout=30_000)
            plan.hover()
            page.keyboard.press("Control+Shift+z")
            page.wait_for_function(
                f"() => /^\\s*{filled}\\s+modules/.test("
                "document.querySelector('.eaveline-count').innerText)", timeout=30_000)
            expect(redo).to_be_enabled()  # the tree can come back too
        finally:
            browser.close()


def _core_layout(template):
    """The core's own fill of the same building on a new project with the same site."""
    from dataclasses import replace

    from layout.edits import add_building
    from layout.scene.site import Site
    from widgets.roof_panel import placeholder_project

    site = Site(39 + 44 / 60 + 21 / 3600, -(104 + 59 / 60 + 24 / 3600), "America/Denver")
    project = replace(placeholder_project(), site=site)
    return add_building(project, replace(template, name="house").build()).layout()


def _axis_scale(page, side: str) -> tuple[float, float]:
    """Pixels per metre and the pixel of 0 m along one plan axis, read off its tick labels."""
    axis = page.locator(".eaveline-plan g.axis").nth(0 if side == "x" else 1)
    ticks = axis.locator("g.tick")
    values, pixels = [], []
    for k in range(ticks.count()):
        tick = ticks.nth(k)
        text = (tick.locator("text").text_content() or "").replace("\u2212", "-")
        box = tick.locator("line").bounding_box()
        if not text.strip() or box is None:
            continue
        values.append(float(text))
        pixels.append(box["x"] + box["width"] / 2 if side == "x" else box["y"] + box["height"] / 2)
    per_m = (pixels[-1] - pixels[0]) / (values[-1] - values[0])
    return per_m, pixels[0] - values[0] * per_m


def test_a_five_corner_outline_drawn_by_clicking(new_project_url, tmp_path):
    from playwright.sync_api import expect, sync_playwright

    chromium = require_browser_tools()
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=chromium, args=CHROMIUM_ARGS)
        try:
            page = _start_project(browser, new_project_url, "45.5", "-122.6",
                                  "America/Los_Angeles")

            page.get_by_text("Draw an outline", exact=True).click()
            page.locator(".eaveline-draw-toggle").click()
            listing = page.locator(".eaveline-draw-corners")
            expect(listing).to_contain_text("drawing", timeout=10_000)  # clicks now add corners
            page.locator(".eaveline-plan").scroll_into_view_if_needed()  # then measure it
            per_x, x0 = _axis_scale(page, "x")
            per_y, y0 = _axis_scale(page, "y")
            # a pentagon of our own: a 12 × 8 m rectangle with a gable point 3 m above it
            corners_m = [(-6.0, -4.0), (6.0, -4.0), (6.0, 4.0), (0.0, 7.0), (-6.0, 4.0)]
            clicked = [(x0 + x * per_x, y0 + y * per_y) for x, y in corners_m]
            for k, (px, py) in enumerate(clicked):
                page.mouse.click(px, py)
                expect(listing).to_contain_text(f"{k + 1} corner", timeout=10_000)
            page.mouse.click(*clicked[0])  # the first corner again closes the outline
            expect(listing).to_contain_text("closed", timeout=10_000)
            lengths = [float(v) for v in re.findall(r"edge \d+: ([\d.]+) m",
                                                    listing.inner_text())]
            # edge lengths from the clicked points, within a pixel or two of the axes' scale
            expected = [((b[0] - a[0]) ** 2 + (b[1] - a[1]) ** 2) ** 0.5
                        for a, b in zip(corners_m, corners_m[1:] + corners_m[:1], strict=True)]
            assert lengths == pytest.approx(expected, abs=3 / abs(per_x))
            page.locator(".eaveline-draw-pitch-deg input").fill("0")
            page.locator(".eaveline-draw-eave-height-m input").fill("3")
            page.locator("button.eaveline-draw-add").click()
            page.wait_for_function(
                "() => /[1-9]\\d*\\s+modules/.test("
                "document.querySelector('.eaveline-count').innerText)", timeout=30_000)
            page.screenshot(path=str(tmp_path / "drawn-outline.png"), full_page=True)
        finally:
            browser.close()
