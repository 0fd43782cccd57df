"""A sentence for every key the interface binds, by binding id: the help screen (`?`) reads them.

The help lists the bindings active on the screen it is opened over, so it shows exactly the keys
that work there; a binding with no sentence here still shows its footer words (a test asks for one).
"""

from __future__ import annotations

SENTENCES: dict[str, str] = {
    "app.quick_log": "Log a caller's reading (temperature, bleed, LH, mucus...) for the highlighted or open patient.",
    "app.quit": "Leave caseload; everything saved stays in the store.",
    "app.help": "Show this list of keys (F1 works inside a text field, where ? is typed as text).",
    "dialog.help": "Show the keys of this dialog (F1 inside a text field, where ? is typed as text).",
    "caseload.search": "Find a patient by id or name, best match first; Enter opens the top one, Esc clears.",
    "caseload.mine": "Switch between your own patients and the whole caseload.",
    "caseload.kind": "Show only patients with one kind of alert.",
    "caseload.plan": "Show only patients on one plan of care.",
    "caseload.alerts": "Open the queue of open alerts, most pressing first.",
    "caseload.export": "Export a week's summary as a spreadsheet, web page, CSV or JSON file.",
    "caseload.register": "Register a new caller: name, date of birth, a nurse, and the proposed patient id.",
    "caseload.unassigned": "Show only the patients with no nurse yet (every nurse sees them), or everyone again.",
    "caseload.back": "Clear the search and go back to the list.",
    "caseload.open": "Open the highlighted patient's record.",
    "caseload.move": "Move the highlight: the arrows a row, PgUp and PgDn a page, Home and End to the first and last.",
    "record.back": "Go back to the screen you came from.",
    "record.tab_chart": "Show the chart: temperatures with the coverline and the day-by-day markers.",
    "record.tab_cycles": "Show the cycle history with lengths, ovulation and luteal phase, and its FIGO classification.",
    "record.tab_outlook": "Show the outlook: the estimated ovulation, fertile window and next period.",
    "record.tab_alerts": "Show this patient's alerts and the evidence behind the highlighted one.",
    "record.tab_entries": "Show every entry logged for this patient, corrections included.",
    "record.cycle_earlier": "Show the previous cycle on the chart.",
    "record.cycle_later": "Show the next cycle on the chart.",
    "chart.earlier": "Move a long cycle's chart to earlier days (the plot and the rows together).",
    "chart.later": "Move a long cycle's chart to later days (the plot and the rows together).",
    "record.referral": "Make a referral pack (PDF or web page) or a FHIR file of this record.",
    "record.care": "Change this patient's nurse, plan or status (nurses and up).",
    "record.add_note": "Add a note to this record, dated today, with your name.",
    "record.amend": "Correct the highlighted entry: a new value and a reason; the old one stays visible.",
    "record.void": "Void the highlighted entry with a reason; it stays on the list, struck through.",
    "entries.details": "Show the highlighted entry in full: who logged it, when it was recorded, its note.",
    "entry.close": "Close the entry and go back to the list of entries.",
    "alerts.move": "Move to the alert above or below, passing over the group headings.",
    "alerts.acknowledge": "Acknowledge the highlighted alert, with a note saying what was done.",
    "alerts.snooze": "Put the highlighted alert aside until a day you choose, with a note.",
    "alerts.resolve": "Resolve the highlighted alert, with a note; it moves to the record's history.",
    "alerts.refuse_acknowledge": "Phone staff: says that a nurse acknowledges alerts; nothing changes.",
    "alerts.refuse_snooze": "Phone staff: says that a nurse snoozes alerts; nothing changes.",
    "alerts.refuse_resolve": "Phone staff: says that a nurse resolves alerts; nothing changes.",
    "queue.back": "Go back to the caseload list.",
    "queue.open": "Open the highlighted alert's patient record at its alerts.",
    "queue.mine": "Switch between your own patients' alerts and everyone's.",
    "quick_log.close": "Close the quick log; what is not saved yet is dropped.",
    "quick_log.save": "Save what is typed, as Enter does in any field after the kind.",
    "quick_log.change_patient": "Unlock the patient field to log for someone else.",
    "picker.next": "Highlight the next matching patient.",
    "picker.previous": "Highlight the previous matching patient.",
    "correct.cancel": "Leave the entry as it is.",
    "note.cancel": "Leave the alert as it is.",
    "add_note.cancel": "Leave the record as it is.",
    "register.cancel": "Close the form; nobody is registered.",
    "register.save": "Register the caller now, as Enter does in the nurse or id field.",
    "care.cancel": "Close the form; nothing changes.",
    "care.save": "Save the changed nurse, plan or status, as Enter does.",
    "export.close": "Close the export form without writing a file.",
    "referral.close": "Close the referral form without writing a file.",
    "sign_in.check_again": "Look again whether an admin has mapped your account to a staff record.",
    "sign_in.quit": "Leave caseload.",
    "help.close": "Close this help.",
}


# What the help's heading calls a full screen; a dialog is called by its own title.
SCREEN_NAMES: dict[str, str] = {
    "CaseloadScreen": "the caseload list",
    "RecordScreen": "a patient's record",
    "AlertQueueScreen": "the alert queue",
    "SignInScreen": "the sign-in screen",
}
