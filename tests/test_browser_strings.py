"""The Strings tab in a real browser: a string drawn by clicking modules on the plan.

Voila serves the packaged planner (as ``python -m widgets`` does), headless Chromium opens it
(Playwright); the test opens the Strings tab, presses **Draw a string**, clicks five modules on
the plan in wiring order with the mouse, finishes the string, and checks that the page shows
the string drawn (its label on the plan) and the option "as drawn" with the annual energy a
fresh comparison by the core (:func:`layout.study.string_options.compare_stringing`) gives
for those five modules. Like tests/test_browser.py it fails, never skips, without Chromium.
"""

import dataclasses
import re

from test_browser import (  # noqa: F401 - the fixtures are used by name
    CHROMIUM_ARGS,
    _centre,
    browser_tools,
    open_planner,
    plan_marker,
    voila_url,
)

from layout import load_demo_project
from layout.power.electrical import ElectricalOptions
from layout.study.analysis import evaluate
from layout.study.string_options import compare_stringing
from widgets.plan_view import obstruction_anchor


def test_a_string_drawn_by_clicks_in_the_browser(voila_url, browser_tools, tmp_path):  # noqa: F811
    from playwright.sync_api import expect, sync_playwright

    project = load_demo_project()
    evaluation = evaluate(project)
    clicked = [m for m in evaluation.modules if m.row == 0][:5]  # the eave row, in order
    names = ["chimney", "plumbing vent", "silver maple (south-west)"]
    anchors = {o.name: obstruction_anchor(o) for o in project.obstructions}

    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=browser_tools, args=CHROMIUM_ARGS)
        try:
            page, plan = open_planner(browser, voila_url)

            def marker(name):
                return plan_marker(page, plan, name)

            marker(names[2]).wait_for(timeout=40_000)
            expect(page.locator(".eaveline-totals")).to_contain_text("shade loss",
                                                                     timeout=15_000)
            # pixels per metre from the obstruction markers (equal axes on screen)
            px = {name: _centre(marker(name).bounding_box()) for name in names}
            chimney, vent, tree = (anchors[n] for n in names)
            per_m_x = (px["plumbing vent"][0] - px["chimney"][0]) / (vent[0] - chimney[0])
            per_m_y = (px[names[2]][1] - px["chimney"][1]) / (tree[1] - chimney[1])

            def on_screen(module):
                x, y = module.centre_3d[:2]
                return (px["chimney"][0] + (x - chimney[0]) * per_m_x,
                        px["chimney"][1] + (y - chimney[1]) * per_m_y)

            page.locator(".eaveline-side .lm-TabBar-tab", has_text="Strings").click()
            table = page.locator(".eaveline-strings-table")
            expect(table).to_contain_text("shade-aware", timeout=30_000)
            expect(page.locator(".eaveline-strings-sizing")).to_contain_text(
                "longest string 13 modules")
            page.locator(".eaveline-strings-draw").click()
            note = page.locator(".eaveline-strings-note")
            for count, module in enumerate(clicked, start=1):
                # a pointer that jumps lands on the last module's tooltip, which stands to
                # its right: leave the plan first (the tooltip hides), then come back
                page.mouse.move(5, 5)
                page.wait_for_timeout(300)
                page.mouse.move(*on_screen(module), steps=4)
                page.mouse.down()
                page.mouse.up()
                expect(note).to_contain_text(f"New string: {count} module(s)", timeout=15_000)
            page.locator(".eaveline-strings-finish").click()
            expect(note).to_contain_text("String S1 added.", timeout=30_000)
            expect(table).to_contain_text("as drawn", timeout=30_000)
            expect(plan.locator("text", has_text=re.compile("^S1$"))).to_have_count(1)

            # the same string evaluated by the core
            strings = (tuple(m.id for m in clicked),)
            drawn = project.with_changes(energy=dataclasses.replace(
                project.energy, electrical=ElectricalOptions(strings=strings)))
            core = compare_stringing(evaluate(drawn)).table.loc["project", "energy_kwh"]
            row = table.locator("tr[data-method='project']")
            assert f"{core:,.0f}" in row.inner_text()
            shot = tmp_path / "planner-strings.png"
            page.screenshot(path=str(shot), full_page=True)
            print(f"\nscreenshot: {shot}")
        finally:
            browser.close()
