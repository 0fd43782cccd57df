"""The demo caseload: about forty invented patients, each with a scenario and the alerts it raises.

`expected` lists the alert kinds a patient is built to raise on the build day. The rules are
assumed to run for active and pregnant patients only; paused and discharged patients raise none.
"""

from __future__ import annotations

import random
from dataclasses import dataclass

from caseload.core.model import Kind, PatientStatus, Plan
from tools.sim.demo_build import Logged, offset, quiet_profile
from tools.sim.demo_people import NURSES, PHONE_LINE
from tools.sim.demo_scenarios import (
    Build,
    amended_temperature,
    amenorrhoea,
    bleeding_in_pregnancy,
    discharged_after_pregnancy,
    early_pregnancy,
    fever,
    intermenstrual,
    irregular,
    lh_positive_today,
    logging_gap,
    monophasic_last_cycle,
    multiple_follicles,
    no_shift,
    overdue,
    prolonged_bleed,
    quiet,
    short_luteal_last_cycle,
    stimulated_luteal,
    sustained_high,
    voided_bleed,
    window_approaching,
    window_open,
)

ALERT_KINDS = (
    "window-approaching", "window-open", "no-thermal-shift", "monophasic-cycle", "irregular-cycles",
    "short-luteal-phase", "prolonged-bleeding", "period-overdue", "sustained-high-temps", "amenorrhoea",
    "hcg-rise-low", "multiple-follicles", "logging-gap", "fever", "intermenstrual-bleeding", "bleeding-in-pregnancy",
)  # fmt: skip
DEMO_SEED = 20240601
_NURSE_KINDS = {Kind.MED, Kind.SCAN, Kind.TRIGGER, Kind.INSEMINATION}

N, T, OI, IUI = Plan.NATURAL, Plan.TIMED, Plan.OVULATION_INDUCTION, Plan.INSEMINATION
ACTIVE, PAUSED, DISCHARGED, PREGNANT = (
    PatientStatus.ACTIVE, PatientStatus.PAUSED, PatientStatus.DISCHARGED, PatientStatus.PREGNANT,
)  # fmt: skip


@dataclass(frozen=True)
class Spec:
    """One demo patient as designed: who she is, how she charts, what her chart shows."""

    id: str
    name: str
    age: int
    status: PatientStatus
    plan: Plan
    temps: bool
    lh: bool
    expected: tuple[str, ...]
    scenario: str
    build: Build
    mucus: bool = True
    fahrenheit: bool = False  # gives some readings in F


@dataclass(frozen=True)
class Row:
    """One line of the entries file, dated by offset from the build day."""

    patient: str
    day_offset: int
    kind: Kind
    value: str
    time: str
    flags: str
    note: str
    by: str
    amend_reason: str
    void_reason: str


@dataclass(frozen=True)
class DemoPatient:
    spec: Spec
    born_offset: int
    nurse: str
    created_offset: int
    rows: tuple[Row, ...]


SPECS: tuple[Spec, ...] = (
    Spec("P0001", "Aoife Brennan", 33, ACTIVE, N, True, False, (), "regular 28-day cycles, luteal phase (day 21)", quiet(21)),
    Spec("P0002", "Fatima Haddad", 35, ACTIVE, T, False, True, (), "regular 29-day cycles, LH tests and mucus, no temperatures; day 2", quiet(2, 29)),
    Spec("P0003", "Meilin Zhou", 31, ACTIVE, N, True, False, (), "regular cycles; a temperature amended after a keying slip", amended_temperature),
    Spec("P0004", "Olamide Adeyemi", 29, ACTIVE, T, False, True, (), "regular cycles, mucus and LH only; a bleed logged in error was voided", voided_bleed),
    Spec("P0005", "Sofia Rossi", 32, ACTIVE, N, True, False, ("irregular-cycles",), "irregular cycles of 24 to 45 days: refer (FIGO)", irregular),
    Spec("P0006", "Priya Raman", 34, ACTIVE, N, True, False, ("monophasic-cycle",), "last completed cycle anovulatory: 33 days, no rise", monophasic_last_cycle),
    Spec("P0007", "Katarzyna Nowak", 36, ACTIVE, T, True, True, ("short-luteal-phase",), "last cycle ovulated late (day 17) with an 8-day luteal phase", short_luteal_last_cycle),
    Spec("P0008", "Leila Farahani", 30, ACTIVE, T, True, True, ("window-open",), "LH surge: first positive test today (day 13)", lh_positive_today),
    Spec("P0009", "Ingrid Solberg", 28, ACTIVE, N, True, False, ("window-approaching",), "regular 32-day cycles, day 8: fertile window approaching", window_approaching),
    Spec("P0010", "Yuki Tanaka", 33, ACTIVE, N, True, False, ("window-open",), "day 12 of regular 28-day cycles: fertile window open", window_open),
    Spec("P0011", "Carmen Delgado", 37, ACTIVE, N, True, True, ("no-thermal-shift",), "day 24 with no temperature rise, readings on most days, LH negative", no_shift),
    Spec("P0012", "Amina Yusuf", 34, ACTIVE, N, True, False, ("period-overdue",), "rise confirmed 19+ days ago, readings fell back, no bleed, no test yet", overdue),
    Spec("P0013", "Rhiannon Pryce", 31, ACTIVE, N, True, False, ("sustained-high-temps", "period-overdue"), "temperatures high for 21 days, no bleed, no test yet", sustained_high),
    Spec("P0014", "Thandiwe Dlamini", 32, PREGNANT, T, True, True, (), "early pregnancy: serum hCG 120 then 270 over 48 h (normal rise)", early_pregnancy(120, 270)),
    Spec("P0015", "Nadia Petrova", 35, PREGNANT, T, True, True, ("hcg-rise-low",), "early pregnancy: serum hCG 400 then 480 over 48 h (low rise)", early_pregnancy(400, 480)),
    Spec("P0016", "Grace Mwangi", 30, ACTIVE, OI, True, False, (), "ovulation induction: letrozole, scans, trigger; luteal phase", stimulated_luteal),
    Spec("P0017", "Lucía Herrera", 29, ACTIVE, OI, True, False, ("multiple-follicles", "window-open"), "ovulation induction, day 12: four follicles of 14 mm or more today", multiple_follicles),
    Spec("P0018", "Siobhan Keane", 38, ACTIVE, N, True, False, ("prolonged-bleeding", "window-open"), "bleeding for 11 days so far (day 11 of a regular history)", prolonged_bleed),
    Spec("P0019", "Aaliyah Rahman", 27, ACTIVE, N, False, False, ("amenorrhoea", "period-overdue"), "no bleed for 105 days; mucus only, no temperatures", amenorrhoea),
    Spec("P0020", "Elif Demir", 33, ACTIVE, N, True, False, ("logging-gap",), "nothing logged for the last 4 days (luteal phase)", logging_gap),
    Spec("P0021", "Maja Lindgren", 36, ACTIVE, N, True, False, ("fever",), "38.4 C yesterday with flu (luteal phase)", fever),
    Spec("P0022", "Chiara Conti", 34, ACTIVE, IUI, True, False, (), "insemination: letrozole, trigger, IUI next day; luteal phase", stimulated_luteal),
    Spec("P0023", "Ngozi Eze", 39, PAUSED, N, False, False, (), "paused (break from treatment), still logging mucus; day 2", quiet(2)),
    Spec("P0024", "Anjali Desai", 35, DISCHARGED, T, True, True, (), "conceived about five months ago; discharged to antenatal care", discharged_after_pregnancy),
    Spec("P0025", "Rosa Martins", 32, ACTIVE, N, True, False, (), "regular 29-day cycles, luteal phase (day 23)", quiet(23, 29)),
    Spec("P0026", "Freya Campbell", 30, ACTIVE, T, False, True, (), "regular cycles, LH and mucus only; day 1", quiet(1)),
    Spec("P0027", "Zainab Bello", 28, ACTIVE, N, False, False, (), "regular 29-day cycles, mucus only; day 2", quiet(2, 29)),
    Spec("P0028", "Ewa Kowalczyk", 37, ACTIVE, N, True, False, (), "regular 27-day cycles, luteal phase (day 19)", quiet(19, 27)),
    Spec("P0029", "Mariam Saleh", 31, ACTIVE, OI, True, False, (), "ovulation induction, luteal phase after trigger", stimulated_luteal),
    Spec("P0030", "Hye-jin Park", 34, ACTIVE, T, False, True, (), "regular 30-day cycles, LH and mucus only; day 1", quiet(1, 30)),
    Spec("P0031", "Tamar Levi", 33, ACTIVE, N, True, False, (), "regular 30-day cycles, some readings in F; luteal phase (day 24)", quiet(24, 30), mucus=False, fahrenheit=True),
    Spec("P0032", "Noor Siddiqui", 29, ACTIVE, IUI, True, False, (), "insemination cycle, luteal phase", stimulated_luteal),
    Spec("P0033", "Camille Laurent", 36, ACTIVE, N, False, False, (), "regular cycles, mucus only; day 2", quiet(2)),
    Spec("P0034", "Oksana Shevchenko", 38, ACTIVE, T, True, True, (), "regular 29-day cycles with LH tests; day 2", quiet(2, 29), mucus=False),
    Spec("P0035", "Adaeze Nwosu", 30, ACTIVE, N, True, False, (), "regular cycles, luteal phase (day 22)", quiet(22)),
    Spec("P0036", "Isabel Moreno", 32, ACTIVE, N, False, False, (), "regular 30-day cycles, mucus only; day 1", quiet(1, 30)),
    Spec("P0037", "Lena Vogel", 35, ACTIVE, T, True, True, (), "regular cycles, timed intercourse, luteal phase (day 21)", quiet(21)),
    Spec("P0038", "Keira Walsh", 27, ACTIVE, N, False, False, (), "regular cycles, mucus only; day 1", quiet(1)),
    Spec("P0039", "Farida Osman", 40, ACTIVE, N, False, False, (), "regular 29-day cycles, mucus only; day 2", quiet(2, 29)),
    Spec("P0040", "Beatriz Costa", 31, ACTIVE, N, True, False, (), "regular 27-day cycles, luteal phase (day 20)", quiet(20, 27), mucus=False),
    Spec("P0041", "Hana Kovacova", 33, PREGNANT, T, True, True, ("hcg-rise-low", "bleeding-in-pregnancy"), "early pregnancy: serum hCG 150 then 180 (slow), light bleeding since yesterday", bleeding_in_pregnancy),
    Spec("P0042", "Marisol Vega", 30, ACTIVE, N, True, False, ("intermenstrual-bleeding",), "light bleeding marked mid-cycle on days 15-17 (day 18)", intermenstrual),
)  # fmt: skip


def build_demo(seed: int = DEMO_SEED) -> list[DemoPatient]:
    """Every demo patient with her entries, dated by offset from the build day."""
    return [_build(spec, i, random.Random(seed * 1_000 + i)) for i, spec in enumerate(SPECS)]


def _build(spec: Spec, index: int, rng: random.Random) -> DemoPatient:
    unknown = set(spec.expected) - set(ALERT_KINDS)
    if unknown:
        raise ValueError(f"{spec.id}: unknown alert kinds {sorted(unknown)}; use one of {', '.join(ALERT_KINDS)}")
    nurse = NURSES[index % len(NURSES)]
    profile = quiet_profile(rng, spec.plan, spec.temps, spec.mucus, spec.lh, spec.fahrenheit)
    logged = spec.build(rng, profile)
    rows = tuple(_row(spec.id, item, nurse, rng) for item in logged)
    first = min(r.day_offset for r in rows)
    return DemoPatient(
        spec=spec,
        born_offset=-(spec.age * 365 + rng.randint(0, 364)),
        nurse=nurse,
        created_offset=first - rng.randint(3, 21),
        rows=rows,
    )


def _row(patient: str, item: Logged, nurse: str, rng: random.Random) -> Row:
    e = item.entry
    return Row(
        patient=patient,
        day_offset=offset(e.day),
        kind=e.kind,
        value=e.raw,
        time=e.time or "",
        flags=";".join(e.flags),
        note=e.note,
        by=_logged_by(e.kind, e.raw, item, nurse, rng),
        amend_reason=item.amend_reason,
        void_reason=item.void_reason,
    )


def _logged_by(kind: Kind, raw: str, item: Logged, nurse: str, rng: random.Random) -> str:
    """Nurses log treatment, serum results and corrections; the phone line logs the rest."""
    if item.amend_reason or kind in _NURSE_KINDS or (kind is Kind.HCG and raw[0].isdigit()):
        return nurse
    roll = rng.random()
    return nurse if roll < 0.1 else PHONE_LINE[0] if roll < 0.7 else PHONE_LINE[1]
