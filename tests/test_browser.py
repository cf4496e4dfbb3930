"""The notebooks in a real browser: JupyterLab with default settings, driven by Chromium.

What a user sees after Run -> Run All Cells is what this checks, because that is where the
notebooks once failed while nbclient passed them (an explorer's slider snapped to its step in the
browser and redrew on another thread while later cells still drew with pyplot's global state).
For every notebook, on a copy in a temporary folder:

- Run All Cells twice through JupyterLab's own Run menu, waiting for every cell to finish;
- no error output and no raw warning (stderr) block;
- every widget rendered (no "Error displaying widget", no widget left loading);
- every figure a non-blank image, identical between the two runs;
- in every explorer (an interactive widget with an output), changing one control changes its output.

Needs Debian's ``chromium`` and ``chromium-driver`` and selenium (``.ci/run`` installs them). Outside
CI the test is skipped when they are missing; in CI (``CI`` set) it fails instead.
"""

from __future__ import annotations

import base64
import io
import os
import secrets
import shutil
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest

NOTEBOOK_DIR = Path(__file__).resolve().parent.parent / "notebooks"
NOTEBOOKS = sorted(NOTEBOOK_DIR.glob("*.ipynb"))
CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
CHROMEDRIVER = shutil.which("chromedriver")
RUN_TIMEOUT_S = 240

try:
    from selenium import webdriver
    from selenium.webdriver.chrome.service import Service
    from selenium.webdriver.common.by import By
    from selenium.webdriver.common.keys import Keys
except ImportError:  # pragma: no cover - depends on the machine
    webdriver = None

_missing = [name for name, thing in (("chromium", CHROMIUM), ("chromedriver", CHROMEDRIVER), ("selenium", webdriver)) if not thing]
if _missing and not os.environ.get("CI"):
    pytest.skip(f"browser test needs {', '.join(_missing)} (.ci/run installs them)", allow_module_level=True)


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.fixture(scope="module")
def lab(tmp_path_factory):
    """A JupyterLab server with default settings on a loopback port, serving copies of the notebooks."""
    assert not _missing, f"CI must install {', '.join(_missing)}"
    root = tmp_path_factory.mktemp("lab")
    for path in NOTEBOOKS:
        shutil.copy(path, root / path.name)
    port, token = _free_port(), secrets.token_hex(16)
    env = dict(os.environ, JUPYTER_CONFIG_DIR=str(root / ".jupyter-config"), JUPYTER_RUNTIME_DIR=str(root / ".runtime"))
    env.pop("MPLBACKEND", None)  # the notebooks' own backend, as a user gets it
    log = open(root / "lab.log", "wb")  # noqa: SIM115 - closed in the fixture's teardown
    server = subprocess.Popen(
        [sys.executable, "-m", "jupyterlab", "--no-browser", "--ip=127.0.0.1", f"--port={port}",
         f"--IdentityProvider.token={token}", f"--ServerApp.root_dir={root}"]
        + (["--allow-root"] if hasattr(os, "geteuid") and os.geteuid() == 0 else []),
        cwd=root, env=env, stdout=log, stderr=subprocess.STDOUT,
    )
    base = f"http://127.0.0.1:{port}"
    deadline = time.monotonic() + 60
    while True:
        try:
            urllib.request.urlopen(f"{base}/api/status?token={token}", timeout=2)
            break
        except OSError:
            if server.poll() is not None or time.monotonic() > deadline:
                log.close()
                raise AssertionError("JupyterLab did not start:\n" + (root / "lab.log").read_text()[-3000:]) from None
            time.sleep(0.5)
    yield base, token, root
    server.terminate()
    try:
        server.wait(timeout=20)
    except subprocess.TimeoutExpired:
        server.kill()
    log.close()


@pytest.fixture(scope="module")
def browser(lab):
    options = webdriver.ChromeOptions()
    options.binary_location = CHROMIUM
    for arg in ("--headless=new", "--no-sandbox", "--disable-dev-shm-usage", "--disable-gpu", "--window-size=1400,1000"):
        options.add_argument(arg)
    driver = webdriver.Chrome(service=Service(CHROMEDRIVER), options=options)
    driver.set_script_timeout(30)
    yield driver
    driver.quit()


# ----------------------------------------------------------------------------------------- helpers

_CELL_STATE_JS = """
const panel = document.querySelector('.jp-NotebookPanel:not(.lm-mod-hidden)');
if (!panel) return null;
const cells = [...panel.querySelectorAll('.jp-CodeCell')];
return cells.map(c => (c.querySelector('.jp-InputPrompt') || {}).textContent || '');
"""


def _wait(driver, condition, timeout_s: float, what: str):
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        value = condition()
        if value:
            return value
        time.sleep(0.5)
    raise AssertionError(f"timed out after {timeout_s:.0f} s waiting for {what}")


def _kernel_idle(driver) -> bool:
    return bool(driver.execute_script(
        "const s = document.querySelector('.jp-NotebookPanel:not(.lm-mod-hidden) .jp-Notebook-ExecutionIndicator');"
        "return s ? s.getAttribute('data-status') === 'idle' : false;"))


def _accept_kernel_dialog(driver) -> bool:
    """Accept JupyterLab's "Select Kernel" dialog (the notebook's own kernel) if it is up.

    On a loaded machine the notebook can report idle before its session has a kernel; Run All
    then asks for one instead of running.
    """
    buttons = driver.find_elements(By.CSS_SELECTOR, ".jp-Dialog .jp-Dialog-button.jp-mod-accept")
    if buttons:
        buttons[0].click()
        time.sleep(1.0)
        return True
    return False


def _run_all(driver, name: str, attempt: int = 0) -> None:
    """Run -> Run All Cells from JupyterLab's menu bar, then wait for every cell to carry a number."""
    menu = _wait(driver, lambda: [e for e in driver.find_elements(By.CSS_SELECTOR, ".lm-MenuBar-itemLabel") if e.text == "Run"],
                 30, "the Run menu")
    menu[0].click()
    item = _wait(driver, lambda: driver.find_elements(By.CSS_SELECTOR, "li.lm-Menu-item[data-command='runmenu:run-all']"),
                 10, "Run All Cells in the Run menu")
    item[0].click()
    time.sleep(1.0)
    if _accept_kernel_dialog(driver) and attempt < 2:  # the run did not start: again once the kernel is there
        _wait(driver, lambda: _kernel_idle(driver), 90, f"the kernel of {name} to start")
        _run_all(driver, name, attempt + 1)
        return

    def finished():
        prompts = driver.execute_script(_CELL_STATE_JS)
        if not prompts or any("*" in p for p in prompts) or not _kernel_idle(driver):
            return False
        # Run All stops at a cell that raised: the cells below it keep an empty prompt
        return all(p.strip() not in ("", "[ ]:") for p in prompts) or any(p.startswith("error") for p in _problems(driver))

    _wait(driver, finished, RUN_TIMEOUT_S, f"{name} to finish running")
    time.sleep(2.0)  # widget views render asynchronously after the kernel goes idle


def _open(driver, base: str, token: str, name: str) -> None:
    driver.get(f"{base}/lab/tree/{name}?token={token}&reset")
    _wait(driver, lambda: driver.find_elements(By.CSS_SELECTOR, ".jp-NotebookPanel .jp-CodeCell"), 90, f"{name} to open")
    _wait(driver, lambda: _kernel_idle(driver), 90, f"the kernel of {name} to start")
    time.sleep(1.0)
    if _accept_kernel_dialog(driver):
        _wait(driver, lambda: _kernel_idle(driver), 90, f"the kernel of {name} to start")


def _problems(driver) -> list[str]:
    """Error outputs, raw stderr blocks and widgets that failed to render, as text."""
    return driver.execute_script("""
const out = [];
const panel = document.querySelector('.jp-NotebookPanel:not(.lm-mod-hidden)');
for (const e of panel.querySelectorAll('[data-mime-type="application/vnd.jupyter.error"]')) out.push('error: ' + e.textContent.slice(0, 400));
for (const e of panel.querySelectorAll('[data-mime-type="application/vnd.jupyter.stderr"]')) out.push('stderr: ' + e.textContent.slice(0, 400));
for (const e of panel.querySelectorAll('.jp-OutputArea-output')) {
  const t = e.textContent;
  if (t.includes('Error displaying widget') || t.includes('Loading widget...')) out.push('widget: ' + t.slice(0, 200));
}
return out;""")


def _figures(driver) -> list[str]:
    """Every image in the notebook's outputs, in order, as its base64 data."""
    return driver.execute_script("""
const panel = document.querySelector('.jp-NotebookPanel:not(.lm-mod-hidden)');
return [...panel.querySelectorAll('.jp-OutputArea-output img')].map(i => i.getAttribute('src') || '');""")


def _blank(src: str) -> bool:
    from PIL import Image

    if not src.startswith("data:image/png;base64,"):
        return not src
    image = Image.open(io.BytesIO(base64.b64decode(src.split(",", 1)[1]))).convert("L")
    low, high = image.getextrema()
    return high - low < 10


def _explorer_outputs(driver) -> list[str]:
    """The rendered output of every explorer (widget box with an output area), as HTML."""
    return driver.execute_script("""
const panel = document.querySelector('.jp-NotebookPanel:not(.lm-mod-hidden)');
return [...panel.querySelectorAll('.widget-interact, .headingref-explorer')].map(b => {
  const o = b.querySelector('.widget-output');
  return o ? o.innerHTML : '';
});""")


def _nudge_control(driver, index: int) -> str:
    """Change one control of explorer number `index` the way a user would; return what was changed."""
    boxes = driver.find_elements(By.CSS_SELECTOR, ".widget-interact, .headingref-explorer")
    box = boxes[index]
    driver.execute_script("arguments[0].scrollIntoView({block: 'center'});", box)
    handles = box.find_elements(By.CSS_SELECTOR, ".widget-slider .noUi-handle, .widget-slider .ui-slider-handle")
    if handles:
        handles[0].click()
        handles[0].send_keys(Keys.ARROW_RIGHT)
        return "slider"
    selects = box.find_elements(By.CSS_SELECTOR, ".widget-dropdown select")
    for select in selects:
        options = select.find_elements(By.TAG_NAME, "option")
        if len(options) > 1:
            current = select.get_attribute("value")
            target = next(o for o in options if o.get_attribute("value") != current)
            target.click()
            return "dropdown"
    dates = box.find_elements(By.CSS_SELECTOR, "input[type='date']")
    if dates:
        driver.execute_script(
            "const i = arguments[0]; const d = new Date(i.value || '2026-12-02'); d.setUTCFullYear(d.getUTCFullYear() + 1);"
            "const setter = Object.getOwnPropertyDescriptor(HTMLInputElement.prototype, 'value').set;"
            "setter.call(i, d.toISOString().slice(0, 10)); i.dispatchEvent(new Event('input', {bubbles: true}));"
            "i.dispatchEvent(new Event('change', {bubbles: true}));", dates[0])
        return "date"
    checks = box.find_elements(By.CSS_SELECTOR, ".widget-checkbox input")
    if checks:
        checks[0].click()
        return "checkbox"
    raise AssertionError(f"explorer {index} has no control a user could change")


# ------------------------------------------------------------------------------------------- test

@pytest.mark.parametrize("path", NOTEBOOKS, ids=[p.name for p in NOTEBOOKS])
def test_notebook_in_jupyterlab(path, lab, browser):
    base, token, _root = lab
    _open(browser, base, token, path.name)

    _run_all(browser, path.name)
    problems = _problems(browser)
    assert not problems, f"{path.name} after Run All: " + " | ".join(problems)
    first = _figures(browser)
    assert first, f"{path.name} shows no figure"
    blank = [i for i, src in enumerate(first) if _blank(src)]
    assert not blank, f"{path.name}: figures {blank} are blank"

    _run_all(browser, path.name)
    problems = _problems(browser)
    assert not problems, f"{path.name} after the second Run All: " + " | ".join(problems)
    second = _figures(browser)
    assert len(second) == len(first), f"{path.name}: {len(first)} figures on the first run, {len(second)} on the second"
    differing = [i for i, (a, b) in enumerate(zip(first, second, strict=True)) if a != b]
    assert not differing, f"{path.name}: figures {differing} differ between two Run All"

    before = _explorer_outputs(browser)
    for index, output in enumerate(before):
        changed = _nudge_control(browser, index)
        _wait(browser, lambda i=index, o=output: _explorer_outputs(browser)[i] != o and _kernel_idle(browser),
              60, f"explorer {index} of {path.name} to react to its {changed}")
        time.sleep(1.0)
        problems = _problems(browser)
        assert not problems, f"{path.name} explorer {index} after a {changed} change: " + " | ".join(problems)
