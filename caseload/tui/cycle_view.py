"""What the record's chart shows for one cycle, worked out from the record (no drawing here).

Cycle days count from the cycle's day 1; the chart and the marker strip share them.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from caseload.core.analysis import CycleRecord
from caseload.core.cycles import cycle_day
from caseload.core.model import MUCUS_SCALE, Entry, Kind
from caseload.application.caseload_view import PatientRecord
from caseload.presentation.glossary import mucus_mark

STRIP_ROWS = ("flow", "mucus", "LH", "hCG", "scan")
FLOW_MARKS = {"spotting": "▁", "light": "▃", "moderate": "▅", "heavy": "▇"}
MIN_DAYS_SHOWN = 28


@dataclass(frozen=True)
class CycleView:
    """One cycle ready to draw."""

    index: int  # 0 = oldest
    count: int
    start: date
    is_open: bool
    last_day: int  # cycle days shown: 1..last_day
    today_day: int | None  # only for the open cycle
    temps: tuple[tuple[int, float], ...]  # (cycle day, C): the readings the shift rules count
    left_out: tuple[tuple[int, float, str], ...]  # (cycle day, C, why): the readings they leave out
    coverline: float | None
    first_high_day: int | None
    confirmed_day: int | None
    ovulation_day: int | None
    ovulation_method: str | None
    fertile: tuple[tuple[int, float], ...]  # (cycle day, P(fertile)) from today on, open cycle only
    strip: dict[str, dict[int, str]]  # row -> cycle day -> mark

    @property
    def title(self) -> str:
        day = f"today day {self.today_day}" if self.today_day else f"{self.last_day} days"
        parts = [f"Cycle {self.index + 1}/{self.count} from {self.start.day} {self.start.strftime('%b')}, {day}"]
        parts.append("rise confirmed" if self.confirmed_day else "no rise confirmed")
        return " · ".join(parts)


def _strip_mark(entry: Entry) -> tuple[str, str] | None:
    v = entry.value
    if entry.kind is Kind.BLEED:
        return "flow", FLOW_MARKS.get(v.word or "", "?")
    if entry.kind is Kind.MUCUS and v.word in MUCUS_SCALE:
        return "mucus", mucus_mark(v.word)
    if entry.kind in (Kind.LH, Kind.HCG):
        row = "LH" if entry.kind is Kind.LH else "hCG"
        if v.word:
            return row, "+" if v.word == "positive" else "-"
        return row, f"{v.number:.0f}" if v.number is not None and v.number < 100 else "••"
    if entry.kind is Kind.SCAN and v.scan is not None:
        lead = v.scan.follicles_mm[0] if v.scan.follicles_mm else None
        return "scan", "••" if lead is None else f"{lead:.0f}"
    return None


def cycle_view(record: PatientRecord, index: int, today: date) -> CycleView | None:
    """The chart of cycle `index` (0 = oldest); None when the patient has no cycle yet."""
    cycles: tuple[CycleRecord, ...] = record.analysis.cycles
    if not cycles:
        return None
    index = max(0, min(index, len(cycles) - 1))
    c = cycles[index]
    end = c.end or today
    inside = [e for e in record.entries if e.current and c.start <= e.day <= end]
    # The shift rules say which readings they left out and why; the chart draws those apart.
    left_out = [(cycle_day(c.start, x.day), x.celsius, x.reason) for x in c.shift.excluded]
    skipped = {(day, celsius) for day, celsius, _ in left_out}
    temps = []
    strip: dict[str, dict[int, str]] = {row: {} for row in STRIP_ROWS}
    for e in inside:
        cd = cycle_day(c.start, e.day)
        if e.kind is Kind.TEMP and e.value.number is not None and (cd, e.value.number) not in skipped:
            temps.append((cd, e.value.number))
        mark = _strip_mark(e)
        if mark is not None:
            strip[mark[0]][cd] = mark[1]
    fertile: tuple[tuple[int, float], ...] = ()
    prediction = record.analysis.prediction
    if c.is_open and prediction is not None:
        fertile = tuple((cycle_day(c.start, d.day), d.p_fertile) for d in prediction.daily)
    today_day = cycle_day(c.start, today) if c.is_open else None
    last_day = c.length or max([today_day or 1] + [cd for cd, _ in fertile])
    if c.is_open:
        last_day = max(last_day, MIN_DAYS_SHOWN)
    shift = c.shift
    return CycleView(
        index=index,
        count=len(cycles),
        start=c.start,
        is_open=c.is_open,
        last_day=last_day,
        today_day=today_day,
        temps=tuple(sorted(temps)),
        left_out=tuple(left_out),
        coverline=shift.coverline,
        first_high_day=cycle_day(c.start, shift.first_high) if shift.first_high else None,
        confirmed_day=cycle_day(c.start, shift.confirmed_on) if shift.confirmed and shift.confirmed_on else None,
        ovulation_day=cycle_day(c.start, c.markers.ovulation) if c.markers.ovulation else None,
        ovulation_method=c.markers.ovulation_method,
        fertile=fertile,
        strip=strip,
    )
