"""The interactive map in a real browser: Debian's headless Chromium driven by selenium.

Nothing is downloaded at run time: the browser and its driver are the Debian packages
``chromium`` and ``chromium-driver`` (``.ci/run`` installs them); selenium is told where
the driver is, so it never fetches one. Under ``CI=true`` a skip fails the run.
"""

from __future__ import annotations

import base64
import io
import json
import shutil
from pathlib import Path

import numpy as np
import pytest

from netctl import StructuredSystem
from netctl.cli import main
from netctl.io import read
from netctl.viz import map_marks
from netctl.viz.interactive import map_html, map_payload
from netctl.viz.placement import map_placement

ROOT = Path(__file__).resolve().parents[2]
GRID = ROOT / "networks" / "regional_grid.toml"
DRIVER_RGB = (0xC4, 0x4E, 0x0E)   # netmap.js STYLE.drivers.fill
CYCLE_RGB = (0xD9, 0x9A, 0x1E)    # netmap.js STYLE.cycles.color

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
CHROMEDRIVER = shutil.which("chromedriver")


@pytest.fixture(scope="module")
def browser():
    if CHROMIUM is None or CHROMEDRIVER is None:
        pytest.skip("Debian chromium and chromium-driver are not installed "
                    "(apt-get install chromium chromium-driver; .ci/run does it)")
    webdriver = pytest.importorskip("selenium.webdriver",
                                    reason="selenium is in the test extra")
    from selenium.webdriver.chrome.service import Service

    opts = webdriver.ChromeOptions()
    opts.binary_location = CHROMIUM
    for a in ("--headless=new", "--no-sandbox", "--disable-gpu", "--disable-dev-shm-usage",
              "--window-size=1300,950", "--disable-background-networking",
              "--force-device-scale-factor=1"):
        opts.add_argument(a)
    opts.set_capability("goog:loggingPrefs", {"browser": "ALL"})
    drv = webdriver.Chrome(service=Service(CHROMEDRIVER), options=opts)
    drv.set_script_timeout(30)
    yield drv
    drv.quit()


def open_page(browser, path):
    browser.get(path.as_uri())
    browser.get_log("browser")  # start each page with an empty console log
    browser.get(path.as_uri())
    settle(browser)
    return browser


def settle(browser):
    """Wait for two animation frames (the map draws in requestAnimationFrame)."""
    browser.execute_async_script(
        "var done = arguments[0];"
        "requestAnimationFrame(function(){requestAnimationFrame(function(){done(1);});});")


def console_errors(browser):
    return [e for e in browser.get_log("browser") if e["level"] in ("SEVERE", "ERROR")]


def canvas_rgb(browser):
    """What the map's canvas holds, as an RGB array (device pixels)."""
    url = browser.execute_script(
        "return document.querySelector('.ncm-canvas').toDataURL('image/png');")
    from PIL import Image

    data = base64.b64decode(url.split(",", 1)[1])
    return np.asarray(Image.open(io.BytesIO(data)).convert("RGB")).astype(int)


def near(img, rgb, tol=28):
    return ((np.abs(img[..., 0] - rgb[0]) < tol) & (np.abs(img[..., 1] - rgb[1]) < tol)
            & (np.abs(img[..., 2] - rgb[2]) < tol))


@pytest.fixture(scope="module")
def grid_page(tmp_path_factory):
    out = tmp_path_factory.mktemp("map") / "grid.html"
    assert main(["map", str(GRID), "--out", str(out), "--show", "critical-links"]) == 0
    return out


def test_map_loads_without_console_errors(browser, grid_page):
    open_page(browser, grid_page)
    assert console_errors(browser) == []
    state = browser.execute_script(
        "var m = window.netctlMaps[0]; return {n: m.n, drawn: m.drawn, errors: m.errors};")
    assert state["errors"] == []
    assert state["n"] == 162
    # everything the file holds is on screen at the start (the whole network is fitted)
    system = read(GRID)
    assert state["drawn"]["states"] == system.n_states
    assert state["drawn"]["drivers"] == 1


def test_search_finds_and_centres_a_state(browser, grid_page):
    from selenium.webdriver.common.by import By
    from selenium.webdriver.common.keys import Keys

    open_page(browser, grid_page)
    box = browser.find_element(By.CSS_SELECTOR, ".ncm-search")
    box.send_keys("coast_07")
    box.send_keys(Keys.ENTER)
    settle(browser)
    name = browser.find_element(By.CSS_SELECTOR, ".ncm-details .ncm-name").text
    assert name == "coast_07"
    sel, pos, size = browser.execute_script(
        "var m = window.netctlMaps[0]; return [m.selected, m.screenOf(m.selected), "
        "[m.W, m.H]];")
    assert read(GRID).state_names[sel] == "coast_07"
    assert pos == pytest.approx([size[0] / 2, size[1] / 2], abs=1.0)  # centred
    # the details say which input reaches it and where its control path starts
    text = browser.find_element(By.CSS_SELECTOR, ".ncm-details dl").text
    assert "reached by" in text and "control path" in text
    # a partial name lists candidates (buttons holding the names as text)
    box.clear()
    box.send_keys("coast_0")
    browser.implicitly_wait(2)
    hits = browser.find_elements(By.CSS_SELECTOR, ".ncm-results .ncm-hit")
    assert hits and all(h.text.startswith("coast_0") for h in hits)


def test_toggling_a_layer_changes_what_is_drawn(browser, grid_page):
    from selenium.webdriver.common.by import By

    open_page(browser, grid_page)
    before = canvas_rgb(browser)
    amber_before = near(before, CYCLE_RGB).sum()
    assert amber_before > 500  # 147 control-cycle links are drawn
    browser.find_element(By.CSS_SELECTOR, 'input[data-layer="cycles"]').click()
    settle(browser)
    after = canvas_rgb(browser)
    assert near(after, CYCLE_RGB).sum() < amber_before * 0.05
    assert "cycles" not in browser.execute_script("return window.netctlMaps[0].drawn;")
    # and the drivers stay on top, whatever the layers
    assert near(after, DRIVER_RGB).sum() > 30


def test_screenshot_has_driver_marks_where_the_data_puts_them(browser, tmp_path):
    # a path of 30 states on a line plus a second chain: the minimum design puts a driver
    # at the head of each chain (Liu, Slotine, Barabasi 2011: unmatched in-copies); the
    # positions come from the file's x/y (not from the renderer)
    n = 40
    src = list(range(29)) + list(range(30, 39))
    dst = list(range(1, 30)) + list(range(31, 40))
    x = [float(i % 30) for i in range(n)]
    y = [0.0 if i < 30 else 12.0 for i in range(n)]
    s = StructuredSystem.from_edges(src, dst, n, nodes={"x": x, "y": y})
    marks = map_marks(s)
    assert marks.names(marks.drivers) == ["x0", "x30"]
    page = tmp_path / "two.html"
    page.write_text(map_html(map_payload(s, marks, map_placement(s))), encoding="utf-8")
    open_page(browser, page)
    from PIL import Image
    from selenium.webdriver.common.by import By

    shot = np.asarray(Image.open(io.BytesIO(browser.get_screenshot_as_png()))
                      .convert("RGB")).astype(int)
    rect = browser.find_element(By.CSS_SELECTOR, ".ncm-canvas").rect
    view = browser.execute_script("var m = window.netctlMaps[0]; return [m.s, m.tx, m.ty];")
    k, tx, ty = view
    mask = near(shot, DRIVER_RGB)
    assert mask.any()
    ys, xs = np.nonzero(mask)
    for i in range(n):  # expected screen position from the file's coordinates
        px = rect["x"] + x[i] * k + tx
        py = rect["y"] + ty - y[i] * k
        d = np.hypot(xs - px, ys - py).min()
        if i in (0, 30):
            assert d < 6, (i, d)
        else:
            assert d > 15, (i, d)   # no driver colour where the data has no driver


EVIL = ["<script>window.__pwned = 1</script>",
        '"><img src=x onerror="window.__pwned = 2">',
        "</script><script>window.__pwned = 3</script><!--",
        "line\u2028sep\u2029end & <b>bold</b>"]


def test_markup_in_names_is_shown_as_text_and_never_runs(browser, tmp_path):
    s = StructuredSystem.from_named_edges(EVIL[:3], EVIL[1:])
    page = tmp_path / "evil.html"
    page.write_text(map_html(map_payload(s, map_marks(s), map_placement(s))),
                    encoding="utf-8")
    open_page(browser, page)
    assert browser.execute_script("return window.__pwned;") is None
    assert browser.execute_script("return document.querySelectorAll('img').length;") == 0
    # the data element was not closed early: one data element, parsed back whole
    names = browser.execute_script(
        "var e = document.querySelectorAll('script[type=\"application/json\"]');"
        "return [e.length, JSON.parse(e[0].textContent).names];")
    assert names[0] == 1 and names[1] == list(s.state_names)
    from selenium.webdriver.common.by import By

    for i, name in enumerate(s.state_names):
        browser.execute_script("window.netctlMaps[0].select(arguments[0], true);", i)
        shown = browser.execute_script(
            "return document.querySelector('.ncm-details .ncm-name').textContent;")
        assert shown == name
    box = browser.find_element(By.CSS_SELECTOR, ".ncm-search")
    box.send_keys("img src")
    browser.implicitly_wait(2)
    hits = browser.find_elements(By.CSS_SELECTOR, ".ncm-results .ncm-hit")
    assert [h.get_attribute("textContent") for h in hits] == [EVIL[1]]
    settle(browser)
    assert browser.execute_script("return window.__pwned;") is None
    assert console_errors(browser) == []


def test_report_embeds_the_interactive_map(browser, tmp_path):
    out = tmp_path / "report.html"
    assert main(["report", str(GRID), "--out", str(out)]) == 0
    open_page(browser, out)
    assert console_errors(browser) == []
    drawn = browser.execute_script("return window.netctlMaps[0].drawn;")
    assert drawn["states"] == 162 and drawn["drivers"] == 1
    payload = browser.execute_script(
        "return JSON.parse(document.querySelector('script[type=\"application/json\"]')"
        ".textContent).summary;")
    assert json.dumps(payload)


FRAGILE_RGB = (0x4A, 0x14, 0x8C)  # netmap.js STYLE.fragile.stroke


def test_screenshot_has_single_point_marks_where_the_data_puts_them(browser, tmp_path):
    # a chain x0 -> ... -> x19 with actuators at x0 and x10, and a lone state x20 with
    # its own actuator. Which actuator is a single point of failure comes from brute
    # force over single losses (networkx matching + reachability, Lin 1974): x0 (nothing
    # else reaches it) and x20 (an isolated state) are; x10 is not (x0 reaches it).
    from tests.structural._failures_brute import controllable

    n = 21
    edges = [(i, i + 1) for i in range(19)]
    sites = [0, 10, 20]
    crit = [s for k, s in enumerate(sites) if not controllable(
        n, edges, [[t] for j, t in enumerate(sites) if j != k])]
    assert controllable(n, edges, [[t] for t in sites]) and crit == [0, 20]
    x = [float(i % 20) * 2.0 for i in range(n)]
    y = [0.0 if i < 20 else 10.0 for i in range(n)]
    s = StructuredSystem.from_edges(*zip(*edges), n, nodes={"x": x, "y": y},
                                    inputs=sites)
    marks = map_marks(s)
    page = tmp_path / "fragile.html"
    page.write_text(map_html(map_payload(s, marks, map_placement(s))), encoding="utf-8")
    open_page(browser, page)
    assert console_errors(browser) == []
    assert browser.execute_script("return window.netctlMaps[0].drawn.fragile;") == 2
    from PIL import Image
    from selenium.webdriver.common.by import By

    shot = np.asarray(Image.open(io.BytesIO(browser.get_screenshot_as_png()))
                      .convert("RGB")).astype(int)
    rect = browser.find_element(By.CSS_SELECTOR, ".ncm-canvas").rect
    k, tx, ty = browser.execute_script(
        "var m = window.netctlMaps[0]; return [m.s, m.tx, m.ty];")
    # only the canvas: the legend's swatch has the same colour
    mask = near(shot, FRAGILE_RGB, tol=24)
    x0, y0 = int(rect["x"]), int(rect["y"])
    inside = np.zeros_like(mask)
    inside[y0:y0 + int(rect["height"]), x0:x0 + int(rect["width"])] = True
    ys, xs = np.nonzero(mask & inside)
    assert xs.size > 40
    for i in range(n):  # the ring (16 px radius) sits around the data's position
        px = rect["x"] + x[i] * k + tx
        py = rect["y"] + ty - y[i] * k
        d = np.hypot(xs - px, ys - py)
        if i in crit:
            assert d.min() < 20 and (d < 20).sum() > 20, (i, d.min())
        else:
            assert d.min() > 8, (i, d.min())   # no ring centred on any other state
    # the ring is the single point's own mark: a driver that is not one has none
    px = rect["x"] + x[10] * k + tx
    py = rect["y"] + ty - y[10] * k
    assert (np.hypot(xs - px, ys - py) < 20).sum() == 0
    # switching its layer off removes it
    browser.find_element(By.CSS_SELECTOR, 'input[data-layer="fragile"]').click()
    settle(browser)
    assert near(canvas_rgb(browser), FRAGILE_RGB, tol=24).sum() == 0
    # the details panel says why
    browser.execute_script("window.netctlMaps[0].select(0, false);")
    text = browser.find_element(By.CSS_SELECTOR, ".ncm-details dl").text
    assert "single point of failure" in text and "u:x0" in text


ISLAND = ROOT / "networks" / "island_grid.m"


def test_clicking_a_link_of_a_grid_names_its_branch(browser, tmp_path):
    # which branches join which buses, and their kinds, from the case file as read by the
    # PyPI package matpowercaseframes (MATPOWER convention: a branch with a nonzero tap
    # ratio is a transformer); netctl names branch row k "branch k"
    cf = pytest.importorskip("matpowercaseframes").CaseFrames(str(ISLAND))
    br = cf.branch.reset_index(drop=True)
    expect: dict[frozenset, list[str]] = {}
    for k, row in br.iterrows():
        kind = "transformer" if float(row["TAP"]) != 0.0 else "line"
        pair = frozenset((str(int(row["F_BUS"])), str(int(row["T_BUS"]))))
        expect.setdefault(pair, []).append(f"branch {k + 1} ({kind})")
    assert any(len(v) == 2 for v in expect.values())          # the double circuit
    assert any("transformer" in x for v in expect.values() for x in v)
    out = tmp_path / "island.html"
    assert main(["map", str(ISLAND), "--out", str(out)]) == 0
    open_page(browser, out)
    assert console_errors(browser) == []
    from selenium.webdriver.common.action_chains import ActionChains
    from selenium.webdriver.common.by import By

    canvas = browser.find_element(By.CSS_SELECTOR, ".ncm-canvas")
    names, links, xy, (W, H) = browser.execute_script(
        "var m = window.netctlMaps[0], d = m.d, a = [], xy = [];"
        "['links', 'paths', 'cycles', 'critical'].forEach(function (k) {"
        "  a = a.concat(d[k] || []); });"
        "for (var i = 0; i < m.n; i++) { xy.push(m.screenOf(i)); }"
        "return [d.names, a, xy, [m.W, m.H]];")
    xy = np.asarray(xy, float)
    # the model has two states a bus ('3:pos', '3:vel'); a link between buses a and b
    bus = [x.split(":")[0] for x in names]
    segs = [(links[k], links[k + 1]) for k in range(0, len(links), 2)]
    pairs = [frozenset((bus[u], bus[v])) for u, v in segs]

    def dist(p, u, v):
        a, b = xy[u], xy[v]
        t = np.clip(np.dot(p - a, b - a) / max(np.dot(b - a, b - a), 1e-9), 0, 1)
        return float(np.hypot(*(a + t * (b - a) - p)))

    seen = []
    for pair, want in expect.items():
        # a point of one of its links that no state and no link of other buses is near
        spot = None
        for (u, v), pr in zip(segs, pairs):
            if pr != pair:
                continue
            for t in (0.5, 0.35, 0.65):
                p = xy[u] + t * (xy[v] - xy[u])
                if np.hypot(*(xy - p).T).min() > 16 and all(
                        dist(p, a, b) > 8 for (a, b), q in zip(segs, pairs) if q != pair):
                    spot = p
                    break
            if spot is not None:
                break
        if spot is None:
            continue
        # a real click there, on the canvas (offsets from its centre)
        ActionChains(browser).move_to_element_with_offset(
            canvas, int(round(spot[0] - W / 2)), int(round(spot[1] - H / 2))).click().perform()
        settle(browser)
        sel = browser.execute_script("return window.netctlMaps[0].selLink;")
        assert sel is not None and frozenset((bus[sel[0]], bus[sel[1]])) == pair, (pair, sel)
        text = browser.find_element(By.CSS_SELECTOR, ".ncm-details dl").text
        shown = text.split("element\n", 1)[1].split("\n", 1)[0]
        assert sorted(shown.split(", ")) == sorted(want), (pair, text)
        if len(want) > 1:
            assert "parallel circuits" in text
        seen.append(want)
    assert len(seen) >= 5 and len(expect) == 7
    assert any(len(w) == 2 for w in seen) and any("transformer" in w[0] for w in seen)
    # a click on empty paper selects nothing new; a click on a state still selects it
    ActionChains(browser).move_to_element_with_offset(
        canvas, int(round(xy[0, 0] - W / 2)), int(round(xy[0, 1] - H / 2))).click().perform()
    settle(browser)
    assert browser.execute_script("var m = window.netctlMaps[0]; return [m.selected, m.selLink];") \
        == [0, None]
    assert console_errors(browser) == []
