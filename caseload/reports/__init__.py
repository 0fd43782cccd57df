"""The weekly caseload summary for supervisors: computed once, rendered as XLSX, HTML, CSV and JSON."""
