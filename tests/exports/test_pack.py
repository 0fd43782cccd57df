"""The referral pack's content, its HTML page and its PDF, built from the demo caseload."""

from __future__ import annotations

import html
import re
import zlib

import pytest

from caseload.exports import chart, pack, pack_pdf
from caseload.application.caseload_view import show_patient
from caseload.application.referral import PackInput


def pack_of(ctx, patient_id: str, cycles: int = 3) -> pack.Pack:
    record = show_patient(ctx, patient_id)
    names = {s.id: s.name for s in ctx.store.staff.all()}
    return pack.build(PackInput(
        clinic="Test Clinic", today=ctx.today, patient=record.patient, analysis=record.analysis,
        entries=record.entries, alerts=record.alerts, staff_names=names, cycles=cycles, prepared_by="Tester",
        protocol=ctx.protocol,
    ))


def section(p: pack.Pack, heading: str) -> pack.Section:
    return next(s for s in p.sections if s.heading.startswith(heading))


def test_irregular_cycles_are_explained_with_the_figo_numbers(ctx):
    p = pack_of(ctx, "P0005")
    lines = section(p, "Cycle summary").paragraphs
    # The demo patient's cycles run 25 to 40 days at age 32; FIGO 2018 (Munro 2018): a shortest-to-
    # longest variation above 7 days at age 26-41 is irregular.
    assert "FIGO 2018 regularity: irregular (shortest 25, longest 40: variation 15 days; normal up to 7 at age 32)." in lines
    (why,) = [s for s in p.sections if s.heading.startswith("Why")]
    assert any(text.startswith("irregular cycles (soon") and "FIGO 2018 (Munro 2018)" in text for text in why.paragraphs)


@pytest.mark.parametrize("patient_id, rise", [("P0014", "125%"), ("P0015", "20%")])
def test_the_hcg_series_shows_the_rise_per_48_hours(ctx, patient_id, rise):
    # Two serum values 48 h apart: the rise per 48 h is simply second / first - 1
    # (120 -> 270 is 125%, 400 -> 480 is 20%; Barnhart 2004 expects at least 53%).
    table = section(pack_of(ctx, patient_id), "Pregnancy").table
    assert [r.cells[2] for r in table.rows] == ["-", rise]


def test_follicle_tracking_appears_only_with_scans(ctx):
    tracked = section(pack_of(ctx, "P0017"), "Follicle tracking")
    assert tracked.paragraphs[0].startswith("Lead follicle 19.0 mm; 4 at or above 14 mm")
    assert not any(s.heading.startswith("Follicle") for s in pack_of(ctx, "P0001").sections)


@pytest.mark.parametrize("cycles", [1, 2, 3, 5])
def test_the_last_n_cycles_are_charted_and_their_entries_listed(ctx, cycles):
    p = pack_of(ctx, "P0003", cycles)
    analysis = show_patient(ctx, "P0003").analysis
    shown = analysis.cycles[-cycles:]
    assert [b.caption for b in p.charts] == [f"Cycle {len(analysis.cycles) - len(shown) + n + 1} from {c.start}"
                                            for n, c in enumerate(shown)]
    days = {r.cells[1] for r in p.entries.table.rows}
    assert min(days) == shown[0].start.isoformat()


def test_corrections_are_struck_through_with_their_reason_and_logger(ctx):
    p = pack_of(ctx, "P0003", 12)
    struck = [r for r in p.entries.table.rows if r.struck]
    record = show_patient(ctx, "P0003")
    replaced = [e for e in record.entries if e.superseded_by is not None and e.day >= record.analysis.cycles[-12:][0].start]
    assert [r.cells[0] for r in struck] == [str(e.id) for e in replaced]
    corrections = [r for r in p.entries.table.rows if r.cells[-1].startswith("corrects ")]
    assert all("digits swapped" in r.cells[-1] or r.cells[-1].split(": ", 1)[1] for r in corrections)
    page = pack.html(p)
    assert page.count("<tr class=\"struck\">") == len(struck)
    assert "<s>36.73 °C</s>" in page  # the keyed slip, shown and struck, as stored


def test_the_html_is_self_contained_with_print_styles_and_one_svg_per_cycle(ctx):
    p = pack_of(ctx, "P0009")
    page = pack.html(p)
    # Nothing fetched from elsewhere: no src, href, url() or @import; the only URL is the SVG namespace.
    assert not re.search(r"\bsrc=|\bhref=|url\(|@import|<script", page)
    assert set(re.findall(r"https?://[^\s\"']+", page)) == {"http://www.w3.org/2000/svg"}
    assert "@media print" in page and page.count("<svg") == len(p.charts) == 3
    assert html.unescape(page).count(pack.CAUTION) == 2
    assert "not contraception advice" in pack.CAUTION and "licensed clinical judgement" in pack.CAUTION


def test_names_in_the_html_are_escaped(ctx):
    from dataclasses import replace
    p = pack_of(ctx, "P0001")
    hostile = replace(p, title="Referral pack: <script>x</script>")
    assert "<script>" not in pack.html(hostile)


def test_the_current_cycle_alone_shows_p_fertile_and_excluded_readings_are_hollow(ctx):
    p = pack_of(ctx, "P0009")
    labels = [[s.text for s in b.figure.shapes if isinstance(s, chart.Label)] for b in p.charts]
    assert ["P(fertile)" in found for found in labels] == [False, False, True]
    record = show_patient(ctx, "P0009")
    for block, rec in zip(p.charts, record.analysis.cycles[-3:]):
        last = rec.end or ctx.today
        disturbed = [e for e in record.entries if e.current and e.kind.value == "temp" and e.disturbed
                     and rec.start <= e.day <= last]
        hollow = [s for s in block.figure.shapes if isinstance(s, chart.Dot) and s.hollow]
        assert len(hollow) == len(disturbed) + 1  # and one in the legend
        if rec.shift.coverline is not None:
            assert f"coverline {rec.shift.coverline:.2f}" in [s.text for s in block.figure.shapes if isinstance(s, chart.Label)]


@pytest.mark.parametrize("paper, media_box", [
    # ISO 216 A4 is 210 x 297 mm; US Letter is 8.5 x 11 in: in PDF points (1/72 in).
    ("a4", (595.28, 841.89)),
    ("letter", (612.0, 792.0)),
])
def test_the_pdf_is_drawn_on_the_chosen_paper_with_vector_charts(ctx, paper, media_box):
    data = pack_pdf.render(pack_of(ctx, "P0017"), paper)
    assert data.startswith(b"%PDF-")
    boxes = {tuple(round(float(v), 2) for v in m) for m in re.findall(rb"/MediaBox \[0 0 ([\d.]+) ([\d.]+)\]", data)}
    assert boxes == {media_box}
    assert b"/Subtype /Image" not in data  # charts are drawn as vectors, not pictures


def test_a_name_outside_the_pdf_font_is_flagged_not_dropped(ctx):
    from dataclasses import replace
    p = pack_of(ctx, "P0001")
    p = replace(p, who=(("Patient", "Zhou 周"),) + p.who[1:])
    assert pack_pdf._fits(p) is False
    assert pack_pdf.render(p).startswith(b"%PDF-")


def test_user_text_in_the_pack_is_made_inert_by_the_one_display_rule(ctx):
    # A right-to-left override (Unicode Cf) would reverse what follows it on the page; the pack shows
    # it as its escape, as every other screen does (caseload.presentation.safe_text).
    from dataclasses import replace
    record = show_patient(ctx, "P0001")
    hostile = replace(record.patient, name="Ana\u202eLima")
    p = pack.build(PackInput(
        clinic="Test\x1b[31m Clinic", today=ctx.today, patient=hostile, analysis=record.analysis,
        entries=record.entries, alerts=record.alerts, staff_names={}, cycles=1, prepared_by="Tester",
        protocol=ctx.protocol,
    ))
    assert p.title == "Referral pack: Ana\\u202eLima"
    assert dict(p.who)["Clinic"] == "Test\\x1b[31m Clinic"
    assert "\u202e" not in pack.html(p)


# --- the PDF's tables: columns sized from what they hold


def pdf_lines(data: bytes) -> list[str]:
    """Every run of text the PDF draws, in order: fpdf2 draws each line of a table cell as one
    `(text) Tj` in a Flate-compressed content stream (the text is Latin-1, parentheses escaped)."""
    lines = []
    for stream in re.findall(rb"stream\r?\n(.*?)\r?\nendstream", data, re.S):
        try:
            content = zlib.decompress(stream)
        except zlib.error:
            continue  # not a compressed content stream (fonts are built in)
        for text in re.findall(rb"\(((?:\\.|[^\\)])*)\) ?Tj", content):
            lines.append(re.sub(rb"\\(.)", rb"\1", text).decode("latin-1"))
    return lines


def test_no_word_of_the_entries_table_is_split_across_lines(ctx):
    # Reported: the Kind column printed "temperat / ure" and "intercours / e" while the Flags and
    # History columns stood mostly empty.
    p = pack_of(ctx, "P0015")
    kinds = {r.cells[3] for r in p.entries.table.rows}
    assert {"temperature", "intercourse"} <= kinds
    lines = pdf_lines(pack_pdf.render(p))
    assert not [line for line in lines if line in ("temperat", "ure", "intercours", "e")]
    # Each kind, value and name is drawn whole on one line, at least once for each row that holds it.
    for column in ("Kind", "Value", "Logged by"):
        n = p.entries.table.header.index(column)
        for shown in {r.cells[n] for r in p.entries.table.rows}:
            rows = sum(r.cells[n] == shown for r in p.entries.table.rows)
            assert lines.count(shown) >= rows, (column, shown)


def test_the_spare_width_goes_to_the_free_text_columns(ctx):
    from dataclasses import replace
    from fpdf import FPDF
    p = pack_of(ctx, "P0015")
    table = p.entries.table
    note = ("Patient rang to say she had a fever overnight and took paracetamol at six; "
            "reading may run high, repeat tomorrow before rising")
    noted = replace(table, rows=(pack.Row(("99999", "2026-11-30", "07:10", "temperature", "37.40 °C", "fever, late",
                                           note, "Amara Okafor", "corrects 99998: typed the wrong day")),
                                 *table.rows))
    pdf = FPDF(unit="mm", format="A4")
    pdf.set_margins(pack_pdf.MARGIN, pack_pdf.MARGIN, pack_pdf.MARGIN)
    widths = pack_pdf.column_widths(pdf, noted, free=pack_pdf.ENTRY_FREE_TEXT)
    assert sum(widths) == pytest.approx(pdf.epw) and pdf.epw == pytest.approx(180, abs=0.01)  # A4 less the margins
    by = dict(zip(table.header, widths))
    # Each column holds its longest word (and its header) with the cell's padding on both sides.
    for n, title in enumerate(table.header):
        pdf.set_font(pack_pdf.FONT, "", pack_pdf.TABLE_SIZE)
        longest = max(pdf.get_string_width(w) for r in noted.rows for w in r.cells[n].split() or [""])
        pdf.set_font(pack_pdf.FONT, "B", pack_pdf.TABLE_SIZE)
        longest = max(longest, *(pdf.get_string_width(w) for w in title.split()))
        assert widths[n] >= longest + 2 * pack_pdf.CELL_PADDING, title
    # The short columns get their longest line, whole; the note and the history share what is left.
    room = 2 * pack_pdf.CELL_PADDING + pack_pdf.CELL_SLACK
    for title in ("#", "Day", "Time", "Kind", "Value", "Flags", "Logged by"):
        n = table.header.index(title)
        pdf.set_font(pack_pdf.FONT, "", pack_pdf.TABLE_SIZE)
        line = max(pdf.get_string_width(r.cells[n]) for r in noted.rows)
        pdf.set_font(pack_pdf.FONT, "B", pack_pdf.TABLE_SIZE)
        assert by[title] == pytest.approx(max(line, pdf.get_string_width(title)) + room), title
    assert by["Kind"] < 18 and by["Time"] < 10 and by["Flags"] < 16
    assert by["Note"] == max(widths) and by["Note"] + by["History"] > 60 and by["History"] > by["Flags"]
    drawn = pdf_lines(pack_pdf.render(replace(p, entries=replace(p.entries, table=noted))))
    # The note wraps at spaces onto a few lines, every word whole, and so does the history.
    start = drawn.index(next(line for line in drawn if line.startswith("Patient rang")))
    joined = [" ".join(drawn[start:start + k]) for k in range(1, 9)]
    assert note in joined and joined.index(note) >= 2
    start = drawn.index(next(line for line in drawn[start:] if line.startswith("corrects")))
    assert "corrects 99998: typed the wrong day" in [" ".join(drawn[start:start + k]) for k in range(1, 5)]
