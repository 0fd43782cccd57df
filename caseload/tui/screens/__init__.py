"""One Screen per file: the home list, a patient's record, the quick log, the alert queue and dialogs."""
