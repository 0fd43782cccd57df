"""The weekly summary's clinic fixtures, shared with the summary's own tests."""

from tests.application.week.conftest import clinic, fresh_clinic  # noqa: F401 - fixtures
