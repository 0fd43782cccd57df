"""The referral pack as a PDF (A4 or Letter), drawn with fpdf2: text, tables and vector charts.

The PDF uses the standard Helvetica font, which covers Latin-1 only; a character outside it is
printed as '?' and the page says so, pointing to the HTML pack, which shows every character.
"""

from __future__ import annotations

from fpdf import FPDF, FontFace
from fpdf.enums import TextEmphasis

from caseload.exports import chart
from caseload.exports.pack import Pack, Section, Table

MARGIN = 15.0  # mm
FONT = "Helvetica"
PT_PER_MM = 72 / 25.4
HEADER_FILL = (235, 235, 235)
CAUTION_COLOUR = (179, 89, 0)
STRUCK = FontFace(emphasis=TextEmphasis.S, color=(110, 110, 110))
TABLE_SIZE = 8.0  # pt
CELL_PADDING = 0.8  # mm, each side of a table cell's text
CELL_SLACK = 0.5  # mm: the cell's border line and rounding, so a word measured to fit does fit
WORD_MAX = 45.0  # mm: a longer word (a pasted token) is broken rather than given the page
SHORT_COLUMN_MAX = 40.0  # mm: the most a column that is not free text takes before it wraps
OUTSIDE_FONT = "Some characters fall outside the PDF font and are printed as '?': the HTML pack shows them all."


def _latin1(text: str) -> str:
    return text.encode("latin-1", "replace").decode("latin-1")


def _fits(pack: Pack) -> bool:
    texts = [pack.title, pack.caution, *(v for pair in pack.who for v in pair)]
    for s in (*pack.sections, pack.entries):
        texts += [s.heading, *s.paragraphs]
        if s.table is not None:
            texts += [c for row in s.table.rows for c in row.cells]
    return all(_latin1(t) == t for t in texts)


def _rgb(colour: str) -> tuple[int, int, int]:
    return int(colour[1:3], 16), int(colour[3:5], 16), int(colour[5:7], 16)


class _Document(FPDF):
    footer_text = ""

    def footer(self) -> None:
        self.set_y(-10)
        self.set_font(FONT, "", 7.5)
        self.set_text_color(90, 90, 90)
        self.cell(0, 4, _latin1(f"{self.footer_text}  -  page {self.page_no()} of {{nb}}"), align="C")
        self.set_text_color(0, 0, 0)


def _heading(pdf: FPDF, text: str) -> None:
    if pdf.get_y() > pdf.h - 45:
        pdf.add_page()
    pdf.ln(3)
    pdf.set_font(FONT, "B", 11.5)
    pdf.cell(0, 6, _latin1(text), new_x="LMARGIN", new_y="NEXT")
    pdf.set_draw_color(150, 150, 150)
    pdf.line(pdf.l_margin, pdf.get_y(), pdf.w - pdf.r_margin, pdf.get_y())
    pdf.ln(1.5)


def _paragraph(pdf: FPDF, text: str, size: float = 9.5) -> None:
    pdf.set_font(FONT, "", size)
    pdf.multi_cell(0, 4.4, _latin1(text), new_x="LMARGIN", new_y="NEXT")
    pdf.ln(0.8)


def _measure(pdf: FPDF, texts, style: str, size: float) -> tuple[float, float]:
    """The widest word and the widest line of `texts` in mm, in the table's font."""
    pdf.set_font(FONT, style, size)
    word = line = 0.0
    for text in texts:
        for part in text.splitlines() or [""]:
            line = max(line, pdf.get_string_width(part))
            word = max([word, *(pdf.get_string_width(w) for w in part.split())])
    return word, line


def column_widths(pdf: FPDF, t: Table, size: float = TABLE_SIZE,
                  free: frozenset[str] = frozenset()) -> tuple[float, ...]:
    """Widths in mm filling the page width, sized from the table's content: every column is at
    least as wide as its longest word (so no word is split: "temperature", never "temperat / ure");
    the other columns get their longest line where the page has room, up to SHORT_COLUMN_MAX, and
    the free-text columns (headers in `free`; every column when none is named) share what is left
    in proportion to what they need, then any room to spare. A word wider than WORD_MAX (a long
    token in a note) is the one thing still broken."""
    available = pdf.epw
    room = 2 * CELL_PADDING + CELL_SLACK
    least, natural = [], []
    for n, title in enumerate(t.header):
        head_word, head_line = _measure(pdf, [_latin1(title)], "B", size)
        word, line = _measure(pdf, [_latin1(r.cells[n]) for r in t.rows if n < len(r.cells)], "", size)
        least.append(min(max(word, head_word), WORD_MAX) + room)
        natural.append(max(word, line, head_word, head_line) + room)
    if sum(least) >= available:  # only when capped words still do not fit: shrink evenly
        return tuple(w * available / sum(least) for w in least)
    widths = list(least)
    spare = available - sum(least)
    chosen = [n for n, title in enumerate(t.header) if title in free] or list(range(len(t.header)))
    others = sorted((n for n in range(len(t.header)) if n not in chosen), key=lambda n: natural[n] - least[n])
    for n in others:  # the short columns whole, the least demanding first
        grant = min(max(0.0, min(natural[n], SHORT_COLUMN_MAX) - widths[n]), spare)
        widths[n] += grant
        spare -= grant
    wants = {n: natural[n] - widths[n] for n in chosen}
    needed = sum(wants.values())
    if needed > 0:
        share = min(1.0, spare / needed)
        for n in chosen:
            widths[n] += wants[n] * share
        spare -= needed * share
    if spare > 0:  # room to spare: the free-text columns get it, for shorter rows
        for n in chosen:
            widths[n] += spare / len(chosen)
    return tuple(widths)


def _table(pdf: FPDF, t: Table, size: float = TABLE_SIZE, free: frozenset[str] = frozenset()) -> None:
    widths = column_widths(pdf, t, size, free)
    pdf.set_font(FONT, "", size)
    with pdf.table(col_widths=widths, headings_style=FontFace(emphasis="BOLD", fill_color=HEADER_FILL),
                   line_height=3.8, padding=CELL_PADDING, text_align="LEFT", repeat_headings=1) as table:
        table.row([_latin1(h) for h in t.header])
        for r in t.rows:
            row = table.row()
            for n, c in enumerate(r.cells):
                # The history column stays plain: it is the reason a person reads.
                row.cell(_latin1(c), style=STRUCK if r.struck and n < len(r.cells) - 1 else None)
    pdf.ln(1.5)


def _section(pdf: FPDF, s: Section, free: frozenset[str] = frozenset()) -> None:
    _heading(pdf, s.heading)
    for p in s.paragraphs:
        _paragraph(pdf, p)
    if s.table is not None and s.table.rows:
        _table(pdf, s.table, free=free)


def _caution(pdf: FPDF, text: str) -> None:
    pdf.ln(2)
    pdf.set_draw_color(*CAUTION_COLOUR)
    pdf.set_line_width(0.4)
    pdf.set_font(FONT, "", 9)
    pdf.multi_cell(0, 4.4, _latin1(text), border=1, padding=2, new_x="LMARGIN", new_y="NEXT")
    pdf.set_line_width(0.2)
    pdf.ln(2)


def draw_figure(pdf: FPDF, figure: chart.Figure, x0: float, y0: float) -> None:
    """The chart's shapes as PDF vectors, with the figure's top left at (x0, y0) mm."""
    for s in figure.shapes:
        if isinstance(s, chart.Line):
            pdf.set_draw_color(*_rgb(s.colour))
            pdf.set_line_width(s.width)
            pdf.set_dash_pattern(dash=1.2, gap=0.8) if s.dash else pdf.set_dash_pattern()
            pdf.line(x0 + s.x1, y0 + s.y1, x0 + s.x2, y0 + s.y2)
            pdf.set_dash_pattern()
        elif isinstance(s, chart.Polyline):
            pdf.set_draw_color(*_rgb(s.colour))
            pdf.set_line_width(s.width)
            pdf.polyline([(x0 + x, y0 + y) for x, y in s.points], style="D")
        elif isinstance(s, chart.Dot):
            pdf.set_draw_color(*_rgb(s.colour))
            pdf.set_fill_color(*((255, 255, 255) if s.hollow else _rgb(s.colour)))
            pdf.set_line_width(0.25)
            pdf.ellipse(x0 + s.x - s.r, y0 + s.y - s.r, 2 * s.r, 2 * s.r, style="DF")
        elif isinstance(s, chart.Box):
            pdf.set_fill_color(*_rgb(s.colour))
            pdf.rect(x0 + s.x, y0 + s.y, s.w, s.h, style="F")
        else:
            pdf.set_font(FONT, "B" if s.bold else "", s.size * PT_PER_MM)
            pdf.set_text_color(*_rgb(s.colour))
            text = _latin1(s.text)
            width = pdf.get_string_width(text)
            shift = {"start": 0.0, "middle": width / 2, "end": width}[s.anchor]
            pdf.text(x0 + s.x - shift, y0 + s.y, text)
    pdf.set_text_color(0, 0, 0)
    pdf.set_line_width(0.2)


def _who(pdf: FPDF, who: tuple[tuple[str, str], ...]) -> None:
    for label, value in who:
        pdf.set_font(FONT, "B", 9.5)
        pdf.cell(38, 4.8, _latin1(label))
        pdf.set_font(FONT, "", 9.5)
        pdf.multi_cell(0, 4.8, _latin1(value), new_x="LMARGIN", new_y="NEXT")


# The entries table's free text: these columns wrap, the others are sized to what they hold.
ENTRY_FREE_TEXT = frozenset({"Note", "History"})


def render(pack: Pack, paper: str = "a4") -> bytes:
    """The pack as PDF bytes on A4 or Letter paper."""
    pdf = _Document(orientation="portrait", unit="mm", format="A4" if paper == "a4" else "Letter")
    pdf.footer_text = pack.title
    pdf.set_margins(MARGIN, MARGIN, MARGIN)
    pdf.set_auto_page_break(True, margin=14)
    pdf.set_title(_latin1(pack.title))
    pdf.add_page()
    pdf.set_font(FONT, "B", 15)
    pdf.cell(0, 8, _latin1(pack.title), new_x="LMARGIN", new_y="NEXT")
    _who(pdf, pack.who)
    if not _fits(pack):
        _paragraph(pdf, OUTSIDE_FONT, 8.5)
    _caution(pdf, pack.caution)
    for s in pack.sections:
        _section(pdf, s)
    if pack.charts:
        pdf.add_page()
        _heading(pdf, f"Charts of the last {len(pack.charts)} cycle{'s' if len(pack.charts) > 1 else ''}")
        for block in pack.charts:
            if pdf.get_y() + block.figure.height > pdf.h - 16:
                pdf.add_page()
            y = pdf.get_y() + 1
            draw_figure(pdf, block.figure, pdf.l_margin, y)
            pdf.set_y(y + block.figure.height + 4)
    _section(pdf, pack.entries, ENTRY_FREE_TEXT)
    _caution(pdf, pack.caution)
    return bytes(pdf.output())
