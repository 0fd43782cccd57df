"""The FHIR R4 export: every resource valid by the fhir.resources R4 models, the demo round-trips.

fhir.resources 6.0-6.4 model FHIR R4 4.0.1 (its `__fhir_version__`); every resource of the
Bundle is parsed by those models, which check types, cardinalities and value sets of codes.
"""

from __future__ import annotations

import io
import json
from collections import Counter
from datetime import UTC, date, datetime, timedelta

import fhir.resources as fhir_models
import pytest
from fhir.resources import construct_fhir_element
from hypothesis import given
from hypothesis import strategies as st

from caseload.core import pregnancy
from caseload.core.analysis import Analysis, CycleRecord, analyse
from caseload.core.markers import OVULATION_METHODS
from caseload.core.model import Kind, Observation, Patient, Value
from caseload.exports import fhir
from caseload.application import referral
from caseload.application.caseload_view import show_patient
from caseload.application.weekly_summary import pseudonym, pseudonym_secret
from tests.core.test_markers import COVER, PATIENT, RAMP, on, temps


def bundle_of(ctx, patient_id: str | None, since: date | None = None, deidentify: bool = False) -> dict:
    """The Bundle as the export streams it, read back."""
    stream = io.BytesIO()
    count = referral.stream_bundle(ctx, patient_id, stream, since, deidentify, fhir.write_bundle)
    bundle = json.loads(stream.getvalue())
    assert len(bundle["entry"]) == count
    return bundle


@pytest.fixture(scope="module")
def bundle(ctx):
    return bundle_of(ctx, None)


@pytest.fixture(scope="module")
def masked(ctx):
    return bundle_of(ctx, None, deidentify=True)


def resources(b: dict, kind: str) -> list[dict]:
    return [e["resource"] for e in b["entry"] if e["resource"]["resourceType"] == kind]


def test_the_models_are_fhir_r4():
    # fhir.resources states the FHIR version it models; R4 is 4.0.1 (hl7.org/fhir/R4).
    assert fhir_models.__fhir_version__ == "4.0.1"


@pytest.mark.parametrize("which", ["bundle", "masked"])
def test_every_resource_and_the_bundle_validate_as_fhir_r4(which, request):
    b = request.getfixturevalue(which)
    assert b["type"] == "collection"
    # The Bundle model parses each entry's resource by its own resourceType's model (a bad date in
    # one Observation is refused with its place, entry -> N -> resource), so one parse checks them all.
    construct_fhir_element("Bundle", b)


def test_the_bundle_model_checks_the_resources_inside_it(bundle):
    """What the test above relies on: a Bundle holding one resource with a bad date is refused."""
    entry = json.loads(json.dumps(next(e for e in bundle["entry"] if "effectiveDateTime" in e["resource"])))
    construct_fhir_element("Bundle", {"resourceType": "Bundle", "type": "collection", "entry": [entry]})
    entry["resource"]["effectiveDateTime"] = "the fourth"
    with pytest.raises(ValueError, match="effectiveDateTime"):
        construct_fhir_element("Bundle", {"resourceType": "Bundle", "type": "collection", "entry": [entry]})


def test_every_stored_entry_appears_once_and_every_current_one_counts(demo, bundle):
    entries = [e for _, group in demo.store.entries.by_patient() for e in group]
    observed = Counter(o["id"] for o in resources(bundle, "Observation") if o["id"].startswith("entry-"))
    assert set(observed.values()) == {1}
    assert set(observed) == {fhir.entry_id(e.id) for e in entries}
    by_id = {o["id"]: o for o in resources(bundle, "Observation")}
    for e in entries:
        status = by_id[fhir.entry_id(e.id)]["status"]
        # FHIR R4 ObservationStatus: final, amended (corrected after final), entered-in-error.
        assert status == ("entered-in-error" if not e.current else "amended" if e.supersedes else "final")


def _value_of(o: dict):
    if "valueQuantity" in o:
        q = o["valueQuantity"]
        return q["value"], q["code"], q["system"]
    if "valueCodeableConcept" in o:
        return o["valueCodeableConcept"]["coding"][0]["code"]
    if "component" in o:
        parts = [(c["code"]["coding"][0]["code"], c.get("valueQuantity", {}).get("value", c.get("valueInteger")))
                 for c in o["component"]]
        return parts
    return o["valueString"]


def test_each_current_entry_has_its_value_and_ucum_unit(demo, bundle):
    by_id = {o["id"]: o for o in resources(bundle, "Observation")}
    ucum = "http://unitsofmeasure.org"
    checked = Counter()
    for _, group in demo.store.entries.by_patient():
        for e in (e for e in group if e.current):
            got = _value_of(by_id[fhir.entry_id(e.id)])
            v = e.value
            # UCUM: Cel is degrees Celsius, [IU]/L international units per litre, mm millimetres.
            if e.kind == Kind.TEMP:
                assert got == (v.number, "Cel", ucum)
            elif e.kind in (Kind.HCG, Kind.LH) and v.number is not None:
                assert got == (v.number, "[IU]/L", ucum)
            elif v.scan is not None:
                expected = [("follicle-count", len(v.scan.follicles_mm))]
                expected += [("follicle-diameter", mm) for mm in v.scan.follicles_mm]
                if v.scan.endometrium_mm is not None:
                    expected.append(("endometrial-thickness", v.scan.endometrium_mm))
                assert got == expected
                assert all(c["valueQuantity"]["code"] == "mm" for c in by_id[fhir.entry_id(e.id)]["component"][1:])
            elif v.word is not None:
                assert got == v.word
            else:
                assert got == v.text
            checked[e.kind] += 1
    assert set(checked) == set(Kind) - {Kind.LH} or set(checked) == set(Kind)


def test_a_correction_points_to_the_entry_it_replaced(demo, bundle):
    by_id = {o["id"]: o for o in resources(bundle, "Observation")}
    corrected = [e for _, group in demo.store.entries.by_patient() for e in group if e.supersedes]
    assert corrected
    for e in corrected:
        (ext,) = [x for x in by_id[fhir.entry_id(e.id)]["extension"] if x["url"] == fhir.SUPERSEDES_URL]
        assert ext["valueReference"]["reference"] == f"Observation/{fhir.entry_id(e.supersedes)}"
        assert by_id[fhir.entry_id(e.supersedes)]["status"] == "entered-in-error"


def test_loinc_codes_are_the_published_ones(bundle):
    codes = {(c["system"], c["code"]) for o in resources(bundle, "Observation") for c in o["code"]["coding"]}
    # FHIR R4 body temperature profile: 8310-5. FHIR R4 example date-lastmp: 8665-2.
    # IPS value set edd-method-uv-ips: 11780-4 (from ovulation date), 11779-6 (from LMP).
    assert {("http://loinc.org", "8310-5"), ("http://loinc.org", "8665-2"),
            ("http://loinc.org", "11780-4")} <= codes


def test_derived_dates_follow_the_published_rules(demo, ctx, bundle):
    p14 = show_patient(ctx, "P0014").analysis
    derived = {o["id"]: o for o in resources(bundle, "Observation") if o["subject"]["reference"] == "Patient/P0014"}
    lmp = derived["P0014-lmp"]["valueDateTime"]
    assert lmp == p14.cycle_start.isoformat()
    edd = derived["P0014-edd"]
    ovulation = p14.cycles[-1].markers.ovulation
    # Estimated delivery is 266 days after ovulation (280 from the LMP less the 14 before ovulation),
    # reference-values: Naegele's rule, 280 days.
    assert edd["valueDateTime"] == (ovulation + timedelta(days=266)).isoformat()
    assert edd["code"]["coding"][0]["code"] == "11780-4"
    assert "266 days" in edd["method"]["text"]
    ovulations = [o for o in derived.values() if o["id"].startswith("P0014-ovulation-")]
    assert len(ovulations) == sum(1 for c in p14.cycles if c.markers.ovulation)


def _says_what_it_is(o: dict, c: CycleRecord) -> None:
    """The ovulation Observation `o` of cycle `c`: its value is what its method text says it is."""
    m, shift = c.markers, c.shift
    value, text = date.fromisoformat(o["valueDateTime"]), o["method"]["text"]
    if m.ovulation_method in ("shift", "change-point"):
        # The day before the first day of the rise, its last low day: the LH surge falls within a day of
        # the temperature nadir (Morris 1976) and ovulation about a day after it (WHO Task Force 1980).
        assert value == shift.rise_start - timedelta(days=1)
        assert text.startswith("The day before the first")
    elif m.ovulation_method == "lh":
        # WHO Task Force 1980: ovulation about a day after the LH surge (the protocol's default interval).
        assert value == m.lh_surge + timedelta(days=1)
        assert text.startswith("The first positive LH test of the surge that dates ovulation, plus 1 day ")
    else:
        assert value == m.mucus_peak and text.startswith("The mucus peak day")


def exported(who: Patient, a: Analysis) -> list[dict]:
    """The resources of one chart with no entries, as the export writes them."""
    options = referral.Options(zone=UTC, generated=datetime(2026, 12, 1, 9, 0, tzinfo=UTC))
    return fhir.patient_resources(referral.Chart(who, (), a), options)


def test_every_ovulation_method_of_the_core_has_its_words():
    assert set(fhir.OVULATION_METHODS) == set(OVULATION_METHODS)


def test_each_ovulation_date_of_the_demo_is_what_its_method_text_says(ctx, bundle):
    derived = {o["id"]: o for o in resources(bundle, "Observation")}
    seen = Counter()
    for p in ctx.store.patients.all():
        for number, c in enumerate(show_patient(ctx, p.id).analysis.cycles, start=1):
            if c.markers.ovulation is not None:
                _says_what_it_is(derived[f"{fhir.fhir_id(p.id)}-ovulation-{number}"], c)
                seen[c.markers.ovulation_method] += 1
                # An abrupt rise begins on the rule's first high: ovulation is the day before it.
                seen["abrupt"] += c.markers.ovulation_method == "shift" and c.shift.rise_start == c.shift.first_high
    assert {"lh", "shift", "mucus", "abrupt"} <= set(seen)


def test_a_change_point_dating_is_what_its_method_text_says():
    ramp = RAMP | {d: 36.72 for d in range(21, 29)}  # a ramp the coverline form never confirms
    bleeds = [Observation(on(d), Kind.BLEED, Value(word="moderate")) for d in (1, 2, 3, 29)]
    a = analyse(PATIENT, sorted(bleeds + temps(ramp), key=lambda o: o.day), on(29), COVER)
    (o,) = [o for o in exported(PATIENT, a) if o["id"] == "p-ovulation-1"]
    construct_fhir_element("Observation", o)  # valid by the fhir.resources R4 model
    assert a.cycles[0].markers.ovulation_method == "change-point"
    _says_what_it_is(o, a.cycles[0])


PIA = Patient("P0001", "Pia Test", date(1992, 5, 17), None)


def _pregnant_analysis(cycle_days: int, lh_on_day: int | None) -> Analysis:
    """Six cycles of `cycle_days` days, then a seventh with a positive urine hCG on its day 31 and,
    with `lh_on_day`, a positive LH test on that day dating ovulation."""
    start, observations = date(2026, 1, 5), []
    for _ in range(6):
        observations.append(Observation(start, Kind.BLEED, Value(word="moderate")))
        start += timedelta(days=cycle_days)
    observations += [Observation(start, Kind.BLEED, Value(word="moderate")),
                     Observation(start + timedelta(days=30), Kind.HCG, Value(word="positive"))]
    if lh_on_day is not None:
        observations.append(Observation(start + timedelta(days=lh_on_day - 1), Kind.LH, Value(word="positive")))
    return analyse(PIA, observations, start + timedelta(days=31))


# One chart per rule the core dates a pregnancy by: regular 28-day cycles (Naegele's rule as it
# stands), regular 32-day cycles (moved 4 days later) and an LH-dated ovulation (ovulation + 266).
DUE_DATE_CHARTS = {"naegele": (28, None), "naegele-adjusted": (32, None), "ovulation": (28, 16)}


def test_every_due_date_rule_of_the_core_has_a_chart_here_and_an_export():
    assert set(DUE_DATE_CHARTS) == set(pregnancy.EDD_METHODS) == set(fhir.EDD_METHODS)


@pytest.mark.parametrize("method", list(DUE_DATE_CHARTS))
def test_every_due_date_is_exported_as_a_valid_observation(method):
    a = _pregnant_analysis(*DUE_DATE_CHARTS[method])
    p = a.pregnancy
    assert p.edd_method == method
    (edd,) = [o for o in exported(PIA, a) if o["id"] == "P0001-edd"]
    construct_fhir_element("Observation", edd)  # valid by the fhir.resources R4 model
    # Naegele's rule: LMP + 280 days; adjusted for a regular cycle by its length less 28 days (common
    # practice); from ovulation, 266 days (ACOG Committee Opinion 700), ovulation a day after the LH
    # test of day 16 (WHO Task Force 1980), so on day 17, 16 days after the LMP.
    days = {"naegele": 280, "naegele-adjusted": 280 + 32 - 28, "ovulation": 16 + 266}[method]
    assert edd["valueDateTime"] == (p.lmp + timedelta(days=days)).isoformat()
    # IPS value set edd-method-uv-ips: 11779-6 estimated from the LMP, 11780-4 from the ovulation date.
    from_lmp = ("11779-6", "Delivery date Estimated from last menstrual period")
    code, display = {"naegele": from_lmp, "naegele-adjusted": from_lmp,
                     "ovulation": ("11780-4", "Delivery date Estimated from ovulation date")}[method]
    assert edd["code"]["coding"][0] == {"system": "http://loinc.org", "code": code, "display": display}
    assert edd["method"]["text"] == fhir.EDD_METHODS[method][0]


def test_since_leaves_out_earlier_entries(ctx):
    since = date(2026, 11, 1)
    b = bundle_of(ctx, "P0014", since=since)
    days = [o["effectiveDateTime"][:10] for o in resources(b, "Observation") if o["id"].startswith("entry-")]
    assert days and min(days) >= since.isoformat()
    assert len(resources(b, "Patient")) == 1


def test_deidentified_bundle_has_no_names_birth_dates_or_free_text(demo, masked):
    text = json.dumps(masked, ensure_ascii=False)
    for p in demo.store.patients.all():
        assert p.name not in text and p.name.split()[-1] not in text
        assert f'"{p.id}"' not in text and f"Patient/{p.id}" not in text
    for s in demo.store.staff.all():
        assert s.name not in text
    for r in resources(masked, "Patient"):
        assert "birthDate" not in r and "name" not in r
    for o in resources(masked, "Observation"):
        assert "note" not in o and "valueString" not in o


def test_deidentified_dates_move_by_one_keyed_offset_per_patient(demo, ctx, bundle, masked):
    secret = pseudonym_secret(ctx)
    plain = {o["id"]: o for o in resources(bundle, "Observation")}
    offsets = {}
    for o in resources(masked, "Observation"):
        if not o["id"].startswith("entry-"):
            continue
        before = date.fromisoformat(plain[o["id"]]["effectiveDateTime"][:10])
        after = date.fromisoformat(o["effectiveDateTime"][:10])
        offsets.setdefault(o["subject"]["reference"], set()).add((after - before).days)
    assert all(len(s) == 1 for s in offsets.values())
    for p in demo.store.patients.all():
        ref = f"Patient/{pseudonym(secret, p.id)}"
        if ref in offsets:
            assert offsets[ref] == {referral.shift_days(secret, p.id)} and 0 not in offsets[ref]
    assert len({next(iter(s)) for s in offsets.values()}) > len(offsets) // 2  # offsets differ between patients


def test_a_deidentified_bundle_holds_no_real_date_to_work_an_offset_back_from(bundle, masked):
    # The export's own day, written beside moved dates, gives each offset away: moved date - real
    # date. The plain bundle has it (its timestamp, and the day its derived estimates were made);
    # the de-identified one has neither.
    assert "timestamp" in bundle and "timestamp" not in masked
    plain = [o for o in resources(bundle, "Observation") if not o["id"].split("-")[0] == "entry"]
    assert plain and all("effectiveDateTime" in o for o in plain)
    derived = [o for o in resources(masked, "Observation") if not o["id"].split("-")[0] == "entry"]
    assert derived and all("effectiveDateTime" not in o for o in derived)
    assert all(o["valueDateTime"] for o in derived)  # the estimates themselves stay, moved


@given(st.text(min_size=1, max_size=32), st.text(min_size=1, max_size=64))
def test_the_offset_is_never_zero_and_within_half_a_year(patient_id, secret):
    days = referral.shift_days(secret, patient_id)
    assert days != 0 and -referral.MAX_SHIFT_DAYS <= days <= referral.MAX_SHIFT_DAYS
    assert days == referral.shift_days(secret, patient_id)


@given(st.from_regex(r"[A-Za-z0-9][A-Za-z0-9_.-]{0,31}", fullmatch=True),
       st.from_regex(r"[A-Za-z0-9][A-Za-z0-9_.-]{0,31}", fullmatch=True))
def test_staff_and_patient_ids_become_distinct_valid_fhir_ids(a, b):
    # FHIR R4 id datatype: [A-Za-z0-9\-\.]{1,64} (hl7.org/fhir/R4/datatypes.html#id).
    import re
    assert re.fullmatch(r"[A-Za-z0-9\-.]{1,64}", fhir.fhir_id(a))
    assert (fhir.fhir_id(a) == fhir.fhir_id(b)) == (a == b)
