"""The path explorer in a real browser: JupyterLab 4, headless Debian chromium.

Starts JupyterLab on a free localhost port with temporary root, workspace, settings
and data directories (notebook windowing off, so every cell stays in the page),
opens ``explorer.ipynb`` beside this file, runs all cells, moves the point slider,
plays the animation and checks the drawing and the readout. The playback frame rate
is measured in the browser and reported (printed, and kept as a test property), not
asserted: it depends on the machine.

Screenshots of the explorer (with a hovered node), the axial force diagram, the live
panel in each of its states and the parameter panel in its error state are saved in
``tests/browser/artifacts/`` (or ``$LARGEROT_ARTIFACTS``; ignored by git, kept by CI
as artefacts); the folder is printed.

Outside CI the test is skipped when chromium is missing; with ``CI=true`` it fails.
``LARGEROT_SCREENSHOT=path.png`` also saves the explorer's screenshot there (docs/explorer.png).
"""
import contextlib
import json
import os
import pathlib
import re
import shutil
import socket
import subprocess
import sys
import time
import urllib.request

import pytest

pytestmark = pytest.mark.browser

HERE = pathlib.Path(__file__).parent
CHROMIUM = "/usr/bin/chromium"
CHROMIUM_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync", "--no-first-run"]
#: Seconds allowed for JupyterLab to answer, and for the notebook to run.
SERVER_START, NOTEBOOK_RUN = 90, 120
#: Seconds of playback over which the frame rate is measured.
PLAYBACK = 3.0
#: Longest wait for a whole play of the path (the explorer's default is 8 s).
WHOLE_PLAY = 30.0


def artifacts() -> pathlib.Path:
    """The folder the screenshots go to (made if missing)."""
    d = pathlib.Path(os.environ.get("LARGEROT_ARTIFACTS", HERE / "artifacts"))
    d.mkdir(parents=True, exist_ok=True)
    return d


def _missing(what: str):
    if os.environ.get("CI", "").lower() == "true":
        pytest.fail(f"{what} is required in CI for the browser test.")
    pytest.skip(f"{what} is not available.")


def _browser():
    path = CHROMIUM if os.path.exists(CHROMIUM) else shutil.which("chromium")
    if not path:
        _missing("Debian's chromium (/usr/bin/chromium)")
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        _missing("playwright for Python")
    return path, sync_playwright


def _free_port() -> int:
    with socket.socket() as sock:
        sock.bind(("127.0.0.1", 0))
        return sock.getsockname()[1]


@contextlib.contextmanager
def running_lab(tmp_path: pathlib.Path, notebook: pathlib.Path):
    """A JupyterLab server on localhost with everything in temporary directories.

    Yields its URL; ``notebook`` is copied into its root.
    """
    root, data, settings = tmp_path / "root", tmp_path / "data", tmp_path / "app-settings"
    for d in (root, data, settings, tmp_path / "user-settings", tmp_path / "workspaces",
              tmp_path / "config", tmp_path / "runtime"):
        d.mkdir()
    shutil.copy(notebook, root / notebook.name)
    (settings / "overrides.json").write_text(json.dumps({
        "@jupyterlab/notebook-extension:tracker": {"windowingMode": "none"},
        "@jupyterlab/apputils-extension:notification": {"fetchNews": "false",
                                                        "checkForUpdates": False},
    }))
    # the kernel is this interpreter, whatever else is installed
    spec = data / "kernels" / "python3"
    spec.mkdir(parents=True)
    (spec / "kernel.json").write_text(json.dumps({
        "argv": [sys.executable, "-m", "ipykernel_launcher", "-f", "{connection_file}"],
        "display_name": "Python 3 (largerot test)", "language": "python"}))
    env = dict(os.environ, JUPYTER_DATA_DIR=str(data), JUPYTER_CONFIG_DIR=str(tmp_path / "config"),
               JUPYTER_RUNTIME_DIR=str(tmp_path / "runtime"),
               JUPYTERLAB_SETTINGS_DIR=str(tmp_path / "user-settings"),
               JUPYTERLAB_WORKSPACES_DIR=str(tmp_path / "workspaces"), MPLBACKEND="Agg")
    port = _free_port()
    cmd = [sys.executable, "-m", "jupyterlab", "--no-browser", f"--port={port}",
           "--ServerApp.ip=127.0.0.1", "--IdentityProvider.token=", "--ServerApp.password=",
           f"--ServerApp.root_dir={root}", f"--LabApp.app_settings_dir={settings}",
           f"--LabApp.user_settings_dir={tmp_path / 'user-settings'}",
           f"--LabApp.workspaces_dir={tmp_path / 'workspaces'}",
           "--LabApp.expose_app_in_browser=True", "--LabApp.news_url=",
           "--ServerApp.port_retries=0", "--ServerApp.allow_root=True",
           "--LabApp.extension_manager=readonly"]
    log = open(tmp_path / "lab.log", "w")
    proc = subprocess.Popen(cmd, env=env, stdout=log, stderr=subprocess.STDOUT, cwd=root)
    url = f"http://127.0.0.1:{port}"
    try:
        end = time.monotonic() + SERVER_START
        while True:
            try:
                with urllib.request.urlopen(f"{url}/api/status", timeout=2) as r:
                    if r.status == 200:
                        break
            except OSError:
                pass
            if proc.poll() is not None or time.monotonic() > end:
                log.flush()
                raise RuntimeError("JupyterLab did not start:\n"
                                   + (tmp_path / "lab.log").read_text()[-3000:])
            time.sleep(0.3)
        yield url
    finally:
        proc.terminate()
        try:
            proc.wait(15)
        except subprocess.TimeoutExpired:
            proc.kill()
        log.close()


KERNEL_IDLE = ("() => { const w = window.jupyterapp && window.jupyterapp.shell.currentWidget;"
               " const k = w && w.sessionContext && w.sessionContext.session"
               " && w.sessionContext.session.kernel; return !!k && k.status === 'idle'; }")


def open_and_run(page, url: str, name: str) -> None:
    """Open a notebook in JupyterLab, run all its cells, wait until the kernel is idle."""
    page.goto(f"{url}/lab/tree/{name}")
    page.wait_for_function(KERNEL_IDLE, timeout=NOTEBOOK_RUN * 1000)
    page.evaluate("window.jupyterapp.commands.execute('notebook:run-all-cells')")
    page.wait_for_function(
        "() => [...document.querySelectorAll('.jp-OutputArea-output')]"
        ".some(e => e.textContent.includes('ALL CELLS RAN'))", timeout=NOTEBOOK_RUN * 1000)
    page.wait_for_function(KERNEL_IDLE, timeout=NOTEBOOK_RUN * 1000)


@pytest.fixture
def lab(tmp_path):
    try:
        with running_lab(tmp_path, HERE / "explorer.ipynb") as url:
            yield url
    except RuntimeError as exc:
        pytest.fail(str(exc))


def _canvas_image(locator) -> str:
    return locator.locator(".largerot-canvas").first.evaluate("c => c.toDataURL()")


def _cell(page, name: str):
    """The output of the notebook cell whose code starts with ``# CELL name``."""
    cell = page.locator(".jp-CodeCell", has_text=f"# CELL {name}").first
    cell.scroll_into_view_if_needed()
    return cell.locator(".jp-OutputArea-output").last


def _state(out) -> str:
    return out.locator(".largerot-state [data-state]").first.get_attribute("data-state")


def _button(out, name: str):
    """A button by its words (an icon's glyph is not part of its text)."""
    return out.locator("button").filter(has_text=re.compile(rf"^\s*{name}\s*$")).first


def _enabled(out) -> list:
    names = ["step", "run", "pause", "previous", "reset"]
    return [n for n in names if _button(out, n).is_enabled()]


def test_widgets_in_jupyterlab(lab, record_property):
    chromium, sync_playwright = _browser()
    shots = artifacts()
    print(f"screenshots in {shots}")
    with sync_playwright() as pw:
        browser = pw.chromium.launch(executable_path=chromium, args=CHROMIUM_ARGS)
        try:
            page = browser.new_page(viewport={"width": 1400, "height": 1100})
            errors = []
            page.on("pageerror", lambda e: errors.append(str(e)))
            open_and_run(page, lab, "explorer.ipynb")
            page.wait_for_function("() => (window.__largerot || {}).draws > 0", timeout=30_000)
            expect = page.locator(".jp-OutputArea-output", has_text="EXPECT").inner_text()
            lam = re.search(r"λ = (\S+)", expect).group(1)
            tip = int(re.search(r"TIP NODE (\d+)", page.locator(".jp-OutputArea-output",
                                                                 has_text="TIP NODE").inner_text()).group(1))
            py_ms = page.locator(".jp-OutputArea-output", has_text="PYTHON index").inner_text()

            # -- the explorer: scrub, hover, play ----------------------------------------
            explorer = _cell(page, "explorer")
            readout = explorer.locator(".largerot-readout")
            page.wait_for_function(
                "() => document.querySelector('.largerot-readout').textContent.includes('point 0 of 1000')",
                timeout=10_000)
            before = _canvas_image(explorer)
            box = explorer.locator(".widget-slider", has_text="point").locator(".widget-readout")
            box.click()
            page.keyboard.press("Control+A")
            page.keyboard.type("600")
            page.keyboard.press("Enter")
            page.wait_for_function(
                "() => document.querySelector('.largerot-readout').textContent.includes('point 600 of')",
                timeout=10_000)
            text = readout.inner_text()
            assert f"λ = {lam}" in text, text
            assert "stable" in text
            after = _canvas_image(explorer)
            assert after != before                      # the drawn shape changed

            # hover over the tip: its node id and displacements appear
            canvas = explorer.locator(".largerot-canvas")
            xy = canvas.evaluate(f"c => c.largerotNodePixel({tip})")
            bb = canvas.bounding_box()
            page.mouse.move(bb["x"] + xy[0], bb["y"] + xy[1])
            page.wait_for_function("c => (c.dataset.hover || '').length > 0",
                                   arg=canvas.element_handle(), timeout=5_000)
            hover = canvas.get_attribute("data-hover")
            # the pole's tip is named "top" (lighting_pole names its nodes)
            assert hover.startswith(("top", f"node {tip}")) and "ux = " in hover and "uy = " in hover, hover
            explorer.screenshot(path=str(shots / "explorer.png"))
            if os.environ.get("LARGEROT_SCREENSHOT"):
                shutil.copy(shots / "explorer.png", os.environ["LARGEROT_SCREENSHOT"])
            page.mouse.move(bb["x"] + bb["width"] - 5, bb["y"] + bb["height"] + 40)

            # play from the start with the default options: count draws in the browser
            box.click()
            page.keyboard.press("Control+A")
            page.keyboard.type("0")
            page.keyboard.press("Enter")
            page.wait_for_function(
                "() => document.querySelector('.largerot-readout').textContent.includes('point 0 of')")
            page.evaluate("""() => {
                const s = window.__largerot;
                s.mark = {draws: s.draws, ms: s.drawMs, t: performance.now(), raf: 0};
                const tick = () => { s.mark.raf += 1; if (!s.mark.stop) requestAnimationFrame(tick); };
                requestAnimationFrame(tick);
            }""")
            _button(explorer, "play").click()
            page.wait_for_timeout(PLAYBACK * 1000)
            m = page.evaluate("""() => {
                const s = window.__largerot; s.mark.stop = true;
                const dt = (performance.now() - s.mark.t) / 1000;
                return {draws: s.draws - s.mark.draws, ms: s.drawMs - s.mark.ms, dt: dt,
                        raf: s.mark.raf,
                        index: +document.querySelector('.largerot-readout').dataset.index};
            }""")
            # and the whole path: how long until the last point is shown
            page.wait_for_function(
                "() => document.querySelector('.largerot-readout').dataset.index === '1000'",
                timeout=WHOLE_PLAY * 1000)
            whole = page.evaluate("() => (performance.now() - window.__largerot.mark.t) / 1000")
            page.wait_for_function("() => [...document.querySelectorAll('button')]"
                                   ".some(b => b.textContent.trim() === 'play')", timeout=5_000)
            fps = m["draws"] / m["dt"]
            report = (f"explorer playback in headless chromium: {fps:.1f} frames/s drawn "
                      f"(display {m['raf'] / m['dt']:.1f} animation frames/s), "
                      f"{m['ms'] / max(1, m['draws']):.2f} ms per draw, 200 elements, "
                      f"1001 points; the whole path played in {whole:.1f} s")
            print(report)
            print(py_ms.strip())
            (shots / "playback.txt").write_text(report + "\n" + py_ms.strip() + "\n")
            record_property("playback_fps", round(fps, 1))
            record_property("whole_play_s", round(whole, 2))
            record_property("draw_ms", round(m["ms"] / max(1, m["draws"]), 3))
            assert m["draws"] > 10 and m["index"] > 10   # frames were drawn while playing
            assert "point 1000 of 1000" in readout.inner_text()
            # the kernel hears where the play stopped (the slider follows)
            page.wait_for_function(
                "el => el.value === '1000' || el.textContent.trim() === '1000'",
                arg=box.element_handle(), timeout=5_000)

            # -- the axial force diagram: two colours, extremes written ----------------
            forces = _cell(page, "forces")
            fcanvas = forces.locator(".largerot-canvas")
            page.wait_for_function("c => (c.dataset.extremes || '').split(' ').length === 2",
                                   arg=fcanvas.element_handle(), timeout=10_000)
            ext = fcanvas.get_attribute("data-extremes").split()
            assert float(ext[0].replace("e", "E")) > 0 > float(ext[1].replace("e", "E")), ext
            text = forces.locator(".largerot-readout").inner_text()
            assert "min N = " in text and "max N = " in text
            forces.screenshot(path=str(shots / "forces-N.png"))

            # -- the model as built (names, loads with units) and frequency against λ ------
            model = _cell(page, "model-frequency")
            mcanvas = model.locator(".largerot-canvas")
            page.wait_for_function("c => (c.dataset.labels || '').includes('knee')",
                                   arg=mcanvas.element_handle(), timeout=10_000)
            labels = mcanvas.get_attribute("data-labels")
            assert "λ×fx 60, fy -10 kN" in labels and "right foot" in labels, labels
            assert "line load qy -2 kN/m" in model.locator(".largerot-model-notes").inner_text()
            assert "f1 = " in model.locator(".largerot-readout").inner_text()
            model.screenshot(path=str(shots / "explorer-model-frequency.png"))
            # -- a motion: time axis, real-time play ------------------------------------
            motion = _cell(page, "motion")
            assert "t = " in motion.locator(".largerot-readout").inner_text()
            assert "real time" in motion.inner_text()
            motion.screenshot(path=str(shots / "explorer-motion.png"))

            # -- the live panel in each state --------------------------------------------
            for name, state, on in [("live-idle", "idle", ["step", "run"]),
                                    ("live-paused", "paused", ["step", "run", "previous", "reset"]),
                                    ("live-finished", "finished", ["previous", "reset"]),
                                    ("live-failed", "failed", ["previous", "reset"])]:
                out = _cell(page, name)
                assert _state(out) == state, name
                assert _enabled(out) == on, (name, _enabled(out))
                out.screenshot(path=str(shots / f"{name}.png"))
            failed = _cell(page, "live-failed")
            assert "FloatingPointError: the tangent has a NaN" in failed.inner_text()
            assert "Traceback" not in failed.inner_text()      # folded behind details
            failed.locator(".largerot-error summary").click()
            page.wait_for_function("el => el.innerText.includes('Traceback')",
                                   arg=failed.element_handle(), timeout=5_000)
            failed.screenshot(path=str(shots / "live-failed-details.png"))

            # tracing: press run on a long trace, look, pause
            out = _cell(page, "live-tracing")
            _button(out, "run").click()
            page.wait_for_function("el => el.querySelector('[data-state]').dataset.state === 'tracing'",
                                   arg=out.element_handle(), timeout=10_000)
            assert _enabled(out) == ["pause"]
            page.wait_for_timeout(1200)
            out.screenshot(path=str(shots / "live-tracing.png"))
            _button(out, "pause").click()
            page.wait_for_function("el => el.querySelector('[data-state]').dataset.state === 'paused'",
                                   arg=out.element_handle(), timeout=30_000)

            # the first panel runs to λ = 1 in the kernel's background thread
            lv = _cell(page, "live-run")
            _button(lv, "run").click()
            page.wait_for_function(
                "el => el.querySelector('[data-state]').dataset.state === 'finished'",
                arg=lv.element_handle(), timeout=60_000)
            page.wait_for_function("el => el.querySelector('.largerot-readout').textContent"
                                   ".includes('point 20 of 20')", arg=lv.element_handle(), timeout=10_000)
            assert "λ = 1 " in lv.locator(".largerot-readout").inner_text()
            assert "Reached the target load factor" in lv.inner_text()
            assert _enabled(lv) == ["previous", "reset"]

            # -- the parameter panel: one good, one in its error state ---------------------
            _cell(page, "study").screenshot(path=str(shots / "study.png"))
            bad = _cell(page, "study-error")
            assert "ValueError: no tube section is listed for a 11 m pole" in bad.inner_text()
            assert "Traceback" not in bad.inner_text()
            assert bad.locator(".largerot-explorer").first.get_attribute("data-stale") == "1"
            bad.screenshot(path=str(shots / "study-error.png"))
            assert not errors, errors
        finally:
            browser.close()
    print("screenshots:", ", ".join(sorted(p.name for p in shots.glob("*.png"))))


def test_sweep_panel_opens_a_clicked_point_in_jupyterlab(tmp_path):
    # sweep_panel.ipynb: four arches swept; hovering a plotted point shows its case,
    # clicking it loads the stored path into the explorer below the plot
    chromium, sync_playwright = _browser()
    with contextlib.ExitStack() as stack:
        try:
            url = stack.enter_context(running_lab(tmp_path, HERE / "sweep_panel.ipynb"))
        except RuntimeError as exc:
            pytest.fail(str(exc))
        with sync_playwright() as pw:
            browser = pw.chromium.launch(executable_path=chromium, args=CHROMIUM_ARGS)
            try:
                page = browser.new_page(viewport={"width": 1400, "height": 1100})
                errors = []
                page.on("pageerror", lambda e: errors.append(str(e)))
                open_and_run(page, url, "sweep_panel.ipynb")
                expect = page.locator(".jp-OutputArea-output", has_text="EXPECT").inner_text()
                n_points = re.search(r"case 3 (\d+) points", expect).group(1)
                page.wait_for_function(
                    "() => document.querySelectorAll('.largerot-sweep-point').length === 4",
                    timeout=30_000)
                point = page.locator(".largerot-sweep-point[data-case='3']")
                point.scroll_into_view_if_needed()
                point.hover()
                tip = page.locator(".largerot-sweep-tip")
                assert tip.is_visible() and "rise=0.25" in tip.inner_text()
                point.click()
                page.wait_for_function(
                    "() => [...document.querySelectorAll('.widget-html')]"
                    ".some(e => e.textContent.includes('case 3 (loaded'))", timeout=30_000)
                page.wait_for_function(
                    "n => [...document.querySelectorAll('.largerot-readout')]"
                    ".some(e => e.textContent.includes(`of ${n - 1}`))",
                    arg=int(n_points), timeout=30_000)
                assert page.locator(".largerot-sweep-chosen").count() == 1    # the mark moved
                assert not errors, errors
            finally:
                browser.close()
