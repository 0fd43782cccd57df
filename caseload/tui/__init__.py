"""The Textual interface: the morning list, patient records, the phone line's quick log, the alert queue."""
