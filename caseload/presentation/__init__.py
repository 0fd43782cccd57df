"""What people and scripts read: the words and labels, days, safe text and the `--json` shapes,
shared by the command line, the interface and the exports."""
