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

__all__ = ["write_text_atomic", "write_bytes_atomic", "write_json_atomic", "json_ready", "flatten",
           "begin_set", "commit_set", "recover_sets"]


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


# ---------------------------------------------------------------------------- output sets
STAGING_PREFIX = ".staging-"
"""Name prefix of the folder (inside the output folder) a command writes its set into."""

_DONE = ".complete"
_SET = ".set-{label}.json"


def begin_set(out: str | Path, label: str) -> Path:
    """Start writing a command's set of files: the staging folder to write into.

    A set is written whole into ``out/.staging-LABEL/`` and moved into ``out`` by
    :func:`commit_set`. A staging folder left by a killed run is finished first when it was
    complete (its files are moved in, :func:`recover_sets`), removed otherwise: the folder
    then holds the previous complete set.

    Parameters
    ----------
    out : str or Path
        The output folder (created if missing).
    label : str
        The command (``render``, ``export``, ``report``).

    Returns
    -------
    Path
        The empty staging folder.
    """
    import shutil

    out = Path(out)
    out.mkdir(parents=True, exist_ok=True)
    recover_sets(out)
    stage = out / f"{STAGING_PREFIX}{label}"
    if stage.exists():
        shutil.rmtree(stage)
    stage.mkdir()
    return stage


def _files_of(folder: Path) -> list[str]:
    return sorted(p.relative_to(folder).as_posix() for p in folder.rglob("*")
                  if p.is_file() and p.name != _DONE and not p.name.endswith(".tmp"))


def commit_set(out: str | Path, stage: str | Path, label: str) -> list[str]:
    """Move a complete staged set into the output folder and remove the previous set's leftovers.

    The staged set is first marked complete (a file written atomically, listing the new
    set and the previous one), so that a kill at any later moment is finished by the next
    :func:`begin_set` or :func:`recover_sets`: files of the previous set that the new set
    does not hold (stale track sections, pictures no longer drawn) are removed, and the
    record of the set (``.set-LABEL.json``) is written last.

    Parameters
    ----------
    out : str or Path
        The output folder.
    stage : str or Path
        Its staging folder from :func:`begin_set`, holding the whole new set.
    label : str
        The command.

    Returns
    -------
    list of str
        The set's file names relative to ``out``.
    """
    out, stage = Path(out), Path(stage)
    new = _files_of(stage)
    previous: list[str] = []
    record = out / _SET.format(label=label)
    try:
        previous = list(json.loads(record.read_text(encoding="utf-8"))["files"])
    except (OSError, ValueError, KeyError, TypeError):
        previous = []
    write_json_atomic(stage / _DONE, {"label": label, "files": new, "previous": previous})
    _finish(out, stage)
    return new


def _finish(out: Path, stage: Path) -> None:
    import shutil

    info = json.loads((stage / _DONE).read_text(encoding="utf-8"))
    new = list(info["files"])
    for rel in new:
        src = stage / rel
        if src.exists():
            (out / rel).parent.mkdir(parents=True, exist_ok=True)
            os.replace(src, out / rel)
    keep = set(new)
    for rel in info["previous"]:
        p = out / rel
        if rel not in keep and ".." not in Path(rel).parts and p.is_file():
            p.unlink()
    write_json_atomic(out / _SET.format(label=info["label"]), {"files": new})
    shutil.rmtree(stage)


def recover_sets(out: str | Path) -> list[str]:
    """Finish or discard the staged sets a killed run left in an output folder.

    Parameters
    ----------
    out : str or Path
        The output folder.

    Returns
    -------
    list of str
        Labels of the sets that were finished (complete when the run was killed).
    """
    import shutil

    out = Path(out)
    done: list[str] = []
    if not out.is_dir():
        return done
    for stage in sorted(out.glob(f"{STAGING_PREFIX}*")):
        if not stage.is_dir():
            continue
        try:
            complete = (stage / _DONE).is_file()
            if complete:
                _finish(out, stage)
                done.append(stage.name[len(STAGING_PREFIX):])
                continue
        except (OSError, ValueError, KeyError):
            pass
        shutil.rmtree(stage, ignore_errors=True)
    return done
