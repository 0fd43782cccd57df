"""The core stays pure: importing it loads no storage and no interface."""

import subprocess
import sys


def test_core_imports_no_storage_or_ui():
    code = (
        "import sys, caseload.core.analysis, caseload.core.parse, caseload.core.snapshot;"
        "import pkgutil, importlib, caseload.core as c;"
        "[importlib.import_module('caseload.core.' + m.name) for m in pkgutil.iter_modules(c.__path__)];"
        "bad = [m for m in ('sqlite3', 'sqlite_utils', 'textual', 'click') if m in sys.modules];"
        "print(','.join(bad))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""
