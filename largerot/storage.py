"""Saving and loading structures, paths and running traces.

``lr.save(obj, filename)`` writes a :class:`~largerot.model.Structure`, an
:class:`~largerot.results.EquilibriumPath` or a path stepper (a checkpoint) to one
file; ``lr.load(filename)`` returns the same kind of object with bit-for-bit equal
arrays. The container is open and readable without largerot
(``docs/file-format.md``): a zip archive holding

* ``largerot.json`` — the header (format name, schema version, kind, largerot
  version, time written) and the object tree in a small tagged JSON encoding;
* ``arrays/<n>.npy`` — every numpy array of the tree, in NumPy's own ``.npy`` format
  (``numpy.load`` reads each; ``allow_pickle`` is never needed).

Objects are rebuilt from their classes' own state (``__getstate__`` /
``__setstate__``, the pickling protocol the classes already follow), and only classes
of the ``largerot`` package are accepted, so loading a file runs no foreign code.
Writes go to a temporary file in the target's folder, then replace it in one rename;
a reader never sees a half-written file. Any defect of a file — truncated, corrupt,
another kind of file, written by a newer schema — raises :class:`FileFormatError`
naming it, and no half-read object is returned.
"""
from __future__ import annotations

import datetime
import importlib
import io
import json
import math
import os
import tempfile
import zipfile
from pathlib import Path

import numpy as np

__all__ = ["save", "load", "FileFormatError", "SCHEMA", "FORMAT"]

#: Name in the header: tells a largerot file from any other zip.
FORMAT = "largerot"
#: Schema version written; files of a higher one are refused (their encoding may differ).
SCHEMA = 1
_HEADER = "largerot.json"
_PACKAGE = "largerot"


class FileFormatError(ValueError):
    """A file that is not a readable largerot file; the message says why."""


# -- encoding ----------------------------------------------------------------------------
class _Encoder:
    def __init__(self) -> None:
        self.arrays: dict[str, np.ndarray] = {}
        self.ids: dict[int, int] = {}          # id(object) -> reference number
        self.keep: list = []                   # keeps encoded objects alive (ids unique)

    def __call__(self, x):
        if x is None or isinstance(x, (bool, str)):
            return x
        if isinstance(x, int) and not isinstance(x, np.integer):
            return x
        if isinstance(x, float) and not isinstance(x, np.floating):
            return x if math.isfinite(x) else {"$float": repr(x)}
        if isinstance(x, np.ndarray):
            return self._array(x)
        if isinstance(x, np.generic):
            return {"$scalar": self._store(np.asarray(x))}
        if isinstance(x, list):
            return [self(v) for v in x]
        if isinstance(x, tuple) and type(x) is not tuple:        # a named tuple of ours
            return {"$record": _class_name(type(x)), "fields": [self(v) for v in x]}
        if isinstance(x, tuple):
            return {"$tuple": [self(v) for v in x]}
        if isinstance(x, (set, frozenset)):
            return {"$set": [self(v) for v in sorted(x, key=repr)]}
        if isinstance(x, dict):
            return {"$dict": [[self(k), self(v)] for k, v in x.items()]}
        return self._object(x)

    def _store(self, a: np.ndarray) -> str:
        name = f"arrays/{len(self.arrays)}.npy"
        self.arrays[name] = a
        return name

    def _array(self, a: np.ndarray):
        if id(a) in self.ids:
            return {"$ref": self.ids[id(a)]}
        self.ids[id(a)] = len(self.ids)
        self.keep.append(a)
        if a.dtype == object:                  # e.g. strings of line-load kinds
            return {"$objects": [self(v) for v in a.ravel().tolist()], "shape": list(a.shape),
                    "id": self.ids[id(a)]}
        return {"$array": self._store(a), "id": self.ids[id(a)]}

    def _object(self, x):
        cls = type(x)
        name = _class_name(cls)
        if id(x) in self.ids:
            return {"$ref": self.ids[id(x)]}
        ref = self.ids[id(x)] = len(self.ids)
        self.keep.append(x)
        if hasattr(x, "_saved_state"):        # a class's own choice of what is data
            state = x._saved_state()
        else:
            state = x.__getstate__() if hasattr(x, "__getstate__") else vars(x)
        if state is None:
            state = {}
        return {"$object": name, "id": ref, "state": self(state)}


def _class_name(cls) -> str:
    if cls.__module__.split(".")[0] != _PACKAGE:
        raise TypeError(f"Cannot save an object of type {cls.__module__}.{cls.__qualname__}: "
                        "only largerot's own objects, numbers, strings and arrays are saved.")
    return f"{cls.__module__}:{cls.__qualname__}"


def _class(name: str):
    module, _, qualname = name.partition(":")
    if module.split(".")[0] != _PACKAGE:
        raise FileFormatError(f"The file names a class outside largerot ({name!r}).")
    try:
        cls = importlib.import_module(module)
        for part in qualname.split("."):
            cls = getattr(cls, part)
    except (ImportError, AttributeError):
        raise FileFormatError(f"The file names a class this largerot does not have ({name!r}).") from None
    if not isinstance(cls, type):
        raise FileFormatError(f"The file names {name!r}, which is not a class.")
    return cls


# -- decoding ----------------------------------------------------------------------------
class _Decoder:
    def __init__(self, archive: zipfile.ZipFile) -> None:
        self.archive = archive
        self.refs: dict[int, object] = {}

    def _read(self, name: str) -> np.ndarray:
        try:
            with self.archive.open(name) as f:
                return np.load(io.BytesIO(f.read()), allow_pickle=False)
        except KeyError:
            raise FileFormatError(f"The file lacks its array {name!r} (truncated or corrupt).") from None

    def __call__(self, x):
        if x is None or isinstance(x, (bool, int, float, str)):
            return x
        if isinstance(x, list):
            return [self(v) for v in x]
        if not isinstance(x, dict) or len(x) == 0:
            raise FileFormatError(f"Unexpected value in the object tree: {x!r:.80}.")
        tag = next(iter(x))
        if tag == "$float":
            return float(x["$float"])
        if tag == "$array":
            a = self._read(x["$array"])
            self.refs[x["id"]] = a
            return a
        if tag == "$objects":
            a = np.empty(len(x["$objects"]), dtype=object)
            a[:] = [self(v) for v in x["$objects"]]
            a = a.reshape(x["shape"])
            self.refs[x["id"]] = a
            return a
        if tag == "$scalar":
            return self._read(x["$scalar"])[()]
        if tag == "$tuple":
            return tuple(self(v) for v in x["$tuple"])
        if tag == "$record":
            return _class(x["$record"])(*[self(v) for v in x["fields"]])
        if tag == "$set":
            return {self(v) for v in x["$set"]}
        if tag == "$dict":
            return {self(k): self(v) for k, v in x["$dict"]}
        if tag == "$ref":
            try:
                return self.refs[x["$ref"]]
            except KeyError:
                raise FileFormatError(f"Reference {x['$ref']} to an object not read (corrupt).") from None
        if tag == "$object":
            return self._object(x)
        raise FileFormatError(f"Unknown tag {tag!r} in the object tree.")

    def _object(self, x):
        cls = _class(x["$object"])
        obj = cls.__new__(cls)
        self.refs[x["id"]] = obj              # before the state: shared and cyclic references
        state = self(x["state"])
        if hasattr(cls, "__setstate__"):
            obj.__setstate__(state)
        else:
            for k, v in state.items():
                object.__setattr__(obj, k, v)
        return obj


# -- files ---------------------------------------------------------------------------------
def _kind(obj) -> str:
    kind = getattr(type(obj), "saved_kind", None)     # set by the classes that can be saved
    if kind is None:
        raise TypeError(f"lr.save takes a Structure, an EquilibriumPath or a path stepper, "
                        f"got {type(obj).__name__}.")
    return kind


def save(obj, filename) -> Path:
    """Write a structure, a path or a path stepper (a checkpoint) to ``filename``.

    The write is atomic: a temporary file in the same folder, renamed over the
    target once complete.

    Returns
    -------
    pathlib.Path
        The file written.
    """
    from . import __version__
    kind = _kind(obj)
    enc = _Encoder()
    root = enc(obj)
    header = {"format": FORMAT, "schema": SCHEMA, "kind": kind, "largerot": __version__,
              "written": datetime.datetime.now(datetime.timezone.utc).isoformat(timespec="seconds"),
              "root": root}
    target = Path(filename)
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=target.parent or ".")
    try:
        with os.fdopen(fd, "wb") as raw, zipfile.ZipFile(raw, "w", zipfile.ZIP_STORED) as z:
            z.writestr(_HEADER, json.dumps(header, allow_nan=False))
            for name, a in enc.arrays.items():
                buf = io.BytesIO()
                np.save(buf, a, allow_pickle=False)
                z.writestr(name, buf.getvalue())
        os.replace(tmp, target)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise
    return target


def _open(filename) -> zipfile.ZipFile:
    try:
        return zipfile.ZipFile(filename)
    except FileNotFoundError:
        raise
    except MemoryError:
        raise
    except Exception as exc:
        raise FileFormatError(f"{filename}: not a largerot file, or truncated ({exc}).") from None


def _header(z: zipfile.ZipFile, filename) -> dict:
    try:
        header = json.loads(z.read(_HEADER))
    except KeyError:
        raise FileFormatError(f"{filename}: a zip archive but not a largerot file "
                              f"(no {_HEADER}).") from None
    except MemoryError:
        raise
    except Exception as exc:               # bad CRC, bad compression field, bad JSON...
        raise FileFormatError(f"{filename}: its header is corrupt ({type(exc).__name__}: {exc}).") from None
    if not isinstance(header, dict) or header.get("format") != FORMAT:
        raise FileFormatError(f"{filename}: not a largerot file (format "
                              f"{header.get('format') if isinstance(header, dict) else None!r}).")
    schema = header.get("schema")
    if not isinstance(schema, int) or schema < 1:
        raise FileFormatError(f"{filename}: invalid schema version {schema!r}.")
    if schema > SCHEMA:
        raise FileFormatError(f"{filename}: written with schema {schema} by a newer largerot "
                              f"({header.get('largerot')}); this version reads up to schema {SCHEMA}.")
    return header


def load(filename, kind: str | None = None):
    """Read a file written by :func:`save`.

    Parameters
    ----------
    filename : str or path
    kind : {"structure", "path", "checkpoint", "motion"}, optional
        Demand this kind of object (a :class:`FileFormatError` otherwise).

    Returns
    -------
    Structure, EquilibriumPath or PathStepper
        As saved.

    Raises
    ------
    FileFormatError
        Truncated or corrupt file, another kind of file, a newer schema, or not the
        ``kind`` asked for.
    """
    with _open(filename) as z:
        header = _header(z, filename)
        if kind is not None and header.get("kind") != kind:
            raise FileFormatError(f"{filename}: holds a {header.get('kind')}, not a {kind}.")
        try:
            obj = _Decoder(z)(header["root"])
        except FileFormatError as exc:
            raise FileFormatError(f"{filename}: {exc}") from None
        except MemoryError:
            raise
        except Exception as exc:           # whatever a damaged archive makes a reader raise
            raise FileFormatError(f"{filename}: corrupt ({type(exc).__name__}: {exc}).") from None
    if getattr(type(obj), "saved_kind", None) != header.get("kind"):
        raise FileFormatError(f"{filename}: its header says {header.get('kind')} but it holds "
                              f"a {type(obj).__name__}.")
    return obj
