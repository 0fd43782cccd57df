"""One or more patients' records as an HL7 FHIR R4 (4.0.1) Bundle of type `collection`, as plain dicts.

The Bundle holds each Patient, the Practitioners who logged her entries (and her nurse), one
Observation per stored entry, and derived Observations for the estimated ovulation date of each
cycle, the start of the last menstrual period and, in pregnancy, the estimated delivery date.

Statuses: an entry that counts is `final`; a correction that counts is `amended` and points to
the entry it replaced through the `supersedes` extension; a replaced entry and a voided one are
`entered-in-error` (a correction in this tool replaces a value that was wrong).

Every Observation carries a coding in the project's own code system (`CODE_SYSTEM`), so that a
reader can sort them by the tool's kinds; a LOINC coding stands beside it where one exists. The
namespace ends in `.invalid` (RFC 2606): it can never be mistaken for a published system.
"""

from __future__ import annotations

import json
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from datetime import date, datetime, time, timedelta, tzinfo
from typing import IO

from caseload.core.analysis import Analysis
from caseload.core.markers import Markers
from caseload.core.model import Entry, Kind, Patient, Staff
from caseload.core.pregnancy import NAEGELE, NAEGELE_ADJUSTED, OVULATION
from caseload.application.referral import Chart, Options

NAMESPACE = "https://caseload.invalid/fhir"
CODE_SYSTEM = NAMESPACE + "/CodeSystem/observation"  # what was observed: the tool's kinds and derived facts
VALUE_SYSTEM = NAMESPACE + "/CodeSystem/value"  # flow, mucus and test-result words
PATIENT_ID_SYSTEM = NAMESPACE + "/patient-id"
PSEUDONYM_SYSTEM = NAMESPACE + "/patient-pseudonym"
STAFF_ID_SYSTEM = NAMESPACE + "/staff-id"
SUPERSEDES_URL = NAMESPACE + "/StructureDefinition/supersedes"
FLAG_URL = NAMESPACE + "/StructureDefinition/entry-flag"
LOINC = "http://loinc.org"
UCUM = "http://unitsofmeasure.org"
CATEGORY_SYSTEM = "http://terminology.hl7.org/CodeSystem/observation-category"
ABSENT_SYSTEM = "http://terminology.hl7.org/CodeSystem/data-absent-reason"

FINAL, AMENDED, IN_ERROR = "final", "amended", "entered-in-error"


@dataclass(frozen=True)
class Code:
    system: str
    code: str
    display: str

    def coding(self) -> dict:
        return {"system": self.system, "code": self.code, "display": self.display}


# LOINC codes, each with where it was checked.
# Checked: the FHIR R4 body temperature profile (hl7.org/fhir/R4/bodytemp) fixes 8310-5.
BODY_TEMPERATURE = Code(LOINC, "8310-5", "Body temperature")
# Checked: FHIR R4 example Observation "date-lastmp" (hl7.org/fhir/observation-example-date-lastmp).
LMP_START = Code(LOINC, "8665-2", "Last menstrual period start date")
# Checked: the International Patient Summary value set edd-method-uv-ips (hl7.org/fhir/uv/ips).
EDD_FROM_LMP = Code(LOINC, "11779-6", "Delivery date Estimated from last menstrual period")
EDD_FROM_OVULATION = Code(LOINC, "11780-4", "Delivery date Estimated from ovulation date")
# From memory: not found in a published list at hand.
MENSTRUAL_FLOW = Code(LOINC, "49033-4", "Menstrual flow")
HCG_URINE = Code(LOINC, "2106-3", "Choriogonadotropin (pregnancy test) [Presence] in Urine")
HCG_SERUM = Code(LOINC, "19080-1", "Choriogonadotropin [Units/volume] in Serum or Plasma")


def own(code: str, display: str) -> Code:
    return Code(CODE_SYSTEM, code, display)


OWN_CODES: dict[Kind, Code] = {
    Kind.TEMP: own("basal-body-temperature", "Basal body temperature"),
    Kind.BLEED: own("menstrual-flow", "Menstrual flow"),
    Kind.MUCUS: own("cervical-mucus", "Cervical mucus"),
    Kind.LH: own("lh-test", "Luteinising hormone test"),
    Kind.HCG: own("hcg-test", "hCG test"),
    Kind.SCAN: own("follicle-scan", "Ovarian follicle and endometrium scan"),
    Kind.MED: own("medication", "Medication taken"),
    Kind.TRIGGER: own("trigger", "Ovulation trigger given"),
    Kind.INSEMINATION: own("insemination", "Insemination"),
    Kind.INTERCOURSE: own("intercourse", "Intercourse"),
    Kind.SYMPTOM: own("symptom", "Symptom reported"),
    Kind.NOTE: own("note", "Note"),
}
FOLLICLE_COUNT = own("follicle-count", "Follicles measured")
FOLLICLE_DIAMETER = own("follicle-diameter", "Follicle diameter")
ENDOMETRIUM = own("endometrial-thickness", "Endometrial thickness")
OVULATION_DATE = own("ovulation-date", "Estimated ovulation date")
LMP_OWN = own("cycle-day-1", "First day of the current cycle")
EDD_OWN = own("estimated-delivery-date", "Estimated delivery date")

CATEGORIES: dict[Kind, str] = {
    Kind.TEMP: "vital-signs",
    Kind.LH: "laboratory",
    Kind.HCG: "laboratory",
    Kind.SCAN: "imaging",
    Kind.MED: "therapy",
    Kind.TRIGGER: "therapy",
    Kind.INSEMINATION: "procedure",
}
SURVEY = "survey"  # what the patient reports by phone

UNITS = {"Cel": "Cel", "iu_l": "[IU]/L", "mm": "mm"}

# What each method's ovulation date is (core/markers.py dates it); "{interval}" is filled in from the cycle's
# own markers, since the protocol sets how long after the surge ovulation is taken to come.
OVULATION_METHODS = {
    "lh": "The first positive LH test of the surge that dates ovulation, plus {interval} (WHO Task Force 1980: "
          "ovulation about a day after the surge); the surge is the cycle's latest one no more than 6 days before "
          "the basal temperature rise, when a rise is dated (Hilgers 1980).",
    "shift": "The day before the first day of the basal temperature rise confirmed by the three-over-six rule (its "
             "last low day). The rise begins on the rule's first high reading, or, on a gradual rise, on the first "
             "reading of the higher level of a two-level split of the cycle's readings when that falls among the low "
             "readings the first high was measured against.",
    "change-point": "The day before the first reading of the higher level of a two-level split of the completed "
                    "cycle's basal temperatures (its last low day), without a rise confirmed by the three-over-six "
                    "rule.",
    "mucus": "The mucus peak day: the last day of the most fertile mucus, confirmed by a less fertile observation on "
             "a later day.",
}
LMP_METHOD = ("Day 1 of the current cycle: the first day of light or heavier flow; spotting alone and bleeds "
              "marked mid-cycle start no cycle.")
# Keyed by every rule the core dates a pregnancy by (pregnancy.EDD_METHODS; a test holds them equal). The adjusted
# rule is still an estimate from the last menstrual period, so it takes that LOINC code.
EDD_METHODS: dict[str, tuple[str, Code]] = {
    NAEGELE: ("Naegele's rule: the first day of the last menstrual period plus 280 days.", EDD_FROM_LMP),
    NAEGELE_ADJUSTED: ("Naegele's rule adjusted for a regular cycle: the first day of the last menstrual period plus "
                       "280 days, plus the usual cycle length less 28 days.", EDD_FROM_LMP),
    OVULATION: ("The estimated ovulation date plus 266 days.", EDD_FROM_OVULATION),
}


def _days(n: int) -> str:
    return f"{n} day" if n == 1 else f"{n} days"


def ovulation_method(m: Markers) -> str:
    """What a cycle's estimated ovulation date is, in words; `m` has a dated ovulation."""
    text = OVULATION_METHODS[m.ovulation_method]
    if m.ovulation_method != "lh":
        return text
    return text.format(interval=_days((m.ovulation - m.lh_surge).days))


def fhir_id(text: str) -> str:
    """A staff or patient id as a FHIR id ([A-Za-z0-9-.]): '.' and '_' are escaped so no two ids meet."""
    return text.replace(".", ".d").replace("_", ".u")


def reference(resource_type: str, resource_id: str) -> dict:
    return {"reference": f"{resource_type}/{resource_id}"}


@dataclass(frozen=True)
class _Dates:
    """Dates as written for one patient: moved by her keyed offset when de-identifying."""

    shift: timedelta
    zone: tzinfo
    masked: bool = False

    def day(self, d: date) -> str:
        return (d + self.shift).isoformat()

    def moment(self, d: date, clock: str | None) -> str:
        if not clock:
            return self.day(d)
        return datetime.combine(d + self.shift, time.fromisoformat(clock), self.zone).isoformat()

    def instant(self, at: datetime) -> str:
        return (at + self.shift).isoformat()


def bundle_start(options: Options) -> dict:
    """The Bundle without its entries, for a writer that adds them one by one. A de-identified one
    has no timestamp: a real date beside the moved ones would give each patient's offset away."""
    bundle = {"resourceType": "Bundle", "type": "collection"}
    return bundle if options.masking else {**bundle, "timestamp": options.generated.isoformat()}


def bundle_entry(resource: dict) -> dict:
    return {"fullUrl": f"{NAMESPACE}/{resource['resourceType']}/{resource['id']}", "resource": resource}


def people(chart: Chart, options: Options) -> set[str]:
    """The staff a chart's resources point to: who logged its exported entries, and her nurse."""
    found = {e.by for e in chart.entries if _included(e.day, options.since)}
    return found | ({chart.patient.nurse_id} if chart.patient.nurse_id else set())


def practitioners(staff: Mapping[str, Staff], ids: Iterable[str], options: Options) -> list[dict]:
    return [practitioner(staff[s], options.masking is not None) for s in sorted(ids) if s in staff]


def write_bundle(charts: Iterable[Chart], staff: Mapping[str, Staff], options: Options, stream: IO[bytes]) -> int:
    """Write the FHIR R4 Bundle (type collection) of the charts to `stream` as JSON, entry by entry,
    so that no more than one chart is held at a time; returns how many resources it holds."""
    start = json.dumps(bundle_start(options))
    stream.write((start[:-1] + ', "entry": [').encode("utf-8"))
    count, staff_ids = 0, set()

    def put(resource: dict) -> None:
        nonlocal count
        separator = ",\n" if count else "\n"
        stream.write((separator + json.dumps(bundle_entry(resource), ensure_ascii=False)).encode("utf-8"))
        count += 1

    for chart in charts:
        staff_ids |= people(chart, options)
        for resource in patient_resources(chart, options):
            put(resource)
    for resource in practitioners(staff, staff_ids, options):
        put(resource)
    stream.write(b"\n]}\n")
    return count


def _included(day: date, since: date | None) -> bool:
    return since is None or day >= since


def patient_resources(chart: Chart, options: Options) -> list[dict]:
    """The Patient, an Observation per entry, and the derived Observations of one chart."""
    p, masking = chart.patient, options.masking
    shift = timedelta(days=masking.shift_days(p.id)) if masking else timedelta(0)
    dates = _Dates(shift, options.zone, masking is not None)
    pid = masking.pseudonym(p.id) if masking else fhir_id(p.id)
    subject = reference("Patient", pid)
    entries = [observation(e, subject, dates, masking is not None)
               for e in chart.entries if _included(e.day, options.since)]
    derived = [o for o in derived_observations(chart.analysis, pid, subject, dates)
               if _included(date.fromisoformat(o["valueDateTime"]) - shift, options.since)]
    return [patient_resource(p, pid, masking is not None), *entries, *derived]


def patient_resource(p: Patient, pid: str, masked: bool) -> dict:
    resource: dict = {"resourceType": "Patient", "id": pid}
    if masked:
        resource["identifier"] = [{"system": PSEUDONYM_SYSTEM, "value": pid}]
    else:
        resource["identifier"] = [{"system": PATIENT_ID_SYSTEM, "value": p.id}]
        resource["name"] = [{"text": p.name}]
        resource["birthDate"] = p.born.isoformat()
    if p.nurse_id:
        resource["generalPractitioner"] = [reference("Practitioner", fhir_id(p.nurse_id))]
    return resource


def practitioner(s: Staff, masked: bool) -> dict:
    resource = {
        "resourceType": "Practitioner",
        "id": fhir_id(s.id),
        "identifier": [{"system": STAFF_ID_SYSTEM, "value": s.id}],
        "active": s.active,
    }
    if not masked:
        resource["name"] = [{"text": s.name}]
    return resource


def status(e: Entry) -> str:
    if not e.current:
        return IN_ERROR
    return AMENDED if e.supersedes is not None else FINAL


def entry_id(entry: int) -> str:
    return f"entry-{entry}"


def observation(e: Entry, subject: dict, dates: _Dates, masked: bool) -> dict:
    """One stored entry as an Observation, with its value, unit, logger and place in the history."""
    codes, value = _value(e, masked)
    obs: dict = {
        "resourceType": "Observation",
        "id": entry_id(e.id),
        "status": status(e),
        "category": [_category(CATEGORIES.get(e.kind, SURVEY))],
        "code": {"coding": [c.coding() for c in codes], "text": codes[-1].display},
        "subject": subject,
        "effectiveDateTime": dates.moment(e.day, e.time),
        "performer": [reference("Practitioner", fhir_id(e.by))],
        **value,
    }
    if e.at is not None:
        obs["issued"] = dates.instant(e.at)
    extensions = [{"url": FLAG_URL, "valueCode": flag} for flag in e.flags]
    if e.supersedes is not None:
        extensions.append({"url": SUPERSEDES_URL, "valueReference": reference("Observation", entry_id(e.supersedes))})
    if extensions:
        obs["extension"] = extensions
    notes = [] if masked else _notes(e)
    if notes:
        obs["note"] = [{"text": n} for n in notes]
    return obs


def _notes(e: Entry) -> list[str]:
    notes = [e.note] if e.note else []
    if e.amend_reason:
        notes.append(f"Correction: {e.amend_reason}")
    if e.voided_reason:
        notes.append(f"Voided: {e.voided_reason}")
    return notes


def _category(code: str) -> dict:
    return {"coding": [{"system": CATEGORY_SYSTEM, "code": code}]}


def quantity(value: float, unit: str) -> dict:
    return {"value": value, "unit": unit, "system": UCUM, "code": unit}


def _word(word: str) -> dict:
    return {"coding": [{"system": VALUE_SYSTEM, "code": word}], "text": word}


def _value(e: Entry, masked: bool) -> tuple[list[Code], dict]:
    """The codes (LOINC first where one exists) and the value[x] elements of an entry."""
    v, mine = e.value, OWN_CODES[e.kind]
    if e.kind == Kind.TEMP and v.number is not None:
        return [BODY_TEMPERATURE, mine], {"valueQuantity": quantity(v.number, UNITS["Cel"])}
    if e.kind == Kind.HCG and v.number is not None:
        return [HCG_SERUM, mine], {"valueQuantity": quantity(v.number, UNITS["iu_l"])}
    if e.kind == Kind.HCG and v.word is not None:
        return [HCG_URINE, mine], {"valueCodeableConcept": _word(v.word)}
    if e.kind == Kind.BLEED and v.word is not None:
        return [MENSTRUAL_FLOW, mine], {"valueCodeableConcept": _word(v.word)}
    if e.kind == Kind.LH and v.number is not None:
        return [mine], {"valueQuantity": quantity(v.number, UNITS["iu_l"])}
    if v.scan is not None:
        return [mine], {"component": _scan_components(v.scan.follicles_mm, v.scan.endometrium_mm)}
    if v.word is not None:
        return [mine], {"valueCodeableConcept": _word(v.word)}
    if masked:
        return [mine], {"dataAbsentReason": {"coding": [{"system": ABSENT_SYSTEM, "code": "masked"}]}}
    return [mine], {"valueString": v.display()}


def _scan_components(follicles: Iterable[float], endometrium: float | None) -> list[dict]:
    sizes = list(follicles)
    parts = [{"code": {"coding": [FOLLICLE_COUNT.coding()]}, "valueInteger": len(sizes)}]
    parts += [{"code": {"coding": [FOLLICLE_DIAMETER.coding()]}, "valueQuantity": quantity(mm, UNITS["mm"])}
              for mm in sizes]
    if endometrium is not None:
        parts.append({"code": {"coding": [ENDOMETRIUM.coding()]}, "valueQuantity": quantity(endometrium, UNITS["mm"])})
    return parts


def _derived(rid: str, codes: list[Code], subject: dict, dates: _Dates, on: date, value: date, method: str) -> dict:
    return {
        "resourceType": "Observation",
        "id": rid,
        "status": FINAL,
        "category": [_category(SURVEY)],
        "code": {"coding": [c.coding() for c in codes], "text": codes[-1].display},
        "subject": subject,
        # The day of the analysis is the day of the export: de-identified, it would give the offset away.
        **({} if dates.masked else {"effectiveDateTime": dates.day(on)}),
        "valueDateTime": dates.day(value),
        "method": {"text": method},
    }


def derived_observations(a: Analysis, pid: str, subject: dict, dates: _Dates) -> list[dict]:
    """Estimated ovulation of each cycle, day 1 of the current cycle, and the due date, as of the analysis day."""
    found = []
    for number, c in enumerate(a.cycles, start=1):
        if c.markers.ovulation is not None and c.markers.ovulation_method is not None:
            found.append(_derived(f"{pid}-ovulation-{number}", [OVULATION_DATE], subject, dates, a.today,
                                  c.markers.ovulation, ovulation_method(c.markers)))
    if a.cycle_start is not None:
        found.append(_derived(f"{pid}-lmp", [LMP_START, LMP_OWN], subject, dates, a.today, a.cycle_start, LMP_METHOD))
    p = a.pregnancy
    if p is not None and p.edd is not None and p.edd_method is not None:
        method, loinc = EDD_METHODS[p.edd_method]
        found.append(_derived(f"{pid}-edd", [loinc, EDD_OWN], subject, dates, a.today, p.edd, method))
    return found
