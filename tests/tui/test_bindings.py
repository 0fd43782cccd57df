"""Every key the interface binds has an id (so a keymap can move it) and words for the footer."""

from __future__ import annotations

import importlib
import pkgutil

import pytest
from textual.binding import Binding
from textual.dom import DOMNode

import caseload.tui
from caseload.tui.key_help import SENTENCES
from caseload.tui.app import CaseloadApp


def interface_classes() -> list[type[DOMNode]]:
    found = {CaseloadApp}
    for module in pkgutil.walk_packages(caseload.tui.__path__, "caseload.tui."):
        for value in vars(importlib.import_module(module.name)).values():
            if isinstance(value, type) and issubclass(value, DOMNode) and value.__module__.startswith("caseload.tui"):
                found.add(value)
    return sorted(found, key=lambda c: c.__qualname__)


@pytest.mark.parametrize("cls", interface_classes(), ids=lambda c: c.__qualname__)
def test_bindings_have_ids_and_descriptions(cls):
    for binding in cls.__dict__.get("BINDINGS", []):
        assert isinstance(binding, Binding), f"{cls.__qualname__}: bind with Binding(..., id=...)"
        assert binding.id and binding.description, f"{cls.__qualname__}: {binding.key}"
        # Hidden as the stand-in of a shown binding of the same key (the refusal where it cannot act),
        # or as a lesser key left out of the footer to fit 80 columns: the help tells of it.
        shown = [b for b in cls.__dict__["BINDINGS"] if b.show and b.key == binding.key]
        told = binding.id in SENTENCES
        assert binding.show or shown or told, f"{cls.__qualname__}: {binding.key} is never shown nor told"
