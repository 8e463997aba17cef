"""The report's account of the inputs: units, materials, laminates, zones, cases, settings and provenance."""

from __future__ import annotations

from .numbers import degrees, short, sig
from .report_html import esc, num, table
from .run_meta import MaterialInfo, RunMeta, SectionInfo

#: What the definition keys of material properties mean (shown beside them).
MEANINGS = {
    "E1": "modulus along 1 (fibre)", "E2": "modulus along 2", "E": "Young's modulus", "Ez": "through-thickness modulus",
    "G12": "in-plane shear modulus", "G13": "transverse shear modulus 13", "G23": "transverse shear modulus 23",
    "nu12": "major Poisson's ratio", "nu23": "Poisson's ratio 23", "nu": "Poisson's ratio",
    "alpha1": "expansion along 1 per degree", "alpha2": "expansion along 2 per degree", "alpha": "expansion per degree",
    "beta1": "swelling along 1 per unit moisture", "beta2": "swelling along 2 per unit moisture",
    "beta": "swelling per unit moisture", "density": "density", "thickness": "default ply thickness",
    "Xt": "tensile strength along 1", "Xc": "compressive strength along 1", "Yt": "tensile strength along 2",
    "Yc": "compressive strength along 2", "S12": "in-plane shear strength", "S13": "shear strength 13",
    "S23": "shear strength 23", "ilss": "interlaminar shear strength", "Zc": "flatwise compressive strength",
    "yield_strength": "yield strength", "cell_size": "honeycomb cell size",
    "F12star": "Tsai-Wu interaction term", "insitu": "in-situ strengths",
    "strain_limits.fibre_tension": "tensile strain limit along 1",
    "strain_limits.fibre_compression": "compressive strain limit along 1",
    "strain_limits.matrix_tension": "tensile strain limit along 2",
    "strain_limits.matrix_compression": "compressive strain limit along 2",
    "strain_limits.shear": "in-plane shear strain limit", "fibre": "fibre family (Puck's inclinations)",
    "G_Ic": "mode I fracture toughness", "G_IIc": "mode II fracture toughness",
    "p_tpl": "Puck inclination (tension)", "p_cpl": "Puck inclination (compression)",
    "alpha0": "fracture angle in pure transverse compression", "Zt": "flatwise tensile strength",
    "grain": "grain direction (flat: in the plane; end: along the normal)", "E_L": "modulus along the grain",
    "E_R": "radial modulus", "E_T": "tangential modulus", "G_LR": "shear modulus LR", "G_LT": "shear modulus LT",
    "G_RT": "rolling shear modulus RT", "nu_LR": "Poisson's ratio LR", "nu_LT": "Poisson's ratio LT",
    "nu_RT": "Poisson's ratio RT", "tension_parallel": "tensile strength along the grain",
    "compression_parallel": "compressive strength along the grain",
    "tension_perpendicular": "tensile strength across the grain",
    "compression_perpendicular": "compressive strength across the grain",
    "shear_parallel": "shear strength along the grain", "rolling_shear": "rolling shear strength",
}
#: Quantity kinds listed in the units table, with their names.
UNIT_ROWS = (("stress", "stress, moduli, strengths, pressure"), ("length", "length, thickness, coordinates"),
             ("temperature", "temperature change ΔT"), ("expansion", "thermal expansion"),
             ("density", "density"), ("areal_mass", "mass per area"), ("force_per_length", "force per length (N, Q)"),
             ("moment_per_length", "moment per length (M)"), ("angle", "ply and material angles"))


def _value(p, m: RunMeta) -> tuple:
    if isinstance(p.value, bool) or isinstance(p.value, str):
        return str(p.value).lower(), ""
    unit = m.label(p.kind)
    return num(p.value), "-" if unit in ("-", "dimensionless") else unit


#: Meanings that differ for a material kind.
KIND_MEANINGS = {"core": {"E1": "in-plane modulus along 1 (ribbon)", "E2": "in-plane modulus along 2",
                          "thickness": "default core thickness"}}


def _material(x: MaterialInfo, m: RunMeta) -> str:
    meanings = {**MEANINGS, **KIND_MEANINGS.get(x.kind, {})}
    # A core's zero in-plane moduli are the default "carries no in-plane load", said once rather than as data.
    no_membrane = x.kind == "core" and all(p.value == 0 for p in x.properties if p.key in ("E1", "E2"))
    rows = [[p.key, meanings.get(p.key, ""), *_value(p, m)] for p in x.properties
            if not (no_membrane and p.key in ("E1", "E2"))]
    parts = [f'<div class="material"><h3>{esc(x.name)} <small>({esc(x.kind)})</small></h3>',
             f"<p>Source: {esc(x.source)}</p>" if x.source else
             '<p class="note">No source given (add <code>source = "…"</code> to the material).</p>',
             f'<p class="note">{esc(x.description)}</p>' if x.description else "",
             table(["property", "meaning", "value", "unit"], rows),
             '<p class="note">In-plane moduli E1 = E2 = 0: the core carries no in-plane load.</p>'
             if no_membrane else ""]
    factors = [[f.name, num(f.value)] for f in x.knockdown_factors]
    factors += [[f"environment {f.name}", num(f.value)] for f in x.environment_factors]
    kd = [["knockdown (fraction of strength retained)" + (", case naming no environment" if x.environment_factors
                                                          else ""), num(x.knockdown)]]
    if factors:
        parts.append(table(["knockdown factor", "value [-]"], factors + kd))
    else:
        parts.append(table(["knockdown", "value [-]"], kd))
    return "".join(parts) + "</div>"


def _laminate(s: SectionInfo, zones: list[str], m: RunMeta, open_details: bool) -> str:
    L = m.label("length")
    z = s.ply_z()
    ply_rows = [[num(k + 1), p.material, degrees(p.angle) + (" (wound ±)" if p.wound else ""), num(p.thickness),
                 num(z[k][0]), num(z[k][1])] for k, p in enumerate(s.plies)]
    notation = (f'<span class="layup">{esc(s.layup)}</span>' if s.layup
                else "explicit ply list (see below)")
    constants = {c.name: c.value for c in s.membrane}
    key = table(["item", "value"], [
        ["zones", ", ".join(zones) or "—"], ["plies", num(len(s.plies))], [f"thickness [{L}]", num(s.thickness)],
        [f"offset of the mid-plane from the reference surface [{L}]", num(s.offset)],
        [f"mass per area [{m.label('areal_mass')}]", num(s.areal_mass)],
        [f"membrane Ex, Ey, Gxy [{m.label('stress')}]",
         ", ".join(sig(constants[k]) for k in ("Ex", "Ey", "Gxy") if k in constants) or "—"],
        ["membrane νxy [-]", num(constants.get("nuxy"))],
        ["properties of the stack", ", ".join(f.replace("_", "-") for f in s.flags) or "none of: symmetric, "
         "balanced, quasi-isotropic"]])
    folded = table(["ply", "material", "angle", f"thickness [{L}]", f"z bottom [{L}]", f"z top [{L}]"], ply_rows)
    return (f"<h3>{esc(s.name)}</h3><p>Layup as written: {notation}</p>{key}"
            f"<details{' open' if open_details else ''}><summary>Plies, bottom (1) to top ({len(s.plies)})</summary>"
            f"{folded}</details>")


def _steps_text(steps) -> str:
    return ", ".join(f"step {f.name}" + ("" if f.value == 1 else f" × {short(f.value)}") for f in steps)


#: Sections shown per laminate whose ply angles come from mesh arrays (one section per distinct set of angles).
FIELD_SECTIONS_SHOWN = 3


def _laminates(m: RunMeta, zones_of: dict, open_details: bool) -> str:
    """Every section; of a laminate with angles from mesh arrays the first few, then a line for the rest."""
    out, field_sections = [], {}
    for s in m.sections:
        if s.name.startswith(f"{s.laminate}[") or (s.name.startswith(f"{s.laminate}@") and "[" in s.name):
            field_sections.setdefault(s.laminate, []).append(s)
            if len(field_sections[s.laminate]) > FIELD_SECTIONS_SHOWN:
                continue
        out.append(_laminate(s, zones_of.get(s.id, []), m, open_details))
    for lam, secs in field_sections.items():
        if len(secs) > FIELD_SECTIONS_SHOWN:
            rest = secs[FIELD_SECTIONS_SHOWN:]
            out.append(f'<p class="note">Laminate {esc(lam)} takes ply angles from per-cell mesh arrays: '
                       f"{len(secs)} sections, one per distinct set of angles; {len(rest)} more not shown here "
                       f"({esc(rest[0].name)} … {esc(rest[-1].name)}; all are in the store's /sections).</p>")
    return "".join(out)


def _combination_text(c) -> str:
    """How a case is built: a combination's factors, else its input steps, scaled and held."""
    if c.combination:
        return "combination: " + " + ".join(f"{short(f.value)} × {f.name}" for f in c.combination)
    parts = ([_steps_text(c.steps)] if c.steps else []) + ([f"held: {_steps_text(c.held_steps)}"]
                                                          if c.held_steps else [])
    return "; ".join(parts) or "—"


def _fields_text(c) -> str:
    named = [(what, name) for what, name in (("ΔT", c.temperature_field), ("moisture", c.moisture_field),
                                               ("pressure", c.pressure_field)) if name]
    return ", ".join(f"{what} from {name}" for what, name in named) or "—"


def _environment_text(c) -> str:
    factors = ", ".join(f"{k.name} {short(k.value)}" for k in c.knockdowns)
    env = c.environment or "none named (each material's lowest environment factor)"
    return f"{env}: {factors}" if factors else env


def inputs_section(m: RunMeta, open_details: bool = False) -> str:
    """Units, materials, laminates (layup as written, plies folded), zones and cases (combinations with factors)."""
    units = table(["quantity", "unit"], [[name, m.label(kind)] for kind, name in UNIT_ROWS])
    zones_of: dict[int, list[str]] = {}
    for z in m.zones:
        zones_of.setdefault(z.section, []).append(z.name)
    laminates = _laminates(m, zones_of, open_details)
    zones = table(["zone", "laminate", "section", "cells"],
                  [[z.name, z.laminate, num(z.section), num(z.cells)] for z in m.zones])
    T, S = m.label("temperature"), m.label("stress")
    cases = table(["case", "kind", "built from", f"ΔT [{T}]", f"pressure [{S}]", "moisture change [-]",
                   "per-cell fields", "environment: knockdown by material [-]", "factor of safety [-]",
                   "held (fixed, not scaled)"],
                  [[c.name, c.kind, _combination_text(c), num(c.delta_T), num(c.pressure), num(c.delta_M),
                    _fields_text(c), _environment_text(c), num(c.factor_of_safety), ", ".join(c.held) or "none"]
                   for c in m.cases])
    return ('<section id="inputs" class="page"><h2>Inputs</h2>'
            f"<h3>Units ({esc(m.units)})</h3>{units}"
            "<h2>Materials</h2>" + "".join(_material(x, m) for x in m.materials)
            + "<h2>Laminates</h2>" + laminates + "<h3>Zones</h3>" + zones + "<h3>Cases and combinations</h3>"
            + cases + "</section>")


def settings_section(m: RunMeta) -> str:
    a = m.analysis
    fos = {f.name: f.value for f in a.factor_of_safety}
    rows = [["criteria evaluated", ", ".join(a.criteria), "at the bottom, middle and top of every ply"]]
    rows += [[f"factor of safety, {kind} cases [-]", num(value), "knockdowns multiply the allowables before R is "
              "solved; margin = R / FoS − 1" if k == 0 else ""] for k, (kind, value) in enumerate(fos.items())]
    rows += [["transverse shear stiffness", a.transverse_shear,
              "equilibrium: energy-consistent (Rolfes & Rohwer 1997); factor: k × Σ Ḡ t"],
             ["shear correction factor k [-]", num(a.shear_factor),
              "used by the factor method only" if a.transverse_shear != "factor" else "used"],
             ["face wrinkling coefficient [-]", num(a.wrinkling_coefficient), "σ_wr = k (Ef Ec Gc)^(1/3)"],
             ["hot-spot rows of the run", num(a.hot_spots), "worst cells kept in full (/hotspots)"],
             ["store", m.store_kind, "plies: every ply stress and strain kept"],
             ["misalignment tolerance", "±" + degrees(a.misalignment) if a.misalignment else "none",
              "every cell also checked with its laminate turned by −δ and +δ; the worst kept" if a.misalignment
              else ""],
             ["progressive failure", "ply discount" if a.progressive else "not run",
              f"retained after a matrix failure {sig(a.progressive.matrix_retained)}, after a fibre failure "
              f"{sig(a.progressive.fibre_retained)}; criteria {', '.join(a.progressive.criteria)}"
              if a.progressive else ""]]
    rows += [[f"restricted envelope {e.name}", ", ".join(e.criteria),
              "; ".join(x for x in (f"modes {', '.join(e.modes)}" if e.modes else "",
                                    f"kinds {', '.join(e.kinds)}" if e.kinds else "",
                                    f"cases {', '.join(e.cases)}" if e.cases else "", e.description) if x)]
             for e in a.envelopes]
    rows += [[f"default relied on: {d.material}", d.criterion, d.note] for d in a.defaults]
    return ('<section id="settings"><h2>Settings</h2>' + table(["setting", "value", "note"], rows) + "</section>")


def provenance_section(m: RunMeta, store: str) -> str:
    p = m.provenance
    rows = [["tool", f"{p.tool} {p.tool_version}"], ["run created (UTC)", p.created], ["store", store],
            ["conventions", m.conventions]]
    files = [[f.role, f.path, f.sha256] for f in p.inputs]
    return ('<section id="provenance"><h2>Provenance</h2>' + table(["item", "value"], rows)
            + "<h3>Input files</h3>" + table(["role", "path", "SHA-256"], files, cls="mono") + "</section>")
