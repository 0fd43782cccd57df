"""The summary as one self-contained, printable HTML page rendered by a Jinja2 template
(autoescaped; the bar charts are inline SVG drawn by the template)."""

from __future__ import annotations

from datetime import date, datetime
from functools import cache
from pathlib import Path

from jinja2 import Environment, PackageLoader, StrictUndefined

from caseload.application.week.figures import WeeklySummary
from caseload.exports.summary_tables import CHARTS, FLOAT, NONE, SHARE, bars, caption, sections
from caseload.presentation.days import iso_day, iso_minute
from caseload.presentation.glossary import CAUTION

TEMPLATE = "summary.html.j2"
BLANK = "–"


def cell(value, kind: str) -> str:
    """A cell as the page shows it."""
    if value is None:
        return BLANK
    if isinstance(value, str):
        return value
    if isinstance(value, datetime):
        return iso_minute(value)
    if isinstance(value, date):
        return iso_day(value)
    if kind == SHARE:
        return f"{value * 100:.1f}%"
    if kind == FLOAT:
        return f"{value:.2f}"
    return str(value)


@cache
def environment() -> Environment:
    env = Environment(
        loader=PackageLoader("caseload.exports", "templates"),
        autoescape=True,
        undefined=StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
    )
    env.filters["cell"] = cell
    env.globals["zip"] = zip
    return env


def render_html(summary: WeeklySummary) -> str:
    parts = sections(summary)
    charts: dict[tuple[str, str], list] = {}
    for section in parts:
        for chart in (c for c in CHARTS if c.section == section.id):
            charts.setdefault((section.id, chart.table), []).append(bars(chart, section))
    # Not named `none`: Jinja reads `none` as its own None, so an empty chart would say "None".
    return environment().get_template(TEMPLATE).render(
        summary=summary, week=summary.week, caption=caption(summary), sections=parts, charts=charts,
        nothing_to_draw=NONE, caution=CAUTION,
    )


def write_html(summary: WeeklySummary, path: Path) -> None:
    path.write_text(render_html(summary), encoding="utf-8")
