"""The JSON form of the run metadata (:class:`postproc.run_meta.RunMeta`): written and read back typed.

Dataclasses become objects and tuples lists; reading rebuilds each dataclass from its type hints, so a
document written before a field was added reads back with the field's default.
"""

from __future__ import annotations

import dataclasses
import json
import types
import typing
from typing import Any, Mapping, Union


def meta_to_json(meta) -> str:
    """JSON text of a :class:`RunMeta` (dataclasses as objects, tuples as lists)."""
    return json.dumps(dataclasses.asdict(meta), ensure_ascii=False, separators=(",", ":"))


def meta_from_json(text: str):
    """The :class:`RunMeta` of :func:`meta_to_json` text.

    Raises
    ------
    ValueError
        Text that is not such a document (a missing field without a default, a wrong type).
    """
    from postproc.run_meta import RunMeta

    return build(RunMeta, json.loads(text))


def build(cls, data: Any):
    """Construct ``cls`` (a type hint: a dataclass, tuple, dict, union or plain type) from JSON data."""
    origin = typing.get_origin(cls)
    if dataclasses.is_dataclass(cls):
        if not isinstance(data, Mapping):
            raise ValueError(f"{cls.__name__}: expected an object, got {type(data).__name__}")
        hints = typing.get_type_hints(cls)
        kwargs = {}
        for f in dataclasses.fields(cls):
            if f.name in data:
                kwargs[f.name] = build(hints[f.name], data[f.name])
            elif f.default is dataclasses.MISSING and f.default_factory is dataclasses.MISSING:
                raise ValueError(f"{cls.__name__}: missing field '{f.name}'")
        return cls(**kwargs)
    if origin in (Union, types.UnionType):
        args = typing.get_args(cls)
        if data is None and type(None) in args:
            return None
        errors = []
        for arg in args:
            if arg is type(None):
                continue
            try:
                return build(arg, data)
            except (ValueError, TypeError) as err:
                errors.append(str(err))
        raise ValueError("; ".join(errors) or f"no type of {cls} fits {data!r}")
    if origin is tuple:
        args = typing.get_args(cls)
        if not isinstance(data, (list, tuple)):
            raise ValueError(f"expected a list, got {type(data).__name__}")
        if len(args) == 2 and args[1] is Ellipsis:
            return tuple(build(args[0], v) for v in data)
        return tuple(build(a, v) for a, v in zip(args, data))
    if origin is dict:
        _, value_type = typing.get_args(cls)
        if not isinstance(data, Mapping):
            raise ValueError(f"expected an object, got {type(data).__name__}")
        return {str(k): build(value_type, v) for k, v in data.items()}
    if cls is Any:
        return data
    if cls is float:
        if isinstance(data, bool) or not isinstance(data, (int, float)):
            raise ValueError(f"expected a number, got {data!r}")
        return float(data)
    if cls in (int, bool, str):
        if not isinstance(data, cls) or (cls is int and isinstance(data, bool)):
            raise ValueError(f"expected {cls.__name__}, got {data!r}")
        return data
    raise TypeError(f"unsupported type in the run metadata: {cls!r}")
