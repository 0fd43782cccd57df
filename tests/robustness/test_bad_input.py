"""Arbitrary input at every parser, the CSV import and the command line: accepted, or refused with one
line and nothing written. Never a traceback, never an exit code other than 0, 1 or 2."""

from __future__ import annotations

import csv
import io

import pytest
from click.testing import CliRunner
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from caseload.cli import main
from caseload.core import parse
from caseload.core.model import Actor, Kind, PatientStatus, Plan, Role
from caseload.application.context import Context
from caseload.application.identity import os_account
from caseload.application.csv_import import import_csv, read_csv_file
from caseload.application.patients import add_patient
from caseload.application.staff import add_staff, init_store
from caseload.store import Store
from tests.robustness.robust_support import TODAY, assert_clean_exit, snapshot

# Generated inputs tried per parser (hypothesis max_examples), reported with the suite's figures.
PARSER_EXAMPLES = 300
IMPORT_EXAMPLES = 200
CLI_EXAMPLES = 120

NASTY = ["'; DROP TABLE entry; --", "\x1b[2J", "\x1b]0;x\x07", "\x00", "\r\n", "\u202e", "[bold]x[/]", "%s{0}",
         "\udcff", "\u0663\u0666.\u0667", "\uff19\uff18.\uff16F", "1e309", "-0", "nan", "inf", "36,72", " ", "\t",
         "9" * 400, "-99999", "2026-02-30", "0000-00-00", "yesterday", "-1", "36.5", "98.6F", "positive", "heavy",
         "18,16 endo 8", "P0001", "06:30", "24:00", "illness", "midcycle", "\ufeff", "é" * 600]
text = st.one_of(st.text(max_size=80), st.sampled_from(NASTY),
                 st.lists(st.sampled_from(NASTY), max_size=4).map("".join))
fast = settings(max_examples=PARSER_EXAMPLES, deadline=None)


def refused_or_parsed(fn, *args):
    try:
        return fn(*args)
    except parse.InputError as err:
        message = str(err)
        assert message and "\n" not in message and "\x1b" not in message, message
        return None


@fast
@given(kind=st.one_of(st.sampled_from([k.value for k in Kind]), text), raw=text, on=text,
       at=st.one_of(st.none(), text), flags=st.one_of(text, st.lists(text, max_size=3)), note=text)
def test_parse_entry(kind, raw, on, at, flags, note):
    parsed = refused_or_parsed(parse.parse_entry, kind, raw, TODAY, on, at, flags, note)
    if parsed is not None:
        assert parsed.day <= TODAY and len(parsed.note) <= parse.TEXT_MAX


@fast
@given(kind=st.sampled_from(list(Kind)), raw=text)
def test_parse_value_of_each_kind(kind, raw):
    value = refused_or_parsed(parse.parse_value, kind, raw)
    if value is not None and kind is Kind.TEMP:
        assert parse.TEMP_MIN_C <= value.number <= parse.TEMP_MAX_C


@fast
@given(raw=text)
def test_parse_day_time_and_dates(raw):
    day = refused_or_parsed(parse.parse_day, raw, TODAY)
    assert day is None or parse.EARLIEST_DAY <= day <= TODAY
    refused_or_parsed(parse.parse_time, raw)
    born = refused_or_parsed(parse.parse_birth_date, raw, TODAY)
    assert born is None or born < TODAY


@fast
@given(raw=text)
def test_parse_ids_names_and_choices(raw):
    refused_or_parsed(parse.parse_id, raw, "patient")
    name = refused_or_parsed(parse.parse_name, raw)
    assert name is None or 1 <= len(name) <= 100
    for choices in (Role, Plan, PatientStatus):
        refused_or_parsed(parse.parse_choice, raw, choices, "choice")


@pytest.fixture(scope="module")
def module_store(tmp_path_factory):
    path = tmp_path_factory.mktemp("bad-input") / "store.db"
    store = Store(path)
    admin = init_store(store, "ada", "Ada Admin", os_account())
    ctx = Context(store, admin, TODAY)
    add_staff(ctx, "nell", "Nell Nurse", "nurse")
    add_patient(ctx, "P0001", "Pia Test", "1991-04-02", nurse="nell")
    add_patient(ctx, "P0002", "Pat Test", "1988-01-09")
    yield store
    store.close()


def nurse_context(store: Store) -> Context:
    return Context(store, Actor(store.staff.get("nell"), "tester"), TODAY)


def import_checked(store: Store, data: bytes) -> None:
    """Import: all rows in, with their audit rows, or a one-line refusal and the store unchanged."""
    before = snapshot(store.path)
    try:
        done = import_csv(nurse_context(store), data)
    except parse.InputError as err:
        message = str(err)
        assert "\n" not in message and (message.startswith("line ") or "file" in message), message
        assert snapshot(store.path) == before
        return
    after = snapshot(store.path)
    assert len(after["entry"]) == len(before["entry"]) + done.rows
    assert len(after["audit"]) == len(before["audit"]) + done.rows


HEADERS = ["patient", "day", "kind", "value", "time", "flags", "note", "Patient", "extra", "", "value "]
cell = st.one_of(text, st.sampled_from(["P0001", "P0002", "P9999", "-1", "-2", "today", "temp", "bleed", "lh",
                                        "symptom", "36.5", "heavy", "positive", "06:30", "late", "x" * 3000]))


@st.composite
def csv_files(draw) -> bytes:
    header = draw(st.one_of(st.just(["patient", "day", "kind", "value"]),
                            st.just(["patient", "day", "kind", "value", "time", "flags", "note"]),
                            st.lists(st.sampled_from(HEADERS), max_size=8)))
    rows = draw(st.lists(st.lists(cell, min_size=max(0, len(header) - 1), max_size=len(header) + 1), max_size=6))
    if rows and draw(st.booleans()):
        rows.append(rows[0])  # a duplicated line
    out = io.StringIO()
    writer = csv.writer(out, quoting=draw(st.sampled_from([csv.QUOTE_MINIMAL, csv.QUOTE_ALL, csv.QUOTE_NONNUMERIC])))
    writer.writerow(header)
    writer.writerows(rows)
    encoding = draw(st.sampled_from(["utf-8", "utf-8-sig", "latin-1", "utf-16", "cp1252"]))
    data = out.getvalue().encode(encoding, errors="replace")
    if draw(st.booleans()):  # damage: a NUL byte, a stray quote, a cut, or raw noise spliced in
        at = draw(st.integers(0, len(data)))
        data = data[:at] + draw(st.sampled_from([b"\x00", b'"', b"", b"\xff\xfe", b"\r", b'""x"'])) + data[at:]
    return data


@settings(max_examples=IMPORT_EXAMPLES, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(data=csv_files())
def test_import_of_generated_csv_files(module_store, data):
    import_checked(module_store, data)


@settings(max_examples=IMPORT_EXAMPLES // 2, deadline=None)
@given(data=st.binary(max_size=400))
def test_import_of_arbitrary_bytes(module_store, data):
    import_checked(module_store, data)


def test_import_of_a_huge_row_and_a_huge_file(module_store, tmp_path):
    import_checked(module_store, b"patient,day,kind,value,note\nP0001,-1,note,x," + b"y" * 200_000 + b"\n")
    # A file past the limit is refused as it is read, in one line, before any row is parsed.
    huge = tmp_path / "huge.csv"
    huge.write_bytes(b"patient,day,kind,value\n" + b"P0001,-1,note,x\n" * 1_500_000)
    with pytest.raises(parse.InputError) as refused:
        read_csv_file(str(huge))
    assert "\n" not in str(refused.value) and "20 MB" in str(refused.value)


@pytest.fixture(scope="module")
def module_cli(tmp_path_factory):
    path = tmp_path_factory.mktemp("bad-cli") / "cli.db"
    runner = CliRunner()

    def run(*args):
        return runner.invoke(main, ["--db", str(path), *args], color=True, obj=TODAY)

    for args in (("init", "--admin", "ada", "--name", "Ada Admin"),
                 ("staff", "add", "nell", "--name", "Nell Nurse", "--role", "nurse"),
                 ("--today", "2026-12-01", "patient", "add", "P0001", "--name", "Pia", "--born", "1991-04-02"),
                 ("--today", "2026-12-01", "log", "P0001", "temp", "36.4", "--on", "-2")):
        assert run(*args).exit_code == 0
    run.path = path
    return run


def cli_checked(run, *args) -> None:
    """One command: done, usage error, or refused with one line and the store unchanged."""
    before = snapshot(run.path)
    result = run("--today", "2026-12-01", *args)
    assert_clean_exit(result)
    if result.exit_code != 0:
        assert snapshot(run.path) == before, args


cli_settings = settings(max_examples=CLI_EXAMPLES, deadline=None)


@cli_settings
@given(patient=st.one_of(st.just("P0001"), text), kind=st.one_of(st.sampled_from([k.value for k in Kind]), text),
       value=text, on=text, at=text, flag=text, note=text)
def test_cli_log_with_anything(module_cli, patient, kind, value, on, at, flag, note):
    cli_checked(module_cli, "log", patient, kind, value, "--on", on, "--at", at, "--flag", flag, "--note", note)


@cli_settings
@given(entry=st.one_of(st.just("1"), text, st.integers(-2**70, 2**70).map(str)), value=text, reason=text)
def test_cli_amend_and_void_with_anything(module_cli, entry, value, reason):
    cli_checked(module_cli, "amend", entry, value, "--reason", reason)
    cli_checked(module_cli, "void", entry, "--reason", reason)


@cli_settings
@given(pid=text, name=text, born=text, nurse=text, plan=text)
def test_cli_patient_and_staff_commands_with_anything(module_cli, pid, name, born, nurse, plan):
    cli_checked(module_cli, "patient", "add", pid, "--name", name, "--born", born, "--nurse", nurse)
    cli_checked(module_cli, "patient", "set", pid, "--plan", plan)
    cli_checked(module_cli, "staff", "add", pid, "--name", name, "--role", plan)
    cli_checked(module_cli, "staff", "map", pid, name)


@cli_settings
@given(today=text, who=text, patient=text)
def test_cli_reading_commands_and_global_options_with_anything(module_cli, today, who, patient):
    cli_checked(module_cli, "show", patient, "--json")
    cli_checked(module_cli, "entries", patient)
    result = module_cli("--today", today, "--as", who, "list")
    assert_clean_exit(result)


@cli_settings
@given(alert=st.one_of(st.just("1"), text, st.integers(-2**70, 2**70).map(str)), note=text, until=text, nurse=text)
def test_cli_alert_commands_with_anything(module_cli, alert, note, until, nurse):
    cli_checked(module_cli, "ack", alert, "--note", note)
    cli_checked(module_cli, "snooze", alert, "--until", until, "--note", note)
    cli_checked(module_cli, "resolve", alert, "--note", note)
    cli_checked(module_cli, "alerts", "--nurse", nurse, "--state", "all")


@settings(max_examples=CLI_EXAMPLES // 2, deadline=None)
@given(week=st.one_of(text, st.sampled_from(["2026-W48", "2026-W53", "2026-W00", "2026W48", "1899-W01"])),
       fmt=st.sampled_from(["csv", "xlsx", "html", "json", "pdf"]))
def test_cli_summary_with_anything(module_cli, tmp_path_factory, week, fmt):
    out = tmp_path_factory.mktemp("summary") / "out"
    cli_checked(module_cli, "summary", "--week", week, "--format", fmt, "--out", str(out))


TOML_FIELDS = ["stats_cycles", "prior_cycle_mean", "fever_c", "unknown_setting", "window_soon_p", ""]
toml_value = st.one_of(st.integers(-10**20, 10**20), st.floats(allow_nan=True), st.booleans(), text.map(repr),
                       st.sampled_from(["[1, 2]", "{a = 1}", "1979-05-27", '"""x"""', "'''", "nan", "inf"]))


@st.composite
def toml_files(draw) -> bytes:
    if draw(st.booleans()):
        return draw(st.binary(max_size=300))
    lines = [draw(st.sampled_from(["", "[protocol]", "[thresholds]", "[[x]]", "# comment", "[protocol"]))]
    for _ in range(draw(st.integers(0, 6))):
        key = draw(st.one_of(st.sampled_from(TOML_FIELDS), text))
        value = draw(toml_value)
        lines.append(f"{key} = {str(value).lower() if isinstance(value, bool) else value}")
    return "\n".join(lines).encode("utf-8", errors="surrogateescape")


@settings(max_examples=CLI_EXAMPLES, deadline=None)
@given(data=toml_files())
def test_protocol_check_of_generated_toml_files(module_cli, tmp_path_factory, data):
    path = tmp_path_factory.mktemp("toml") / "protocol.toml"
    path.write_bytes(data)
    cli_checked(module_cli, "protocol", "check", str(path))


def test_surrogates_from_an_undecodable_terminal_are_refused_in_one_line(module_cli):
    """Bytes that are not UTF-8 reach Python as lone surrogates: refused, never a traceback."""
    cli_checked(module_cli, "log", "P0001", "note", "caf\udce9")
    cli_checked(module_cli, "log", "P0001", "symptom", "ok", "--note", "\udcff")
    cli_checked(module_cli, "patient", "add", "P0009", "--name", "Ren\udce9", "--born", "1990-01-01")


@pytest.mark.parametrize("today", ["2026-13-01", "0001-01-01", "9999-12-31", "yesterday", ""])
def test_odd_review_days_are_one_line(cli, today):
    assert cli("init", "--admin", "ada", "--name", "Ada Admin").exit_code == 0
    assert cli("patient", "add", "P0001", "--name", "Pia", "--born", "1991-04-02").exit_code == 0
    for command in (("list",), ("show", "P0001"), ("log", "P0001", "lh", "positive", "--on", "-3")):
        result = cli.runner.invoke(main, ["--db", str(cli.db), "--today", today, *command], obj=TODAY)
        assert_clean_exit(result)
