"""The benchmark's tables: on the terminal (rich) and as a markdown snippet for the README."""

from __future__ import annotations

from rich.console import Console
from rich.table import Table

from tools.bench.perf import Target


def _fmt(value, unit: str = "") -> str:
    if value is None:
        return "-"
    if isinstance(value, float):
        value = f"{value:.3g}" if value < 0.01 else f"{value:.3f}" if value < 10 else f"{value:.1f}"
    return f"{value}{unit}"


def _ratio(value: float | None, floor: float | None) -> str:
    return "-" if not value or not floor else f"{value / floor:.2f}x"


def _spread(m: dict, unit: str, scale: float = 1.0) -> str:
    """'median / p95 unit' of a figure measured in seconds."""
    return f"{_fmt(m['median_s'] * scale)} / {_fmt(m['p95_s'] * scale)} {unit}"


def headline_rows(size: dict) -> list[tuple[str, str, str, str]]:
    """(figure, value, floor, ratio) rows of one bench size: each figure beside what it is measured against."""
    f, rows = size["figures"], []
    r = f.get("refresh", {})
    if "median_s" in r:
        rows.append(("morning refresh, in-process (median)", _fmt(r["median_s"], " s"),
                     f"bare read of all {r['rows']:,} entry rows, same runs: {_fmt(r['read_median_s'], ' s')}",
                     f"{r['ratio']:.2f}x"))  # fmt: skip
    lj, py = f.get("list-json", {}), f.get("python", {})
    if "median_s" in lj and "median_s" in py:
        rows.append(("`caseload list --json`, whole process (median / p95)", _spread(lj, "s"),
                     f"Python start alone: {_spread(py, 's')}", _ratio(lj["median_s"], py["median_s"])))  # fmt: skip
    li = f.get("list", {})
    if "median_s" in li:
        rows.append(("morning list, in-process (store open to sorted list)", _fmt(li["median_s"], " s"), "-", "-"))
    la, bare = f.get("launch", {}), f.get("launch-floor", {})
    if "median_s" in la and "median_s" in bare:
        rows.append((f"interface launch to first drawn list of {la['rows']:,}, whole process (median / p95)",
                     _spread(la, "s"), f"bare Textual app drawing {bare['rows']:,} rows: {_spread(bare, 's')}",
                     _ratio(la["median_s"], bare["median_s"])))  # fmt: skip
        rows.append(("interface launch, in-process (app built to list drawn)", _fmt(la["in_process_median_s"], " s"),
                     f"bare app: {_fmt(bare['in_process_median_s'], ' s')}",
                     _ratio(la["in_process_median_s"], bare["in_process_median_s"])))  # fmt: skip
    lo = f.get("log", {})
    if "median_ms" in lo:
        rows.append(log_row(f"log one entry ({size['years']} y of history), median / p95", lo))
    idle = f.get("idle", {})
    if "pct_of_core" in idle:
        rows.append((f"idle interface CPU over {idle['seconds']:g} s", f"{idle['pct_of_core']:.2f}% of a core", "0", "-"))
    peaks = [m["peak_mb"] for m in f.values() if isinstance(m, dict) and "peak_mb" in m]
    if peaks:
        rows.append(("peak memory (largest of the runs, ru_maxrss)", _fmt(max(peaks), " MB"),
                     f"bare Textual app: {_fmt(bare.get('peak_mb'), ' MB')}", _ratio(max(peaks), bare.get("peak_mb"))))
    helpers = max((m.get("children_peak_mb", 0.0) for m in f.values() if isinstance(m, dict)), default=0.0)
    if helpers:
        rows.append(("peak memory of each refresh compute process", _fmt(helpers, " MB"), "-", "-"))
    return rows


def log_row(label: str, m: dict) -> tuple[str, str, str, str]:
    floor = f"insert + audit + commit: {_fmt(m.get('floor_median_ms'))} / {_fmt(m.get('floor_p95_ms'))} ms"
    return (label, f"{_fmt(m['median_ms'])} / {_fmt(m['p95_ms'])} ms", floor, _ratio(m["median_ms"], m.get("floor_median_ms")))


def headline_markdown(result: dict) -> list[str]:
    """The figures beside their floors, one table per size, and log cost by length of history."""
    lines = []
    for size in result.get("sizes", []):
        if "list" not in size["figures"]:
            continue
        lines += [f"**{size['patients']:,} patients x {size['years']} y** ({size['entries']:,} entries, "
                  f"built in {_fmt(size['build']['load_s'] + size['build']['first_refresh_s'], ' s')})", "",
                  "| figure | value | floor | ratio |", "|---|---|---|---|"]  # fmt: skip
        lines += [f"| {a} | {b} | {c} | {d} |" for a, b, c, d in headline_rows(size)] + [""]
    history = [s for s in result.get("sizes", []) if "list" not in s["figures"] and "log" in s["figures"]]
    if history:
        lines += ["**Log one entry by length of history**", "", "| figure | value | floor | ratio |", "|---|---|---|---|"]
        lines += ["| {} | {} | {} | {} |".format(*log_row(f"{s['patients']:,} patients x {s['years']} y, median / p95",
                                                           s["figures"]["log"])) for s in history] + [""]  # fmt: skip
    return lines


def size_rows(size: dict) -> list[tuple[str, str, str]]:
    """(figure, median, detail) rows of one bench size."""
    f, b = size["figures"], size["build"]
    rows = [("build: load (simulate, parse, insert)", _fmt(b["load_s"], " s"), "cached" if b["reused"] else "built now"),
            ("build: first morning refresh", _fmt(b["first_refresh_s"], " s"), f"{size['store_mb']} MB file")]  # fmt: skip
    for name, label in (("list", "morning list (open to sorted list)"), ("refresh", "full refresh of derived state"),
                        ("summary-json", "weekly summary, json"), ("summary-xlsx", "weekly summary, xlsx")):  # fmt: skip
        m = f.get(name, {})
        if "missing" in m:
            rows.append((label, "missing", m["missing"][:60]))
            continue
        detail = f"peak {m['peak_mb']} MB"
        if name == "list":
            detail += f"; {m['lines']} lines; one nurse's {m['nurse_lines']}: {_fmt(m['nurse_median_s'], ' s')}"
        if name == "refresh":
            detail += (f"; plain read {_fmt(m['read_median_s'], ' s')} ({m['rows']} rows): {m['ratio']}x; "
                       f"as Entry objects {_fmt(m['entries_read_s'], ' s')}: {m['ratio_to_entries']}x")  # fmt: skip
        rows.append((label, _fmt(m["median_s"], " s"), detail))
    m = f.get("log", {})
    if "missing" in m:
        rows.append(("log one entry", "missing", m["missing"][:60]))
    elif m:
        rows.append(("log one entry (services, with recompute)", _fmt(m["median_ms"], " ms"),
                     f"p95 {_fmt(m['p95_ms'], ' ms')}, max {_fmt(m['max_ms'], ' ms')} over {m['entries']}; "
                     f"peak {m['peak_mb']} MB"))  # fmt: skip
    return rows


def print_report(console: Console, result: dict) -> None:
    for size in result.get("sizes", []):
        if "list" not in size["figures"]:
            continue
        table = Table(title=f"{size['size']}: {size['patients']} patients, {size['years']} year(s), "
                            f"{size['entries']:,} entries (median of {result['runs']} runs)")  # fmt: skip
        for column in ("figure", "median", "detail"):
            table.add_column(column)
        for row in size_rows(size):
            table.add_row(*row)
        console.print(table)
    if result.get("growth"):
        table = Table(title="growth: cost per unit at each size")
        names = list(result["growth"][0]["unit_costs"])
        for column in ("figure", "per", *names, "largest / smallest", "linear"):
            table.add_column(column)
        for g in result["growth"]:
            linear = {True: "yes", False: "no", None: "-"}[g["linear"]]
            table.add_row(g["figure"], g["per"], *(_fmt(g["unit_costs"][n]) for n in names),
                          _fmt(g["largest_over_smallest"]), linear)  # fmt: skip
        console.print(table)
    if result.get("targets"):
        table = Table(title="design targets")
        for column in ("target", "size", "measured", "limit", "met"):
            table.add_column(column)
        for t in result["targets"]:
            table.add_row(t["what"], t["size"], _fmt(t["value"], f" {t['unit']}"), _fmt(t["limit"], f" {t['unit']}"),
                          "yes" if t["met"] else "NO")  # fmt: skip
        console.print(table)
    if result.get("accuracy"):
        print_accuracy(console, result["accuracy"])
    console.print(f"command: {result['command']}   elapsed {result['elapsed_s']} s")


def print_accuracy(console: Console, a: dict) -> None:
    console.print(f"[bold]Accuracy[/bold] ({a['patients']} simulated patients, seed {a['seed']}, "
                  f"{a['period'][0]} to {a['period'][1]}). {a['caveat']}")  # fmt: skip
    table = Table(title="retrospective ovulation estimate, completed ovulatory cycles")
    for column in ("markers charted", "cycles", "estimated", "within 1 day", "within 2 days"):
        table.add_column(column)
    for condition, o in a["ovulation_estimate"].items():
        table.add_row(condition, str(o["cycles"]), _pct(o["estimated"]), _pct(o["within_1_day"]), _pct(o["within_2_days"]))
    console.print(table)
    s, p, w = a["thermal_shift"], a["p_fertile"], a["window_approaching"]
    console.print(f"thermal shift (three-over-six): sensitivity {_pct(s['sensitivity'])} of {s['ovulatory_cycles']} "
                  f"ovulatory cycles, specificity {_pct(s['specificity'])} of {s['anovulatory_cycles']} anovulatory")  # fmt: skip
    table = Table(title=f"P(fertile) today, {p['days']:,} patient-days of {p['patients']} patients: Brier {p['brier']}")
    for column in ("bin", "days", "mean predicted", "observed"):
        table.add_column(column)
    for r in p["reliability"]:
        table.add_row(r["bin"], str(r["days"]), _fmt(r["mean_predicted"]), _fmt(r["observed"]))
    console.print(table)
    console.print(f"window-approaching: median {w['median_days_before_window']} days before the true window "
                  f"(quartiles {w['quartiles']}), raised before the window in {_pct(w['raised_before_window'])} "
                  f"of {w['cycles']} cycles, not before ovulation in {_pct(w['not_raised_before_ovulation'])}")  # fmt: skip
    if a.get("shift_sweep"):
        table = Table(title=f"thermal shift by reading noise, rise {a['shift_sweep']['rise_c']} C: sensitivity / false confirmation")
        table.add_column("noise SD (C)")
        for name in next(iter(a["shift_sweep"]["by_noise_sd"].values())):
            table.add_column(name)
        for row in sweep_rows(a["shift_sweep"]):
            table.add_row(*row)
        console.print(table)


def sweep_rows(sweep: dict) -> list[list[str]]:
    """One row per noise SD: the SD, then 'sensitivity / false confirmation' per detector."""
    return [
        [sd] + [f"{_pct(d['sensitivity'])} / {_pct(d['false_confirmation'])}" for d in detectors.values()]
        for sd, detectors in sweep["by_noise_sd"].items()
    ]


def _pct(share: float | None) -> str:
    return "-" if share is None else f"{share * 100:.1f}%"


def markdown(result: dict) -> str:
    """The figures as markdown tables: the headline tables for the README first, then the detail."""
    lines = [f"Benchmark figures, measured with `{result['command']}` on {result['machine']}, {result['date']}.", ""]
    lines += headline_markdown(result) + ["<details><summary>Detail</summary>", ""]
    for size in result.get("sizes", []):
        if "list" not in size["figures"]:
            continue
        lines += [f"### {size['size']}: {size['patients']:,} patients, {size['years']} year(s), {size['entries']:,} entries",
                  "", "| figure | median | detail |", "|---|---|---|"]  # fmt: skip
        lines += [f"| {a} | {b} | {c} |" for a, b, c in size_rows(size)] + [""]
    if result.get("targets"):
        lines += ["### Targets", "", "| target | size | measured | limit | met |", "|---|---|---|---|---|"]
        lines += [f"| {t['what']} | {t['size']} | {_fmt(t['value'], ' ' + t['unit'])} | {_fmt(t['limit'], ' ' + t['unit'])} | "
                  f"{'yes' if t['met'] else '**no**'} |" for t in result["targets"]] + [""]  # fmt: skip
    if result.get("growth"):
        names = list(result["growth"][0]["unit_costs"])
        lines += ["### Growth (cost per unit)", "", f"| figure | per | {' | '.join(names)} | largest / smallest |",
                  "|---|---|" + "---|" * (len(names) + 1)]  # fmt: skip
        lines += [f"| {g['figure']} | {g['per']} | {' | '.join(_fmt(g['unit_costs'][n]) for n in names)} | "
                  f"{_fmt(g['largest_over_smallest'])} |" for g in result["growth"]] + [""]  # fmt: skip
    a = result.get("accuracy")
    if a:
        lines += ["### Accuracy on simulated charts", "", f"{a['patients']:,} simulated patients, seed {a['seed']}, one year. "
                  f"**{a['caveat']}**", "", "| markers charted | cycles | estimated | within 1 day | within 2 days |",
                  "|---|---|---|---|---|"]  # fmt: skip
        lines += [f"| {c} | {o['cycles']} | {_pct(o['estimated'])} | {_pct(o['within_1_day'])} | {_pct(o['within_2_days'])} |"
                  for c, o in a["ovulation_estimate"].items()]  # fmt: skip
        s, p, w = a["thermal_shift"], a["p_fertile"], a["window_approaching"]
        lines += ["", f"- Thermal shift: sensitivity {_pct(s['sensitivity'])} ({s['ovulatory_cycles']} ovulatory cycles), "
                  f"specificity {_pct(s['specificity'])} ({s['anovulatory_cycles']} anovulatory cycles).",
                  f"- P(fertile) today: Brier score {p['brier']} over {p['days']:,} patient-days.",
                  f"- Window-approaching: raised a median {w['median_days_before_window']} days before the true "
                  f"fertile window ({w['cycles']} cycles).", "", "| P(fertile) bin | days | mean predicted | observed |",
                  "|---|---|---|---|"]  # fmt: skip
        lines += [f"| {r['bin']} | {r['days']} | {_fmt(r['mean_predicted'])} | {_fmt(r['observed'])} |" for r in p["reliability"]]
        if a.get("shift_sweep"):
            sweep = a["shift_sweep"]
            names = list(next(iter(sweep["by_noise_sd"].values())))
            lines += ["", f"Thermal shift by reading noise (rise {sweep['rise_c']} C, {sweep['women_per_condition']} women per "
                      "cell): sensitivity on ovulatory charts / false confirmation on flat ones.", "",
                      f"| noise SD (C) | {' | '.join(names)} |", "|---|" + "---|" * len(names)]  # fmt: skip
            lines += [f"| {' | '.join(row)} |" for row in sweep_rows(sweep)]
    lines += ["", "</details>"]
    return "\n".join(lines) + "\n"


def target_dicts(found: list[Target]) -> list[dict]:
    return [{"what": t.what, "size": t.size, "value": t.value, "limit": t.limit, "unit": t.unit, "met": t.met} for t in found]
