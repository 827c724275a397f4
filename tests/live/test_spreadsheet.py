"""A real spreadsheet program (headless LibreOffice Calc) evaluates a WEBSERVICE cell formula
against the running gunicorn server and gets the service's bare number."""

import pathlib
import shutil
import subprocess

import pytest

SCRIPT = pathlib.Path(__file__).resolve().parents[2] / "scripts" / "spreadsheet_check.py"


def _libreoffice_available() -> bool:
    if not shutil.which("soffice") or not pathlib.Path("/usr/bin/python3").exists():
        return False
    probe = subprocess.run(["/usr/bin/python3", "-c", "import uno"], capture_output=True)
    return probe.returncode == 0


@pytest.mark.slow
@pytest.mark.skipif(not _libreoffice_available(),
                    reason="LibreOffice Calc with python3-uno is not installed "
                           "(apt-get install libreoffice-calc-nogui python3-uno)")
def test_libreoffice_cell_formula_gets_the_bare_number(live_server):
    run = subprocess.run(["/usr/bin/python3", str(SCRIPT), live_server.base_url],
                         capture_output=True, text=True, timeout=180)
    assert run.returncode == 0, run.stdout + run.stderr
    cell, direct = [float(line.rsplit(":", 1)[1]) for line in run.stdout.splitlines()[:2]]
    assert cell == direct
    assert 0 < cell < 1
