"""Small shell meshes for tests, with known geometry, and hand-written Gmsh ASCII files.

Every builder returns a :class:`bridge.mesh.ShellMesh` whose cells are
counter-clockwise seen from the side the normal points to (docs/conventions.md).
The Gmsh writers exist because meshio's ASCII Gmsh writer is broken on numpy 2
(meshio issue #1499); they follow the MSH 2.2 and 4.1
layouts of the Gmsh reference manual (section "MSH file format").
"""

from __future__ import annotations

import numpy as np

from bridge.atomic import atomic_path, write_text
from bridge.mesh.shell import ShellMesh


def grid_points(nx: int, ny: int, lx: float = 2.0, ly: float = 1.0) -> np.ndarray:
    """(nx+1)·(ny+1) nodes of a rectangle in z = 0, x fastest."""
    x, y = np.meshgrid(np.linspace(0, lx, nx + 1), np.linspace(0, ly, ny + 1))
    return np.column_stack([x.ravel(), y.ravel(), np.zeros(x.size)])


def grid_quads(nx: int, ny: int, i0: int = 0, i1: int | None = None) -> np.ndarray:
    """Quads (counter-clockwise about +z) of columns i0..i1 of an (nx × ny) node grid."""
    i1 = nx if i1 is None else i1
    i, j = np.meshgrid(np.arange(i0, i1), np.arange(ny))
    n0 = (j * (nx + 1) + i).ravel()
    return np.column_stack([n0, n0 + 1, n0 + nx + 2, n0 + nx + 1])


def split_quads(quads: np.ndarray) -> np.ndarray:
    """Two counter-clockwise triangles per quad (along diagonal 0-2)."""
    return np.vstack([quads[:, [0, 1, 2]], quads[:, [0, 2, 3]]])


def flat_plate(nx: int = 4, ny: int = 3, kind: str = "quad", lx: float = 2.0, ly: float = 1.0) -> ShellMesh:
    """A flat rectangular plate [0, lx] × [0, ly] in z = 0 of quads or triangles; normal +z."""
    quads = grid_quads(nx, ny)
    blocks = (("quad", quads),) if kind == "quad" else (("triangle", split_quads(quads)),)
    return ShellMesh(grid_points(nx, ny, lx, ly), blocks)


def mixed_plate(nx: int = 4, ny: int = 2) -> ShellMesh:
    """Quads on the left half, triangles on the right half (two blocks: quad, triangle)."""
    h = nx // 2
    return ShellMesh(grid_points(nx, ny), (("quad", grid_quads(nx, ny, 0, h)),
                                          ("triangle", split_quads(grid_quads(nx, ny, h, nx)))))


def quadratic_plate(nx: int = 4, ny: int = 2) -> ShellMesh:
    """quad8 on the left half and triangle6 on the right half, mid-side nodes at edge midpoints."""
    fx, fy = 2 * nx, 2 * ny
    pts = grid_points(fx, fy)

    def node(i, j):
        return j * (fx + 1) + i

    q8, t6 = [], []
    for j in range(ny):
        for i in range(nx):
            i2, j2 = 2 * i, 2 * j
            a, b, c, d = node(i2, j2), node(i2 + 2, j2), node(i2 + 2, j2 + 2), node(i2, j2 + 2)
            mab, mbc, mcd, mda = node(i2 + 1, j2), node(i2 + 2, j2 + 1), node(i2 + 1, j2 + 2), node(i2, j2 + 1)
            centre = node(i2 + 1, j2 + 1)
            if i < nx // 2:
                q8.append([a, b, c, d, mab, mbc, mcd, mda])
            else:
                t6.append([a, b, c, mab, mbc, centre])
                t6.append([a, c, d, centre, mcd, mda])
    used = np.unique(np.concatenate([np.ravel(q8), np.ravel(t6)]))
    remap = np.full(len(pts), -1)
    remap[used] = np.arange(len(used))
    return ShellMesh(pts[used], (("quad8", remap[np.array(q8)]), ("triangle6", remap[np.array(t6)])))


def warped_plate(nx: int = 4, ny: int = 4, a: float = 0.3) -> ShellMesh:
    """Quads on the hyperbolic paraboloid z = a·x·y over [0, 2] × [0, 1].

    Bilinear quads reproduce this surface exactly, so each cell's normal at its
    parametric centre (x_c, y_c) is ∝ (−a·y_c, −a·x_c, 1) (analytic geometry).
    """
    pts = grid_points(nx, ny)
    pts[:, 2] = a * pts[:, 0] * pts[:, 1]
    return ShellMesh(pts, (("quad", grid_quads(nx, ny)),))


def cylinder(radius: float = 1.5, length: float = 2.0, n_theta: int = 24, n_z: int = 3,
             kind: str = "quad", theta0: float = 0.0) -> ShellMesh:
    """A closed cylinder about the global Z axis, normals pointing outward.

    Cell (i, j) spans angles theta0 + [i, i+1]·2π/n_theta and z = [j, j+1]·length/n_z.
    Quads are planar rectangles with outward normal (cos t_m, sin t_m, 0) at the
    mid angle t_m (analytic geometry).
    """
    t = theta0 + np.arange(n_theta) * 2 * np.pi / n_theta
    z = np.linspace(0, length, n_z + 1)
    T, Z = np.meshgrid(t, z)
    pts = np.column_stack([radius * np.cos(T.ravel()), radius * np.sin(T.ravel()), Z.ravel()])
    i, j = np.meshgrid(np.arange(n_theta), np.arange(n_z))
    i, j = i.ravel(), j.ravel()
    ip = (i + 1) % n_theta
    quads = np.column_stack([j * n_theta + i, j * n_theta + ip, (j + 1) * n_theta + ip, (j + 1) * n_theta + i])
    blocks = (("quad", quads),) if kind == "quad" else (("triangle", split_quads(quads)),)
    return ShellMesh(pts, blocks)


def cylinder_mid_angles(n_theta: int = 24, n_z: int = 3, theta0: float = 0.0) -> np.ndarray:
    """Mid angle t_m of every quad of :func:`cylinder`, in cell order (radians)."""
    i = np.tile(np.arange(n_theta), n_z)
    return theta0 + (i + 0.5) * 2 * np.pi / n_theta


_GMSH_TYPE = {"line": 1, "triangle": 2, "quad": 3, "triangle6": 9, "quad8": 16}


def _gmsh_names(names: dict[str, tuple[int, int]]) -> list[str]:
    out = ["$PhysicalNames", str(len(names))]
    out += [f'{dim} {tag} "{name}"' for name, (tag, dim) in names.items()]
    return out + ["$EndPhysicalNames"]


def write_gmsh22_ascii(path, mesh: ShellMesh, lines: np.ndarray | None = None) -> None:
    """MSH 2.2 ASCII: block b gets physical tag b+1 named "block{b+1}".

    Optional line cells come first, with the 1-D physical tag 99 named "edge".
    """
    names = {f"block{b + 1}": (b + 1, 2) for b in range(len(mesh.blocks))}
    names["edge"] = (99, 1)
    out = ["$MeshFormat", "2.2 0 8", "$EndMeshFormat", *_gmsh_names(names),
           "$Nodes", str(len(mesh.points))]
    out += [f"{k + 1} {x!r} {y!r} {z!r}" for k, (x, y, z) in enumerate(mesh.points.tolist())]
    out += ["$EndNodes", "$Elements"]
    elems = []
    for conn in ([] if lines is None else [lines]):
        elems += ["1 2 99 50 " + " ".join(str(v + 1) for v in row) for row in conn]
    for b, (t, conn) in enumerate(mesh.blocks):
        elems += [f"{_GMSH_TYPE[t]} 2 {b + 1} {b + 1} " + " ".join(str(v + 1) for v in row) for row in conn]
    out += [str(len(elems))] + [f"{k + 1} {e}" for k, e in enumerate(elems)] + ["$EndElements", ""]
    write_text(path, "\n".join(out))


def write_gmsh41_ascii(path, mesh: ShellMesh, lines: np.ndarray | None = None) -> None:
    """MSH 4.1 ASCII with the same tags as :func:`write_gmsh22_ascii` (one surface entity per block)."""
    names = {f"block{b + 1}": (b + 1, 2) for b in range(len(mesh.blocks))}
    names["edge"] = (99, 1)
    lo, hi = mesh.points.min(0), mesh.points.max(0)
    box = " ".join(repr(float(v)) for v in (*lo, *hi))
    nb = len(mesh.blocks)
    out = ["$MeshFormat", "4.1 0 8", "$EndMeshFormat", *_gmsh_names(names), "$Entities", f"0 1 {nb} 0",
           f"50 {box} 1 99 0"]
    out += [f"{b + 1} {box} 1 {b + 1} 0" for b in range(nb)]
    n = len(mesh.points)
    out += ["$EndEntities", "$Nodes", f"1 {n} 1 {n}", f"2 1 0 {n}"]
    out += [str(k + 1) for k in range(n)] + [f"{x!r} {y!r} {z!r}" for x, y, z in mesh.points.tolist()]
    out += ["$EndNodes", "$Elements"]
    groups = ([] if lines is None else [(1, 50, "line", lines)])
    groups += [(2, b + 1, t, c) for b, (t, c) in enumerate(mesh.blocks)]
    total = sum(len(g[3]) for g in groups)
    out.append(f"{len(groups)} {total} 1 {total}")
    k = 1
    for dim, ent, t, conn in groups:
        out.append(f"{dim} {ent} {_GMSH_TYPE[t]} {len(conn)}")
        for row in conn:
            out.append(f"{k} " + " ".join(str(v + 1) for v in row))
            k += 1
    out += ["$EndElements", ""]
    write_text(path, "\n".join(out))


def block_tags(mesh: ShellMesh) -> np.ndarray:
    """The per-cell physical tag the Gmsh writers here give: block b -> b + 1."""
    return np.concatenate([np.full(len(c), b + 1) for b, (_, c) in enumerate(mesh.blocks)])


def write_gmsh_binary(path, mesh: ShellMesh, file_format: str) -> None:
    """Binary MSH through meshio (``file_format`` "gmsh22" or "gmsh" = 4.1), tags as above.

    meshio's 4.1 writer needs the entity of every node (``gmsh:dim_tags``) when
    there is more than one cell type: a node goes to the first block using it.
    """
    import meshio

    dim_tags = np.zeros((len(mesh.points), 2), dtype=int)
    for b, (_, conn) in reversed(list(enumerate(mesh.blocks))):
        dim_tags[conn.ravel()] = (2, b + 1)
    tags = block_tags(mesh)
    off = mesh.block_offsets()
    split = [tags[off[b]:off[b + 1]] for b in range(len(mesh.blocks))]
    m = meshio.Mesh(np.array(mesh.points), [(t, np.array(c)) for t, c in mesh.blocks],
                    point_data={"gmsh:dim_tags": dim_tags},
                    cell_data={"gmsh:physical": split, "gmsh:geometrical": split},
                    field_data={f"block{b + 1}": np.array([b + 1, 2]) for b in range(len(mesh.blocks))})
    with atomic_path(path, suffix=".msh") as tmp:
        meshio.write(str(tmp), m, file_format=file_format, binary=True)


def write_cloud(path, points: np.ndarray, data: dict) -> None:
    """A VTU of points and point arrays and no cells, as a solver's integration-point writer makes it."""
    from vtkmodules.util.numpy_support import numpy_to_vtk
    from vtkmodules.vtkCommonCore import vtkPoints
    from vtkmodules.vtkCommonDataModel import vtkUnstructuredGrid
    from vtkmodules.vtkIOXML import vtkXMLUnstructuredGridWriter

    grid = vtkUnstructuredGrid()
    pts = vtkPoints()
    pts.SetData(numpy_to_vtk(np.ascontiguousarray(points, dtype=float), deep=True))
    grid.SetPoints(pts)
    for name, arr in data.items():
        a = numpy_to_vtk(np.ascontiguousarray(arr), deep=True)
        a.SetName(name)
        grid.GetPointData().AddArray(a)
    w = vtkXMLUnstructuredGridWriter()
    w.SetFileName(str(path))
    w.SetInputData(grid)
    w.Write()
