"""How a cache entry's record types are made again from their fields' values (incremental/codec.py
reads the fields and checks each against its type hint first)."""
from __future__ import annotations

import dataclasses
import functools
import inspect
import typing
from collections.abc import Callable
from typing import Any

Maker = Callable[[list], Any]


def fields_and_maker(cls: type) -> tuple[tuple[str, ...], dict[str, Any], Maker]:
    """The fields of `cls` in order, their type hints, and what makes an instance from their values: a
    NamedTuple, a dataclass, or a plain class with __slots__ whose __init__ takes its fields. TypeError for
    anything else."""
    if issubclass(cls, tuple) and hasattr(cls, "_fields"):
        return tuple(cls._fields), typing.get_type_hints(cls), functools.partial(tuple.__new__, cls)
    if dataclasses.is_dataclass(cls):
        fields = tuple(field.name for field in dataclasses.fields(cls))
        return fields, typing.get_type_hints(cls), dataclass_maker(cls, fields)
    if hasattr(cls, "__slots__"):
        fields = tuple(inspect.signature(cls.__init__).parameters)[1:]
        return fields, typing.get_type_hints(cls.__init__), lambda values: cls(*values)
    raise TypeError(f"cache entries cannot hold a {cls.__qualname__}")


def dataclass_maker(cls: type, fields: tuple[str, ...]) -> Maker:
    """A dataclass from its fields' values in order. Set field by field as its own __init__ does
    (`object.__setattr__`, which a frozen dataclass's __init__ uses too), without building keyword
    arguments: a model entry holds thousands of objects. A class with a __post_init__ or an __init__ of
    its own goes through __init__."""
    generated = getattr(getattr(cls.__init__, "__code__", None), "co_filename", "") == "<string>"  # dataclasses' own
    if hasattr(cls, "__post_init__") or not generated:
        return lambda values: cls(**dict(zip(fields, values)))
    new, put = object.__new__, object.__setattr__

    def make(values: list) -> Any:
        made = new(cls)
        for name, value in zip(fields, values):
            put(made, name, value)
        return made
    return make
