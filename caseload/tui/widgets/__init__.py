"""Reusable widgets of the interface; each one's Messages are nested in its class."""
