"""TOML text that keeps what a person wrote: comments, order, and the written form of values.

:func:`update_toml` turns the text of a TOML document into the text of new data while
changing only the keys whose values changed: every comment, blank line, key order and the
written form of an untouched value (``1885``, ``40.431200``, a literal string) stays as it
was. A list of tables (``[[course]]``) is matched entry by entry (:class:`difflib.SequenceMatcher`
over the entries), so inserting, deleting or moving one course leaves the text of the
others as it was. tomlkit (the maintained style-preserving TOML library) does the reading
and writing; this module decides what to touch.

The comparison is made on *normalised* data supplied by the caller (``old`` beside ``new``):
the traverse document compares its schema's values, so a date written ``1885`` (kept as the
text ``"1885"``) or a height written ``540`` (read as ``540.0``) counts as untouched.
"""

from __future__ import annotations

import difflib
import json
from collections.abc import Mapping, Sequence
from typing import Any

import tomlkit
from tomlkit.exceptions import TOMLKitError
from tomlkit.items import AoT, Table

__all__ = ["dumps_toml", "update_toml", "toml_value"]


def toml_value(value: Any) -> str:
    """One value as TOML writes it (floats in their shortest round-trip form)."""
    return tomlkit.item(value).as_string()


def dumps_toml(data: Mapping[str, Any], inline: frozenset[str] = frozenset()) -> str:
    """Fresh TOML text of ``data``: plain keys first, then one ``[table]`` per mapping and
    one ``[[name]]`` per entry of a list of mappings; a key named in ``inline`` (``found``)
    inside a table is written as an inline table."""
    doc = tomlkit.document()
    _fill(doc, data, inline)
    return tomlkit.dumps(doc)


def update_toml(
    text: str,
    new: Mapping[str, Any],
    old: Mapping[str, Any],
    inline: frozenset[str] = frozenset(),
) -> str | None:
    """The TOML ``text`` changed to hold ``new``, touching only what differs from ``old``.

    ``old`` is what ``text`` means, in the same normalised form as ``new`` (a key missing
    from ``text`` but present in ``old`` stands for a default). Keys equal in ``old`` and
    ``new`` keep their text; changed keys are rewritten in place (a trailing comment on
    their line is kept); keys absent from ``new`` are removed; new keys are added at the
    end of their table. Returns ``None`` when ``text`` is not TOML tomlkit can edit (the
    caller then writes fresh text).
    """
    try:
        doc = tomlkit.parse(text)
        _merge(doc, new, old, inline)
        return tomlkit.dumps(doc)
    except (TOMLKitError, ValueError, TypeError, KeyError):
        return None


def _is_table_list(value: Any) -> bool:
    return (
        isinstance(value, list | tuple)
        and bool(value)
        and all(isinstance(v, Mapping) for v in value)
    )


def _fill(container: Any, data: Mapping[str, Any], inline: frozenset[str]) -> None:
    """Write ``data`` into an empty tomlkit container: plain values, then tables."""
    plain = {k: v for k, v in data.items() if not _nested(v)}
    for key, value in plain.items():
        container[key] = _item(key, value, inline)
    for key, value in data.items():
        if key in plain:
            continue
        if isinstance(value, Mapping):
            table = tomlkit.table()
            _fill(table, value, inline)
            container[key] = table
        else:
            container[key] = _table_list(value, inline)


def _nested(value: Any) -> bool:
    return isinstance(value, Mapping) or _is_table_list(value)


def _item(key: str, value: Any, inline: frozenset[str]) -> Any:
    if isinstance(value, Mapping):
        table = tomlkit.inline_table()
        for k, v in value.items():
            table[k] = v
        return table
    if isinstance(value, tuple):
        return list(value)
    return value


def _table_list(entries: Sequence[Mapping[str, Any]], inline: frozenset[str]) -> AoT:
    aot = tomlkit.aot()
    for entry in entries:
        table = tomlkit.table()
        _fill_entry(table, entry, inline)
        aot.append(table)
    return aot


def _fill_entry(table: Any, entry: Mapping[str, Any], inline: frozenset[str]) -> None:
    """An entry of a list of tables: every key in order, mappings named in ``inline`` inline."""
    for key, value in entry.items():
        if isinstance(value, Mapping) and key not in inline:
            sub = tomlkit.table()
            _fill(sub, value, inline)
            table[key] = sub
        else:
            table[key] = _item(key, value, inline)


def _merge(
    container: Any, new: Mapping[str, Any], old: Mapping[str, Any], inline: frozenset[str]
) -> None:
    """Change ``container`` (a tomlkit document or table) from ``old`` to ``new`` in place."""
    for key in [k for k in container if k not in new]:
        del container[key]
    for key, value in new.items():
        before = old.get(key) if isinstance(old, Mapping) else None
        if key in container and before == value:
            continue  # untouched: its text stays as written
        if key not in container and before == value and key in old:
            continue  # a default the text leaves out, still the default
        current = container.get(key) if key in container else None
        if isinstance(value, Mapping) and key not in inline and isinstance(current, Table):
            _merge(current, value, before if isinstance(before, Mapping) else {}, inline)
        elif _is_table_list(value) and isinstance(current, AoT):
            _merge_table_list(current, list(value), list(before or ()), inline)
        else:  # tomlkit puts a new plain key before the container's first table
            container[key] = _fresh(key, value, inline)


def _fresh(key: str, value: Any, inline: frozenset[str]) -> Any:
    if isinstance(value, Mapping) and key not in inline:
        table = tomlkit.table()
        _fill(table, value, inline)
        return table
    if _is_table_list(value):
        return _table_list(value, inline)
    return _item(key, value, inline)


def _key(entry: Mapping[str, Any]) -> str:
    return json.dumps(entry, sort_keys=True, default=str)


def _merge_table_list(
    aot: AoT, new: list[Mapping[str, Any]], old: list[Mapping[str, Any]], inline: frozenset[str]
) -> None:
    """Change a list of tables from ``old`` to ``new``: equal entries keep their tables (and
    comments); in a run that changed, each new entry is paired with the old entry it shares
    most keys with (in order) and edited in place, and the others are new tables."""
    tables = list(aot.body)
    if len(tables) != len(old):
        raise ValueError("the list of tables does not match what it means")
    matcher = difflib.SequenceMatcher(
        a=[_key(e) for e in old], b=[_key(e) for e in new], autojunk=False
    )
    out: list[tuple[Table, bool]] = []  # (table, made here)
    for op, a0, a1, b0, b1 in matcher.get_opcodes():
        if op == "equal":
            out.extend((t, False) for t in tables[a0:a1])
            continue
        pairs = dict(_pair_entries(old[a0:a1], new[b0:b1]))
        for j in range(b1 - b0):
            if j in pairs:
                i = pairs[j]
                _merge(tables[a0 + i], new[b0 + j], old[a0 + i], inline)
                out.append((tables[a0 + i], False))
            else:
                table = tomlkit.table()
                _fill_entry(table, new[b0 + j], inline)
                out.append((table, True))
    while len(aot):
        aot.pop()  # rebuilt in the new order
    for n, (table, made) in enumerate(out):
        if made and n < len(out) - 1:
            table.add(tomlkit.nl())  # a blank line before the next [[name]], as written
        aot.append(table)


#: Runs of changed entries longer than this are paired by position (the pairing costs
#: len(old) × len(new) comparisons).
_PAIR_LIMIT = 200


def _pair_entries(
    old: Sequence[Mapping[str, Any]], new: Sequence[Mapping[str, Any]]
) -> list[tuple[int, int]]:
    """``(new index, old index)`` pairs, in order on both sides: as many pairs as the shorter
    side has entries, chosen to share the most equal key/value pairs in total (an entry
    edited in one key pairs with its old self, beside an inserted or deleted one)."""
    if len(old) > _PAIR_LIMIT or len(new) > _PAIR_LIMIT:
        return [(j, j) for j in range(min(len(old), len(new)))]

    def score(i: int, j: int) -> int:
        # 1 for pairing at all, so every entry of the shorter side is paired
        return 1 + sum(1 for k, v in new[j].items() if k in old[i] and old[i][k] == v)

    rows, cols = len(old), len(new)
    best = [[0] * (cols + 1) for _ in range(rows + 1)]
    for i in range(rows - 1, -1, -1):
        for j in range(cols - 1, -1, -1):
            s = score(i, j)
            best[i][j] = max(best[i + 1][j], best[i][j + 1], best[i + 1][j + 1] + s)
    out, i, j = [], 0, 0
    while i < rows and j < cols:
        s = score(i, j)
        if best[i][j] == best[i + 1][j + 1] + s:
            out.append((j, i))
            i, j = i + 1, j + 1
        elif best[i][j] == best[i + 1][j]:
            i += 1
        else:
            j += 1
    return out
