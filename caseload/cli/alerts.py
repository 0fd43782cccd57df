"""Alert commands: the queue, the morning refresh, and handling an alert."""

COMMANDS: list = []
