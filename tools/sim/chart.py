"""The simulator's records: a patient profile, the true cycles behind a chart, and the chart itself.

The simulator knows the truth it drew (when each cycle started, when she ovulated, whether she
conceived) and hands it back beside the entries, so checks can compare what the engine infers
with what actually happened.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, timedelta

from caseload.core.model import Kind, Plan


@dataclass(frozen=True, slots=True)
class Profile:
    """How one simulated woman's cycles behave and how she charts them."""

    plan: Plan
    cycle_mean: float  # personal mean cycle length (days)
    cycle_sd: float  # within-woman SD of cycle length (days)
    luteal_mean: float  # usual luteal length (days), short phases aside
    luteal_sd: float
    short_luteal_rate: float  # share of ovulatory cycles with a luteal phase of 9-10 days
    anovulatory_rate: float
    conception_rate: float  # per ovulatory cycle
    temp_low: float  # follicular basal temperature level (C)
    temp_rise: float  # post-ovulatory rise (C)
    temp_noise: float  # day-to-day SD (C)
    rise_days: tuple[int, ...]  # the rise takes one of these many days (WHO Global Handbook: gradual)
    wake_minute: int  # usual reading time, minutes after midnight
    charting_temps: bool
    temp_missing_rate: float  # chance a single day's reading is skipped
    disturbed_rate: float  # chance a reading is disturbed (and flagged)
    fahrenheit_rate: float  # chance a reading is given in F
    logs_mucus: bool
    logs_lh: bool
    gap_rate: float  # chance per cycle of a 3-7 day stretch with no entries
    multi_follicle_rate: float  # stimulated cycles with 3+ mature follicles


@dataclass(frozen=True, slots=True)
class Scan:
    """One ultrasound as it happened: follicle diameters (mm, largest first) and endometrium (mm)."""

    day: date
    follicles_mm: tuple[float, ...]
    endometrium_mm: float


@dataclass(frozen=True, slots=True)
class Stimulation:
    """An ovulation-induction cycle: tablets, monitoring scans and the trigger."""

    med: str
    med_day: date
    scans: tuple[Scan, ...]
    trigger: date


@dataclass(frozen=True, slots=True)
class TrueCycle:
    """One cycle as it really was. `length` is None for the cycle in which she conceived."""

    start: date
    length: int | None
    bleed_days: int
    ovulation: date | None  # None for an anovulatory cycle
    conceived: bool = False
    stimulation: Stimulation | None = None

    @property
    def luteal_length(self) -> int | None:
        """Days from the day after ovulation to the day before the next period."""
        if self.ovulation is None or self.length is None:
            return None
        return (self.next_start - self.ovulation).days - 1

    @property
    def next_start(self) -> date:
        if self.length is None:
            raise ValueError("a conception cycle has no next period")
        return self.start + timedelta(days=self.length)

    @property
    def ovulation_cycle_day(self) -> int | None:
        return None if self.ovulation is None else (self.ovulation - self.start).days + 1


@dataclass(frozen=True, slots=True)
class SimEntry:
    """One observation as a caller would log it: `raw` is the text the entry parser reads."""

    day: date
    kind: Kind
    raw: str
    time: str | None = None
    flags: tuple[str, ...] = ()
    note: str = ""


@dataclass(frozen=True, slots=True)
class SimChart:
    """A simulated patient's entries in day order, with the true cycles that produced them."""

    profile: Profile
    entries: list[SimEntry]
    truth: list[TrueCycle]
