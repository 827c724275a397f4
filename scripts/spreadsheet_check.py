"""Prove the spreadsheet path end to end: LibreOffice Calc, headless, evaluates a
WEBSERVICE cell formula against a running service and reads the number back.

Needs Debian's libreoffice-calc-nogui and python3-uno; run with the system python3:

    /usr/bin/python3 scripts/spreadsheet_check.py http://127.0.0.1:8080

Prints the cell's value, the service's own answer for the same URL, and exits 0 when
they are the same number. Not part of CI's required set-up (tests/live skips it where
LibreOffice is absent).
"""

from __future__ import annotations

import pathlib
import socket
import subprocess
import sys
import tempfile
import time
import urllib.request
from xml.sax.saxutils import escape

QUERY = ("/v1/effectiveness?pellet.shape=sphere&pellet.radius={radius}mm&kinetics.model=power_law"
         "&kinetics.rate_constant=12/s&transport.effective_diffusivity=1.2e-6"
         "&surface.concentration=40&format=value")

FODS = """<?xml version="1.0" encoding="UTF-8"?>
<office:document xmlns:office="urn:oasis:names:tc:opendocument:xmlns:office:1.0"
 xmlns:table="urn:oasis:names:tc:opendocument:xmlns:table:1.0"
 xmlns:text="urn:oasis:names:tc:opendocument:xmlns:text:1.0"
 xmlns:of="urn:oasis:names:tc:opendocument:xmlns:of:1.2" office:version="1.2"
 office:mimetype="application/vnd.oasis.opendocument.spreadsheet">
<office:body><office:spreadsheet><table:table table:name="Pellets"><table:table-row>
<table:table-cell office:value-type="float" office:value="1.5"><text:p>1.5</text:p></table:table-cell>
<table:table-cell table:formula="{formula}" office:value-type="float" office:value="0"><text:p>0</text:p></table:table-cell>
</table:table-row></table:table></office:spreadsheet></office:body></office:document>
"""


PROFILE = """<?xml version="1.0" encoding="UTF-8"?>
<oor:items xmlns:oor="http://openoffice.org/2001/registry"
 xmlns:xs="http://www.w3.org/2001/XMLSchema" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance">
<item oor:path="/org.openoffice.Office.Calc/Content/Update"><prop oor:name="Link" oor:op="fuse"><value>0</value></prop></item>
<item oor:path="/org.openoffice.Office.Common/Security/Scripting"><prop oor:name="BlockUntrustedRefererLinks" oor:op="fuse"><value>false</value></prop></item>
<item oor:path="/org.openoffice.Office.Common/Security/Scripting"><prop oor:name="SecureURL" oor:op="fuse"><value><it>{trusted}</it></value></prop></item>
</oor:items>
"""


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def cell_value(base_url: str, radius_mm: float = 1.5) -> float:
    import uno  # from python3-uno
    from com.sun.star.beans import PropertyValue

    def prop(name, value):
        p = PropertyValue()
        p.Name, p.Value = name, value
        return p

    url = base_url + QUERY.replace("{radius}", '"&[.A1]&"')
    # ODF formula syntax; the spreadsheet user types =VALUE(WEBSERVICE("...")).
    formula = 'of:=VALUE(COM.MICROSOFT.WEBSERVICE("' + url + '"))'
    work = pathlib.Path(tempfile.mkdtemp(prefix="pellet-sheet-"))
    sheet = work / "pellets.fods"
    sheet.write_text(FODS.replace("{formula}", escape(formula, {'"': "&quot;"})).replace(
        'office:value="1.5"', f'office:value="{radius_mm}"'))
    # A fresh profile that lets a document's web links update (the user's "allow" click).
    (work / "profile" / "user").mkdir(parents=True)
    (work / "profile" / "user" / "registrymodifications.xcu").write_text(
        PROFILE.replace("{trusted}", work.as_uri()))
    port = _free_port()
    office = subprocess.Popen(
        ["soffice", "--headless", "--invisible", "--norestore", "--nolockcheck",
         f"-env:UserInstallation=file://{work}/profile",
         f"--accept=socket,host=127.0.0.1,port={port};urp;"],
        stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    try:
        local = uno.getComponentContext()
        resolver = local.ServiceManager.createInstanceWithContext(
            "com.sun.star.bridge.UnoUrlResolver", local)
        for _ in range(120):
            try:
                ctx = resolver.resolve(
                    f"uno:socket,host=127.0.0.1,port={port};urp;StarOffice.ComponentContext")
                break
            except Exception:  # office still starting
                time.sleep(0.5)
        else:
            raise RuntimeError("LibreOffice did not start")
        desktop = ctx.ServiceManager.createInstanceWithContext("com.sun.star.frame.Desktop", ctx)
        # UpdateDocMode 3 = FULL_UPDATE: allow the WEBSERVICE link, as a user confirming it would
        doc = desktop.loadComponentFromURL(sheet.as_uri(), "_blank", 0,
                                           (prop("Hidden", True), prop("UpdateDocMode", 3)))
        doc.calculateAll()
        cell = doc.Sheets.getByIndex(0).getCellByPosition(1, 0)
        if cell.getError():
            raise RuntimeError(f"the cell shows error {cell.getError()}")
        value = cell.getValue()
        doc.close(True)
        return value
    finally:
        office.terminate()
        try:
            office.wait(timeout=30)
        except subprocess.TimeoutExpired:
            office.kill()


def main() -> int:
    base = sys.argv[1] if len(sys.argv) > 1 else "http://127.0.0.1:8080"
    value = cell_value(base)
    direct = float(urllib.request.urlopen(base + QUERY.replace("{radius}", "1.5")).read())
    print(f"LibreOffice cell =VALUE(WEBSERVICE(...)): {value!r}")
    print(f"service answer for the same URL:          {direct!r}")
    return 0 if value == direct else 1


if __name__ == "__main__":
    sys.exit(main())
