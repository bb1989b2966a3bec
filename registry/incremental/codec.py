"""Cache entries as plain data that cannot run code: tagged JSON, checked against the expected type.

A cache folder is input like any other: anyone who can write into it must not be able to run code in
the build or crash it. So an entry is JSON (no code, no object references), and reading one builds
only the record types its expected type allows, each field checked against the field's type hint.

Encoding (every value that is not a JSON scalar is a list whose first item is a tag):

    str, int, float (NaN and infinities as JSON's NaN/Infinity), bool, None   as themselves
    ["t", item, ...] tuple       ["l", item, ...] list        ["d", k, v, k, v, ...] dict
    ["r", n] the n-th dict (or shared record) met so far again: a dict shared by many records, or a
         file's `FieldIndex`, is written once
    ["R", "Src", key, [field, ...], ...] a dict whose values are all of one record type with scalar
         fields (a file's index of positions): each value's fields without a tag
    ["m", k, v, ...] FrozenMap   ["D", "2025-02-11"] date     ["p", "text"] Path   ["c", re, im] complex
    ["a", "<f8", [shape], "base64 of the little-endian bytes"] numpy array (float64, int64,
         complex128 or bool)      ["n", "<f8", value] numpy scalar
    ["<record class name>", field, field, ...] one of the allowed record types, fields in order

The allowed record types are those reachable from the expected type through the type hints of their
fields (NamedTuples, dataclasses and plain classes whose __init__ takes their fields), plus any the
caller names (`also`); `FIELD_HINTS` narrows a field whose hint is a bare FrozenMap. Nothing else can
come out of an entry.
"""
from __future__ import annotations

import base64
import functools
import json
import math
import sys
import types
import typing
from itertools import repeat
from collections.abc import Callable, Mapping
from datetime import date
from pathlib import Path, PurePath
from typing import Any, NamedTuple

import numpy as np

from registry.core.errors import Src
from registry.core.base import FieldIndex, FrozenMap
from registry.incremental.makers import fields_and_maker
from registry.core.model import Aircraft, Installation

FIELD_HINTS: dict[type, dict[str, Any]] = {Aircraft: {"installations": Mapping[str, Installation]}}
"""Field hints narrower than the class's own (a FrozenMap's values are not in its hint)."""
INTERNED: dict[type, str] = {Src: "path"}
"""Text fields read back as one shared string (sys.intern): an aircraft's model holds a position, and
so its file's path, for every value in the file; held as one string each, as the model built them."""

SHARED: set[type] = {FieldIndex, Src}
"""Record types written once per entry, however many records hold the same one: an aircraft's objects
all hold its file's index of positions, and each object's position is also its locator's fallback (a
thousand-aircraft fleet's models read back about a tenth quicker, and as many fewer positions held)."""

SCALARS = {str, int, float, bool, type(None)}
TABLE_ROWS = 8
"""A dict of at least this many values of one flat record type is written as a table (["R", ...])."""
DTYPES = {"<f8": np.float64, "<i8": np.int64, "<c16": np.complex128, "|b1": np.bool_}
MAX_DIMENSIONS = 4


class BadEntry(ValueError):
    """An entry that is not what the expected type allows: treated as a miss."""


class Record(NamedTuple):
    """An allowed record type: its tag, fields, how to make one, and the check of each field: `classes`
    holds, per field, the classes an isinstance check needs (object for a field that needs more), and
    `deep` the (position, check) of the fields that need more."""

    cls: type
    tag: str
    fields: tuple[str, ...]
    classes: tuple[Any, ...]
    deep: tuple[tuple[int, Callable[[Any], bool]], ...]
    make: Callable[[list], Any]
    interned: int | None = None
    flat: bool = False
    """Every field is a JSON scalar (str, int, float, bool, None): nothing inside to decode."""
    shared: bool = False
    """One of `SHARED`: written once, then referred to (["r", n])."""


class Schema(NamedTuple):
    """What one kind of entry may hold: its record types (by class and by tag) and its top check."""

    by_class: dict[type, Record]
    by_tag: dict[str, Record]
    check: Callable[[Any], bool]


@functools.lru_cache(maxsize=None)
def schema(kind: Any, also: tuple[type, ...] = ()) -> Schema:
    """The schema of entries of type `kind` (a class or a typing hint such as tuple[A | None, list[B]])."""
    records: dict[type, Record] = {}
    check = _checker(kind, records)
    for cls in also:
        _record(cls, records)
    return Schema(records, {record.tag: record for record in records.values()}, check)


def _any(value: Any) -> bool:
    return True


def _checker(hint: Any, records: dict[type, Record]) -> Callable[[Any], bool]:
    """A function telling whether a decoded value fits `hint`; records met are added to `records`."""
    origin, args = typing.get_origin(hint), typing.get_args(hint)
    simple = _classes(hint, records)
    if simple is not None:
        return lambda value: isinstance(value, simple)
    if hint is Any or hint is object:
        return _any
    if origin is typing.Union or origin is types.UnionType:
        options = [_checker(arg, records) for arg in args]
        return lambda value: any(option(value) for option in options)
    if origin is tuple and len(args) == 2 and args[1] is Ellipsis:
        return _items(tuple, args[0], records)
    if origin is tuple:
        simples = [_classes(arg, records) for arg in args]
        if None not in simples:
            return lambda value: (isinstance(value, tuple) and len(value) == len(simples)
                                  and all(map(isinstance, value, simples)))
        items = [_checker(arg, records) for arg in args]
        return lambda value: (isinstance(value, tuple) and len(value) == len(items)
                              and all(check(x) for check, x in zip(items, value)))
    if origin in (list, set, frozenset):
        return _items(origin, args[0] if args else Any, records)
    if origin in (dict, Mapping):
        keys, values = (_checker(args[0], records), _checker(args[1], records)) if args else (_any, _any)
        wanted = dict if origin is dict else Mapping
        return lambda value: isinstance(value, wanted) and all(map(keys, value)) and all(map(values, value.values()))
    raise TypeError(f"cache entries cannot hold {hint!r}")


def _items(container: type, hint: Any, records: dict[type, Record]) -> Callable[[Any], bool]:
    """A check of a container whose items all fit `hint` (a plain class check runs in C: map/isinstance)."""
    simple = _classes(hint, records)
    if simple is not None:
        return lambda value: isinstance(value, container) and all(map(isinstance, value, repeat(simple)))
    item = _checker(hint, records)
    return lambda value: isinstance(value, container) and all(map(item, value))


def _classes(hint: Any, records: dict[type, Record]) -> tuple[type, ...] | None:
    """The classes `hint` comes to when an isinstance check says all (a class, None, a union of those)."""
    if hint is None or hint is type(None):
        return (type(None),)
    if typing.get_origin(hint) in (typing.Union, types.UnionType):
        parts = [_classes(arg, records) for arg in typing.get_args(hint)]
        return None if None in parts else tuple(cls for part in parts for cls in part)
    if hint is Any or hint is object or not isinstance(hint, type) or typing.get_origin(hint) is not None:
        return None
    if hint is float:
        return (float, int)
    if hint not in (str, int, bool, bytes, complex, date, Path, np.ndarray, FrozenMap, tuple, list, dict):
        _record(hint, records)
    return (hint,)


def _record(cls: type, records: dict[type, Record]) -> None:
    """Add `cls` (a NamedTuple, a dataclass or a plain class whose __init__ takes its fields)."""
    if cls in records:
        return
    fields, hints, make = fields_and_maker(cls)
    records[cls] = Record(cls, cls.__qualname__, fields, (), (), make)  # first: hints may lead back here
    hints.update(FIELD_HINTS.get(cls, {}))
    classes = tuple(_classes(hints.get(name, Any), records) for name in fields)
    deep = tuple((n, _checker(hints.get(name, Any), records)) for n, name in enumerate(fields) if classes[n] is None)
    records[cls] = records[cls]._replace(classes=tuple(object if found is None else found for found in classes),
                                         deep=deep, interned=fields.index(INTERNED[cls]) if cls in INTERNED else None,
                                         flat=all(found is not None and set(found) <= SCALARS for found in classes),
                                         shared=cls in SHARED)


# --- writing ----------------------------------------------------------------------------------------------


def dumps(value: Any, kind: Any, also: tuple[type, ...] = ()) -> bytes:
    """`value` (of type `kind`) as the bytes of its JSON encoding; TypeError for what `kind` does not allow."""
    return json.dumps(_Encoder(schema(kind, also)).encode(value), separators=(",", ":"),
                      check_circular=False).encode("ascii")


class _Encoder:
    def __init__(self, allowed: Schema):
        self.records = allowed.by_class
        self.shared: dict[int, int] = {}
        self.alive: list[Any] = []
        """What `shared` names by id, held until the entry is written: an id is only unique while its object lives."""

    def encode(self, value: Any) -> Any:
        kind = type(value)
        if kind in SCALARS:
            return value
        if kind is tuple:
            return ["t", *self.items(value)]
        if kind is list:
            return ["l", *self.items(value)]
        if kind is dict:
            return self.mapping(value)
        record = self.records.get(kind)
        if record is not None:
            if record.shared:
                if id(value) in self.shared:
                    return ["r", self.shared[id(value)]]
                self.shared[id(value)] = len(self.shared)
                self.alive.append(value)
            if issubclass(kind, tuple):
                return [record.tag, *self.items(value)]
            return [record.tag, *self.items([getattr(value, name) for name in record.fields])]
        return self.other(value)

    def items(self, values: Any) -> list:
        """Each of `values` encoded; JSON scalars (the most of them) as they are, without a call."""
        return [item if type(item) in SCALARS else self.encode(item) for item in values]

    def mapping(self, value: dict) -> list:
        if id(value) in self.shared:
            return ["r", self.shared[id(value)]]
        self.shared[id(value)] = len(self.shared)
        self.alive.append(value)
        kinds = {type(item) for item in value.values()}
        record = self.records.get(next(iter(kinds))) if len(kinds) == 1 else None
        if record is not None and record.flat and len(value) >= TABLE_ROWS:
            out = ["R", record.tag]  # one record type with scalar fields: its fields only, no tag each
            for key, item in value.items():
                out += [self.encode(key), list(item) if isinstance(item, tuple) else
                        [getattr(item, name) for name in record.fields]]
            return out
        out = ["d"]
        for key, item in value.items():
            out += [self.encode(key), self.encode(item)]
        return out

    def other(self, value: Any) -> list:
        if isinstance(value, FrozenMap):
            out = ["m"]
            for key, item in value.items():
                out += [self.encode(key), self.encode(item)]
            return out
        if type(value) is date:
            return ["D", value.isoformat()]
        if type(value) is complex:
            return ["c", value.real, value.imag]
        if isinstance(value, PurePath):
            return ["p", str(value)]
        if isinstance(value, np.ndarray) and value.dtype.newbyteorder("<").str in DTYPES:
            dtype = value.dtype.newbyteorder("<").str
            data = np.ascontiguousarray(value, dtype=dtype).tobytes()
            return ["a", dtype, list(value.shape), base64.b64encode(data).decode("ascii")]
        if isinstance(value, np.generic) and value.dtype.newbyteorder("<").str in DTYPES:
            return ["n", value.dtype.newbyteorder("<").str, value.item()]
        raise TypeError(f"cache entries cannot hold a {type(value).__qualname__}")


# --- reading ----------------------------------------------------------------------------------------------


def loads(data: bytes, kind: Any, also: tuple[type, ...] = ()) -> Any:
    """The value encoded in `data`, checked to be a `kind`; BadEntry if it is anything else."""
    allowed = schema(kind, also)
    try:
        value = _Decoder(allowed).decode(json.loads(data, object_pairs_hook=_no_objects))
    except BadEntry:
        raise
    except (ValueError, TypeError, KeyError, IndexError, AttributeError, OverflowError, RecursionError) as error:
        raise BadEntry(f"{type(error).__name__}: {error}") from None
    if not allowed.check(value):
        raise BadEntry(f"found a {type(value).__qualname__}, expected {kind!r}")
    return value


def _no_objects(pairs: list) -> None:
    raise BadEntry("a JSON object, which no entry holds")


class _Decoder:
    def __init__(self, allowed: Schema):
        self.records = allowed.by_tag
        self.shared: list[Any] = []
        self.checked: set[tuple[int, int]] = set()
        """(check, dict) pairs already checked: a dict shared by many records is checked once."""

    def decode(self, item: Any) -> Any:
        return self.tagged(item) if type(item) is list else item

    def tagged(self, item: list) -> Any:
        tag = item[0]
        record = self.records.get(tag) if type(tag) is str else None
        if record is not None:  # the commonest case first
            return self.record(record, item)
        if tag == "t":
            return tuple([self.tagged(x) if type(x) is list else x for x in item[1:]])
        if tag == "l":
            return [self.tagged(x) if type(x) is list else x for x in item[1:]]
        if tag == "d" or tag == "m":
            return self.mapping(item, tag)
        if tag == "R":
            return self.table(item)
        if tag == "r":
            found = self.shared[item[1]] if type(item[1]) is int and 0 <= item[1] < len(self.shared) else None
            if found is None:
                raise BadEntry("a reference to no earlier dict")
            return found
        return self.other(tag, item)

    def mapping(self, item: list, tag: str) -> Any:
        if len(item) % 2 != 1:
            raise BadEntry("a mapping with a key and no value")
        if tag == "d":
            slot = len(self.shared)
            self.shared.append(None)
        tagged = self.tagged
        pairs = {(tagged(key) if type(key) is list else key): (tagged(value) if type(value) is list else value)
                 for key, value in zip(item[1::2], item[2::2])}
        if tag == "m":
            return FrozenMap(pairs)
        self.shared[slot] = pairs
        return pairs

    def table(self, item: list) -> dict:
        """A dict written as ["R", record tag, key, [fields], ...]: its values all one flat record type."""
        record = self.records.get(item[1]) if type(item[1]) is str else None
        if record is None or not record.flat or len(item) % 2:
            raise BadEntry("a table of no flat record type")
        slot = len(self.shared)
        self.shared.append(None)
        size, classes, make, interned, tagged = len(record.fields), record.classes, record.make, record.interned, self.tagged
        strings: dict[str, str] = {}
        pairs = {}
        for key, fields in zip(item[2::2], item[3::2]):
            if type(fields) is not list or len(fields) != size or not all(map(isinstance, fields, classes)):
                raise BadEntry(f"a row of {record.tag} that does not fit it")
            if interned is not None:
                fields[interned] = strings.setdefault(fields[interned], fields[interned])
            pairs[tagged(key) if type(key) is list else key] = make(fields)
        self.shared[slot] = pairs
        return pairs

    def record(self, record: Record, item: list) -> Any:
        if record.shared:
            slot = len(self.shared)
            self.shared.append(None)
        values = item[1:] if record.flat else [self.tagged(x) if type(x) is list else x for x in item[1:]]
        if len(values) != len(record.fields):
            raise BadEntry(f"{record.tag} with {len(values)} fields, expected {len(record.fields)}")
        if not all(map(isinstance, values, record.classes)):
            name, value = next((name, value) for name, value, classes in zip(record.fields, values, record.classes)
                               if not isinstance(value, classes))
            raise BadEntry(f"{record.tag}.{name}: found a {type(value).__qualname__}")
        for position, check in record.deep:
            value = values[position]
            if type(value) is dict:
                if (id(check), id(value)) in self.checked:
                    continue
                self.checked.add((id(check), id(value)))
            if not check(value):
                raise BadEntry(f"{record.tag}.{record.fields[position]}: found a {type(value).__qualname__}")
        if record.interned is not None and type(values[record.interned]) is str:
            values[record.interned] = sys.intern(values[record.interned])
        made = record.make(values)
        if record.shared:
            self.shared[slot] = made
        return made

    def other(self, tag: Any, item: list) -> Any:
        if tag == "D" and len(item) == 2:
            return date.fromisoformat(item[1])
        if tag == "p" and len(item) == 2 and type(item[1]) is str:
            return Path(item[1])
        if tag == "c" and len(item) == 3 and type(item[1]) is float and type(item[2]) is float:
            return complex(item[1], item[2])
        if tag == "a" and len(item) == 4:
            return _array(*item[1:])
        if tag == "n" and len(item) == 3 and item[1] in DTYPES and type(item[2]) in (int, float, bool):
            return DTYPES[item[1]](item[2])
        raise BadEntry(f"the tag {str(tag)[:40]!r}, which this entry's type does not allow")


def _array(dtype: str, shape: list, text: str) -> np.ndarray:
    """A numpy array from its dtype, shape and base64 bytes, each checked before anything is allocated."""
    if (dtype not in DTYPES or type(shape) is not list or len(shape) > MAX_DIMENSIONS
            or not all(type(n) is int and n >= 0 for n in shape) or type(text) is not str):
        raise BadEntry("an array with a bad dtype or shape")
    raw = base64.b64decode(text, validate=True)
    if len(raw) != math.prod(shape) * np.dtype(dtype).itemsize:
        raise BadEntry("an array whose bytes do not fit its shape")
    return np.frombuffer(bytearray(raw), dtype=dtype).reshape(shape)
