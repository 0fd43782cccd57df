"""The glossary: every phase and alert kind has the trade's word, the README's table is the glossary,
and the words we once made up are gone from every screen, template and export."""

from __future__ import annotations

import ast
import re
from pathlib import Path

import pytest

from caseload.core.alerts import ALERT_KINDS
from caseload.core.analysis import PHASES
from caseload.core.model import MUCUS_SCALE
from caseload.presentation import glossary

ROOT = Path(__file__).resolve().parents[2]
PACKAGE = ROOT / "caseload"
# Our own inventions, each replaced by the term a nurse writes in a chart.
RETIRED = ("second half", "flow days", "not clear", "window ahead", "flat cycle", "long high temps", "no entries",
           "many follicles")


def test_every_phase_and_alert_kind_has_a_word_and_a_short_form():
    assert set(glossary.PHASE_TERMS) == set(PHASES)
    assert set(glossary.ALERT_TERMS) == set(ALERT_KINDS)
    for term in [*glossary.PHASE_TERMS.values(), *glossary.ALERT_TERMS.values()]:
        assert term.label and term.short and term.meaning
        assert len(term.short) <= 15  # the list's narrow columns


@pytest.mark.parametrize("phase, word", [
    # Common practice: the phases as charted, menses to luteal (post-ovulatory) phase.
    ("bleeding", "menses"), ("pre-window", "follicular phase"), ("window", "fertile window"),
    ("luteal", "luteal phase"), ("pregnant", "pregnancy"),
])
def test_phases_in_the_trade_words(phase, word):
    assert glossary.phase_label(phase) == word


@pytest.mark.parametrize("kind, word", [
    ("monophasic-cycle", "monophasic cycle"), ("sustained-high-temps", "sustained high BBT"),
    ("logging-gap", "charting gap"), ("multiple-follicles", "multiple follicles"),
    ("intermenstrual-bleeding", "intermenstrual bleeding"),  # FIGO 2018's symptom name
    ("hcg-rise-low", "suboptimal hCG rise"),
])
def test_alert_kinds_in_the_trade_words_while_the_identifiers_stay(kind, word):
    assert glossary.alert_label(kind) == word


def test_mucus_is_shown_by_its_descriptions_never_by_a_number():
    assert list(glossary.MUCUS_MARKS) == list(MUCUS_SCALE)
    marks = list(glossary.MUCUS_MARKS.values())
    assert len(set(marks)) == len(marks) and not any(m.isdigit() for m in marks)
    assert glossary.MUCUS_LEGEND == ("mucus dr dry · da damp · sk sticky · cr creamy · wa watery · "
                                     "st stretchy")


def test_more_alerts_says_more():
    assert glossary.more_alerts(1) == "+1 more" and glossary.more_alerts(3) == "+3 more"
    assert glossary.more_alerts(0) == ""


def test_the_readme_table_is_the_glossary():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    rows = [line for line in readme.splitlines() if line.startswith("| ") and line.count(" | ") == 3]
    table = [tuple(cell.strip() for cell in line.strip("|").split(" | ")) for line in rows]
    start = table.index(("term", "short form", "what it means", "where it shows"))
    assert table[start + 1:start + 1 + len(glossary.glossary_rows())] == glossary.glossary_rows()


def shown_strings(path: Path) -> list[str]:
    """The text a module could show a person: its string constants, docstrings left out."""
    if path.suffix != ".py":
        return [path.read_text(encoding="utf-8")]
    tree = ast.parse(path.read_text(encoding="utf-8"))
    docstrings = {id(node.body[0].value) for node in ast.walk(tree)
                  if isinstance(node, (ast.Module, ast.ClassDef, ast.FunctionDef)) and ast.get_docstring(node) is not None}
    return [n.value for n in ast.walk(tree) if isinstance(n, ast.Constant) and isinstance(n.value, str)
            and id(n) not in docstrings]


def test_no_retired_word_is_left_in_the_package():
    files = [p for p in PACKAGE.rglob("*") if p.suffix in (".py", ".j2", ".tcss") and "seed_data" not in p.parts]
    found = {(p.name, word) for p in files for text in shown_strings(p) for word in RETIRED
             if re.search(rf"\b{word}\b", text, re.IGNORECASE)}
    assert found == {("pack.py", "no entries")}  # "No entries." there is a sentence: a period with nothing logged


def test_the_list_column_is_headed_phase_not_where():
    from caseload.tui.widgets.caseload_table import COLUMNS  # the interface's words come from here too
    assert [c.label for c in COLUMNS if c.key == "phase"] == ["Phase"]
