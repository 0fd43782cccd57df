"""The weekly caseload summary, computed once and rendered by the exporters."""
