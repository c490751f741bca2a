"""Start-up stays fast: pvlib and pandas are imported only when greenhouse figures are computed."""

import subprocess
import sys

PROBE = """
import sys, tempfile, pathlib
from app.settings import Settings
from app.web import create_app
create_app(Settings(data_dir=pathlib.Path(tempfile.mkdtemp()) / "data"))
import app.engine.greenhouse  # the module itself must not import them at the top either
print(sorted(m for m in ("pandas", "pvlib") if m in sys.modules))
"""


def test_creating_the_app_imports_neither_pandas_nor_pvlib():
    out = subprocess.run([sys.executable, "-c", PROBE], capture_output=True, text=True, timeout=120, check=True)
    assert out.stdout.strip().splitlines()[-1] == "[]", out.stdout + out.stderr
