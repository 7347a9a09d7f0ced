"""Shared plumbing of result objects: conversion to the JSON contract's plain values."""
from __future__ import annotations

import dataclasses
import math
from collections.abc import Mapping
from typing import Any, ClassVar

import numpy as np


class JsonRows(list):
    """A list whose elements are JSON-ready already (str, int, finite float, bool, None, and lists and str-keyed
    dicts of those), such as a record per respondent built column by column: :func:`to_jsonable` keeps it as
    it is instead of walking a million values, and ``render_json`` writes one element per line."""


def to_jsonable(value: Any) -> Any:
    """Turn numpy scalars/arrays, tuples and nested dataclasses into JSON-ready values.

    NaN and infinities become ``None``: the contract never carries NaN; the reason belongs in ``notes``.
    """
    # plain values first, by exact type: a report holds a million of them (a row per respondent), and the
    # general checks below (dataclass, Mapping) cost several times more each; the result is the same
    kind = type(value)
    if kind is str or value is None or kind is bool or kind is int or kind is JsonRows:
        return value
    if kind is float:
        return value if math.isfinite(value) else None
    if kind is dict:
        return {str(k): to_jsonable(v) for k, v in value.items()}
    if kind is list or kind is tuple:
        return [to_jsonable(v) for v in value]
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        if hasattr(value, "to_dict"):
            return value.to_dict()
        return {f.name: to_jsonable(getattr(value, f.name)) for f in dataclasses.fields(value)}
    if isinstance(value, Mapping):
        return {str(k): to_jsonable(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [to_jsonable(v) for v in value]
    if isinstance(value, np.ndarray):
        return [to_jsonable(v) for v in value.tolist()]
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, (int, np.integer)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        value = float(value)
        return value if math.isfinite(value) else None
    if value is None or isinstance(value, str):
        return value
    return str(value)


class ResultMixin:
    """Default ``to_dict`` for frozen result dataclasses: every field, JSON-ready.

    ``JSON_KEYS`` renames a field in the JSON where the contract's vocabulary differs from the short name
    used in code (p-values are ``pvalue`` in the JSON, see CHANGES.md).
    """

    JSON_KEYS: ClassVar[Mapping[str, str]] = {}

    def to_dict(self) -> dict[str, Any]:
        return {self.JSON_KEYS.get(f.name, f.name): to_jsonable(getattr(self, f.name))
                for f in dataclasses.fields(self)}  # type: ignore[arg-type]
