"""JupyterLab on loopback: change a value in the column-panel input form, save, rerun, and find
the new value in ``inputs.toml`` and in the notebook's quick-look result.

The expected frequency is the kit's own Euler–Bernoulli result for the new diameter (Rao, S. S.,
Mechanical Vibrations, 6th ed., 2017, §8.5, eq. (8.82): f is proportional to d for a solid round
strut of fixed length), computed here through the library and compared as the text the sheet shows.
"""

from __future__ import annotations

import os
import secrets
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest

from latticecalc import materials
from latticecalc.physics.beams import bending_frequency
from latticecalc.physics.cells import build_cell
from latticecalc.project import open_project
from latticecalc.project.templates import new_project

pytestmark = [pytest.mark.browser, pytest.mark.slow]

NEW_DIAMETER = "3.6 mm"
START_TIMEOUT_S = 90
RUN_TIMEOUT_MS = 120_000


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.fixture
def lab(tmp_path):
    pytest.importorskip("jupyterlab", reason="jupyterlab is not installed")
    pytest.importorskip("ipywidgets", reason="ipywidgets is not installed")
    folder = new_project(tmp_path / "panel", template="column-panel")
    port, token = _free_port(), secrets.token_hex(16)
    home = tmp_path / "jupyter"
    env = dict(os.environ, JUPYTER_CONFIG_DIR=str(home / "config"), JUPYTER_RUNTIME_DIR=str(home / "runtime"),
               JUPYTERLAB_SETTINGS_DIR=str(home / "settings"), JUPYTERLAB_WORKSPACES_DIR=str(home / "ws"),
               MPLBACKEND="module://matplotlib_inline.backend_inline")
    cmd = [sys.executable, "-m", "jupyterlab", "--no-browser", "--ServerApp.ip=127.0.0.1", f"--ServerApp.port={port}",
           "--ServerApp.port_retries=0", f"--IdentityProvider.token={token}", f"--ServerApp.root_dir={folder}",
           "--LabApp.expose_app_in_browser=True", "--LabApp.news_url=", "--LabApp.extension_manager=readonly",
           "--LabApp.check_for_updates_class=jupyterlab.NeverCheckForUpdate"]
    if os.geteuid() == 0:  # containers often run as root
        cmd.append("--allow-root")
    log = (tmp_path / "lab.log").open("w")
    proc = subprocess.Popen(cmd, cwd=folder, env=env, stdout=log, stderr=subprocess.STDOUT)
    base = f"http://127.0.0.1:{port}"
    try:
        deadline = time.monotonic() + START_TIMEOUT_S
        while True:
            try:
                urllib.request.urlopen(f"{base}/api/status?token={token}", timeout=2).read()
                break
            except OSError:
                if proc.poll() is not None or time.monotonic() > deadline:
                    pytest.fail("JupyterLab did not start:\n" + (tmp_path / "lab.log").read_text()[-3000:])
                time.sleep(0.5)
        yield folder, base, token
    finally:
        proc.terminate()
        try:
            proc.wait(timeout=20)
        except subprocess.TimeoutExpired:
            proc.kill()
        log.close()


def _expected_text(folder: Path) -> str:
    inp = open_project(folder).inputs
    soft = materials.get(inp["lattice.material"])
    cell = build_cell(inp["cell.kind"], cell_width=inp["cell.width"], strut_diameter=inp["lattice.strut_diameter"])
    res = bending_frequency(length=cell.strut_lengths[cell.group_mask("lattice")].max().to("mm"),
                            diameter=inp["lattice.strut_diameter"], youngs_modulus=soft.dynamic_modulus(),
                            density=soft.density, supports="clamped-clamped", id_prefix="quicklook.strut")
    return next(s for s in res.steps if s.id == "quicklook.strut.f1-cc").to_dict()["result_text"]


def test_form_edit_saves_inputs_and_rerun_shows_the_new_result(browser, lab, tmp_path):
    folder, base, token = lab
    before = _expected_text(folder)
    page = browser.new_page(viewport={"width": 1400, "height": 1000})
    page.set_default_timeout(RUN_TIMEOUT_MS)
    page.goto(f"{base}/lab/tree/00_inputs.ipynb?token={token}")
    page.wait_for_function("() => window.jupyterapp && window.jupyterapp.shell.currentWidget "
                           "&& window.jupyterapp.shell.currentWidget.sessionContext "
                           "&& window.jupyterapp.shell.currentWidget.sessionContext.session "
                           "&& window.jupyterapp.shell.currentWidget.sessionContext.session.kernel")
    page.evaluate("() => window.jupyterapp.commands.execute('notebook:run-all-cells')")
    field = page.locator(".widget-hbox", has=page.locator("code", has_text="lattice.strut_diameter")).locator(
        "input[type=text]")
    field.wait_for()
    step = page.locator('[data-step="quicklook.strut.f1-cc"]').first
    step.wait_for()
    assert before.split()[0] in step.text_content()
    field.fill(NEW_DIAMETER)
    field.press("Enter")
    page.get_by_role("button", name="Save inputs").click()
    page.get_by_text("Saved 1 change(s) to inputs.toml").wait_for()
    assert f'strut_diameter = "{NEW_DIAMETER}"' in (folder / "inputs.toml").read_text(encoding="utf-8")
    after = _expected_text(folder)
    assert after != before
    page.screenshot(path=str(tmp_path / "form-saved.png"), full_page=True)
    page.evaluate("() => window.jupyterapp.commands.execute('notebook:run-all-cells')")
    page.wait_for_function("n => [...document.querySelectorAll('[data-step=\"quicklook.strut.f1-cc\"]')]"
                           ".some(e => e.textContent.includes(n))", arg=after.split()[0])
    page.evaluate("() => window.jupyterapp.commands.execute('docmanager:save')")
    page.screenshot(path=str(tmp_path / "rerun.png"), full_page=True)
    deadline = time.monotonic() + 30
    while after.split()[0] not in (folder / "00_inputs.ipynb").read_text(encoding="utf-8"):
        assert time.monotonic() < deadline, "the saved notebook does not hold the new result"
        time.sleep(0.5)
    page.close()
