"""Files made for people outside the interface: the weekly summary in four formats."""
