"""The clinic protocol file: defaults, overrides, and one-line refusals of anything else."""

from __future__ import annotations

import pytest
from hypothesis import given
from hypothesis import strategies as st

from caseload.core.parse import InputError
from caseload.core.protocol_file import overrides_of, parse_protocol, protocol_from_values, protocol_text, setting_rows
from caseload.core.settings import DEFAULT_PROTOCOL, SETTINGS


def test_an_empty_file_keeps_every_default():
    assert parse_protocol("# nothing overridden\n", "p.toml") == DEFAULT_PROTOCOL


def test_defaults_carry_their_published_sources():
    rows = {r.name: r for r in setting_rows(DEFAULT_PROTOCOL)}
    assert rows["short_luteal_max_days"].value == 10 and rows["short_luteal_max_days"].source == "ASRM 2021"
    assert rows["hcg_min_rise_48h"].value == 0.53 and rows["hcg_min_rise_48h"].source.startswith("Barnhart 2004")
    assert rows["mature_follicle_mm"].value == 14.0 and rows["mature_follicle_mm"].source == "Evans 2020"
    assert rows["figo_prolonged_bleed_above"].value == 8  # FIGO 2018: normal up to 8 days
    assert rows["fever_c"].value == 38.0 and rows["fever_c"].source == "common practice"
    assert not any(r.overridden for r in rows.values())
    assert [r.name for r in setting_rows(DEFAULT_PROTOCOL)] == [f.name for f in SETTINGS]


def test_overrides_are_typed_and_marked():
    protocol = parse_protocol("fever_c = 37.8\nmax_mature_follicles = 3\nhcg_min_rise_48h = 0.35\n", "p.toml")
    assert protocol.fever_c == 37.8 and protocol.max_mature_follicles == 3 and protocol.hcg_min_rise_48h == 0.35
    assert isinstance(protocol.max_mature_follicles, int)
    assert {r.name for r in setting_rows(protocol) if r.overridden} == {"fever_c", "max_mature_follicles", "hcg_min_rise_48h"}


def test_a_whole_number_is_accepted_for_a_decimal_setting():
    protocol = parse_protocol("fever_c = 38\n", "p.toml")
    assert protocol.fever_c == 38.0 and isinstance(protocol.fever_c, float)


@pytest.mark.parametrize(
    "text, message",
    [
        ("fever_c = 41\n", "protocol.toml: fever_c = 41 is outside 37.5-39.5"),
        ("fever_c = \"hot\"\n", 'protocol.toml: fever_c = "hot" is not a number: use a number in 37.5-39.5'),
        ("fever_c = true\n", "protocol.toml: fever_c = true is not a number: use a number in 37.5-39.5"),
        ("logging_gap_days = 2.5\n", "protocol.toml: logging_gap_days = 2.5 is not a whole number: use a whole number in 1-14"),
        ("window_approaching_p = 0.6\nwindow_open_p = 0.5\n",
         "protocol.toml: window_approaching_p = 0.6 is above window_open_p = 0.5: window_approaching_p must not be above window_open_p"),
        ("[alerts]\nfever_c = 38.0\n", "protocol.toml: [alerts] is a table: write flat 'name = value' lines"),
    ],
)  # fmt: skip
def test_bad_values_are_refused_in_one_line(text, message):
    with pytest.raises(InputError) as err:
        parse_protocol(text, "protocol.toml")
    assert str(err.value).startswith(message) and "\n" not in str(err.value)


def test_an_unknown_key_is_refused_with_the_known_ones():
    with pytest.raises(InputError) as err:
        parse_protocol("fever = 38.0\n", "protocol.toml")
    text = str(err.value)
    assert text.startswith("protocol.toml: unknown setting 'fever': known settings are ")
    assert "fever_c" in text and "amenorrhoea_days" in text and "\n" not in text


def test_broken_toml_syntax_is_refused_with_its_position():
    with pytest.raises(InputError) as err:
        parse_protocol("fever_c 38.0\n", "protocol.toml")
    text = str(err.value)
    assert text.startswith("protocol.toml: not valid TOML (") and "line 1" in text and "\n" not in text


def _setting_value(default, meta: dict):
    lo, hi = meta["lo"], meta["hi"]
    if isinstance(default, str):  # words read to a caller: one line, quotes and accents included
        return st.text(st.characters(categories=("L", "N", "P", "Zs")), min_size=1, max_size=60).map(
            lambda t: " ".join(t.split()) or "x")
    if isinstance(default, int):
        return st.integers(int(lo), int(hi))
    return st.floats(lo, hi, allow_nan=False)


OVERRIDES = st.dictionaries(
    st.sampled_from([f.name for f in SETTINGS]), st.just(None), max_size=6
).flatmap(lambda chosen: st.fixed_dictionaries(
    {f.name: _setting_value(f.default, f.metadata) for f in SETTINGS if f.name in chosen}))


@given(OVERRIDES)
def test_an_exported_protocol_reads_back_as_the_same_settings(overrides):
    try:
        protocol = protocol_from_values(overrides, "generated")
    except InputError as err:
        assert "must not be above" in str(err)  # only a crossed pair of ordered settings is refused
        return
    text = protocol_text(protocol, "exported\nwith a two-line header")
    assert parse_protocol(text, "exported.toml") == protocol
    assert overrides_of(parse_protocol(text, "exported.toml")) == overrides_of(protocol)


@pytest.mark.parametrize("text, why", [
    ("caller_message = 3\n", "caller_message = 3 is not text: use one line of text of up to 200 characters in quotes"),
    ('caller_message = ""\n', 'caller_message = "" is not one line of text of up to 200 characters'),
    (f'caller_message = "{"x" * 201}"\n', "is not one line of text of up to 200 characters"),
    ('caller_message = "call \\u001b[31m now"\n', "(no control characters)"),
])
def test_the_caller_message_is_one_printable_line(text, why):
    with pytest.raises(InputError) as err:
        parse_protocol(text, "protocol.toml")
    assert why in str(err.value) and "\n" not in str(err.value)


def test_the_caller_message_keeps_its_words_with_runs_of_spaces_made_one():
    protocol = parse_protocol('caller_message = "A nurse   will call you."\n', "protocol.toml")
    assert protocol.caller_message == "A nurse will call you."


def test_a_caller_message_beyond_the_basic_plane_is_exported_as_valid_toml():
    protocol = protocol_from_values({"caller_message": 'Na\u00efve "quotes" \\ and 𐀀 stay'}, "generated")
    assert parse_protocol(protocol_text(protocol, "exported"), "exported.toml") == protocol
