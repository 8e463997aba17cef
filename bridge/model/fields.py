"""Per-cell section fields for the solver, in each element's frame (docs/fields.md).

Each section's stiffness is rotated from laminate axes into the element frame
by the cell's material angle φ (a ply at θ in laminate axes lies at θ + φ in
the element frame): A, B, D → T(φ)·C·T(φ)ᵀ, N_T, M_T → T(φ)·v, H → R(φ)ᵀ·H·R(φ).
"""

from __future__ import annotations

import json

import numpy as np

from shells.rotation import rotate_plane_stiffness, rotate_shear_stiffness, stress_rotation

from bridge.model.build import Model

FIELD_NAMES = ("section", "zone", "thickness", "offset", "areal_mass", "A", "B", "D", "H", "NT", "MT",
               "material_angle", "frame_x", "frame_y", "normal")


def section_fields(model: Model) -> dict[str, np.ndarray]:
    """Cell arrays: the section of every cell in its element frame.

    Returns
    -------
    dict
        ``section``, ``zone`` (int32), ``thickness``, ``offset``, ``areal_mass`` (ncell,);
        ``A``, ``B``, ``D`` (ncell, 9) row-major 3×3, order x, y, xy; ``H`` (ncell, 3) as
        (xz-xz, yz-yz, xz-yz); ``NT``, ``MT`` (ncell, 3) per unit temperature rise;
        ``material_angle`` (degrees); ``frame_x``, ``frame_y``, ``normal`` (ncell, 3).
    """
    sec, phi = model.section, model.phi
    props = [s.props for s in model.sections]
    stack = lambda attr: np.array([getattr(p, attr) for p in props])[sec]  # noqa: E731
    T = stress_rotation(phi)
    H = rotate_shear_stiffness(np.array([s.H for s in model.sections])[sec], phi)
    out = {
        "section": sec.astype(np.int32),
        "zone": model.zone.astype(np.int32),
        "thickness": np.array([p.thickness for p in props])[sec],
        "offset": np.array([s.laminate.offset for s in model.sections])[sec],
        "areal_mass": np.array([p.areal_mass for p in props])[sec],
    }
    for name in ("A", "B", "D"):
        out[name] = rotate_plane_stiffness(stack(name), phi).reshape(-1, 9)
    out["H"] = np.stack([H[:, 0, 0], H[:, 1, 1], H[:, 0, 1]], axis=1)
    out["NT"] = np.einsum("cij,cj->ci", T, stack("NT"))
    out["MT"] = np.einsum("cij,cj->ci", T, stack("MT"))
    out["material_angle"] = phi.copy()
    out["frame_x"], out["frame_y"], out["normal"] = model.frame_x, model.frame_y, model.normal
    return out


def section_table(model: Model) -> dict:
    """JSON-ready table of the sections (laminate axes), keyed by section id."""
    return {
        "units": model.defn.units.name,
        "sections": [{"id": i, "name": name, "laminate": sec.laminate.name, **sec.summary()}
                     for i, (name, sec) in enumerate(zip(model.section_names, model.sections))],
        "zones": [{"id": k, "name": z.name, "laminate": z.laminate} for k, z in enumerate(model.defn.zones)],
    }


def section_table_json(model: Model) -> str:
    return json.dumps(section_table(model), indent=1) + "\n"
