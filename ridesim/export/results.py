"""Atomic writing of results: nothing already written is lost or half-written.

Each file is written to a temporary file in the destination folder and then
renamed over the destination (``os.replace`` is atomic on POSIX and Windows).
"""

from __future__ import annotations

import json
import math
import os
import tempfile
from pathlib import Path
from typing import Any

import numpy as np

from ridesim.errors import InputError

__all__ = ["write_text_atomic", "write_bytes_atomic", "write_json_atomic", "json_ready", "flatten"]


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def write_bytes_atomic(path: str | Path, data: bytes) -> Path:
    """Write ``data`` to ``path`` through a temporary file and a rename.

    Parameters
    ----------
    path : str or Path
        Destination file; its folder is created if missing.
    data : bytes
        Content.

    Returns
    -------
    Path
        The destination.
    """
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp, 0o666 & ~_umask())  # mkstemp makes 0600; give the usual file mode
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
    return path


def write_text_atomic(path: str | Path, text: str) -> Path:
    """Write UTF-8 ``text`` to ``path`` atomically (see :func:`write_bytes_atomic`).

    Parameters
    ----------
    path : str or Path
        Destination file.
    text : str
        Content.

    Returns
    -------
    Path
        The destination.
    """
    return write_bytes_atomic(path, text.encode("utf-8"))


def json_ready(obj: Any) -> Any:
    """Convert numpy scalars/arrays and tuples to plain JSON values; non-finite floats to None.

    Parameters
    ----------
    obj : object
        Nested dicts, lists, tuples, numbers, strings, numpy values.

    Returns
    -------
    object
        The same structure with only JSON-native types.
    """
    if isinstance(obj, dict):
        return {str(k): json_ready(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [json_ready(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return [json_ready(v) for v in obj.tolist()]
    if isinstance(obj, (bool, np.bool_)):
        return bool(obj)
    if isinstance(obj, (int, np.integer)):
        return int(obj)
    if isinstance(obj, (float, np.floating)):
        v = float(obj)
        return v if math.isfinite(v) else None
    return obj


def write_json_atomic(path: str | Path, obj: Any) -> Path:
    """Write ``obj`` as indented JSON atomically.

    Parameters
    ----------
    path : str or Path
        Destination file.
    obj : object
        JSON-convertible data (numpy values allowed).

    Returns
    -------
    Path
        The destination.
    """
    return write_text_atomic(path, json.dumps(json_ready(obj), indent=2) + "\n")


def flatten(d: dict, *, lists: str = "skip", prefix: str = "") -> dict[str, Any]:
    """Leaf figures of a JSON dict as ``{"dotted.key": value}``: one flattener for every table.

    Parameters
    ----------
    d : dict
        JSON-ready data.
    lists : {"skip", "index"}
        ``"skip"``: lists are left out (a sweep table's cell holds one value); ``"index"``:
        lists of dicts are indexed (``motors[0].peak_Nm``) and other lists kept whole.
    prefix : str
        Key prefix.

    Returns
    -------
    dict

    Examples
    --------
    >>> flatten({"torque": {"peak_Nm": 2.0}, "motors": [{"peak_Nm": 1.0}]}, lists="index")
    {'torque.peak_Nm': 2.0, 'motors[0].peak_Nm': 1.0}
    """
    if lists not in ("skip", "index"):
        raise InputError(f"lists must be 'skip' or 'index', got {lists!r}")
    out: dict[str, Any] = {}
    for k, v in d.items():
        key = f"{prefix}{k}"
        if isinstance(v, dict):
            out.update(flatten(v, lists=lists, prefix=key + "."))
        elif isinstance(v, (list, tuple)):
            if lists == "skip":
                continue
            if v and all(isinstance(x, dict) for x in v):
                for i, x in enumerate(v):
                    out.update(flatten(x, lists=lists, prefix=f"{key}[{i}]."))
            else:
                out[key] = v
        else:
            out[key] = v
    return out
