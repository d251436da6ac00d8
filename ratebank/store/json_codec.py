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


def indented_line_bytes(value: Any) -> bytes:
    """``value`` as UTF-8 JSON indented by two spaces, with a final newline, made in one
    buffer (a descriptor of a whole mechanism is written without copies of its text).

    >>> indented_line_bytes({"rows": 2})
    b'{\\n  "rows": 2\\n}\\n'
    """
    return orjson.dumps(value, option=_OPTIONS | orjson.OPT_INDENT_2 | orjson.OPT_APPEND_NEWLINE)


def loads(text: str | bytes) -> Any:
    """The value of JSON ``text``.

    >>> loads('{"covariance": [[1.0, NaN]]}')["covariance"][0][0]
    1.0
    """
    try:
        return orjson.loads(text)
    except orjson.JSONDecodeError:
        return json.loads(text)  # NaN and Infinity tokens of older records
