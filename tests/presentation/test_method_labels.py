"""Every dating method the core can name has one label a person reads, in the glossary."""

from __future__ import annotations

from datetime import date

from caseload.core.markers import OVULATION_METHODS
from caseload.core.pregnancy import due_date
from caseload.presentation.glossary import EDD_METHOD_LABELS, edd_method_label, ovulation_method_label


def test_each_ovulation_method_has_a_label():
    assert {m: ovulation_method_label(m) for m in OVULATION_METHODS} == {
        "lh": "LH test", "shift": "thermal shift", "change-point": "temperature level change", "mucus": "mucus peak",
    }
    assert ovulation_method_label(None) == "-"


def test_each_due_date_rule_has_a_label():
    # Naegele's rule (LMP + 280 days), moved for a regular 32-day cycle, and ovulation + 266 days: the
    # three ways the core dates a pregnancy (common practice).
    lmp, ovulation = date(2026, 3, 1), date(2026, 3, 15)
    methods = {due_date(lmp, None, None)[1], due_date(lmp, None, 32)[1], due_date(lmp, ovulation, None)[1]}
    assert methods == set(EDD_METHOD_LABELS)
    assert edd_method_label("naegele-adjusted").startswith("Naegele's rule, LMP + 280 days, moved")
