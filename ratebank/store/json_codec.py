"""JSON encoding of provenance and audit details.

A fit or estimate of a whole mechanism writes a provenance record per
reaction, a hundred thousand at a time; ``orjson`` encodes them about ten
times faster than the standard library. Output is plain JSON (shortest
round-trip floats); a NaN or infinity, which JSON cannot hold, is written as
null. Reading accepts what the standard library wrote before (including its
``NaN`` tokens).
"""

from __future__ import annotations

import json
from collections.abc import Sequence
from typing import Any

import orjson

_OPTIONS = orjson.OPT_SERIALIZE_NUMPY | orjson.OPT_NON_STR_KEYS


def dumps(value: Any) -> str:
    """``value`` as JSON text.

    >>> dumps({"A": 1.5e-17, "sets": [3, 4], "note": None})
    '{"A":1.5e-17,"sets":[3,4],"note":null}'
    """
    return orjson.dumps(value, option=_OPTIONS).decode()


def dumps_indented(value: Any) -> str:
    """``value`` as JSON text indented by two spaces, for files people read.

    >>> print(dumps_indented({"rows": 2, "left_out": []}))
    {
      "rows": 2,
      "left_out": []
    }
    """
    return orjson.dumps(value, option=_OPTIONS | orjson.OPT_INDENT_2).decode()


def canonical(value: Any) -> str:
    """One spelling of a JSON value (or of JSON text): compact, keys sorted.

    >>> canonical('{"b": 1, "a": [1.0, NaN]}')
    '{"a":[1.0,null],"b":1}'
    """
    decoded = loads(value) if isinstance(value, str | bytes) else value
    return orjson.dumps(decoded, option=_OPTIONS | orjson.OPT_SORT_KEYS).decode()


def canonical_many(values: Sequence[Any]) -> str:
    """:func:`canonical` of a JSON array of ``values`` (JSON texts or decoded values).

    One parse and one encoding for a whole batch, where texts are spliced
    into one array; a batch holding older non-standard tokens (NaN) is
    decoded value by value.

    >>> canonical_many(['{"b": 1, "a": 2}', None, [1, 2]])
    '[{"a":2,"b":1},null,[1,2]]'
    """
    decoded: list[Any] | None = None
    if all(isinstance(v, str) for v in values):
        try:
            decoded = orjson.loads("[" + ",".join(values) + "]")
        except orjson.JSONDecodeError:
            decoded = None
        if decoded is not None and len(decoded) != len(values):
            decoded = None  # a text held more than one value: take them one by one
    if decoded is None:
        decoded = [_decoded_or_text(v) for v in values]
    return orjson.dumps(decoded, option=_OPTIONS | orjson.OPT_SORT_KEYS).decode()


def _decoded_or_text(value: Any) -> Any:
    if not isinstance(value, str | bytes):
        return value
    try:
        return loads(value)
    except ValueError:  # not JSON at all (a hand-edited file): the text itself
        return {"not JSON": value if isinstance(value, str) else value.hex()}


def loads(text: str | bytes) -> Any:
    """The value of JSON ``text``.

    >>> loads('{"covariance": [[1.0, NaN]]}')["covariance"][0][0]
    1.0
    """
    try:
        return orjson.loads(text)
    except orjson.JSONDecodeError:
        return json.loads(text)  # NaN and Infinity tokens of older records
