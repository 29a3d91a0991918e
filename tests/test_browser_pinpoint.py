"""The guide page's ranking form in headless chromium: it appears only with JavaScript, ranks
as `kitleaf pinpoint` does from the data in the page, and fetches nothing."""

from __future__ import annotations

import json

import pytest

from chromium_pipe import Page
from kitleaf.circuit.build import build_circuit
from kitleaf.faults.rank import rank
from kitleaf.faults.solve import solve_faults
from kitleaf.guide import parse_guide
from site_pages import DEMO_GUIDES

pytestmark = pytest.mark.slow
HERON = "heron-opamp-boost"
# Records every request a script makes (fetch, XMLHttpRequest, beacons) before the page runs.
WATCH = """window.fetched = [];
const seen = (u) => { window.fetched.push(String(u)); };
const realFetch = window.fetch;
window.fetch = (...a) => { seen(a[0]); return realFetch(...a); };
const realOpen = XMLHttpRequest.prototype.open;
XMLHttpRequest.prototype.open = function (m, u) {
  seen(u); return realOpen.apply(this, arguments); };
navigator.sendBeacon = (u) => { seen(u); return false; };"""


@pytest.fixture(scope="module")
def site(demo_site):
    return demo_site


def fill_and_rank(page: Page, readings: dict[str, str], black: str) -> list[str]:
    script = f"""(() => {{
      const form = document.getElementById('pinpoint');
      const values = {json.dumps(readings)};
      for (const [name, value] of Object.entries(values)) form.elements[name].value = value;
      form.querySelector('input[name=black][value={black}]').checked = true;
      form.querySelector('button').click();
      const out = document.getElementById('pinpoint-result');
      return JSON.stringify([...out.querySelectorAll('p, li')].map(e => e.textContent));
    }})()"""
    return json.loads(page.evaluate(script))


def test_the_form_ranks_as_the_command_does(site, browser):
    page = Page(browser, (site / HERON / "index.html").as_uri(), first_script=WATCH)
    assert page.errors() == []
    assert page.evaluate("document.getElementById('pinpoint').hidden") is False
    readings = {"gain.u1a.pin1": "0.00", "gain.u1a.pin2": "0.00", "power.vref": "4.24"}
    shown = fill_and_rank(page, readings, "ground")
    assert shown[0] == "These readings do not fit a good build. Most likely:"
    kit = build_circuit(parse_guide(DEMO_GUIDES / f"{HERON}.md"))
    ranking = rank(solve_faults(kit), {k: float(v) for k, v in readings.items()}, "ground",
                   top=5)
    assert shown[1].endswith("U1 turned round in its socket (pin 1 at pin 5)")
    # the page's readings are rounded to the millivolt: faults the command finds all but
    # equally unlikely may swap places there, so the order is compared where it means something
    for line, candidate in zip(shown[1:], ranking.candidates, strict=True):
        if candidate.probability >= 0.01:
            assert line == f"{round(candidate.probability * 100)} %: {candidate.fault.text}"
        else:
            assert line.split(":")[0] in ("under 1 %", "1 %")
    # nothing was fetched: no request from the script, and the page's own files are local
    assert page.evaluate("JSON.stringify(window.fetched)") == "[]"
    urls = json.loads(page.evaluate(
        "JSON.stringify([...document.querySelectorAll('script[src], link[href]')]"
        ".map(e => e.src || e.href))"))
    assert urls and all(u.startswith("file://") for u in urls)


def test_good_readings_and_bad_input(site, browser):
    page = Page(browser, (site / HERON / "index.html").as_uri())
    shown = fill_and_rank(page, {"power.vcc": "8.82", "power.vref": "4.40"}, "ground")
    assert shown[0].startswith("These readings fit a good build")
    shown = fill_and_rank(page, {"power.vcc": "abc", "power.vref": ""}, "ground")
    assert shown == ["Check these readings:", "power.vcc: 'abc' is not a number of volts"]
    shown = fill_and_rank(page, {"power.vcc": "", "power.vref": ""}, "ground")
    assert shown == ["Check these readings:", "type at least one reading"]


def test_without_javascript_the_table_stands_alone(site, browser):
    page = Page(browser, "about:blank")
    page.send("Emulation.setScriptExecutionDisabled", {"value": True})
    page.send("Page.navigate", {"url": (site / HERON / "index.html").as_uri()})
    browser.wait_event("Page.loadEventFired", page.session)
    page.send("Emulation.setScriptExecutionDisabled", {"value": False})  # to read the page
    assert page.evaluate("document.getElementById('pinpoint').hidden") is True
    assert page.evaluate("document.querySelectorAll('.symptom-table tbody tr').length") > 10
