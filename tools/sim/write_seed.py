"""Write the demo caseload's seed files: `python -m tools.sim.write_seed [OUT_DIR]`.

The files are generated once, from a fixed seed, and committed, so the demo never depends on
chance. Running this again must reproduce them byte for byte.
"""

from __future__ import annotations

import csv
import json
import sys
from pathlib import Path

from tools.sim.demo_caseload import DEMO_SEED, DemoPatient, build_demo
from tools.sim.demo_people import CLINIC_NAME, CLINIC_TIMEZONE, DEMO_ADMIN, STAFF

DEFAULT_DIR = Path(__file__).resolve().parents[2] / "caseload" / "seed_data"
STAFF_COLUMNS = ("id", "name", "role")
PATIENT_COLUMNS = (
    "id", "name", "born_offset", "nurse", "status", "plan", "created_offset", "charting_temps",
    "expected_alerts", "scenario",
)  # fmt: skip
ENTRY_COLUMNS = (
    "patient", "day_offset", "kind", "value", "time", "flags", "note", "by", "amend_reason", "void_reason",
)  # fmt: skip


def write_seed(out_dir: Path, seed: int = DEMO_SEED) -> list[Path]:
    """Write clinic.json, staff.csv, patients.csv and entries.csv into `out_dir`."""
    out_dir.mkdir(parents=True, exist_ok=True)
    patients = build_demo(seed)
    clinic = {"name": CLINIC_NAME, "timezone": CLINIC_TIMEZONE, "demo_admin": DEMO_ADMIN}
    paths = [out_dir / name for name in ("clinic.json", "staff.csv", "patients.csv", "entries.csv")]
    paths[0].write_text(json.dumps(clinic, indent=2, ensure_ascii=False) + "\n", encoding="utf-8")
    _write_csv(paths[1], STAFF_COLUMNS, ([s.id, s.name, s.role.value] for s in STAFF))
    _write_csv(paths[2], PATIENT_COLUMNS, (_patient_row(p) for p in patients))
    _write_csv(paths[3], ENTRY_COLUMNS, (_entry_values(r) for p in patients for r in p.rows))
    return paths


def _patient_row(p: DemoPatient) -> list[object]:
    s = p.spec
    return [
        s.id, s.name, p.born_offset, p.nurse, s.status.value, s.plan.value, p.created_offset,
        int(s.temps), ";".join(s.expected), s.scenario,
    ]  # fmt: skip


def _entry_values(r) -> list[object]:
    return [
        r.patient, r.day_offset, r.kind.value, r.value, r.time, r.flags, r.note, r.by, r.amend_reason, r.void_reason,
    ]  # fmt: skip


def _write_csv(path: Path, header: tuple[str, ...], rows) -> None:
    with path.open("w", encoding="utf-8", newline="") as f:
        writer = csv.writer(f, lineterminator="\n")
        writer.writerow(header)
        writer.writerows(rows)


def main(argv: list[str]) -> int:
    if len(argv) > 1:
        print("usage: python -m tools.sim.write_seed [OUT_DIR]", file=sys.stderr)
        return 2
    out_dir = Path(argv[0]) if argv else DEFAULT_DIR
    for path in write_seed(out_dir):
        print(path)
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
