"""The leafcast command: check, report, report --json and --grid-csv."""

import json
import subprocess
import sys

from tests.conftest import ROOT, SAMPLES


def leafcast(*args):
    return subprocess.run([sys.executable, "-m", "app", *args], cwd=ROOT, capture_output=True, text=True, timeout=120)


def test_check_ok_and_bad(tmp_path):
    ok = leafcast("check", str(SAMPLES[0]))
    assert ok.returncode == 0 and "ok" in ok.stdout
    bad = tmp_path / "bad.json"
    doc = json.loads(SAMPLES[0].read_text())
    doc["room"]["fixtures"][0]["dimming_pct"] = 0
    bad.write_text(json.dumps(doc))
    r = leafcast("check", str(bad))
    assert r.returncode == 1 and "room.fixtures[0].dimming_pct" in r.stderr
    assert leafcast("check", str(tmp_path / "missing.json")).returncode == 2


def test_report_table_and_json(tmp_path):
    tent = next(p for p in SAMPLES if "tent" in p.stem)
    r = leafcast("report", str(tent))
    assert r.returncode == 0
    assert "PPFD avg" in r.stdout and "BTU/h" in r.stdout and "licensed electrician" in r.stdout
    j = leafcast("report", str(tent), "--json", "--grid-csv", str(tmp_path / "grids"))
    data = json.loads(j.stdout)
    assert data["zones"][0]["grid"]["ppfd"] and data["budget"]["emitted_umol_s"] > 0
    csv_lines = (tmp_path / "grids" / "tent-floor.csv").read_text().splitlines()
    assert len(csv_lines) == 1 + 49 * 49
