"""Results of expensive calculations cached on disk by a SHA-256 fingerprint of their inputs.

A cache is a folder the caller chooses; the notebooks use ``.latticecalc-cache`` inside the
project folder (:data:`DEFAULT_FOLDER`, relative to the current directory).  Nothing is ever
written inside the installed package.  Entries are plain ``.npz`` archives of numbers (no
pickle), so a cache file cannot run code when read and holds no objects of another pint
registry.  Delete the folder to clear it.
"""

from __future__ import annotations

import dataclasses
import hashlib
import io
import json
import os
import tempfile
from collections.abc import Callable, Mapping
from pathlib import Path
from typing import Any

import numpy as np
import pint

from latticecalc.errors import InputError

DEFAULT_FOLDER = ".latticecalc-cache"
#: A folder holding this file is a project: ``project_folder_cache()`` caches there.
PROJECT_MARKER = "template.toml"


def _canonical(obj: Any, h: hashlib._Hash) -> None:
    """Feed a canonical encoding of ``obj`` into the hash ``h``."""
    if isinstance(obj, pint.Quantity):
        base = obj.to_base_units()
        h.update(b"Q" + str(base.units).encode())
        mag = np.asarray(base.magnitude)
        _canonical(mag if mag.dtype.kind in "fc" else mag.astype(float), h)   # a complex ratio keeps its phase
    elif isinstance(obj, np.ndarray):
        arr = np.ascontiguousarray(obj)
        if arr.dtype.kind in "fc":
            arr = np.round(arr, 12)
        if arr.dtype.kind in "OUS":
            _canonical(arr.tolist(), h)
            return
        h.update(b"A" + str(arr.dtype).encode() + str(arr.shape).encode() + arr.tobytes())
    elif isinstance(obj, Mapping):
        h.update(b"{")
        for k in sorted(obj, key=str):
            _canonical(str(k), h)
            _canonical(obj[k], h)
        h.update(b"}")
    elif isinstance(obj, (list, tuple)):
        h.update(b"[")
        for v in obj:
            _canonical(v, h)
        h.update(b"]")
    elif dataclasses.is_dataclass(obj) and not isinstance(obj, type):
        h.update(b"D" + type(obj).__name__.encode())
        # a field left out of equality (compare=False: bookkeeping such as where a value was read from, or a
        # step's record of the objects it was evaluated on) is left out of the fingerprint too
        _canonical({f.name: getattr(obj, f.name) for f in dataclasses.fields(obj) if f.compare}, h)
    elif isinstance(obj, (bool, int, str, type(None))):
        h.update(json.dumps(obj).encode())
    elif isinstance(obj, (float, np.floating, np.integer)):
        h.update(repr(round(float(obj), 12)).encode())
    elif type(obj).__module__.startswith("sympy."):    # a formula's expression (in a result's steps)
        from sympy import srepr

        h.update(b"S" + srepr(obj).encode())
    else:
        raise InputError("cannot fingerprint this value", input_name="cache key",
                         expected="numbers, text, arrays, Quantities, mappings, sequences, dataclasses",
                         got=type(obj).__name__)


def fingerprint(*parts: Any) -> str:
    """SHA-256 hex digest of a canonical encoding of ``parts`` (Quantities in base units)."""
    h = hashlib.sha256()
    _canonical(list(parts), h)
    return h.hexdigest()


def resolve_folder(cache: Any) -> Path | None:
    """``None``/``False`` -> no cache; ``True`` -> ``./.latticecalc-cache``; a path -> that folder."""
    if cache is None or cache is False:
        return None
    if cache is True:
        return Path.cwd() / DEFAULT_FOLDER
    if isinstance(cache, (str, os.PathLike)):
        return Path(cache)
    raise InputError("cache must be a folder, True or None", input_name="cache",
                     expected="a path, True (./.latticecalc-cache) or None (no cache)", got=repr(cache))


def project_folder_cache(subfolder: str | None = None) -> Path | None:
    """The project's cache folder when the current folder is a project (it holds ``template.toml``), else None.

    What a notebook's calls cache without being handed a folder (figures, the cell's union volumes): a
    project's kernel runs in the project folder, and a call from anywhere else caches nothing.
    """
    here = Path.cwd()
    if not (here / PROJECT_MARKER).is_file():
        return None
    return here / DEFAULT_FOLDER if subfolder is None else here / DEFAULT_FOLDER / subfolder


def cached_arrays(cache: Any, key: str, compute: Callable[[], dict[str, np.ndarray]]) -> dict[str, np.ndarray]:
    """Return ``compute()`` (a dict of arrays), reading/writing ``<folder>/<key>.npz`` when caching.

    The write is atomic (a temporary file renamed into place), so an interrupted run never
    leaves a half-written entry behind.
    """
    folder = resolve_folder(cache)
    if folder is None:
        return compute()
    path = folder / f"{key}.npz"
    if path.exists():
        with np.load(path, allow_pickle=False) as data:
            return {k: data[k] for k in data.files}
    result = compute()
    buf = io.BytesIO()
    np.savez(buf, **{k: np.asarray(v) for k, v in result.items()})
    write_entry(path, buf.getvalue())
    return result


def write_entry(path: Path, data: bytes) -> None:
    """Write one cache entry: a temporary file in the cache folder renamed into place.

    An interrupted run never leaves a half-written entry behind.  Not synced to disk: an entry lost in a
    crash is computed again (project files go through :mod:`latticecalc.project.atomic`).
    """
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=path.parent, suffix=".tmp")
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
        os.replace(tmp, path)
    finally:
        if os.path.exists(tmp):
            os.remove(tmp)
