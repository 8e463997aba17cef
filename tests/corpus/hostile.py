"""Hostile and unusual inputs of the corpus, built from code (tests/corpus/cases.toml, ``{gen:NAME}`` and ``@NAME``).

Each generator writes one input into a case's input folder and returns its path: HDF5 resultants with
external links, external storage, virtual datasets, strings, complex numbers or unavailable filters; XDMF
files pointing outside their folder, with malformed Dimensions or entity declarations. Meshes, results stores
and the setups of output folders are in :mod:`tests.corpus.hostile_files`, which registers into the same
``GENERATORS`` and ``SETUPS``.
"""

from __future__ import annotations

import os
import unicodedata
from pathlib import Path
from typing import Callable

import h5py
import numpy as np

from bridge.definition.resultants import COMPONENTS
from bridge.mesh.formats import write_mesh
from bridge.recover.resultants import resultant_arrays, write_resultants_h5, write_resultants_xdmf
from tests.corpus.models import resultants
from tests.meshes import flat_plate

GENERATORS: dict[str, Callable[[Path, dict], Path]] = {}
SETUPS: dict[str, Callable[[dict], Callable[[], None] | None]] = {}
NAMES2 = ["case1", "case2"]


def generator(fn):
    GENERATORS[fn.__name__.replace("_", "-")] = fn
    return fn


def setup(fn):
    SETUPS[fn.__name__.replace("_", "-")] = fn
    return fn


def _names(h5, names) -> None:
    h5.create_dataset("case_names", data=np.array(names, dtype=h5py.string_dtype()))


# ----------------------------------------------------------------------------- hostile HDF5 resultants

def _hostile(folder: Path, name: str, make: Callable) -> Path:
    """An HDF5 resultants file whose /resultants is made by ``make(h5)``, with two case names."""
    path = folder / name
    with h5py.File(path, "w") as h5:
        make(h5)
        _names(h5, NAMES2)
    return path


def _link(target: str, where: str = "resultants") -> Callable:
    def make(h5):
        h5[where] = h5py.ExternalLink(*target.split(":")) if ":" in target else h5py.SoftLink(target)
    return make


@generator
def res_external_link(folder: Path, good: dict) -> Path:
    write_resultants_h5(folder / "elsewhere.h5", NAMES2, resultants(600, 2))
    return _hostile(folder, "res-ext.h5", _link("elsewhere.h5:/resultants"))


@generator
def res_external_passwd(folder: Path, good: dict) -> Path:
    return _hostile(folder, "res-passwd.h5", _link("/etc/passwd:/resultants"))


@generator
def res_external_storage(folder: Path, good: dict) -> Path:
    R = resultants(600, 2)
    (folder / "raw.bin").write_bytes(R.tobytes())
    return _hostile(folder, "res-raw.h5", lambda h5: h5.create_dataset(
        "resultants", shape=R.shape, dtype="<f8", external=[("raw.bin", 0, R.nbytes)]))


@generator
def res_virtual(folder: Path, good: dict) -> Path:
    write_resultants_h5(folder / "source.h5", NAMES2, resultants(600, 2))
    layout = h5py.VirtualLayout(shape=(2, 600, 8), dtype="f8")
    layout[:] = h5py.VirtualSource("source.h5", "resultants", shape=(2, 600, 8))
    return _hostile(folder, "res-virtual.h5", lambda h5: h5.create_virtual_dataset("resultants", layout))


def _typed(folder: Path, name: str, data) -> Path:
    return _hostile(folder, name, lambda h5: h5.create_dataset("resultants", data=data))


@generator
def res_strings(folder: Path, good: dict) -> Path:
    return _typed(folder, "res-strings.h5", np.full((2, 600, 8), "1.0", dtype=object).astype(h5py.string_dtype()))


@generator
def res_numeric_bytes(folder: Path, good: dict) -> Path:
    return _typed(folder, "res-bytes.h5", np.full((2, 600, 8), b"1.0", dtype="S3"))


@generator
def res_complex(folder: Path, good: dict) -> Path:
    return _typed(folder, "res-complex.h5", resultants(600, 2) * (1 + 1j))


@generator
def res_compound(folder: Path, good: dict) -> Path:
    data = np.zeros((2, 600, 8), dtype=[("a", "f8"), ("b", "i4")])
    return _typed(folder, "res-compound.h5", data)


@generator
def res_filter_missing(folder: Path, good: dict) -> Path:
    path = folder / "res-filter.h5"
    with h5py.File(path, "w") as h5:
        dcpl = h5py.h5p.create(h5py.h5p.DATASET_CREATE)
        dcpl.set_chunk((1, 600, 8))
        dcpl.set_filter(32001, h5py.h5z.FLAG_OPTIONAL)  # a third-party compressor not installed here
        space = h5py.h5s.create_simple((2, 600, 8))
        dsid = h5py.h5d.create(h5.id, b"resultants", h5py.h5t.IEEE_F64LE, space, dcpl=dcpl)
        dsid.write(h5py.h5s.ALL, h5py.h5s.ALL, resultants(600, 2))
        _names(h5, NAMES2)
    return path


def _named(folder: Path, name: str, names, n: int = 600) -> Path:
    path = folder / name
    with h5py.File(path, "w") as h5:
        h5.create_dataset("resultants", data=resultants(n, len(names)))
        h5.create_dataset("case_names", data=names)
    return path


@generator
def res_names_int(folder: Path, good: dict) -> Path:
    return _named(folder, "res-names-int.h5", np.array([1, 2]))


@generator
def res_names_newline(folder: Path, good: dict) -> Path:
    return _named(folder, "res-names-nl.h5", np.array(["case1\nmin_margin\t-99", "case2"], dtype=h5py.string_dtype()))


@generator
def res_names_nul(folder: Path, good: dict) -> Path:
    return _named(folder, "res-names-nul.h5", np.array([b"ca\x00se1", b"case2"], dtype="S6"))


@generator
def res_names_escape(folder: Path, good: dict) -> Path:
    return _named(folder, "res-names-esc.h5", np.array(["\x1b]0;owned\x07", "case2"], dtype=h5py.string_dtype()))


@generator
def res_names_c1(folder: Path, good: dict) -> Path:
    return _named(folder, "res-names-c1.h5", np.array(["case\x851", "case\x9b2"], dtype=h5py.string_dtype()))


@generator
def res_names_long(folder: Path, good: dict) -> Path:
    return _named(folder, "res-names-long.h5", np.array(["c" * 5000, "case2"], dtype=h5py.string_dtype()))


@generator
def res_names_nfc(folder: Path, good: dict) -> Path:
    a, b = unicodedata.normalize("NFC", "café"), unicodedata.normalize("NFD", "café")
    return _named(folder, "res-names-nfc.h5", np.array([a, b], dtype=h5py.string_dtype()))


@generator
def res_names_not_utf8(folder: Path, good: dict) -> Path:
    return _named(folder, "res-names-latin1.h5", np.array([b"caf\xe9", b"case2"], dtype="S5"))


@generator
def res_soft_dangling(folder: Path, good: dict) -> Path:
    return _hostile(folder, "res-dangling.h5", _link("/nowhere"))


@generator
def res_soft_inside(folder: Path, good: dict) -> Path:
    def make(h5):
        h5.create_dataset("data", data=resultants(600, 2))
        h5["data"].attrs["components"] = np.array(COMPONENTS, dtype=h5py.string_dtype())
        _link("/data")(h5)
    return _hostile(folder, "res-soft.h5", make)


@generator
def res_group(folder: Path, good: dict) -> Path:
    path = folder / "res-group.h5"
    with h5py.File(path, "w") as h5:
        h5.create_group("resultants")
    return path


@generator
def res_not_hdf5(folder: Path, good: dict) -> Path:
    path = folder / "res-text.h5"
    path.write_text("Nx Ny Nxy\n1 2 3\n", encoding="utf-8")
    return path


@generator
def res_folder(folder: Path, good: dict) -> Path:
    path = folder / "res-folder.h5"
    path.mkdir()
    return path


@generator
def res_100001_cases(folder: Path, good: dict) -> Path:
    """100,001 cases declared, nothing written (chunked, fill value): a small file that asks for 74.5 GiB."""
    path = folder / "res-100001.h5"
    with h5py.File(path, "w") as h5:
        h5.create_dataset("resultants", shape=(100_001, 600, 8), dtype="f8", chunks=(1, 600, 8))
        _names(h5, [f"c{k}" for k in range(100_001)])
    return path


@generator
def res_5000_cases(folder: Path, good: dict) -> Path:
    """5000 cases of a 10-cell plate (inside the documented bound of 100,000)."""
    path = folder / "res-5000.h5"
    write_resultants_h5(path, [f"load case {k}" for k in range(5000)], resultants(10, 5000))
    return path


@generator
def res_huge_values(folder: Path, good: dict) -> Path:
    R = resultants(600, 2)
    R[0, 5] = 1e308
    path = folder / "res-huge.h5"
    write_resultants_h5(path, NAMES2, R)
    return path


def _res_vtu(folder: Path, stem: str, n_cells_mesh=flat_plate(30, 20)) -> Path:
    path = folder / f"{stem}.vtu"
    write_mesh(path, n_cells_mesh, resultant_arrays(resultants(n_cells_mesh.n_cells, 1)[0]))
    return path


@generator
def res_vtu_newline_stem(folder: Path, good: dict) -> Path:
    return _res_vtu(folder, "pull\nmin_margin\t-1")


@generator
def res_vtu_escape_stem(folder: Path, good: dict) -> Path:
    return _res_vtu(folder, "pull\x1b[2J")


@generator
def res_xdmf_newline_case(folder: Path, good: dict) -> Path:
    path = folder / "res-series.xdmf"
    write_resultants_xdmf(path, flat_plate(30, 20), ["pull\nfake\t1", "bend"], resultants(600, 2))
    return path


@generator
def res_xdmf_outside(folder: Path, good: dict) -> Path:
    """XDMF resultants in a sub-folder whose heavy data is the .h5 one folder up."""
    sub = folder / "sub"
    sub.mkdir()
    write_resultants_xdmf(folder / "series.xdmf", flat_plate(30, 20), NAMES2, resultants(600, 2))
    text = (folder / "series.xdmf").read_text().replace(">series.h5:", ">../series.h5:")
    (sub / "series.xdmf").write_text(text)
    (folder / "series.xdmf").unlink()
    return sub / "series.xdmf"


@generator
def res_xdmf_reshaped(folder: Path, good: dict) -> Path:
    """XDMF resultants whose N DataItem declares the right number of values in the wrong shape (300 × 6)."""
    path = folder / "reshaped.xdmf"
    write_resultants_xdmf(path, flat_plate(30, 20), NAMES2, resultants(600, 2))
    text = path.read_text()
    at = text.index('<Attribute Name="N"')
    path.write_text(text[:at] + text[at:].replace('Dimensions="600 3"', 'Dimensions="300 6"', 1))
    return path


# ----------------------------------------------------------------------------- XDMF meshes

def _xdmf_variant(folder: Path, name: str, old: str, new: str, count: int = 1) -> Path:
    path = folder / f"{name}.xdmf"
    write_mesh(path, flat_plate(30, 20))
    text = path.read_text()
    assert old in text, (old, text[:400])
    path.write_text(text.replace(old, new, count))
    return path


@generator
def xdmf_absolute_passwd(folder: Path, good: dict) -> Path:
    return _xdmf_variant(folder, "abs", "abs.h5:/mesh/points", "/etc/passwd:/mesh/points")


@generator
def xdmf_parent_folder(folder: Path, good: dict) -> Path:
    write_mesh(folder.parent / "outside.xdmf", flat_plate(30, 20))
    return _xdmf_variant(folder, "parent", "parent.h5:/mesh/points", "../outside.h5:/mesh/points")


@generator
def xdmf_symlink_out(folder: Path, good: dict) -> Path:
    write_mesh(folder.parent / "far.xdmf", flat_plate(30, 20))
    os.symlink(folder.parent / "far.h5", folder / "near.h5")
    return _xdmf_variant(folder, "linked", "linked.h5:/mesh/points", "near.h5:/mesh/points")


#: Malformed Dimensions of the points DataItem: generator name → Dimensions text.
BAD_DIMENSIONS = {"xdmf-dims-words": "651 x", "xdmf-dims-negative": "-651 -3", "xdmf-dims-mismatch": "600 3",
                  "xdmf-dims-many": "1 1 1 1 1 1 1 651 3", "xdmf-dims-huge": "99999999999999999999 3"}
for _name, _dims in BAD_DIMENSIONS.items():
    GENERATORS[_name] = (lambda folder, good, name=_name, dims=_dims:
                         _xdmf_variant(folder, name[5:], 'Dimensions="651 3"', f'Dimensions="{dims}"'))


@generator
def xdmf_xml_words(folder: Path, good: dict) -> Path:
    path = folder / "xmlwords.xdmf"
    path.write_text('<?xml version="1.0"?>\n<Xdmf Version="3.0"><Domain><Grid Name="m">'
                    '<Topology TopologyType="Triangle" NumberOfElements="1">'
                    '<DataItem Format="XML" DataType="Int" Precision="8" Dimensions="1 3">0 1 two</DataItem>'
                    '</Topology><Geometry GeometryType="XYZ"><DataItem Format="XML" Dimensions="3 3">'
                    '0 0 0 1 0 0 0 1 0</DataItem></Geometry></Grid></Domain></Xdmf>\n')
    return path


@generator
def xdmf_entities(folder: Path, good: dict) -> Path:
    path = folder / "laughs.xdmf"
    ents = '<!ENTITY a "aaaaaaaaaa">' + "".join(f'<!ENTITY {c} "{("&" + p + ";") * 10}">'
                                                for p, c in zip("abcdefgh", "bcdefghi"))
    path.write_text(f'<?xml version="1.0"?>\n<!DOCTYPE Xdmf [{ents}]>\n<Xdmf Version="3.0"><Domain>'
                    '<Grid Name="&i;"/></Domain></Xdmf>\n')
    return path


@generator
def xdmf_xinclude_out(folder: Path, good: dict) -> Path:
    path = folder / "include.xdmf"
    path.write_text('<?xml version="1.0"?>\n<Xdmf Version="3.0" xmlns:xi="http://www.w3.org/2001/XInclude">'
                    '<Domain><xi:include href="/etc/passwd" parse="text"/></Domain></Xdmf>\n')
    return path


@generator
def xdmf_binary_out(folder: Path, good: dict) -> Path:
    return _xdmf_variant(folder, "binary", 'Format="HDF" Dimensions="651 3">binary.h5:/mesh/points',
                         'Format="Binary" Dimensions="651 3">/etc/passwd')


def _heavy_edit(folder: Path, name: str, edit) -> Path:
    path = folder / f"{name}.xdmf"
    write_mesh(path, flat_plate(30, 20))
    with h5py.File(path.with_suffix(".h5"), "a") as h5:
        edit(h5)
    return path


@generator
def xdmf_heavy_strings(folder: Path, good: dict) -> Path:
    def edit(h5):
        del h5["mesh/points"]
        h5.create_dataset("mesh/points", data=np.full((651, 3), "0.5", dtype=object).astype(h5py.string_dtype()))
    return _heavy_edit(folder, "heavy-strings", edit)


@generator
def xdmf_heavy_complex(folder: Path, good: dict) -> Path:
    def edit(h5):
        pts = h5["mesh/points"][()]
        del h5["mesh/points"]
        h5.create_dataset("mesh/points", data=pts * (1 + 1j))
    return _heavy_edit(folder, "heavy-complex", edit)


@generator
def xdmf_heavy_external(folder: Path, good: dict) -> Path:
    def edit(h5):
        h5["stolen"] = h5py.ExternalLink("/etc/passwd", "/")
    return _heavy_edit(folder, "heavy-ext", edit)


@generator
def xdmf_heavy_missing_dataset(folder: Path, good: dict) -> Path:
    def edit(h5):
        del h5["mesh/topology"]
    return _heavy_edit(folder, "heavy-missing", edit)

