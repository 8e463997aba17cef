"""Small recover inputs for the scale, resume and corpus tests, written from code.

``write_model`` writes a definition (one 8-ply laminate, the default
criteria), a flat quad mesh (our XDMF writer) and HDF5 resultants of random
but fixed values (seeded), and returns their paths. The broken binary inputs
of the corpus (tests/corpus/cases.toml, ``@name`` entries) are built here too,
so no binary file is kept in git.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from bridge.mesh.formats import write_mesh
from bridge.recover.resultants import write_resultants_h5
from tests.meshes import flat_plate

HERE = Path(__file__).resolve().parent

#: A valid definition; the corpus files under defs/ are variants of it. Strengths after Kaw (2006), Table 2.1
#: (graphite/epoxy); strain allowables illustrative ("from memory").
DEFINITION = (HERE / "base.toml").read_text(encoding="utf-8")

SCALE = np.array([100.0, 50.0, 30.0, 20.0, 10.0, 5.0, 3.0, 2.0])


def resultants(n_cells: int, n_cases: int = 3, seed: int = 0) -> np.ndarray:
    """(n_cases, n_cells, 8) random resultants (N/mm, N·mm/mm), fixed by ``seed``."""
    return np.random.default_rng(seed).normal(size=(n_cases, n_cells, 8)) * SCALE


def write_model(folder: Path, nx: int = 30, ny: int = 20, n_cases: int = 3, seed: int = 0,
                definition: str = DEFINITION) -> dict[str, Path]:
    """definition, mesh (.xdmf + .h5) and resultants (.h5) of an nx × ny quad plate in ``folder``."""
    folder.mkdir(parents=True, exist_ok=True)
    mesh = flat_plate(nx, ny)
    paths = {"definition": folder / "def.toml", "mesh": folder / "mesh.xdmf", "resultants": folder / "res.h5"}
    paths["definition"].write_text(definition, encoding="utf-8")
    write_mesh(paths["mesh"], mesh)
    write_resultants_h5(paths["resultants"], [f"case{k + 1}" for k in range(n_cases)],
                        resultants(mesh.n_cells, n_cases, seed))
    return paths


def _h5(path: Path, **datasets) -> None:
    import h5py

    with h5py.File(path, "w") as h5:
        for name, (data, attrs) in datasets.items():
            ds = h5.create_dataset(name, data=data)
            for key, value in attrs.items():
                ds.attrs[key] = value


def broken_input(name: str, folder: Path, n_cells: int) -> Path:
    """Write the generated corpus input ``name`` (without its ``@``) into ``folder``; return its path."""
    path = folder / f"{name}.h5"
    R = resultants(n_cells, 2)
    names = {"case_names": np.array([b"case1", b"case2"])}
    if name == "res-no-dataset":
        _h5(path, forces=(R, names))
    elif name == "res-7-components":
        _h5(path, resultants=(R[..., :7], names))
    elif name == "res-cell-mismatch":
        _h5(path, resultants=(R[:, :-5], names))
    elif name == "res-case-names":
        _h5(path, resultants=(R, {"case_names": np.array([b"only-one"])}))
    elif name == "res-2d":
        _h5(path, resultants=(R[0], names))
    elif name == "res-nan":
        bad = R.copy()
        bad[1, [3, 7]] = np.nan
        bad[0, 11, 2] = np.inf
        write_resultants_h5(path, ["case1", "case2"], bad)
    elif name == "res-truncated":
        write_resultants_h5(path, ["case1", "case2"], R)
        data = path.read_bytes()
        path.write_bytes(data[: len(data) // 3])
    elif name == "mesh-h5-missing":
        mesh = flat_plate(30, 20)
        path = folder / "lonely.xdmf"
        write_mesh(path, mesh)
        path.with_suffix(".h5").unlink()
    else:
        raise KeyError(f"no generated corpus input named {name!r}")
    return path
