"""The file layer shared by every result: a schema block, JSON in and out, atomic saving."""
from __future__ import annotations

import dataclasses
import json
from typing import ClassVar

from ..common.errors import MemoryInferError
from ..common.writing import JSONEncoder, read_json, write_json

SCHEMA_VERSION = 1


class _Absent:
    """The value of a block's field that its file did not hold (written back as no key at all, unlike None)."""

    def __repr__(self):
        return "ABSENT"

    def __bool__(self):
        return False

    def __reduce__(self):
        return "ABSENT"


ABSENT = _Absent()


class Block:
    """Mixin for a typed part of a result (a frozen dataclass): ``to_dict`` writes its fields in their order,
    leaving out those at :data:`ABSENT`, and ``from_dict`` reads them back, so a file's keys and their order are
    kept. A key the block does not know is refused in one sentence (its field must be added first)."""

    NESTED: ClassVar[dict] = {}

    def __bool__(self):
        """Whether the file held any of the block's keys (an empty block is written as ``{}``)."""
        return any(getattr(self, item.name) is not ABSENT for item in dataclasses.fields(self))

    def to_dict(self) -> dict:
        return {item.name: json_ready(value) for item in dataclasses.fields(self)
                if (value := getattr(self, item.name)) is not ABSENT}

    @classmethod
    def from_dict(cls, data: dict):
        if isinstance(data, cls):
            return data
        if not isinstance(data, dict):
            raise MemoryInferError(f"a result's {cls.__name__} block is not a JSON object")
        names = [item.name for item in dataclasses.fields(cls)]
        unknown = [key for key in data if key not in names]
        if unknown:
            raise MemoryInferError(f"a result's {cls.__name__} block holds the unknown key '{unknown[0]}'")
        values = {key: _nested(cls.NESTED.get(key), value) for key, value in data.items()}
        try:
            return cls(**values)
        except TypeError as error:
            raise MemoryInferError(f"a result's {cls.__name__} block lacks a required key ({error})") from None


def _nested(kind, value):
    """``value`` read into ``kind`` (a :class:`Block`; ``(list, Block)`` for a list of them, ``(dict, Block)`` for
    a mapping of names to them) when given."""
    if kind is None or value is None or value is ABSENT:
        return value
    if isinstance(kind, tuple) and kind[0] is dict:
        return {key: kind[1].from_dict(item) for key, item in value.items()}
    if isinstance(kind, tuple):
        return [kind[1].from_dict(item) for item in value]
    return kind.from_dict(value)


class ResultFile:
    """Mixin for result dataclasses: ``to_json``/``from_json``, ``save``/``load``.

    ``KIND`` names the result ("event", "catalog", "campaign"); ``NESTED`` maps a field to the
    dataclass (or ``(list, dataclass)``) its JSON is read back into.
    """

    KIND: ClassVar[str] = ""
    FILE: ClassVar[str] = ""
    NESTED: ClassVar[dict] = {}

    def __setattr__(self, name, value):
        """A typed block handed over as its JSON mapping (as the stage that computes it builds it), at construction
        or later, is read into its :class:`Block` class."""
        kind = type(self).NESTED.get(name)
        block = kind[1] if isinstance(kind, tuple) else kind
        if isinstance(block, type) and issubclass(block, Block):
            value = _nested(kind, value)
        object.__setattr__(self, name, value)

    def to_json(self) -> dict:
        out = {"schema": {"kind": self.KIND, "version": SCHEMA_VERSION}}
        for item in dataclasses.fields(self):
            out[item.name] = json_ready(getattr(self, item.name))
        return out

    @classmethod
    def from_json(cls, data: dict, where: str = "the result"):
        if not isinstance(data, dict):
            raise MemoryInferError(f"{where} is not a JSON object")
        schema = data.get("schema") or {"kind": cls.KIND, "version": SCHEMA_VERSION}
        if schema.get("kind") != cls.KIND:
            raise MemoryInferError(f"{where} holds a {schema.get('kind')} result, not a {cls.KIND} result")
        if int(schema.get("version", 0)) > SCHEMA_VERSION:
            raise MemoryInferError(f"{where} was written by a newer memory_infer (schema {schema['version']}); "
                                   "update memory_infer to read it")
        values = {}
        for item in dataclasses.fields(cls):
            if item.name in data:
                values[item.name] = _nested(cls.NESTED.get(item.name), data[item.name])
        try:
            return cls(**values)
        except TypeError as error:
            raise MemoryInferError(f"{where} lacks a required field ({error})") from None

    def reloaded(self):
        """This result as its file will hold it (through JSON text), so a page drawn from it at run time
        equals one drawn later from the file."""
        return type(self).from_json(json.loads(json.dumps(self.to_json(), cls=JSONEncoder, allow_nan=True)))

    def save(self, path: str) -> None:
        write_json(path, self.to_json())

    @classmethod
    def load(cls, path: str):
        return cls.from_json(read_json(path, f"{cls.KIND} result"), f"'{path}'")


def json_ready(value):
    """``value`` as JSON holds it: blocks and dataclasses as dicts, tuples as lists, other values as they are."""
    if isinstance(value, Block):
        return value.to_dict()
    if dataclasses.is_dataclass(value):
        return {k: json_ready(v) for k, v in dataclasses.asdict(value).items()}
    if isinstance(value, dict):
        return {k: json_ready(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [json_ready(v) for v in value]
    return value


def result_kind(path: str) -> str:
    """The kind named in a result file's schema block ("event", "catalog" or "campaign")."""
    data = read_json(path, "result file")
    kind = (data.get("schema") or {}).get("kind")
    if kind is None:
        kind = "event" if "methods" in data else "catalog" if "consistent_sign" in data else \
            "campaign" if "events_to_threshold" in data else None
    if kind is None:
        raise MemoryInferError(f"'{path}' is not a result written by memory-infer")
    return kind
