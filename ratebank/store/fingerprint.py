"""A fingerprint of the store's content: SHA-256 over every curated row.

The audit trail is left out (reading or exporting does not change the
content), and so are timestamps, lock versions and who withdrew a record when (the reason is
content). A column that holds no
value in any row (one a newer schema added, say) carries no content and is
left out too, so that an upgrade which only adds columns keeps the
fingerprint, and a store of an older revision can still be fingerprinted. Tables are read in
primary-key order through the raw driver and hashed a column at a time:
integers and booleans as 64-bit integers, floats as their exact IEEE-754
bytes, texts and JSON (its stored text, which backup and restore copy
verbatim) as UTF-8 bytes with their lengths, and every column with its NULL
mask. The same content therefore gives the same fingerprint on SQLite and
PostgreSQL, without a Python object per value.
"""

from __future__ import annotations

import hashlib
from collections.abc import Sequence
from typing import Any

from sqlalchemy import JSON, Boolean, Float, Integer, inspect
from sqlalchemy.orm import Session

from ratebank.store.models import (
    EvansPolanyiRule,
    Expression,
    ExpressionTerm,
    MeasurementSet,
    Participant,
    Point,
    ProvenanceRun,
    Reaction,
    Species,
    SpeciesThermo,
    StericRule,
    ThirdBodyEfficiency,
)

_SKIP = {
    "created_at",
    "updated_at",
    "updated_by",
    "created_by",
    "version",
    "withdrawn_at",
    "withdrawn_by",
}
#: Columns that earlier revisions named differently (revision 0005), by today's name: a store
#: not yet upgraded hashes the same content under today's names.
_FORMER_NAMES = {"a": "pre_exponential", "n": "temperature_exponent", "ea": "activation_energy"}
TABLES = (Species, Reaction, Participant, MeasurementSet, Point, Expression, StericRule)
#: Tables a later revision added: hashed only when they hold a row, so that an upgrade which
#: adds them empty keeps the fingerprint (as for columns, above).
LATER_TABLES = (
    SpeciesThermo,
    EvansPolanyiRule,
    ExpressionTerm,
    ThirdBodyEfficiency,
    ProvenanceRun,
)
#: Rows fetched and hashed at a time.
_BATCH = 50_000


def _column_bytes(kind: str, values: Sequence[Any]) -> bytes:
    """The bytes one column of a batch adds to the digest."""
    import numpy as np

    if kind == "text" and None not in values:
        try:
            return _text_bytes(np.packbits(np.zeros(len(values), dtype=bool)).tobytes(), values)
        except TypeError:
            pass  # not all texts (a hand-edited SQLite file): the general path below
    if kind in ("integer", "float") and None not in values:
        # the common case, straight to an array: no object array, no mask to build
        try:
            numbers = np.array(values, dtype=np.int64 if kind == "integer" else np.float64)
        except (TypeError, ValueError):
            pass
        else:
            if numbers.ndim == 1:
                mask = np.packbits(np.zeros(len(values), dtype=bool)).tobytes()
                return kind[0].encode() + mask + numbers.tobytes()
    objects = np.array(values, dtype=object)
    missing = objects == None  # noqa: E711 (elementwise)
    mask = np.packbits(missing).tobytes()
    try:
        if kind == "integer":
            numbers = np.where(missing, 0, objects).astype(np.int64)
            return b"i" + mask + numbers.tobytes()
        if kind == "float":
            numbers = np.where(missing, 0.0, objects).astype(np.float64)
            return b"f" + mask + numbers.tobytes()
    except (TypeError, ValueError):
        pass  # a value of another type (a hand-edited SQLite file): hashed as text below
    texts = ["" if v is None else (v if isinstance(v, str) else repr(v)) for v in values]
    return _text_bytes(mask, texts)


def _text_bytes(mask: bytes, texts: Sequence[str]) -> bytes:
    import numpy as np

    lengths = np.fromiter(map(len, texts), dtype=np.int64, count=len(texts))
    return b"t" + mask + lengths.tobytes() + "".join(texts).encode("utf-8", "surrogatepass")


def _kind(column: Any) -> str:
    if isinstance(column.type, Boolean | Integer):
        return "integer"
    if isinstance(column.type, Float):
        return "float"
    return "text"  # JSON too: read as its stored text


def _columns_with_values(
    cursor: Any, table: str, columns: list[Any], names: dict[str, str]
) -> list[Any]:
    """The columns of ``table`` that hold a value in at least one row."""
    counts = ", ".join(f"COUNT({names[c.name]})" for c in columns)
    cursor.execute(f"SELECT COUNT(*), {counts} FROM {table}")
    total, *filled = cursor.fetchone()
    if not total:
        return columns
    return [c for c, n in zip(columns, filled, strict=True) if n]


def _has_rows(cursor: Any, table: str, present: set[str]) -> bool:
    if table not in present:
        return False
    cursor.execute(f"SELECT 1 FROM {table} LIMIT 1")
    return cursor.fetchone() is not None


def store_fingerprint(session: Session) -> str:
    """``sha256:<hex>`` of the curated content.

    Same content, same fingerprint, on either dialect; any change to a
    curated value changes it.
    """
    digest = hashlib.sha256()
    connection = session.connection()
    inspector = inspect(connection)
    raw = connection.connection.dbapi_connection
    assert raw is not None
    cursor = raw.cursor()
    try:
        present = set(inspector.get_table_names())
        for model in (*TABLES, *LATER_TABLES):
            table = model.__table__
            if model in LATER_TABLES and not _has_rows(cursor, table.name, present):
                continue
            stored = {c["name"] for c in inspector.get_columns(table.name)}
            names = {
                c.name: c.name if c.name in stored else _FORMER_NAMES.get(c.name, c.name)
                for c in table.columns
                if c.name not in _SKIP
            }
            columns = _columns_with_values(
                cursor, table.name, [c for c in table.columns if names.get(c.name) in stored], names
            )
            kinds = [_kind(c) for c in columns]
            digest.update(f"\n#{table.name}:{','.join(c.name for c in columns)}\n".encode())
            order = ", ".join(c.name for c in table.primary_key.columns)
            selected = ", ".join(
                f"CAST({names[c.name]} AS TEXT)" if isinstance(c.type, JSON) else names[c.name]
                for c in columns
            )
            cursor.execute(f"SELECT {selected} FROM {table.name} ORDER BY {order}")
            while rows := cursor.fetchmany(_BATCH):
                for kind, values in zip(kinds, zip(*rows, strict=True), strict=True):
                    digest.update(_column_bytes(kind, values))
    finally:
        cursor.close()
    return "sha256:" + digest.hexdigest()


#: The stored columns of an expression that its content fingerprint covers, in order.
EXPRESSION_CONTENT = (
    "id, reaction_id, origin, a, n, ea, t_min, t_max, uncertainty_factor, uncertainty_g, "
    "reference, recommended, form, a_low, n_low, ea_low, broadening, fc, fc_width, troe_alpha, "
    "troe_t3, troe_t1, troe_t2"
)
#: How many columns :data:`EXPRESSION_CONTENT` names (a stored record's provenance as stored
#: and its run follow them in the rows :class:`ExpressionDigest` takes).
CONTENT_WIDTH = EXPRESSION_CONTENT.count(",") + 1
#: Expressions read and hashed at a time by :func:`expression_records`.
_RECORD_BATCH = 1000
_TERMS_QUERY = (
    "SELECT expression_id, term, a, n, ea, t_min, t_max FROM expression_term "
    "WHERE expression_id IN ({marks}) ORDER BY expression_id, term"
)


class ExpressionDigest:
    """Hashes the expressions an export is made of, a batch of stored rows at a time.

    Each row is the :data:`EXPRESSION_CONTENT` columns, then the row's own provenance as
    stored and its run. :meth:`add` updates the hash ``digest`` (a ``hashlib`` object)
    with one batch, by id: every expression's stored columns (numbers exactly as stored,
    in SI), its further terms and its full provenance (the run's part completed by its
    own, :mod:`ratebank.store.runs`; keys sorted, so that how the provenance is split
    between a run and a row does not matter). Any change to an exported expression's
    numbers, form or provenance changes the digest; nothing else in the store enters it.
    """

    def __init__(self, session: Session, digest: Any) -> None:
        from ratebank.store.runs import RunCache

        self._session = session
        self._digest = digest
        self._runs = RunCache(session)
        self._terms_stored: bool | None = None

    def add(
        self, rows: Sequence[Sequence[Any]]
    ) -> tuple[dict[int, dict[str, Any]], dict[int, list[list[Any]]]]:
        """Hash one batch of stored rows; ({id: full provenance}, {id: further terms as
        lists of term, a, n, ea, t_min, t_max}) of its expressions."""
        import orjson

        from ratebank.store.bulk import fetch_in

        option = orjson.OPT_SORT_KEYS | orjson.OPT_SERIALIZE_NUMPY | orjson.OPT_NON_STR_KEYS
        rows = sorted(rows, key=_first)
        width = CONTENT_WIDTH
        terms: dict[int, list[list[Any]]] = {}
        if rows and self._has_terms():
            for expression_id, *term in fetch_in(
                self._session, _TERMS_QUERY, [row[0] for row in rows]
            ):
                terms.setdefault(expression_id, []).append(term)
        runs = self._runs
        runs.load(row[width + 1] for row in rows)
        full_of = runs.full
        provenances: dict[int, dict[str, Any]] = {}
        records = []
        for row in rows:
            full = full_of(row[width], row[width + 1])
            provenances[row[0]] = full
            records.append((row[:width], sorted(terms.get(row[0], ())), full))
        self._digest.update(orjson.dumps(records, option=option))
        return provenances, terms

    def _has_terms(self) -> bool:
        if self._terms_stored is None:
            connection = self._session.connection()
            raw = connection.connection.dbapi_connection
            assert raw is not None
            cursor = raw.cursor()
            try:
                cursor.execute("SELECT 1 FROM expression_term LIMIT 1")
                self._terms_stored = cursor.fetchone() is not None
            finally:
                cursor.close()
        return self._terms_stored


def _first(row: Sequence[Any]) -> Any:
    return row[0]


def expression_records(
    session: Session, expression_ids: Sequence[int], keys: Sequence[str], digest: Any
) -> dict[int, dict[str, Any]]:
    """What an export takes from the expressions it is made of, read in one pass.

    Returns {expression id: {key: value} of ``keys`` in its full provenance}, and
    updates the hash ``digest`` with every one of these expressions, by id, as
    :class:`ExpressionDigest` does, :data:`_RECORD_BATCH` at a time, so memory does
    not grow with the mechanism.
    """
    from ratebank.store.bulk import fetch_in

    picked: dict[int, dict[str, Any]] = {}
    hashing = ExpressionDigest(session, digest)
    ids = sorted(set(expression_ids))
    rows_query = (
        f"SELECT {EXPRESSION_CONTENT}, provenance, run_id FROM expression "
        "WHERE id IN ({marks}) ORDER BY id"
    )
    for start in range(0, len(ids), _RECORD_BATCH):
        batch = ids[start : start + _RECORD_BATCH]
        provenances, _ = hashing.add(fetch_in(session, rows_query, batch))
        for expression_id, full in provenances.items():
            picked[expression_id] = {k: full[k] for k in keys if k in full}
    return picked
