"""Readable text tables of section summaries (the default output of ``plybridge section``)."""

from __future__ import annotations

from bridge.definition.units import UnitSystem


def _matrix(name: str, rows: list[list[float]], unit: str) -> list[str]:
    out = [f"  {name} [{unit}]"]
    out += ["    " + "  ".join(f"{v:>13.6g}" for v in row) for row in rows]
    return out


def format_sections(summaries: dict[str, dict], units: UnitSystem) -> str:
    lines = [f"units: {units.name}"]
    L, F = units.label("length"), units.force_symbol
    for name, s in summaries.items():
        flags = ", ".join(k for k, v in s["flags"].items() if v) or "none"
        lines += ["", f"laminate {name}: {len(s['plies'])} plies, thickness {s['thickness']:.6g} {L}, "
                  f"areal mass {s['areal_mass']:.6g} {units.label('areal_mass')}, offset {s['offset']:.6g} {L}",
                  f"  flags: {flags}",
                  "  ply  material              angle     thickness   z bottom      z top"]
        for k, (ply, zb, zt) in enumerate(zip(s["plies"], s["z"][:-1], s["z"][1:]), start=1):
            lines.append(f"  {k:>3}  {ply['material'][:20]:<20} {ply['angle']:>7.2f}  {ply['thickness']:>11.5g}"
                         f"  {zb:>9.5g}  {zt:>9.5g}")
        lines += _matrix("A", s["A"], units.label("stiffness_A"))
        lines += _matrix("B", s["B"], units.label("stiffness_B"))
        lines += _matrix("D", s["D"], units.label("stiffness_D"))
        lines += _matrix(f"H ({s['shear_method']})", s["H"], units.label("stiffness_A"))
        lines.append(f"  NT per unit temperature rise [{F}/{L}/{units.label('temperature')}]: "
                     + "  ".join(f"{v:.6g}" for v in s["NT"]))
        lines.append(f"  MT per unit temperature rise [{F}/{units.label('temperature')}]: "
                     + "  ".join(f"{v:.6g}" for v in s["MT"]))
        lines.append("  engineering constants about the mid-plane"
                     + ("" if s["flags"]["mid_plane_coupled"] else " (no coupling: restrained = free)"))
        variants = ("restrained", "free") if s["flags"]["mid_plane_coupled"] else ("restrained",)
        for kind in ("membrane", "flexural"):
            for variant in variants:
                c = s[kind][variant]
                lines.append(f"  {kind:<9} {variant:<10} Ex {c['Ex']:.6g}  Ey {c['Ey']:.6g}  Gxy {c['Gxy']:.6g} "
                             f"[{units.label('stress')}]  nuxy {c['nuxy']:.5g}")
    return "\n".join(lines) + "\n"
