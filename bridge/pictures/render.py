"""Maps of a results store: pick a field (:mod:`bridge.pictures.fields`), draw it (:mod:`postproc.render`),
write the PNG atomically, and say what was drawn."""

from __future__ import annotations

import io
from pathlib import Path

import numpy as np

from postproc.render import VIEWS
from shells.errors import InputError

from bridge.atomic import atomic_path
from bridge.pictures.fields import FieldError, select_field
from bridge.results.store import StoreReader

#: View names accepted by ``render --view`` (``worst``: the worst cell and its neighbourhood).
VIEW_NAMES = VIEWS


def save_png(path: str | Path, image: np.ndarray) -> None:
    """Write an RGB array as a PNG file atomically."""
    with atomic_path(path, suffix=".png") as tmp:
        tmp.write_bytes(png_bytes(image))


def png_bytes(image: np.ndarray) -> bytes:
    """PNG encoding of an RGB array (matplotlib's writer)."""
    import matplotlib.image as mpimg

    buf = io.BytesIO()
    mpimg.imsave(buf, np.asarray(image), format="png")
    return buf.getvalue()


def draw_store_field(st: StoreReader, field: str = "margin", ply: str | int = "envelope", case: str = "envelope",
                     views=("iso",), size=None):
    """(Field, :class:`postproc.render.Picture`) of a field of an open store."""
    from postproc.render import draw_field

    f = select_field(st, field, ply, case)
    points, blocks = st.mesh()
    if "worst" in views and f.mark is None:
        raise FieldError(f"--view worst: the field {field} has no worst cell here (no finite value)", st.path)
    title = f"{st.run.title or Path(st.path).stem}\n{f.title}"
    try:
        pic = draw_field(points, blocks, f.values, kind=f.kind, labels=f.labels, groups=f.groups, title=title,
                         bar_title=f.bar_title, views=tuple(views), size=None if size is None else tuple(size),
                         mark=f.mark, mark_label=f.mark_label, cap=f.cap)
    except ValueError as err:
        raise FieldError(str(err), st.path) from None
    return f, pic


def render_store(store_path: str | Path, output: str | Path, field: str = "margin", ply: str | int = "envelope",
                 case: str = "envelope", views=("iso",), size=None, cell_data: str | Path | None = None) -> dict:
    """Render a field of the store to a PNG (and optionally the same field as cell data of a mesh file).

    Returns
    -------
    dict
        What was drawn: ``output``, ``field``, ``kind``, ``ply``, ``case``, ``unit``, ``size`` (WxH),
        ``views`` (names), ``hidden`` (views where the worst cell is hidden), ``cell`` (the marked worst cell or
        None), ``value`` (its value; a category name for categorical fields), ``legend`` ([label, colour] …).
    """
    if not str(output).lower().endswith(".png"):
        raise InputError("write a .png picture (give -o NAME.png)", str(output))
    with StoreReader(store_path) as st:
        f, pic = draw_store_field(st, field, ply, case, views, size)
        points, blocks = st.mesh()
    save_png(output, pic.image)
    if cell_data is not None:
        from bridge.mesh.formats import write_mesh
        from bridge.mesh.shell import shell_mesh_from_blocks

        write_mesh(cell_data, shell_mesh_from_blocks(points, blocks), {f.name: f.values})
    value = None
    if f.mark is not None:
        v = f.values[f.mark]
        value = f.labels[int(v)] if f.kind == "categorical" else float(v)
    return {"output": str(output), "field": f.name, "kind": f.kind, "ply": str(ply), "case": case, "unit": f.unit,
            "size": f"{pic.image.shape[1]}x{pic.image.shape[0]}", "views": [v.name for v in pic.views],
            "hidden": [v.name for v in pic.views if v.mark_visible is False], "cell": f.mark, "value": value,
            "legend": [list(e) for e in pic.legend]}
