"""The build page in a real browser: Debian's chromium, headless, driven by selenium.

Each shipped example's page is opened from a file with the network shut
(an unreachable proxy, no name lookups, and every http/https/ws URL blocked
through the browser's own request blocking); the checks: no console errors,
nothing fetched from anywhere but the page itself, as many chips and jumpers
drawn as the plan JSON's ``breadboard`` section lists, a click on a net marks
exactly that net's jumpers and chip pins, a ticked box survives a reload,
and a screenshot is saved to ``tmp/artifacts/`` (or ``$BINSYNTH_ARTIFACTS``).
Skipped only when chromium or its driver is not installed (.ci/run installs both).
"""

from __future__ import annotations

import os
import shutil
import tempfile
from pathlib import Path

import pytest

from synth.exports.plan_json import plan_to_json
from synth.exports.report import write_report
from synth.inventory import data_path, example_path
from synth.pipeline import make_plan

CHROMIUM = "/usr/bin/chromium"
DRIVER = "/usr/bin/chromedriver"
EXAMPLES = ["sample_hold", "stepper", "adc_staircase", "ultrasonic_burst", "led_scanner"]
ARTIFACTS = Path(os.environ.get("BINSYNTH_ARTIFACTS", Path(__file__).resolve().parent.parent / "tmp" / "artifacts"))

pytestmark = pytest.mark.skipif(not (os.access(CHROMIUM, os.X_OK) and os.access(DRIVER, os.X_OK)),
                                reason="Debian's chromium and chromium-driver are not installed")


@pytest.fixture(scope="module")
def browser():
    webdriver = pytest.importorskip("selenium.webdriver", reason="selenium (the test extra) is not installed")
    from selenium.webdriver.chrome.service import Service

    profile = tempfile.mkdtemp(prefix="binsynth-chromium-")
    options = webdriver.ChromeOptions()
    options.binary_location = CHROMIUM
    for flag in ("--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync", "--no-first-run",
                 "--disable-dev-shm-usage", "--window-size=1500,1100", f"--user-data-dir={profile}",
                 "--proxy-server=127.0.0.1:9", "--host-resolver-rules=MAP * ~NOTFOUND"):
        options.add_argument(flag)
    options.set_capability("goog:loggingPrefs", {"browser": "ALL"})
    driver = webdriver.Chrome(service=Service(DRIVER), options=options)
    driver.execute_cdp_cmd("Network.enable", {})
    driver.execute_cdp_cmd("Network.setBlockedURLs", {"urls": ["http://*", "https://*", "ws://*", "wss://*"]})
    yield driver
    driver.quit()
    shutil.rmtree(profile, ignore_errors=True)


@pytest.fixture(scope="module", params=EXAMPLES)
def page(request, tmp_path_factory):
    name = request.param
    design = make_plan(example_path(f"{name}.yaml"), data_path("bins", f"{name}.yaml"), lacks=0)
    path = tmp_path_factory.mktemp("report") / f"{name}.html"
    write_report(design, path)
    return name, path, plan_to_json(design.plan)


def _errors(driver) -> list[str]:
    return [e["message"] for e in driver.get_log("browser") if e["level"] == "SEVERE"]


def test_report_in_chromium(browser, page):
    name, path, data = page
    board = data["breadboard"]
    browser.get(path.as_uri())
    browser.execute_script("window.localStorage.clear()")
    browser.refresh()
    assert _errors(browser) == []
    fetched = browser.execute_script(
        "return performance.getEntriesByType('resource').map(function (e) { return e.name; })")
    assert [u for u in fetched if not u.startswith(("file:", "data:"))] == []

    count = lambda css: browser.execute_script(f"return document.querySelectorAll({css!r}).length")  # noqa: E731
    assert count("svg.board g.bb-chip") == len(board["chips"]) == len(data["chips"])
    assert count("svg.board g.bb-jumper") == len(board["jumpers"])
    assert count("li.step input[type=checkbox]") == (len(board["chips"]) + len(board["parts"])
                                                     + len(board["jumpers"]) + len(board["external"]))

    net = next(j["net"] for j in board["jumpers"] if j["kind"] == "signal")
    browser.find_element("css selector", f'.nets button.net[data-net="{net}"]').click()
    assert count(".bb-jumper.hl") == sum(1 for j in board["jumpers"] if j["net"] == net)
    chip_refs = {c["ref"] for c in data["chips"]}
    pins = next(w["pins"] for w in data["wires"] if w["net"] == net)
    assert count("svg.board .chip-pin.hl") == sum(1 for p in pins if p["ref"] in chip_refs)
    assert count(".bb-strip.hl") >= 2 and count("li.step.hl") >= 1

    first = browser.find_element("css selector", "li.step input[type=checkbox]")
    first.click()
    second_step = browser.execute_script(
        "return document.querySelectorAll('li.step')[1].getAttribute('data-step')")
    assert browser.execute_script("return document.querySelector('li.step.next').getAttribute('data-step')") \
        == second_step
    browser.refresh()
    first = browser.find_element("css selector", "li.step input[type=checkbox]")
    assert first.is_selected()
    assert count("li.step input[type=checkbox]:checked") == 1
    assert count('svg.board [data-step="%s"].next' % second_step) == 1

    browser.find_element("css selector", "#focus").click()
    faded = browser.execute_script(
        "return Array.prototype.filter.call(document.querySelectorAll('svg.board g.bb-jumper'),"
        " function (g) { return getComputedStyle(g).opacity < 0.5; }).length")
    assert faded == len(board["jumpers"]) - count("svg.board g.bb-jumper.next")
    browser.find_element("css selector", "#focus").click()

    ARTIFACTS.mkdir(parents=True, exist_ok=True)
    browser.execute_script("document.getElementById('board').scrollIntoView()")
    shot = ARTIFACTS / f"report-{name}.png"
    assert browser.save_screenshot(str(shot)) and shot.stat().st_size > 10_000
    assert _errors(browser) == []
