"""Scenario data written back as TOML.

Used for a design's ``best.toml``, the report's as-run scenario and the commented template's
example values. The one writer of TOML values in ridesim: booleans, integers, floats (``inf``/``nan`` as TOML
spells them), strings (JSON escapes, which TOML's basic strings read alike) and nested lists.
"""

from __future__ import annotations

import json
import math
from collections.abc import Iterable, Mapping
from typing import Any

__all__ = ["toml_value", "toml_text"]


def toml_value(v: Any) -> str:
    """One value as TOML.

    Parameters
    ----------
    v : bool, int, float, str, list or tuple
        The value (lists and tuples of these, nested).

    Returns
    -------
    str

    Raises
    ------
    TypeError
        For any other type.
    """
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        return repr(v) if math.isfinite(v) else ("nan" if math.isnan(v) else
                                                 ("inf" if v > 0 else "-inf"))
    if isinstance(v, str):
        return json.dumps(v, ensure_ascii=False)
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(toml_value(x) for x in v) + "]"
    raise TypeError(f"cannot write {v!r} as TOML")


def toml_text(data: Mapping[str, Any], header: Iterable[str] = ()) -> str:
    """A scenario dict (``Scenario.to_dict()``) as TOML text that reads back equal.

    Top-level values first, then one table per section; values that are None (unset) are
    left out.

    Parameters
    ----------
    data : mapping
        Top-level keys and one mapping per section.
    header : iterable of str
        Comment lines written at the top.

    Returns
    -------
    str

    Raises
    ------
    ValueError
        If the text would not read back as ``data`` (a guard: it cannot happen for values
        :func:`toml_value` writes).
    """
    import tomllib

    kept: dict[str, Any] = {}
    lines = [f"# {h}" for h in header]
    for k, v in data.items():
        if v is not None and not isinstance(v, Mapping):
            lines.append(f"{k} = {toml_value(v)}")
            kept[k] = v
    for k, v in data.items():
        if isinstance(v, Mapping) and v:
            table = {n: x for n, x in v.items() if x is not None}
            lines += ["", f"[{k}]"] + [f"{n} = {toml_value(x)}" for n, x in table.items()]
            kept[k] = table
    text = "\n".join(lines) + "\n"
    if tomllib.loads(text) != json.loads(json.dumps(kept)):  # pragma: no cover - a guard
        raise ValueError("scenario TOML does not read back equal")
    return text
