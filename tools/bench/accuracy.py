"""How good the computation is, on simulated charts whose truth is known.

The simulator draws each cycle from published parameters (Fehring 2006, Lenton 1984, WHO Global
Handbook, WHO Task Force 1980) and knows when each woman ovulated. Every simulated woman here
charts every marker; a condition's charts are hers with the other markers removed, so all
conditions share the same cycles. These are simulated from published parameters, not clinical data.
"""

from __future__ import annotations

import multiprocessing
import random
import statistics
from collections.abc import Iterable
from dataclasses import dataclass, field, replace
from datetime import date, timedelta

from tools.bench.build import parsed_entry
from caseload.core.alerts import Facts
from caseload.core.alerts.window import window_approaching
from caseload.core.analysis import analyse
from caseload.core.model import Kind, Observation, Patient, Plan
from caseload.core.settings import DEFAULT_PROTOCOL, Protocol
from caseload.core.thermal import COVERLINE_FORM, PUBLISHED_FORM, thermal_shift, valid_readings
from tools.sim import SimChart, TrueCycle, simulate_patient
from tools.sim.cycles import population_profile
from tools.sim.simulate import caseload_profile

ACCURACY_SEED = 20260202
START, END = date(2025, 1, 1), date(2025, 12, 31)
CAVEAT = "Simulated from published parameters (Fehring 2006, Lenton 1984, WHO), not clinical data."
MARKERS = frozenset({Kind.TEMP, Kind.LH, Kind.MUCUS})
CONDITIONS: dict[str, frozenset[Kind]] = {
    "temperatures only": frozenset({Kind.TEMP}),
    "temperatures + LH": frozenset({Kind.TEMP, Kind.LH}),
    "temperatures + LH + mucus": MARKERS,
}
BINS = 10
# The thermal-shift sweep: women of the regular population whose temperature rises 0.3 C after
# ovulation (WHO Global Handbook: 0.2-0.5 C), read with each noise SD, against flat charts.
NOISE_SDS = (0.08, 0.10, 0.12, 0.15)
SWEEP_RISE_C = 0.3
SWEEP_END = date(2025, 6, 30)
SHIFT_DETECTORS = ("three-over-six", "coverline form", "change point")


@dataclass
class Tally:
    """Counts from some patients; tallies of disjoint patients add up."""

    ovulation: dict[str, list[int]] = field(default_factory=lambda: {c: [0, 0, 0, 0] for c in CONDITIONS})
    # per condition: [ovulatory cycles, estimated, within 1 day, within 2 days]
    shift: list[int] = field(default_factory=lambda: [0, 0, 0, 0])
    # [ovulatory cycles, confirmed on them, anovulatory cycles, confirmed on them]
    bins: list[list[float]] = field(default_factory=lambda: [[0, 0.0, 0] for _ in range(BINS)])
    # per P(fertile) bin: [days, sum of predictions, days with ovulation in the next 0..5 days]
    squared_error: float = 0.0
    warnings: list[int] = field(default_factory=list)  # days from the first raise to the true window
    unwarned: int = 0  # ovulatory cycles the alert never raised for before ovulation

    def add(self, other: Tally) -> Tally:
        for c in CONDITIONS:
            self.ovulation[c] = [a + b for a, b in zip(self.ovulation[c], other.ovulation[c])]
        self.shift = [a + b for a, b in zip(self.shift, other.shift)]
        self.bins = [[a + b for a, b in zip(x, y)] for x, y in zip(self.bins, other.bins)]
        self.squared_error += other.squared_error
        self.warnings += other.warnings
        self.unwarned += other.unwarned
        return self


@dataclass(frozen=True)
class SimPatient:
    patient: Patient
    chart: SimChart
    charted: frozenset[Kind]  # the markers she would chart by her own habits


def simulated(seed: int, index: int, start: date = START, end: date = END) -> SimPatient:
    """Patient `index` of a seeded caseload mix, charting every marker."""
    rng = random.Random(seed * 1_000_003 + index)
    habits = caseload_profile(rng)
    profile = replace(habits, charting_temps=True, logs_lh=True, logs_mucus=True)
    chart = simulate_patient(rng, profile, start, end)
    charted = {Kind.TEMP} if habits.charting_temps else set()
    charted |= {Kind.LH} if habits.logs_lh else set()
    charted |= {Kind.MUCUS} if habits.logs_mucus else set()
    patient = Patient(f"A{index + 1:05d}", f"Accuracy patient {index + 1}", start - timedelta(days=365 * 32), None,
                      plan=profile.plan, created=start)  # fmt: skip
    return SimPatient(patient, chart, frozenset(charted))


def observations_of(chart: SimChart, markers: Iterable[Kind]) -> list[Observation]:
    """The chart's observations in the store's order, without the markers not in `markers`."""
    kept = set(markers)
    out = []
    for index, sim in enumerate(chart.entries):
        if sim.kind in MARKERS and sim.kind not in kept:
            continue
        p = parsed_entry(sim)
        out.append((p.day, p.time or "", index, Observation(p.day, p.kind, p.value, p.flags, p.time)))
    return [o for *_, o in sorted(out, key=lambda t: t[:3])]  # as model.observations orders them


def _truth_by_start(chart: SimChart) -> dict[date, TrueCycle]:
    return {c.start: c for c in chart.truth if c.length is not None}


def tally_retrospective(sp: SimPatient, tally: Tally, end: date, protocol: Protocol) -> None:
    """Completed cycles: the ovulation estimate against the truth, and the thermal shift detector."""
    truth = _truth_by_start(sp.chart)
    for condition, markers in CONDITIONS.items():
        analysis = analyse(sp.patient, observations_of(sp.chart, markers), end, protocol)
        counts = tally.ovulation[condition]
        for record in analysis.cycles:
            true = truth.get(record.start)
            if record.is_open or true is None or true.length != record.length:
                continue
            if condition == "temperatures only":
                ovulatory = true.ovulation is not None
                tally.shift[0 if ovulatory else 2] += 1
                tally.shift[1 if ovulatory else 3] += record.shift.confirmed
            if true.ovulation is None:
                continue
            counts[0] += 1
            if record.markers.ovulation is not None:
                error = abs((record.markers.ovulation - true.ovulation).days)
                counts[1] += 1
                counts[2] += error <= 1
                counts[3] += error <= 2


def tally_daily(sp: SimPatient, tally: Tally, start: date, end: date, protocol: Protocol) -> None:
    """Every day of her chart as charted by her own habits: P(fertile) today against the truth,
    and the first day the window-approaching alert would be raised in each ovulatory cycle."""
    seen = observations_of(sp.chart, sp.charted)
    ovulations = sorted(c.ovulation for c in sp.chart.truth if c.ovulation is not None)
    first_raise: dict[date, date] = {}  # cycle start -> first day raised
    day, upto = start, 0
    while day <= end:
        while upto < len(seen) and seen[upto].day <= day:
            upto += 1
        now = seen[:upto]
        analysis = analyse(sp.patient, now, day, protocol)
        forecast = analysis.prediction
        if forecast is not None and forecast.daily:
            p = forecast.daily[0].p_fertile
            hit = any(day <= o <= day + timedelta(days=protocol.fertile_window_days - 1) for o in ovulations)
            cell = tally.bins[min(int(p * BINS), BINS - 1)]
            cell[0], cell[1], cell[2] = cell[0] + 1, cell[1] + p, cell[2] + hit
            tally.squared_error += (p - hit) ** 2
            facts = Facts(sp.patient, analysis, now, day, protocol)
            if analysis.cycle_start not in first_raise and any(c.raisable for c in window_approaching(facts)):
                first_raise[analysis.cycle_start] = day
        day += timedelta(days=1)
    for cycle in sp.chart.truth:
        if cycle.ovulation is None or cycle.start < start or cycle.ovulation > end:
            continue
        raised = first_raise.get(cycle.start)
        window = cycle.ovulation - timedelta(days=protocol.fertile_window_days - 1)
        if raised is None or raised > cycle.ovulation:
            tally.unwarned += 1
        else:
            tally.warnings.append((window - raised).days)


def tally_patients(args: tuple[int, list[int], list[int]]) -> Tally:
    """Retrospective figures for `every` patient index, day-by-day figures for `daily` ones."""
    seed, every, daily = args
    tally = Tally()
    for index in every:
        sp = simulated(seed, index)
        tally_retrospective(sp, tally, END, DEFAULT_PROTOCOL)
        if index in daily:
            tally_daily(sp, tally, START, END, DEFAULT_PROTOCOL)
    return tally


def run_accuracy(patients: int, daily_patients: int, seed: int = ACCURACY_SEED, processes: int = 2) -> dict:
    """All accuracy figures for `patients` simulated women, the daily ones for the first `daily_patients`."""
    daily = set(range(min(daily_patients, patients)))
    chunks = [list(range(i, min(i + 20, patients))) for i in range(0, patients, 20)]
    jobs = [(seed, chunk, [i for i in chunk if i in daily]) for chunk in chunks]
    total = Tally()
    if processes > 1 and len(jobs) > 1:
        with multiprocessing.get_context("spawn").Pool(processes) as pool:
            for part in pool.imap_unordered(tally_patients, jobs):
                total.add(part)
    else:
        for job in jobs:
            total.add(tally_patients(job))
    return figures(total, patients, len(daily), seed)


def _share(part: float, whole: float) -> float | None:
    return round(part / whole, 4) if whole else None


def figures(t: Tally, patients: int, daily_patients: int, seed: int) -> dict:
    days = sum(cell[0] for cell in t.bins)
    ovulatory, confirmed, anovulatory, false_shift = t.shift
    warned = sorted(t.warnings)
    return {
        "caveat": CAVEAT,
        "seed": seed,
        "patients": patients,
        "period": [START.isoformat(), END.isoformat()],
        "ovulation_estimate": {
            c: {"cycles": n, "estimated": _share(e, n), "within_1_day": _share(w1, n), "within_2_days": _share(w2, n)}
            for c, (n, e, w1, w2) in t.ovulation.items()
        },
        "thermal_shift": {
            "ovulatory_cycles": ovulatory,
            "sensitivity": _share(confirmed, ovulatory),
            "anovulatory_cycles": anovulatory,
            "specificity": _share(anovulatory - false_shift, anovulatory),
        },
        "p_fertile": {
            "patients": daily_patients,
            "days": days,
            "brier": _share(t.squared_error, days),
            "reliability": [
                {"bin": f"{i / BINS:.1f}-{(i + 1) / BINS:.1f}", "days": int(n),
                 "mean_predicted": _share(s, n), "observed": _share(hits, n)}  # fmt: skip
                for i, (n, s, hits) in enumerate(t.bins)
            ],
        },
        "window_approaching": {
            "rule": "caseload.core.alerts window-approaching: first day raised in each ovulatory cycle",
            "cycles": len(warned) + t.unwarned,
            "median_days_before_window": statistics.median(warned) if warned else None,
            "quartiles": statistics.quantiles(warned, n=4) if len(warned) > 1 else None,
            "raised_before_window": _share(sum(1 for w in warned if w > 0), len(warned) + t.unwarned),
            "not_raised_before_ovulation": _share(t.unwarned, len(warned) + t.unwarned),
        },
    }


def _sweep_counts(noise_sd: float, women: int, anovulatory: bool, seed: int) -> dict[str, list[int]]:
    """Per detector: [complete cycles, cycles it called biphasic] over `women` simulated half-years."""
    protocols = {
        "three-over-six": replace(DEFAULT_PROTOCOL, shift_rule=PUBLISHED_FORM),
        "coverline form": replace(DEFAULT_PROTOCOL, shift_rule=COVERLINE_FORM),
    }
    counts = {d: [0, 0] for d in SHIFT_DETECTORS}
    for index in range(women):
        rng = random.Random(seed * 1_000_003 + index * 2 + anovulatory)
        profile = replace(
            population_profile(rng, Plan.NATURAL, True),
            temp_noise=noise_sd, temp_rise=SWEEP_RISE_C, anovulatory_rate=1.0 if anovulatory else 0.0,
            fahrenheit_rate=0.0,
        )  # fmt: skip
        chart = simulate_patient(rng, profile, START, SWEEP_END)
        temps = [o for o in observations_of(chart, {Kind.TEMP}) if o.kind == Kind.TEMP]
        for cycle in chart.truth:
            if cycle.length is None or cycle.start < START or cycle.next_start > SWEEP_END:
                continue
            group = [o for o in temps if cycle.start <= o.day < cycle.next_start]
            last = cycle.next_start - timedelta(days=1)
            for name, protocol in protocols.items():
                shift = thermal_shift(valid_readings(group, protocol), cycle.start, last, protocol)
                counts[name][0] += 1
                counts[name][1] += shift.confirmed
                if name == "three-over-six":
                    counts["change point"][0] += 1
                    counts["change point"][1] += shift.change_point is not None and shift.change_point.passes
    return counts


def shift_sweep(women: int, seed: int = ACCURACY_SEED, noise_sds: tuple[float, ...] = NOISE_SDS) -> dict:
    """Sensitivity on ovulatory charts and false confirmations on flat (anovulatory) ones, per
    reading noise SD, for the three-over-six rule, its coverline form and the change point."""
    out = {}
    for sd in noise_sds:
        ovulatory = _sweep_counts(sd, women, False, seed)
        flat = _sweep_counts(sd, women, True, seed)
        out[f"{sd:.2f}"] = {
            d: {
                "ovulatory_cycles": ovulatory[d][0],
                "sensitivity": _share(ovulatory[d][1], ovulatory[d][0]),
                "flat_cycles": flat[d][0],
                "false_confirmation": _share(flat[d][1], flat[d][0]),
            }
            for d in SHIFT_DETECTORS
        }
    return {"rise_c": SWEEP_RISE_C, "women_per_condition": women, "by_noise_sd": out}
