"""The benchmark runs end to end on a tiny store and fills its table. A smoke test, not a timing:
only that each figure is there and each ratio is a positive number."""

from __future__ import annotations

import re

from tools.bench.build import BenchSpec, bench_store
from tools.bench.perf import measure_size
from tools.bench.report import headline_markdown, headline_rows

FIGURES = ("morning refresh", "`caseload list --json`", "morning list", "interface launch to first drawn list",
           "interface launch, in-process", "log one entry", "idle interface CPU", "peak memory")  # fmt: skip


def test_a_tiny_bench_fills_every_row_with_positive_ratios(tmp_path):
    built = bench_store(BenchSpec(6, 1, seed=11), tmp_path / "stores")
    size = measure_size(built, tmp_path / "work", runs=1, say=lambda _: None, idle_s=0.2)
    missing = {name: m["missing"] for name, m in size["figures"].items() if "missing" in m}
    assert missing == {}
    rows = headline_rows(size)
    assert [next((f for f in FIGURES if row[0].startswith(f)), row[0]) for row in rows] == list(FIGURES)
    ratios = [row[3] for row in rows if row[3] not in ("-",)]
    assert len(ratios) == 6  # all but idle CPU, whose floor is 0
    assert all(re.fullmatch(r"\d+\.\d\dx", r) and float(r[:-1]) > 0 for r in ratios), ratios
    table = headline_markdown({"sizes": [size]})
    assert table[2] == "| figure | value | floor | ratio |" and len(table) == 4 + len(rows) + 1
