"""The rules for loading HDF5 and XDMF files that may be hostile (docs/scale.md, "Loading and safety rules").

Every HDF5 file plybridge reads — resultants, XDMF heavy data, results stores, solver ply values, meshio's
HDF5-based formats — is opened through :func:`open_h5`, which walks its links once and refuses:

- external links (a link to an object of another file) and soft links whose target is not in the file;
- datasets with external raw storage (the values live in another file), virtual datasets (their values are
  gathered from other files), and datasets whose compression filter is not available here.

Datasets are then taken with :func:`dataset`, which checks the number type (numbers only: no strings,
complex numbers or compound records) and the shape **before** anything is read; names (case names) with
:func:`read_names`. XDMF files go through :func:`check_xdmf` (every heavy-data path must resolve inside the
XDMF file's folder; no entity declarations) and :func:`dimensions` (well-formed ``Dimensions``).
Every refusal is one :class:`shells.errors.InputError` naming the file and the dataset.
"""

from __future__ import annotations

import contextlib
import os
import xml.etree.ElementTree as ET
from pathlib import Path
from typing import Iterator, Sequence

import numpy as np

from shells.errors import InputError, MeshError

HDF5_SIGNATURE = b"\x89HDF\r\n\x1a\n"
#: Most links walked in one file (a results store has about 60).
MAX_LINKS = 100_000
#: Most names read from one list (ten times the case bound: the run's own bounds and memory estimate decide).
MAX_NAMES = 1_000_000
#: Most dimensions of an XDMF DataItem.
MAX_DIMS = 8
XINCLUDE = ("{http://www.w3.org/2001/XInclude}include", "{http://www.w3.org/2003/XInclude}include")


# ----------------------------------------------------------------------------- HDF5

@contextlib.contextmanager
def open_h5(path: str | os.PathLike, error: type[InputError] = InputError,
            what: str = "an HDF5 file") -> Iterator:
    """Open ``path`` read-only (no file locking) after :func:`check_file`; closed on exit.

    Raises
    ------
    error
        The file is missing, not HDF5 (or damaged), or breaks a rule of the module notes.
    """
    import h5py

    path = str(path)
    try:
        h5 = h5py.File(path, "r", locking=False)
    except FileNotFoundError:
        raise error("file not found; check the path", path) from None
    except PermissionError:
        raise error("no permission to read the file; check its permissions", path) from None
    except IsADirectoryError:
        raise error("is a folder; give the file", path) from None
    except OSError:
        raise error(f"cannot be opened as {what} (not HDF5, truncated or damaged); write it again",
                    path) from None
    try:
        check_file(h5, path, error)
        yield h5
    finally:
        h5.close()


def check_file(h5, path: str, error: type[InputError] = InputError) -> None:
    """Walk every link of an open file once and refuse what the module notes list."""
    import h5py

    count = 0

    def visit(name: str):
        # Returns the refusal (which stops the walk): an exception raised inside h5py's callback would not
        # come out cleanly.
        nonlocal count
        count += 1
        if count > MAX_LINKS:
            return error(f"more than {MAX_LINKS} objects; this is not a file plybridge writes or reads", path)
        link = h5.get(name, getlink=True)
        if isinstance(link, h5py.ExternalLink):
            return error(f"/{name} is an external link to {link.filename}:{link.path}; links leaving the file "
                         "are refused. Copy the data into the file", path)
        if isinstance(link, h5py.SoftLink):
            if h5.get(name) is None:
                return error(f"/{name} is a soft link to {link.path}, which is not in the file; copy the data "
                             "into the file", path)
            return None
        obj = h5.get(name)
        if isinstance(obj, h5py.Dataset):
            try:
                check_storage(obj, path, error)
            except InputError as exc:
                return exc
        return None

    try:
        found = h5.visit_links(visit)
    except (OSError, RuntimeError, KeyError, ValueError) as exc:
        raise error(f"damaged HDF5 structure ({' '.join(str(exc).split())[:120]}); write the file again",
                    path) from None
    if found is not None:
        raise found


def check_storage(ds, path: str, error: type[InputError] = InputError) -> None:
    """Refuse a dataset stored outside the file (external raw storage, virtual) or with an unavailable filter."""
    import h5py

    name = ds.name
    if ds.is_virtual:
        raise error(f"dataset {name} is a virtual dataset (its values come from other files); refused. Write "
                    "the values into the file", path)
    dcpl = ds.id.get_create_plist()
    if dcpl.get_external_count() > 0:
        raise error(f"dataset {name} keeps its values in external raw files; refused. Write the values into "
                    "the file", path)
    for i in range(dcpl.get_nfilters()):
        code, _, _, label = dcpl.get_filter(i)
        if not h5py.h5z.filter_avail(code):
            label = label.decode(errors="replace") if isinstance(label, bytes) else str(label)
            raise error(f"dataset {name} is compressed with filter {code} ({label or 'unknown'}), which is not "
                        "available here; write it with gzip or without compression", path)


def dataset(h5, name: str, path: str, error: type[InputError] = InputError, *,
            shape: Sequence[int | None] | None = None, kinds: str = "fiu"):
    """The dataset ``name`` after checking its type and shape (nothing read yet).

    Parameters
    ----------
    shape : sequence of int or None, optional
        Expected shape; ``None`` entries take any length.
    kinds : str
        numpy kinds accepted (``f`` float, ``i`` signed, ``u`` unsigned integers, ``b`` booleans).

    Raises
    ------
    error
        Missing, not a dataset, of another number type or shape; the message names the file and the dataset.
    """
    import h5py

    obj = h5.get(name)
    if obj is None:
        raise error(f"no dataset /{name.lstrip('/')}; found {', '.join(list(h5)[:20]) or 'nothing'}", path)
    if not isinstance(obj, h5py.Dataset):
        raise error(f"/{name.lstrip('/')} is a group, not a dataset", path)
    check_storage(obj, path, error)
    dt = obj.dtype
    if dt.kind not in kinds or dt.fields is not None or dt.subdtype is not None:
        want = {"f": "floating-point", "i": "integer", "u": "integer", "b": "boolean"}
        raise error(f"dataset {obj.name} holds {describe_dtype(dt)}; expected {' or '.join(dict.fromkeys(want[k] for k in kinds))} "
                    "numbers", path)
    if shape is not None:
        if len(obj.shape) != len(shape) or any(w is not None and w != s for w, s in zip(shape, obj.shape)):
            want = "(" + ", ".join("any" if w is None else str(w) for w in shape) + ")"
            raise error(f"dataset {obj.name} has shape {obj.shape}; expected {want}", path)
    return obj


def describe_dtype(dt) -> str:
    import h5py

    if h5py.check_string_dtype(dt) is not None or dt.kind in "SUO":
        return "text (strings)"
    return {"c": "complex numbers", "V": "compound records", "b": "booleans"}.get(dt.kind, f"values of type {dt}")


def read_names(holder, key: str, path: str, count: int | None = None,
               error: type[InputError] = InputError) -> list[str]:
    """A list of names: the attribute ``key`` of ``holder`` or, for long lists, the dataset ``key`` beside it.

    Names must be text; at most :data:`MAX_NAMES`; each is checked as a name (NFC, bounded, no control
    characters; :func:`bridge.definition.schema.check_name`), and none may repeat.
    """
    import h5py

    from bridge.definition.schema import check_names

    where = f"{holder.name.rstrip('/')}/{key}" if key not in holder.attrs else f"attribute {key} of {holder.name}"
    if key in holder.attrs:
        raw = holder.attrs[key]
    else:
        parent = holder if isinstance(holder, h5py.Group) else holder.parent
        obj = parent.get(key)
        if obj is None:
            return []
        if not isinstance(obj, h5py.Dataset) or obj.ndim != 1:
            raise error(f"{obj.name} must be a one-dimensional list of names", path)
        check_storage(obj, path, error)
        if obj.shape[0] > MAX_NAMES:
            raise error(f"{obj.name} holds {obj.shape[0]} names, more than {MAX_NAMES}; split the file", path)
        where = obj.name
        if h5py.check_string_dtype(obj.dtype) is None and obj.dtype.kind not in "SU":
            raise error(f"{where} holds {describe_dtype(obj.dtype)}; expected text (names)", path)
        raw = obj[()]
    arr = np.atleast_1d(np.asarray(raw, dtype=object))
    if arr.ndim != 1 or (count is not None and len(arr) != count):
        raise error(f"{where} has {arr.size} names for {count} items; give one name per item", path)
    if len(arr) > MAX_NAMES:
        raise error(f"{where} holds {len(arr)} names, more than {MAX_NAMES}; split the file", path)
    names = []
    for v in arr:
        if isinstance(v, bytes):
            try:
                v = v.decode("utf-8")
            except UnicodeDecodeError:
                raise error(f"{where}: a name is not UTF-8 text; write the names as UTF-8", path) from None
        if not isinstance(v, str):
            raise error(f"{where} holds {type(v).__name__} values; expected text (names)", path)
        names.append(v)
    return list(check_names(names, where, error, path))


# ----------------------------------------------------------------------------- XDMF

def _xdmf_refs(root: ET.Element) -> Iterator[tuple[str, str]]:
    """(kind, file reference) of every heavy-data DataItem and XInclude of an XDMF tree."""
    for el in root.iter():
        if el.tag == "DataItem" and el.get("Format", "XML") in ("HDF", "Binary") and not el.get("Reference"):
            text = (el.text or "").strip()
            ref = text.rpartition(":")[0] if el.get("Format") == "HDF" else text
            yield f"DataItem {el.get('Name') or text}", ref
        elif el.tag in XINCLUDE and el.get("href"):
            yield "xi:include", el.get("href")


def inside(xdmf_path: str | os.PathLike, ref: str, where: str = "heavy data",
           error: type[InputError] = MeshError) -> Path:
    """The file ``ref`` of an XDMF file, resolved (links followed); refused unless it lies in the XDMF folder."""
    folder = Path(xdmf_path).resolve().parent
    if not ref:
        raise error(f"{where}: no file named; write FILE.h5:/dataset", str(xdmf_path))
    target = (folder / ref).resolve()
    if target.parent != folder and folder not in target.parents:
        raise error(f"{where}: the data file {ref!r} resolves outside the folder of the XDMF file ({target}); "
                    "keep the heavy data beside the XDMF file", str(xdmf_path))
    return target


def check_xdmf(xdmf_path: str | os.PathLike, root: ET.Element, error: type[InputError] = MeshError) -> None:
    """Refuse an XDMF tree whose heavy data or included files lie outside its folder, or whose HDF5 files
    break the HDF5 rules (checked once per file, whichever reader then reads them)."""
    checked = set()
    for where, ref in _xdmf_refs(root):
        target = inside(xdmf_path, ref, where, error)
        if where.startswith("DataItem") and target not in checked and target.is_file():
            checked.add(target)
            with open(target, "rb") as fh:
                if fh.read(8) == HDF5_SIGNATURE:
                    with open_h5(target, error, "the XDMF heavy data"):
                        pass


def check_prolog(xdmf_path: str | os.PathLike, error: type[InputError] = MeshError) -> None:
    """Refuse entity declarations (``<!ENTITY``) before the root element: XDMF needs none."""
    with open(xdmf_path, "rb") as fh:
        head = fh.read(65536)
    root = head.find(b"<Xdmf")
    if b"<!ENTITY" in (head if root < 0 else head[:root]):
        raise error("the XML declares entities (<!ENTITY); XDMF needs none. Remove the declarations",
                    str(xdmf_path))


def xdmf_data_files(xdmf_path: str | os.PathLike) -> list[Path]:
    """The heavy-data files an XDMF file names (best effort, for the output guard; never raises)."""
    try:
        root = ET.parse(xdmf_path).getroot()
        folder = Path(xdmf_path).parent
        return [folder / ref for _, ref in _xdmf_refs(root) if ref]
    except (OSError, ET.ParseError, ValueError):
        return []


def is_xdmf_companion(xdmf_path: str | os.PathLike, h5_path: str | os.PathLike) -> bool:
    """True when ``h5_path`` is the heavy data of the XDMF file ``xdmf_path`` and holds nothing else.

    The XDMF file must exist, name ``h5_path`` (same file by device and inode) in its ``HDF`` DataItems, and
    every dataset of ``h5_path`` must be one of those items: replacing the pair then loses nothing. Anything
    else (no XDMF file, another file's data, a results store or resultants that happen to share the stem, a
    file that is not HDF5) is False. Never raises.
    """
    try:
        check_prolog(xdmf_path)
        root = ET.parse(xdmf_path).getroot()
        if root.tag != "Xdmf":
            return False
        target = os.stat(h5_path)
        folder = Path(xdmf_path).parent
        used = set()
        for el in root.iter("DataItem"):
            if el.get("Format") != "HDF" or el.get("Reference"):
                continue
            ref, _, name = (el.text or "").strip().rpartition(":")
            st = os.stat(folder / ref) if ref and (folder / ref).exists() else None
            if st is not None and (st.st_dev, st.st_ino) == (target.st_dev, target.st_ino):
                used.add("/" + name.strip("/"))
        if not used:
            return False
        with open_h5(h5_path, MeshError) as h5:
            held = []
            h5.visititems(lambda key, obj: held.append("/" + key) if hasattr(obj, "shape") else None)
        return all(key in used for key in held)
    except (InputError, OSError, ET.ParseError, ValueError):
        return False


def dimensions(item: ET.Element, xdmf_path: str, error: type[InputError] = MeshError) -> tuple[int, ...]:
    """The ``Dimensions`` of a DataItem as whole numbers (empty when absent)."""
    text = item.get("Dimensions", "")
    parts = text.split()
    try:
        dims = tuple(int(d) for d in parts)
    except ValueError:
        dims = ()
    if (len(dims) != len(parts) or len(dims) > MAX_DIMS or any(d < 0 for d in dims)
            or np.prod([float(d) for d in dims]) > 2.0 ** 62):
        raise error(f"DataItem {item.get('Name') or (item.text or '').strip()[:60]!r}: Dimensions={text!r} is "
                    "not a list of up to 8 whole numbers; fix the XDMF file", xdmf_path)
    return dims


def heavy(xdmf_path: str, text: str, dims: tuple[int, ...], error: type[InputError] = MeshError,
          kinds: str = "fiub", read: bool = True) -> tuple[Path, str, tuple, np.ndarray | None]:
    """``FILE.h5:/dataset`` of an XDMF DataItem under the rules (folder, links, type, size vs Dimensions).

    Returns
    -------
    (file, dataset name, shape, values or None when ``read`` is False)
    """
    fname, _, name = text.rpartition(":")
    full = inside(xdmf_path, fname, f"DataItem {text!r}", error)
    if not full.is_file():
        raise error(f"data file {full} not found; keep the .h5 beside the .xdmf", xdmf_path)
    with open_h5(full, error, "the XDMF heavy data") as h5:
        try:
            ds = dataset(h5, name, str(full), error, kinds=kinds)
        except InputError as exc:
            raise error(f"DataItem {text!r}: {exc}", xdmf_path) from None
        if dims and int(np.prod(dims, dtype=np.int64)) != ds.size:
            raise error(f"DataItem {text!r}: Dimensions {' '.join(map(str, dims))} give "
                        f"{int(np.prod(dims, dtype=np.int64))} values but {full.name}:{ds.name} holds {ds.size} "
                        f"(shape {ds.shape}); fix Dimensions or the data", xdmf_path)
        return full, name, ds.shape, (ds[()] if read else None)

