"""The clinic protocol file in a store: chosen by an admin and audited, changing who is flagged,
refused when bad, and never stopping the store from opening."""

from __future__ import annotations

import json

import pytest

from caseload.core.model import Role
from caseload.core.parse import InputError
from caseload.core.settings import DEFAULT_PROTOCOL
from caseload.application import alert_handling as service
from caseload.application.entries import log_entry
from caseload.application.errors import Refused
from caseload.application.protocol import load_protocol, protocol_in_use, use_protocol


@pytest.fixture
def warm(as_role, patient):
    """37.9 C yesterday: no fever by the default 38.0 C (common practice)."""
    log_entry(as_role(Role.PHONE), patient.id, "temp", "37.9", on="yesterday")
    return patient


def test_defaults_when_no_file_is_chosen(store, admin):
    in_use = protocol_in_use(store)
    assert (in_use.path, in_use.protocol, in_use.error) == (None, DEFAULT_PROTOCOL, None)


def test_a_clinic_fever_threshold_of_37_8_flags_the_patient(warm, as_role, store, tmp_path):
    ctx = as_role(Role.ADMIN)
    assert service.list_alerts(ctx) == []
    path = tmp_path / "protocol.toml"
    path.write_text("# clinic protocol\nfever_c = 37.8\n", encoding="utf-8")
    in_use, report = use_protocol(ctx, str(path))
    assert in_use.overrides() == {"fever_c": 37.8} and report.raised == 1
    (alert,) = service.list_alerts(ctx)
    assert alert.kind == "fever" and alert.source == "clinic protocol: fever_c = 37.8 (default 38); defaults from common practice"
    assert load_protocol(store).fever_c == 37.8
    (row,) = store.audit.rows("protocol.")
    assert row.by_staff == "admin1" and json.loads(row.after) == {"path": str(path), "overrides": {"fever_c": 37.8}}


def test_only_admins_choose_the_protocol(warm, as_role, tmp_path):
    path = tmp_path / "protocol.toml"
    path.write_text("fever_c = 37.8\n", encoding="utf-8")
    with pytest.raises(Refused, match="may not change the clinic protocol"):
        use_protocol(as_role(Role.SUPERVISOR), str(path))


def test_a_bad_file_is_refused_and_nothing_is_written(warm, as_role, store, tmp_path):
    path = tmp_path / "protocol.toml"
    path.write_text("fever_c = 41\n", encoding="utf-8")
    before = store.audit.count()
    with pytest.raises(InputError, match=r"protocol.toml: fever_c = 41 is outside 37.5-39.5"):
        use_protocol(as_role(Role.ADMIN), str(path))
    assert store.audit.count() == before and protocol_in_use(store).path is None


def test_a_store_whose_file_went_bad_still_opens_on_the_defaults(warm, as_role, store, tmp_path):
    path = tmp_path / "protocol.toml"
    path.write_text("fever_c = 37.8\n", encoding="utf-8")
    use_protocol(as_role(Role.ADMIN), str(path))
    path.write_text("fever_c = [37.8\n", encoding="utf-8")
    in_use = protocol_in_use(store)
    assert in_use.protocol == DEFAULT_PROTOCOL and in_use.error.startswith(f"{path}: not valid TOML (")
    path.unlink()
    assert protocol_in_use(store).error == f"{path}: no such file: give the path of the clinic's protocol TOML file"
