"""Hostile and unusual meshes, results stores and output folders of the corpus, built from code.

The second half of :mod:`tests.corpus.hostile` (same registries): meshes with duplicate cells, flipped
neighbours, solid cells or absurd coordinates; results stores with their completeness record removed or
altered; setups (``setup = NAME``) that prepare the output folder: planted links, hard links, an unfinished run,
a held lock.
"""

from __future__ import annotations

import fcntl
import os
import shutil
from pathlib import Path
from typing import Callable

import h5py
import numpy as np

from bridge.mesh.formats import write_mesh
from bridge.recover.resultants import write_resultants_h5
from tests.corpus.hostile import GENERATORS, NAMES2, SETUPS, generator, setup
from tests.corpus.models import resultants
from tests.meshes import flat_plate, grid_points, grid_quads


# ----------------------------------------------------------------------------- meshes

def _vtu(folder: Path, name: str, points, blocks) -> Path:
    import meshio

    path = folder / f"{name}.vtu"
    meshio.write(str(path), meshio.Mesh(np.asarray(points, float), blocks), file_format="vtu")
    return path


@generator
def mesh_duplicate_cells(folder: Path, good: dict) -> Path:
    q = grid_quads(4, 3)
    return _vtu(folder, "duplicates", grid_points(4, 3), [("quad", np.vstack([q, q[[4, 7]]]))])


@generator
def mesh_flipped_neighbour(folder: Path, good: dict) -> Path:
    q = grid_quads(4, 3).copy()
    q[5] = q[5, ::-1]
    return _vtu(folder, "flipped", grid_points(4, 3), [("quad", q)])


@generator
def mesh_shell_and_solid(folder: Path, good: dict) -> Path:
    pts = grid_points(4, 3)
    top = pts[:4] + [0, 0, 0.5]
    base = np.array([0, 1, 6, 5])
    hexa = np.concatenate([base, len(pts) + np.array([0, 1, 3, 2])])[None, :]
    pts = np.vstack([pts, top[[0, 1]], top[[0, 1]] + [0, 0.5, 0]])
    return _vtu(folder, "shell-solid", pts, [("quad", grid_quads(4, 3)), ("hexahedron", hexa)])


@generator
def mesh_inf_coordinate(folder: Path, good: dict) -> Path:
    pts = grid_points(4, 3)
    pts[6, 0] = np.inf
    return _vtu(folder, "inf-node", pts, [("quad", grid_quads(4, 3))])


@generator
def mesh_huge_coordinate(folder: Path, good: dict) -> Path:
    pts = grid_points(4, 3)
    pts[6, 1] = 1e300
    return _vtu(folder, "huge-node", pts, [("quad", grid_quads(4, 3))])


@generator
def mesh_tiny_coordinates(folder: Path, good: dict) -> Path:
    return _vtu(folder, "tiny", grid_points(4, 3) * 1e-300, [("quad", grid_quads(4, 3))])


@generator
def mesh_plate_10(folder: Path, good: dict) -> Path:
    path = folder / "plate10.xdmf"
    write_mesh(path, flat_plate(5, 2))
    return path


@generator
def mesh_hdf5_external(folder: Path, good: dict) -> Path:
    """An HDF5-based mesh format (MOAB .h5m, read by meshio) holding an external link."""
    path = folder / "model.h5m"
    with h5py.File(path, "w") as h5:
        h5["tstt"] = h5py.ExternalLink("/etc/passwd", "/")
    return path


for _n in (12, 13, 14):
    def _cells(folder: Path, good: dict, n=_n) -> Path:
        path = folder / f"res{n}.h5"
        write_resultants_h5(path, NAMES2, resultants(n, 2))
        return path
    GENERATORS[f"res-cells-{_n}"] = _cells


# ----------------------------------------------------------------------------- results stores

def _store_copy(folder: Path, good: dict, name: str) -> Path:
    path = folder / name
    shutil.copy(good["store"], path)
    return path


@generator
def store_no_check(folder: Path, good: dict) -> Path:
    path = _store_copy(folder, good, "no-check.h5")
    with h5py.File(path, "a") as h5:
        del h5["check"]
    return path


@generator
def store_uncovered(folder: Path, good: dict) -> Path:
    path = _store_copy(folder, good, "holes.h5")
    with h5py.File(path, "a") as h5:
        h5["cells/critical_ply"][100:160] = -1
    return path


@generator
def store_digest_altered(folder: Path, good: dict) -> Path:
    path = _store_copy(folder, good, "altered.h5")
    with h5py.File(path, "a") as h5:
        h5["check"].attrs["digest"] = "0" * 64
    return path


@generator
def store_blocks_altered(folder: Path, good: dict) -> Path:
    path = _store_copy(folder, good, "short.h5")
    with h5py.File(path, "a") as h5:
        blocks = h5["check/blocks"][()]
        blocks[-1, 1] -= 10
        h5["check/blocks"][...] = blocks
    return path


@generator
def store_external_link(folder: Path, good: dict) -> Path:
    path = _store_copy(folder, good, "linked-store.h5")
    with h5py.File(path, "a") as h5:
        h5["model/extra"] = h5py.ExternalLink("/etc/passwd", "/")
    return path


@generator
def store_virtual(folder: Path, good: dict) -> Path:
    path = _store_copy(folder, good, "virtual-store.h5")
    with h5py.File(path, "a") as h5:
        layout = h5py.VirtualLayout(shape=(600,), dtype="f8")
        layout[:] = h5py.VirtualSource("/etc/passwd", "x", shape=(600,))
        del h5["cells/min_margin"]
        h5.create_virtual_dataset("cells/min_margin", layout)
    return path


@generator
def store_dollar(folder: Path, good: dict) -> Path:
    from bridge.recover.run import run_recover

    text = good["definition"].read_text().replace("[laminates.skin]", '[laminates."s$k$in"]').replace(
        'laminate = "skin"', 'laminate = "s$k$in"').replace('name = "plate"', 'name = "$x$"')
    (folder / "dollar.toml").write_text(text, encoding="utf-8")
    path = folder / "dollar-store.h5"
    run_recover(str(folder / "dollar.toml"), str(good["mesh"]), [str(good["resultants"])], str(path))
    return path


# ----------------------------------------------------------------------------- setups of the output folder

#: Links planted before a run: setup name → (symbolic?, the file linked to, the link). "victim.h5" is a copy
#: of the resultants made for the purpose: it must come out unchanged.
LINKS = {
    "hardlink-output-to-resultants": (False, "in/res.h5", "out/RESULT.h5"),
    "symlink-output-to-definition": (True, "in/def.toml", "out/RESULT.h5"),
    "symlink-view-to-mesh": (True, "in/mesh.xdmf", "out/view.xdmf"),
    "symlink-at-partial": (True, "in/victim.h5", "out/.RESULT.h5.partial.h5"),
    "hardlink-at-partial": (False, "in/victim.h5", "out/.RESULT.h5.partial.h5"),
    "symlink-at-lock": (True, "in/victim.h5", "out/.RESULT.h5.lock"),
}


def _plant(name: str) -> Callable[[dict], None]:
    symbolic, target, link = LINKS[name]

    def plant(ctx: dict) -> None:
        def where(rel):
            folder, _, file = rel.partition("/")
            return ctx[folder] / file

        if target.endswith("victim.h5"):
            shutil.copy(ctx["in"] / "res.h5", where(target))
        (os.symlink if symbolic else os.link)(where(target), where(link))
        if name == "hardlink-at-partial":
            (ctx["out"] / ".RESULT.h5.partial.json").write_text("{}")
    return plant


SETUPS.update({name: _plant(name) for name in LINKS})


@setup
def previous_store(ctx: dict):
    shutil.copy(ctx["store"], ctx["out"] / "RESULT.h5")


@setup
def stale_view_pair(ctx: dict):
    """out/RESULT.xdmf from an earlier --view, whose RESULT.h5 was since replaced by a results store."""
    from bridge.mesh.formats import xdmf
    from tests.meshes import flat_plate

    xdmf.write(ctx["out"] / "RESULT.xdmf", flat_plate(2, 1))
    shutil.copy(ctx["store"], ctx["out"] / "RESULT.h5")


@setup
def earlier_view(ctx: dict):
    """out/view.xdmf + view.h5 written by an earlier --view (replaced by the next run)."""
    from bridge.mesh.formats import xdmf
    from tests.meshes import flat_plate

    xdmf.write(ctx["out"] / "view.xdmf", flat_plate(2, 1))


@setup
def hold_lock(ctx: dict):
    fd = os.open(ctx["out"] / ".RESULT.h5.lock", os.O_RDWR | os.O_CREAT, 0o644)
    fcntl.flock(fd, fcntl.LOCK_EX)
    return lambda: os.close(fd)


@setup
def unfinished_run(ctx: dict):
    """An interrupted run of the valid inputs into out/RESULT.h5 (blocks of 100 cells, stopped after 300)."""
    from bridge.recover.run import run_recover

    class Stop(KeyboardInterrupt):
        pass

    def stop(done, total):
        if done >= 300:
            raise Stop

    try:
        run_recover(str(ctx["good"]["definition"]), str(ctx["in"] / "mesh.xdmf"), [str(ctx["in"] / "res.h5")],
                    str(ctx["out"] / "RESULT.h5"), progress=stop, block_cells=100)
    except Stop:
        pass


@setup
def assigned_vtu_first(ctx: dict):
    from click.testing import CliRunner

    from bridge.cli import main

    res = CliRunner().invoke(main, ["assign", str(ctx["in"] / "def.toml"), str(ctx["in"] / "mesh.xdmf"), "-o",
                                    str(ctx["out"] / "assigned.vtu")])
    assert res.exit_code == 0, res.stderr
