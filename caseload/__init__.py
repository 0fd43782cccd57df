"""caseload: a terminal caseload for a fertility service."""
