"""Every double written to the workbook reads back bit for bit, with openpyxl's standard-library
writer and, where lxml is installed (openpyxl then uses it by itself), with its lxml writer.

Each writer is chosen in a fresh process by ``OPENPYXL_LXML`` (read by openpyxl when it is imported).
"""

from __future__ import annotations

import importlib.util
import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]

WRITE_AND_READ = r"""
import json, struct, sys
from pathlib import Path
import numpy as np
import openpyxl
from openpyxl import load_workbook
from curvewright.io.result_tables import Column, Table
from curvewright.io.xlsx_export import write_tables

rng = np.random.default_rng(15)
# doubles that need all 17 significant digits, the extremes of the format, and random bit patterns
values = [0.1, 1 / 3, 2 / 3, 0.1 + 0.2, 1e-300, 5e-324, 2.2250738585072014e-308, 1.7976931348623157e308,
          123456789.12345679, 9007199254740993.0, -0.0, 1e22, 1e23]
bits = rng.integers(0, 2**63 - 1, 500, dtype=np.int64)
values += [float(v) for v in bits.view(np.float64) if np.isfinite(v)]
values += [float(v) for v in rng.uniform(-1e6, 1e6, 500)]
table = Table("Samples", (Column("Value", kind="number"),), tuple((v,) for v in values))
path = Path(sys.argv[1])
write_tables([table], path)
sheet = load_workbook(path, read_only=True)["Samples"]
read = [row[0] for row in sheet.iter_rows(values_only=True) if isinstance(row[0], float)]
written = [struct.pack("<d", v).hex() for v in values]
print(json.dumps({"lxml": openpyxl.LXML, "written": written, "read": [struct.pack("<d", v).hex() for v in read]}))
"""


@pytest.mark.parametrize("use_lxml", [True, False], ids=["lxml writer", "standard-library writer"])
def test_every_double_reads_back_exactly(tmp_path: Path, use_lxml: bool) -> None:
    if use_lxml and importlib.util.find_spec("lxml") is None:
        pytest.skip("lxml is not installed here: openpyxl writes with the standard library")
    env = {**os.environ, "OPENPYXL_LXML": str(use_lxml)}
    done = subprocess.run([sys.executable, "-c", WRITE_AND_READ, str(tmp_path / "floats.xlsx")], capture_output=True,
                          text=True, env=env, cwd=ROOT, timeout=300)
    assert done.returncode == 0, done.stderr[-2000:]
    found = json.loads(done.stdout.strip().splitlines()[-1])
    assert found["lxml"] is use_lxml  # the writer asked for is the one used
    assert len(found["written"]) > 900
    # -0.0 is written as "-0.0" and reads back as the float -0.0: compared bit for bit like the rest
    tail = found["read"][-len(found["written"]):]
    assert tail == found["written"]
