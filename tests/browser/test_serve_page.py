#!/usr/bin/python3
"""The page of `lampwright serve` in a real headless browser (Debian chromium + chromium-driver +
python3-selenium): move a slider, check that the u'v' readout and Ra are what `lampwright blend`
gives for the same fractions, fit, save the recipe, run `lampwright blend` on the saved file and
compare, take a screenshot and check it is not blank, and print the slider-to-redraw time measured
in the browser (performance.now() from the input event to the drawn answer); then an LED layer
design: move its thickness slider and check the readouts against `lampwright layer`.

Usage: test_serve_page.py LAMPWRIGHT_BINARY SOURCE_DIR [SCREENSHOT.png]
Exit 0 pass, 1 fail, 77 skipped (a browser piece is missing). Loopback only, bounded in time.
"""
import json
import os
import re
import shutil
import signal
import statistics
import struct
import subprocess
import sys
import tempfile
import time
import zlib

SKIP = 77
DEADLINE_S = 150  # ctest's TIMEOUT is 180 s; a Release run takes 10-25 s, the sanitizer build some times more


def skip(why):
    print("SKIP: " + why)
    sys.exit(SKIP)


def uv_prime(x, y):
    # CIE 15:2004 eq. 8.8: u' = 4x / (-2x + 12y + 3), v' = 9y / (-2x + 12y + 3).
    d = -2 * x + 12 * y + 3
    return 4 * x / d, 9 * y / d


def png_colours(data):
    """The number of distinct pixel colours of an 8-bit RGB or RGBA PNG (PNG spec, ISO/IEC 15948:
    chunks, zlib-compressed IDAT, per-row filters 0-4), without any imaging library."""
    assert data[:8] == b"\x89PNG\r\n\x1a\n", "not a PNG"
    pos, idat, width, height, bpp = 8, b"", 0, 0, 0
    while pos < len(data):
        length, kind = struct.unpack(">I4s", data[pos:pos + 8])
        body = data[pos + 8:pos + 8 + length]
        if kind == b"IHDR":
            width, height, depth, colour_type = struct.unpack(">IIBB", body[:10])
            assert depth == 8 and colour_type in (2, 6), "unexpected PNG format"
            bpp = 3 if colour_type == 2 else 4
        elif kind == b"IDAT":
            idat += body
        pos += 12 + length
    raw = zlib.decompress(idat)
    stride = width * bpp
    prev = bytearray(stride)
    colours = set()
    for row in range(height):
        f = raw[row * (stride + 1)]
        line = bytearray(raw[row * (stride + 1) + 1:(row + 1) * (stride + 1)])
        for i in range(stride):
            a = line[i - bpp] if i >= bpp else 0
            b = prev[i]
            c = prev[i - bpp] if i >= bpp else 0
            if f == 1:
                line[i] = (line[i] + a) & 255
            elif f == 2:
                line[i] = (line[i] + b) & 255
            elif f == 3:
                line[i] = (line[i] + (a + b) // 2) & 255
            elif f == 4:
                p = a + b - c
                pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
                line[i] = (line[i] + (a if pa <= pb and pa <= pc else b if pb <= pc else c)) & 255
        if row % 4 == 0:  # every 4th row is plenty to tell a drawn page from a blank one
            for i in range(0, stride, bpp * 2):
                colours.add(bytes(line[i:i + 3]))
        prev = line
    return len(colours)


def blend_json(binary, recipe_text, folder, command="blend"):
    """`lampwright blend` (or `layer`) --format json on the text written to a file."""
    path = os.path.join(folder, "recipe_%d.toml" % time.monotonic_ns())
    with open(path, "w") as f:
        f.write(recipe_text)
    out = subprocess.run([binary, command, path, "--format", "json"], capture_output=True, text=True, timeout=30)
    if out.returncode != 0:
        raise AssertionError("lampwright %s failed on %s: %s" % (command, path, out.stderr))
    return json.loads(out.stdout)


def start_server(binary, path):
    """`lampwright serve PATH --port 0`, and the address it prints."""
    server = subprocess.Popen([binary, "serve", path, "--port", "0"], stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    line = server.stdout.readline()
    m = re.search(r"http://127\.0\.0\.1:(\d+)/", line)
    if not m:
        server.kill()
        raise AssertionError("serve printed no address: %r %s" % (line, server.stderr.read()))
    return server, m.group(0)


def stop_server(server):
    server.send_signal(signal.SIGTERM)
    try:
        server.wait(timeout=10)
    except subprocess.TimeoutExpired:
        server.kill()


def main():
    if len(sys.argv) < 3:
        print(__doc__)
        return 2
    binary, source = sys.argv[1], sys.argv[2]
    screenshot_path = sys.argv[3] if len(sys.argv) > 3 else None
    chromium = shutil.which("chromium") or ("/usr/bin/chromium" if os.path.exists("/usr/bin/chromium") else None)
    if not chromium:
        skip("chromium is not installed (Debian package chromium)")
    if not os.path.exists("/usr/bin/chromedriver"):
        skip("/usr/bin/chromedriver is missing (Debian package chromium-driver)")
    try:
        from selenium import webdriver
        from selenium.webdriver.chrome.service import Service
        from selenium.webdriver.common.by import By
        from selenium.webdriver.support.ui import WebDriverWait
    except ImportError:
        skip("selenium is missing (Debian package python3-selenium)")

    signal.signal(signal.SIGALRM, lambda *_: (_ for _ in ()).throw(TimeoutError("browser test ran past %d s" % DEADLINE_S)))
    signal.alarm(DEADLINE_S)
    work = tempfile.mkdtemp(prefix="lampwright-browser-")
    recipe = os.path.join(source, "examples", "recipes", "triband_4000K.toml")
    servers, driver = [], None
    try:
        server, url = start_server(binary, recipe)
        servers.append(server)
        options = webdriver.ChromeOptions()
        options.binary_location = chromium
        for a in ("--headless=new", "--no-sandbox", "--disable-gpu", "--disable-dev-shm-usage", "--window-size=1400,1600",
                  "--no-first-run", "--no-default-browser-check", "--disable-extensions", "--user-data-dir=" + os.path.join(work, "profile")):
            options.add_argument(a)
        driver = webdriver.Chrome(service=Service("/usr/bin/chromedriver"), options=options)
        driver.set_page_load_timeout(20)
        driver.get(url)
        wait = WebDriverWait(driver, 20)
        evaluations = lambda: int(driver.execute_script("return Number(document.body.dataset.evaluations || 0)"))
        wait.until(lambda d: evaluations() >= 1)

        def readouts():
            return driver.execute_script("""
                const uv = document.getElementById('readout-uv').dataset, ra = document.getElementById('readout-ra').dataset;
                return {u: Number(uv.u), v: Number(uv.v), ra: Number(ra.ra), r9: Number(ra.r9),
                        redraw: Number(document.body.dataset.redrawMs), server: Number(document.body.dataset.serverMs),
                        answer: Number(document.body.dataset.answerMs), render: Number(document.body.dataset.renderMs)};""")

        def move(component, value, use_range):
            """Sets a component's slider (or number field) as a user would and waits for the redraw."""
            before = evaluations()
            driver.execute_script("""
                const row = document.querySelector('.comp[data-id="' + arguments[0] + '"]');
                const el = row.querySelector(arguments[2] ? 'input.frac-range' : 'input.frac-number');
                el.value = String(arguments[1]);
                el.dispatchEvent(new Event('input', {bubbles: true}));
                el.dispatchEvent(new Event('change', {bubbles: true}));""", component, value, use_range)
            wait.until(lambda d: evaluations() > before and not d.execute_script("return page.inFlight || page.pending"))
            return readouts()

        start = readouts()
        # One slider move, checked against the command line on the same fractions.
        after = move("Y2O3:Eu3+", 0.5, True)
        assert (after["u"], after["v"]) != (start["u"], start["v"]), "the u'v' readout did not change"
        fractions = driver.execute_script("return page.components.map(c => [c.id, c.value])")
        text = 'name = "T8 tri-band 4000 K (line 2)"\nexcitation_nm = 253.7\n'
        for pid, w in fractions:
            text += '\n[[component]]\nphosphor = "%s"\nmass_fraction = %r\n' % (pid, w)
        cli = blend_json(binary, text, work)
        # The page shows the API's numbers, which are blend's JSON document: equal, not close.
        assert (after["u"], after["v"], after["ra"], after["r9"]) == (cli["u_prime"], cli["v_prime"], cli["Ra"], cli["R9"]), (after, cli)
        print("slider move: u' %.5f v' %.5f Ra %.2f R9 %.2f, as lampwright blend gives" % (after["u"], after["v"], after["ra"], after["r9"]))

        # Slider-to-redraw time in the browser, over a series of moves (slider and number field).
        runs = [after]
        for k, w in enumerate((0.40, 0.42, 0.44, 0.46, 0.48, 0.45, 0.43, 0.41)):
            runs.append(move("LaPO4:Ce3+,Tb3+", w, k % 2 == 0))
        med = lambda key: statistics.median(r[key] for r in runs)
        print("slider -> redraw in the browser: median %.1f ms, max %.1f ms over %d moves (median: server %.1f ms, answer in the page %.1f ms, drawing %.1f ms)"
              % (med("redraw"), max(r["redraw"] for r in runs), len(runs), med("server"), med("answer"), med("render")))

        # Fit (the default objective, the default target: the ANSI class nearest the recipe).
        before = evaluations()
        driver.find_element(By.ID, "fit-button").click()
        wait.until(lambda d: d.execute_script("return document.body.dataset.fitState || ''") != "")
        assert driver.execute_script("return document.body.dataset.fitState") == "feasible", driver.find_element(By.ID, "fit-message").text
        wait.until(lambda d: evaluations() > before and not d.execute_script("return page.inFlight || page.pending"))
        fitted = readouts()
        assert "ok" in driver.find_element(By.ID, "readout-distance").get_attribute("class"), "the fitted blend is not within the tolerance"
        # ANSI C78.377-2017 Table 1, 4000 K class centre x 0.3813, y 0.3797 (data/targets, flagged
        # there as partly from memory); the fit's default tolerance is 0.0005 in u'v'.
        tu, tv = uv_prime(0.3813, 0.3797)
        d = ((fitted["u"] - tu) ** 2 + (fitted["v"] - tv) ** 2) ** 0.5
        assert d <= 0.0005 + 1e-5, "fitted blend %.5f from the 4000 K centre" % d  # 1e-5: the readout's 5 decimals
        print("fit: u' %.5f v' %.5f, %.5f from the ANSI 4000 K centre; Ra %.2f" % (fitted["u"], fitted["v"], d, fitted["ra"]))

        # Save, then blend the saved file.
        driver.find_element(By.ID, "save-button").click()
        wait.until(lambda d: d.execute_script("return document.getElementById('saved-recipe').value.length") > 0)
        saved = driver.execute_script("return document.getElementById('saved-recipe').value")
        cli = blend_json(binary, saved, work)
        assert (fitted["u"], fitted["v"], fitted["ra"], fitted["r9"]) == (cli["u_prime"], cli["v_prime"], cli["Ra"], cli["R9"]), (fitted, cli)
        print("saved recipe: lampwright blend gives the page's u'v', Ra and R9")

        # Undo goes back to the blend before the fit.
        before = evaluations()
        driver.find_element(By.ID, "undo-button").click()
        wait.until(lambda d: evaluations() > before and not d.execute_script("return page.inFlight || page.pending"))
        assert readouts()["u"] != fitted["u"], "undo did not restore the blend before the fit"
        driver.find_element(By.ID, "fit-button").click()
        wait.until(lambda d: not d.execute_script("return page.fitJob !== null || page.inFlight || page.pending"))

        # Screenshot: a drawn page has many colours (charts, bars, text); a blank one a handful.
        png = driver.get_screenshot_as_png()
        if screenshot_path:
            with open(screenshot_path, "wb") as f:
                f.write(png)
        n = png_colours(png)
        assert n > 200, "the screenshot looks blank (%d colours)" % n
        print("screenshot: %d bytes, %d distinct colours" % (len(png), n))
        logs = [l for l in driver.get_log("browser") if l["level"] == "SEVERE"]
        assert not logs, "browser errors: %s" % logs

        # An LED layer design: the thickness slider, checked against `lampwright layer`.
        design = os.path.join(source, "examples", "layers", "module395_150um.toml")
        server, url = start_server(binary, design)
        servers.append(server)
        driver.get(url)
        wait.until(lambda d: evaluations() >= 1 and not d.execute_script("return page.inFlight || page.pending"))
        layer = move("thickness", 120, True)
        with open(design) as f:
            text = f.read()
        assert "thickness_um = 150" in text
        cli = blend_json(binary, text.replace("thickness_um = 150", "thickness_um = 120"), work, "layer")
        assert (layer["u"], layer["v"], layer["ra"], layer["r9"]) == (cli["u_prime"], cli["v_prime"], cli["Ra"], cli["R9"]), (layer, cli)
        print("layer thickness 120 um: u' %.5f v' %.5f Ra %.2f, as lampwright layer gives (redraw %.1f ms)"
              % (layer["u"], layer["v"], layer["ra"], layer["redraw"]))

        # A long fit (a layer at maximum Ra takes seconds) shows its progress and can be cancelled;
        # the fit stops at its next start and the sliders stay as they were.
        driver.execute_script("document.getElementById('fit-objective').value = 'ra';")
        driver.find_element(By.ID, "fit-button").click()
        wait.until(lambda d: d.execute_script("return !document.getElementById('fit-progress').hidden && page.fitJob !== null"))
        driver.find_element(By.ID, "cancel-button").click()
        WebDriverWait(driver, 30).until(lambda d: d.execute_script("return page.fitJob === null"))
        message = driver.find_element(By.ID, "fit-message").text
        assert message.startswith("fit cancelled"), message
        assert driver.execute_script("return page.thickness") == 120, "a cancelled fit changed the design"
        print("layer fit: progress shown, cancelled (%s)" % message)
        print("PASS")
        return 0
    finally:
        signal.alarm(0)
        if driver is not None:
            driver.quit()
        for server in servers:
            stop_server(server)
        shutil.rmtree(work, ignore_errors=True)


if __name__ == "__main__":
    try:
        sys.exit(main())
    except Exception as e:  # an assertion, the deadline, or selenium's own timeout or error
        print("FAIL: %s: %s" % (type(e).__name__, e))
        sys.exit(1)
