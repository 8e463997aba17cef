"""Section summaries as text: ``key<TAB>value`` lines (the default output of ``plybridge section``, for scripts)
and readable tables (``--table``, for a person).

The lines are one quantity per line, the quantity first and the laminate second, then the values, every
number at full precision (the shortest text that reads back to the same float)::

    units        N-mm
    unit         A  N/mm             (the unit of every quantity below)
    laminate     skin
    thickness    skin  1.0
    ply          skin  1  cf  0.0  0.125  -0.5  -0.375     (ply number, material, angle, thickness, z bottom, z top)
    A            skin  a11 a12 a16 a21 a22 a26 a61 a62 a66 (row by row; B, D likewise; H: h44 h45 h54 h55)
    membrane     skin  restrained  Ex Ey Gxy nuxy nuyx    (also free; flexural likewise)

so ``grep -P '^A\tskin\t'`` or ``awk -F'\t' '$1 == "D"'`` picks a value out. docs/fields.md lists the lines.
"""

from __future__ import annotations

from bridge.definition.units import UnitSystem

#: The engineering constants in the order of a ``membrane`` / ``flexural`` line.
CONSTANTS = ("Ex", "Ey", "Gxy", "nuxy", "nuyx")


def _n(value) -> str:
    return repr(float(value))


def section_lines(summaries: dict[str, dict], units: UnitSystem) -> str:
    """``key<TAB>value`` lines of section summaries (see the module notes); ends with a newline."""
    L, F, T = units.label("length"), units.force_symbol, units.label("temperature")
    rows: list[list[str]] = [["units", units.name]]
    for quantity, label in (("length", L), ("angle", "°"), ("areal_mass", units.label("areal_mass")),
                            ("A", units.label("stiffness_A")), ("B", units.label("stiffness_B")),
                            ("D", units.label("stiffness_D")), ("H", units.label("stiffness_A")),
                            ("NT", f"{F}/{L}/{T}"), ("MT", f"{F}/{T}"), ("modulus", units.label("stress"))):
        rows.append(["unit", quantity, label])
    rows += [["laminate", name] for name in summaries]
    for name, s in summaries.items():
        rows += [["thickness", name, _n(s["thickness"])], ["offset", name, _n(s["offset"])],
                 ["areal_mass", name, _n(s["areal_mass"])], ["plies", name, str(len(s["plies"]))],
                 ["flags", name, *(k for k, v in s["flags"].items() if v)],
                 ["shear_method", name, s["shear_method"]]]
        rows += [["ply", name, str(k), p["material"], _n(p["angle"]), _n(p["thickness"]), _n(zb), _n(zt),
                  *(["wound"] if p.get("wound") else [])]
                 for k, (p, zb, zt) in enumerate(zip(s["plies"], s["z"][:-1], s["z"][1:]), start=1)]
        for key in ("A", "B", "D", "H"):
            rows.append([key, name, *(_n(v) for row in s[key] for v in row)])
        rows += [["NT", name, *map(_n, s["NT"])], ["MT", name, *map(_n, s["MT"])]]
        for kind in ("membrane", "flexural"):
            for variant in ("restrained", "free"):
                rows.append([kind, name, variant, *(_n(s[kind][variant][c]) for c in CONSTANTS)])
    return "".join("\t".join(row) + "\n" for row in rows)


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
            angle = f"±{abs(ply['angle']):.2f}" if ply.get("wound") else f"{ply['angle']:.2f}"   # a wound ±θ layer
            lines.append(f"  {k:>3}  {ply['material'][:20]:<20} {angle:>7}  {ply['thickness']:>11.5g}"
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
