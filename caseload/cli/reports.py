"""The weekly summary export for supervisors."""

COMMANDS: list = []
