"""The patient matcher: a name's words in any order, any case, with or without accents."""

from __future__ import annotations

import unicodedata
from datetime import date

from hypothesis import given
from hypothesis import strategies as st

from caseload.core.model import Patient
from caseload.tui.search import find_patients, match_rank

LETTERS = "abcdefghijklmnopqrstuvwxyzáàâäãåçéèêëíìîïñóòôöõúùûüýÿšžčćńśźżőű"
name_words = st.lists(st.text(LETTERS, min_size=2, max_size=9), min_size=1, max_size=4)


def patient(name: str, pid: str = "P0001") -> Patient:
    return Patient(pid, name, date(1990, 1, 1), None)


def unaccented(text: str) -> str:
    """What a caller's name becomes on a keyboard without accents (Unicode NFD, marks dropped)."""
    return "".join(ch for ch in unicodedata.normalize("NFD", text) if not unicodedata.combining(ch))


@given(name_words, st.randoms(use_true_random=False), st.booleans())
def test_the_name_in_any_word_order_and_case_without_accents_is_a_word_match(words, rnd, upper):
    name = " ".join(w.capitalize() for w in words)
    said = list(words)
    rnd.shuffle(said)
    typed = unaccented(" ".join(said))
    assert match_rank(patient(name), typed.upper() if upper else typed) == 2


@given(name_words, st.data())
def test_any_prefix_of_each_word_still_matches(words, data):
    name = " ".join(words)
    prefixes = [w[: data.draw(st.integers(1, len(w)))] for w in words]
    assert match_rank(patient(name), " ".join(prefixes)) is not None


@given(st.text(max_size=30))
def test_any_typing_gives_a_rank_or_none_and_never_fails(typed):
    assert match_rank(patient("Zoë O'Neill-Park"), typed) in (None, 0, 1, 2, 3)


@given(st.lists(name_words, min_size=1, max_size=20), st.text(LETTERS + " ", max_size=8), st.integers(1, 8))
def test_found_patients_all_match_best_first_and_at_most_the_limit(names, typed, limit):
    patients = [patient(" ".join(w), f"P{n:04d}") for n, w in enumerate(names)]
    found = find_patients(patients, typed, limit)
    ranks = [match_rank(p, typed) for p in found]
    assert len(found) <= limit and None not in ranks and ranks == sorted(ranks)


def test_ids_come_before_names():
    people = [patient("P0012 Fan", "P0099"), patient("Ada", "P0012"), patient("Bea", "P0120")]
    assert [p.id for p in find_patients(people, "p0012")] == ["P0012", "P0099"]  # exact id, then found in the name
    assert [match_rank(p, "P00") for p in people] == [1, 1, None]  # the id's start


def test_a_word_typed_that_is_not_in_the_name_finds_nothing():
    assert match_rank(patient("Katarzyna Nowak"), "nowak anna") is None
    assert match_rank(patient("Hye-jin Park"), "jin") == 2  # a hyphen joins two words of one name


def test_the_id_typed_exactly_comes_before_one_differing_only_in_case():
    # A store registered before ids were unique whatever their case may hold both; the list's order
    # (triage) puts P0103 first, yet the id typed letter for letter is offered first.
    people = [patient("Yara Upper", "P0103"), patient("P0103 Pia", "P0009"), patient("Xena Lower", "p0103")]
    assert [p.id for p in find_patients(people, "p0103")] == ["p0103", "P0103", "P0009"]
    assert [p.id for p in find_patients(people, "P0103 ")] == ["P0103", "p0103", "P0009"]
    assert [match_rank(p, "p0103") for p in people] == [0, 2, 0]  # exact id, a word of her name, exact id


def test_an_id_with_punctuation_typed_whole_is_an_exact_match():
    people = [patient("Ann Smith", "P0002"), patient("Bea Jones", "smith-2")]
    assert [match_rank(p, "SMITH-2") for p in people] == [None, 0]
    assert [match_rank(p, "Smith-") for p in people] == [2, 1]  # the start of her id; a word of Ann's name
    assert [p.id for p in find_patients(people, "smith-2")] == ["smith-2"]


ids = st.from_regex(r"[A-Za-z0-9][A-Za-z0-9_.-]{0,31}", fullmatch=True)  # core/parse.py ID_PATTERN


@given(st.lists(ids, min_size=1, max_size=12, unique_by=str.casefold), st.data())
def test_an_id_typed_in_any_case_is_found_first(taken, data):
    people = [patient(f"Caller {n}", pid) for n, pid in enumerate(taken)]
    wanted = data.draw(st.sampled_from(taken))
    typed = "".join(ch.upper() if data.draw(st.booleans()) else ch.lower() for ch in wanted)
    assert find_patients(people, typed)[0].id == wanted
