"""Kept records as JSON and back: a frozen record becomes lists in field order, and comes back as
the same record, by its type's annotations."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import fields, is_dataclass
from datetime import date
from enum import Enum
from functools import lru_cache
from types import NoneType, UnionType
from typing import Any, get_args, get_origin, get_type_hints


def plain(value: Any) -> Any:
    """A frozen record as JSON-ready lists (fields in order), days as ISO text, enums as their value.
    Numbers keep their type, so `restored(type, plain(x)) == x` and prints alike."""
    if is_dataclass(value):
        return [plain(getattr(value, f.name)) for f in fields(value)]
    if isinstance(value, tuple):
        return [plain(v) for v in value]
    if isinstance(value, Enum):
        return value.value
    if isinstance(value, date):
        return value.isoformat()
    return value


def restored(kind: type, data: Any) -> Any:
    """The record of type `kind` that `plain` turned into `data`."""
    return _restorer(kind)(data)


@lru_cache(maxsize=None)
def _restorer(kind: Any) -> Callable[[Any], Any]:
    """A function rebuilding values of `kind` (a dataclass, tuple, optional, day, enum or JSON
    scalar), made once per type from its annotations. JSON scalars, and optional ones, come back as
    they are (`_AS_IS`) and are passed over: kept cycles are read on every refresh."""
    args = get_args(kind)
    if isinstance(kind, UnionType):
        (inner,) = [a for a in args if a is not NoneType]
        one = _restorer(inner)
        return one if one is _AS_IS else lambda v: None if v is None else one(v)
    if get_origin(kind) is tuple:
        if len(args) == 2 and args[1] is Ellipsis:
            each = _restorer(args[0])
            return tuple if each is _AS_IS else lambda v: tuple(map(each, v))
        parts = [_restorer(a) for a in args]
        return lambda v: tuple(part(x) for part, x in zip(parts, v))
    if is_dataclass(kind):
        hints, names = get_type_hints(kind), [f.name for f in fields(kind)]
        changed = [(i, part) for i, name in enumerate(names) if (part := _restorer(hints[name])) is not _AS_IS]

        def filled(*values: Any) -> Any:
            # The instance `kind(*values)` makes, without a frozen __init__'s setattr per field.
            made = object.__new__(kind)
            made.__dict__.update(zip(names, values))
            return made

        make = filled if _plain_init(kind) else kind

        def build(v: list) -> Any:
            for i, part in changed:  # `v` is a list fresh from json.loads: rebuilt in place
                v[i] = part(v[i])
            return make(*v)

        return build
    if kind is date:
        return date.fromisoformat
    if isinstance(kind, type) and issubclass(kind, Enum):
        return kind
    if kind in (int, float, str, bool):
        return _AS_IS
    raise TypeError(f"no JSON form for {kind!r}")


def _AS_IS(value: Any) -> Any:
    return value


def _plain_init(kind: type) -> bool:
    """Whether `kind`'s __init__ only stores its fields: a dataclass with every field in __init__,
    no __post_init__ and no slots."""
    return (not hasattr(kind, "__post_init__") and not hasattr(kind, "__slots__")
            and all(f.init for f in fields(kind)))  # fmt: skip
