"""Every table of the 2026-W43 summary, worked out by hand from the history in conftest.py.

The week is Monday 19 Oct 00:00 BST (18 Oct 23:00 UTC) to Monday 26 Oct 00:00 GMT (26 Oct
00:00 UTC). Rows are (cells..., ) in table order; the second item is the total row or None.
"""

from __future__ import annotations

from collections.abc import Mapping
from datetime import date, datetime

from tests.application.week.conftest import LONDON, PATIENTS


def name(pid: str) -> str:
    return PATIENTS[pid][0]


def d(text: str) -> date:
    return date.fromisoformat(text)


def london(text: str) -> datetime:
    return datetime.fromisoformat(text).replace(tzinfo=LONDON)


def w43(ids: Mapping[str, int]) -> dict[tuple[str, str], tuple[list[tuple], tuple | None]]:
    return {
        # At the start (18 Oct 23:00 UTC) P1-P4, P7, P8 are active, P6 paused (10 Oct); P5 is not yet
        # registered. At the end: P4 discharged (Tue), P3 pregnant (Fri), P5 registered (Wed), P6 active
        # again (Thu); P2's pause at 00:30 GMT on Monday 26 falls after the week.
        ("census", "statuses"): ([("active", 6, 6), ("paused", 1, 0), ("discharged", 0, 1), ("pregnant", 0, 1)],
                                 ("total", 7, 8)),
        ("census", "moves"): ([("new", "active", 1), ("active", "active", 4), ("active", "discharged", 1),
                               ("active", "pregnant", 1), ("paused", "active", 1)], ("total", "", 8)),
        ("census", "movement"): ([("registered", 1), ("discharged", 1), ("paused", 0), ("became pregnant", 1),
                                  ("returned to active", 1)], None),
        # Active at start: natural P1 P4 P7, timed P2 P8 (P8 changed to timed on Sunday 18 Oct, W42),
        # insemination P3. At end: natural P1 P5 P6 P7, timed P2 P8. Registered: P5 (natural, nurse2).
        ("census", "by_plan"): ([("natural", 3, 4, 1), ("timed", 2, 2, 0), ("ovulation-induction", 0, 0, 0),
                                 ("insemination", 1, 0, 0)], ("total", 6, 6, 1)),
        # Start: nurse1 P1 P2 P4 P7, nurse2 P3, none P8. End: nurse1 P1 P2; nurse2 P5 P6 P7 (P7 moved Sat).
        ("census", "by_nurse"): ([("nurse1", 4, 2, 0), ("nurse2", 1, 3, 1), ("unassigned", 1, 1, 0)],
                                 ("total", 6, 6, 1)),
        # Raised in the week: A1 window-open today; A2 irregular soon; A3 hCG urgent; A4, A14, A15
        # window-approaching soon; A5 short-luteal soon; A6 no-shift soon (escalated later); A7 logging-gap
        # info; A8 monophasic soon; A16 sustained-high today. A9 (Sunday 22:30 UTC) and A13 (Monday 26,
        # 00:30 GMT) fall outside.
        ("alerts", "raised"): ([
            ("window-approaching", "fertile window soon", 0, 0, 3, 0, 3),
            ("window-open", "fertile window open", 0, 1, 0, 0, 1),
            ("no-thermal-shift", "no thermal shift", 0, 0, 1, 0, 1),
            ("monophasic-cycle", "monophasic cycle", 0, 0, 1, 0, 1),
            ("irregular-cycles", "irregular cycles", 0, 0, 1, 0, 1),
            ("short-luteal-phase", "short luteal phase", 0, 0, 1, 0, 1),
            ("prolonged-bleeding", "prolonged bleeding", 0, 0, 0, 0, 0),
            ("period-overdue", "period overdue", 0, 0, 0, 0, 0),
            ("sustained-high-temps", "sustained high BBT", 0, 1, 0, 0, 1),
            ("amenorrhoea", "amenorrhoea", 0, 0, 0, 0, 0),
            ("hcg-rise-low", "suboptimal hCG rise", 1, 0, 0, 0, 1),
            ("multiple-follicles", "multiple follicles", 0, 0, 0, 0, 0),
            ("logging-gap", "charting gap", 0, 0, 0, 1, 1),
            ("fever", "fever", 0, 0, 0, 0, 0),
            ("intermenstrual-bleeding", "intermenstrual bleeding", 0, 0, 0, 0, 0),
            ("bleeding-in-pregnancy", "bleeding in pregnancy", 0, 0, 0, 0, 0)], ("total", "", 1, 2, 7, 1, 11)),
        # Acks: A1 A3 A5 A6 A7 A14 A15; snoozes A2 A16; resolves A5 A9 A12; auto A1; escalate A6;
        # reopen A12 (its snooze until 20 Oct came).
        ("alerts", "actions"): ([("raised", 11), ("acknowledged", 7), ("snoozed", 2), ("resolved", 3),
                                 ("auto-resolved", 1), ("escalated", 1), ("reopened", 1)], None),
        # Hours raised -> first ack, by severity at the ack: urgent A3 1.0; today A1 2.5 and A6 81.0
        # (Wed 10:00 UTC -> Sat 19:00 UTC, escalated to today meanwhile); soon A15 0.5, A14 4.0, A5 26.0;
        # info A7 14.0 (Sat 20:00 BST -> Sun 09:00 GMT: 13 h on the wall clock, 14 h elapsed).
        # 90th percentile by linear interpolation: today 2.5 + 0.9 * 78.5 = 73.15; soon at rank 1.8:
        # 4.0 + 0.8 * 22.0 = 21.6; all seven at rank 5.4: 26.0 + 0.4 * 55.0 = 48.0.
        ("alerts", "ack_time"): ([("urgent", 1, 1.0, 1.0), ("today", 2, 41.75, 73.15), ("soon", 3, 4.0, 21.6),
                                  ("info", 1, 14.0, 14.0)], ("all", 7, 4.0, 48.0)),
        # Not resolved at the end: open A4 (due 24 Oct, past), A8 (due 29 Oct), A10 (raised 30 Sep, due 7 Oct,
        # past, untouched in the week), A16 (snoozed until Sunday 25: its day came; due 23 Oct, past);
        # acknowledged A3 urgent, A6 today, A11 today (acknowledged 2 Oct), A14 A15 soon, A7 info;
        # snoozed A2 (until 28 Oct).
        ("alerts", "week_end"): ([("urgent", 0, 0, 1, 0), ("today", 1, 1, 2, 0), ("soon", 3, 2, 2, 1),
                                  ("info", 0, 0, 1, 0)], ("total", 4, 3, 6, 1)),
        # Of those, urgent and today ones by the patient's nurse at the end (P7 moved to nurse2 on Saturday),
        # urgent first, then the oldest; age is days from raising to Sunday 25 Oct.
        ("alerts", "open_at_end"): ([
            ("nurse1", "P2", name("P2"), "prolonged-bleeding", "prolonged bleeding", "today", "acknowledged", d("2026-10-01"), 24),
            ("nurse2", "P3", name("P3"), "hcg-rise-low", "suboptimal hCG rise", "urgent", "acknowledged", d("2026-10-24"), 1),
            ("nurse2", "P7", name("P7"), "no-thermal-shift", "no thermal shift", "today", "acknowledged", d("2026-10-21"), 4),
            ("nurse2", "P7", name("P7"), "sustained-high-temps", "sustained high BBT", "today", "open", d("2026-10-23"), 2)], None),
        # The one urgent alert handled in the week: A3, acknowledged Saturday 12:00 BST.
        ("alerts", "urgent_notes"): ([
            ("P3", name("P3"), "hcg-rise-low", "suboptimal hCG rise", "acknowledged", "nurse2", london("2026-10-24 12:00"), "seen")], None),
        ("clinical", "counts"): ([
            ("entered-window", "Entered a predicted fertile window (window-approaching or window-open raised)", 4),
            ("shift-confirmed", "Thermal shift confirmed (three-over-six rule)", 1),
            ("no-thermal-shift", "No thermal shift flagged", 1), ("monophasic-cycle", "Monophasic cycle flagged", 1),
            ("irregular-cycles", "Referred for irregular cycles", 1), ("short-luteal-phase", "Short luteal phase", 1),
            ("hcg-positive", "Positive hCG result", 1), ("hcg-rise-low", "Suboptimal hCG rise", 1)], None),
        # P1's shift: six lows of 36.40 (14-19 Oct), first high 36.70 on Tue 20 Oct, coverline 36.50,
        # third reading above it on Thu 22 Oct. P7's shift was confirmed on 13 Oct, before the week.
        ("clinical", "events"): ([
            ("P7", name("P7"), "short-luteal-phase", d("2026-10-19")),
            ("P2", name("P2"), "window-approaching", d("2026-10-19")),
            ("P1", name("P1"), "window-open", d("2026-10-19")),
            ("P2", name("P2"), "irregular-cycles", d("2026-10-20")),
            ("P7", name("P7"), "no-thermal-shift", d("2026-10-21")),
            ("P3", name("P3"), "hcg-positive", d("2026-10-22")),
            ("P8", name("P8"), "monophasic-cycle", d("2026-10-22")),
            ("P1", name("P1"), "shift-confirmed", d("2026-10-22")),
            ("P5", name("P5"), "window-approaching", d("2026-10-22")),
            ("P6", name("P6"), "window-approaching", d("2026-10-23")),
            ("P3", name("P3"), "hcg-rise-low", d("2026-10-24"))], None),
        # Naegele's rule: LMP 21 Sep 2026 + 1 year - 3 months + 7 days = 28 Jun 2027 (also 280 days).
        ("clinical", "pregnancies"): ([("P3", name("P3"), d("2026-10-22"), d("2027-06-28"), "naegele")], None),
        # A2 (irregular cycles) was only snoozed: no referral. P3 became pregnant on Friday (nurse2).
        ("clinical", "by_nurse"): ([("nurse1", 0, 0), ("nurse2", 0, 1)], ("total", 0, 1)),
        # Charting all week (active at both ends): P1 7 days, P2 4 (Mon, Tue, Sat, Sun), P7 6 (Thursday's
        # voided), P8 0. P3 does not chart, P4 was discharged, P5 is new, P6 was paused at the start.
        ("quality", "coverage"): ([("nurse1", 2, 14, 11, 0.7857), ("nurse2", 1, 7, 6, 0.8571),
                                   ("unassigned", 1, 7, 0, 0.0)], ("total", 4, 28, 17, 0.6071)),
        ("quality", "gaps"): ([("P8", name("P8"), "unassigned", 0, 7), ("P2", name("P2"), "nurse1", 4, 3)], None),
        ("quality", "changes"): ([
            (ids["P4 void"], "P4", name("P4"), "temp", d("2026-10-19"), "void",
             "logged for Bryony Tallisker by mistake", "nurse1", london("2026-10-19 09:00")),
            (ids["P7 void"], "P7", name("P7"), "temp", d("2026-10-22"), "void",
             "reading taken after getting up", "nurse1", london("2026-10-22 10:00")),
            (ids["P2 correction"], "P2", name("P2"), "temp", d("2026-10-24"), "correction",
             "typo: 37.10 for 36.71", "nurse1", london("2026-10-24 11:00"))], None),
        ("quality", "reasons"): ([("logged for Bryony Tallisker by mistake", 0, 1),
                                  ("reading taken after getting up", 0, 1), ("typo: 37.10 for 36.71", 1, 0)],
                                 ("total", 1, 2)),
        # Entries logged in the week: phone1 P1 x7, P2 x4 (Monday's at 00:30 BST, Sunday 23:30 UTC), P4 x1,
        # P5 x4 (Sunday's at 23:30 GMT), P7 x7 (one voided later) = 23; nurse1 the correction; nurse2 two
        # hCG values; super1 one note. P2's Sunday-18 temp (23:30 BST) and Monday-26 temp are outside.
        ("workload", "staff"): ([("phone1", "phone", 23, 0, 0, 0, 0, 0, 0), ("nurse1", "nurse", 1, 1, 2, 4, 0, 3, 7),
                                 ("nurse2", "nurse", 2, 0, 0, 2, 2, 0, 4), ("super1", "supervisor", 1, 0, 0, 1, 0, 0, 1),
                                 ("admin1", "admin", 0, 0, 0, 0, 0, 0, 0)], ("total", "", 27, 1, 2, 7, 2, 3, 12)),
        ("workload", "roles"): ([("phone", 23, 0, 0, 0), ("nurse", 3, 1, 2, 11), ("supervisor", 1, 0, 0, 1),
                                 ("admin", 0, 0, 0, 0)], ("total", 27, 1, 2, 12)),
        ("workload", "days"): ([(d("2026-10-19"), 4, 0, 0, 0, 4), (d("2026-10-20"), 3, 0, 0, 0, 3),
                                (d("2026-10-21"), 2, 0, 0, 0, 2), (d("2026-10-22"), 3, 1, 0, 0, 4),
                                (d("2026-10-23"), 3, 0, 1, 0, 4), (d("2026-10-24"), 4, 2, 0, 0, 6),
                                (d("2026-10-25"), 4, 0, 0, 0, 4)], ("total", 23, 3, 1, 0, 27)),
    }


KEYS = list(w43({"P4 void": 0, "P7 void": 0, "P2 correction": 0}))
