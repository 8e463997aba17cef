"""Plausible inputs or a clear refusal: material ranges, likely slips, unit spellings, duplicate case names.

Conversion factors (exact by definition, NIST Special Publication 811, 2008, appendix B): 1 lb = 0.45359237 kg,
1 in = 25.4 mm, standard gravity 9.80665 m/s², so 1 lbf = 4.4482216152605 N and 1 psi = 6894.757 Pa. Plausible ranges: common practice (each range states its
reason in bridge/definition/ranges.py).
"""

from __future__ import annotations

import re
import tomllib

import h5py
import numpy as np
import pytest
from hypothesis import example, given, settings
from hypothesis import strategies as st

from bridge.definition.loader import parse_definition
from bridge.definition.materials import parse_material
from bridge.definition.ranges import RANGES, SI, si_factor
from bridge.definition.slips import FAMILY, READINGS, suggestions
from bridge.definition.units import SYSTEMS
from bridge.mesh.formats import write_mesh
from bridge.recover.resultants import write_resultants_h5
from bridge.results.store import StoreReader
from shells.errors import DefinitionError, InputError
from tests.common import assert_one_line_error, run_cli
from tests.meshes import flat_plate

PSI = 0.45359237 * 9.80665 / 0.0254 ** 2

PLY = {"E1": '"181 GPa"', "E2": '"10.3 GPa"', "G12": '"7.17 GPa"', "nu12": "0.28", "thickness": '"0.125 mm"',
       "Xt": '"1500 MPa"', "Xc": '"1500 MPa"', "Yt": '"40 MPa"', "Yc": '"246 MPa"', "S12": '"68 MPa"',
       "density": '"1.6 g/cm^3"'}
IMPERIAL = {"E1": '"26.25 Msi"', "E2": '"1.494 Msi"', "G12": '"1.04 Msi"', "nu12": "0.28", "thickness": "0.005",
            "Xt": '"217.6 ksi"', "density": '"0.0578 lb/in^3"'}


def _definition(units: str = "N-mm", extra: str = "", cases: str = "", **ply) -> str:
    values = {**(IMPERIAL if units == "lbf-in" else PLY), **ply}
    body = "\n".join(f"{k} = {v}" for k, v in values.items() if v is not None)
    return (f'units = "{units}"\n{extra}\n[materials.cf]\n{body}\n'
            f'[laminates.l]\nlayup = "[0/90]s"\nmaterial = "cf"\n[[zones]]\nlaminate = "l"\n{cases}')


def _error(text: str) -> str:
    with pytest.raises(InputError) as err:
        parse_definition(tomllib.loads(text), "def.toml")
    message = str(err.value)
    assert "\n" not in message
    return message


@pytest.mark.parametrize("units, key, value, needles", [
    ("N-mm", "E1", "181", ("materials.cf.E1 = 181 MPa",
                           "181 read as 181 MPa: did you mean \"181 GPa\" (= 181000 MPa)?")),
    ("N-mm", "E1", "26.25e6", ("looks like psi in an N-mm file",)),
    ("N-mm", "Xt", "217600", ("materials.cf.Xt", "looks like psi in an N-mm file")),
    ("N-m", "Xt", "1500", ("1500 read as 1500 Pa", "\"1500 MPa\"")),
    ("N-m", "thickness", "0.125", ("0.125 read as 0.125 m", "\"0.125 mm\"")),
    ("lbf-in", "E1", "181", ("looks like GPa in an lbf-in file",)),
    ("lbf-in", "E1", "26.25", ("26.25 read as 26.25 psi", "\"26.25 Msi\"")),
    ("lbf-in", "density", "0.0578", ("386 times lb/in³", "\"0.0578 lb/in^3\"")),
    ("N-mm", "density", "1600", ("1600 read as 1600 t/mm³", "\"1600 kg/m^3\"")),
    ("N-mm", "alpha2", "22.5", ("alpha2", "22.5e-6 /degC")),
    ("N-mm", "nu12", "28", ("nu12 = 28", "percentage", "0.28")),
    ("N-mm", "strain_limits", "{ fibre_tension = 12000 }", ("strain_limits.fibre_tension", "microstrain", "0.012")),
    ("N-mm", "strain_limits", "{ fibre_tension = 1.2 }", ("strain_limits.fibre_tension", "percentage", "0.012")),
    # The review's cases: a hint must give the intended value, in the file's own units.
    ("N-mm", "Yt", '"0.04 MPa"', ('did you mean "0.04 GPa" (= 40 MPa)?',)),
    ("N-mm", "Yt", "0.04", ('did you mean "0.04 GPa" (= 40 MPa)?',)),
    ("N-mm", "alpha1", "8.6", ('"8.6e-6 /degC"',)),
    ("N-mm", "alpha1", "12", ('"12e-6 /degC"',)),
    ("lbf-in", "alpha1", "40", ('"40e-6 /degF"', "(|α| ≤ 111e-6 /°F)")),
    ("lbf-in", "Xt", "0.2176", ("(14.5 psi–1.45 Msi)",)),
    ("N-mm", "G_Ic", "280", ("materials.cf.G_Ic = 280 N/mm", 'did you mean "280 J/m^2" (= 0.28 N/mm)?')),
    ("N-m", "G_IIc", "0.56", ('did you mean "0.56 kJ/m^2" (= 560 N/m)?',)),
    ("lbf-in", "G_Ic", "280", ("looks like J/m^2 in an lbf-in file",)),
    ("N-mm", "knockdown", "85", ("materials.cf.knockdown = 85", "percentage", "0.85")),
    ("N-mm", "knockdown", "{ environment = 0.9, damage = 0.05 }", ("materials.cf.knockdown.damage = 0.05",)),
    ("N-mm", "p_tpl", "3", ("materials.cf.p_tpl = 3", "Puck inclination")),
])
def test_slips_are_named(units, key, value, needles):
    message = _error(_definition(units, **{key: value}))
    for needle in needles:
        assert needle in message, (needle, message)
    assert "check_ranges = false" in message


@pytest.mark.parametrize("units, key, value", [
    ("N-mm", "nu23", "0.99"),          # no percentage: 0.0099 is no transverse Poisson's ratio
    ("N-mm", "alpha1", "300"),         # 300e-6 per degree is no expansion coefficient either
    ("N-mm", "G_Ic", "1e9"),
    ("N-mm", "F12star", "50"),         # never "a percentage": there is no plausible slip to a Tsai-Wu F12*
])
def test_no_hint_where_no_plausible_slip_fits(units, key, value):
    message = _error(_definition(units, **{key: value}))
    assert f"materials.cf.{key} = " in message and "plausible range" in message
    assert "did you mean" not in message and "looks like" not in message, message


def test_every_material_number_has_a_range():
    """Every number a material table accepts (length, stress, density, expansion, toughness, ratios) is range-
    checked: G_Ic, Puck's inclinations, F12*, knockdowns included, not only the elastic constants and strengths."""
    from bridge.definition.materials import SPECS

    for kind, spec in SPECS.items():
        numbers = {k for k, q in spec.items() if q not in ("str", "bool")} - {"strain_limits"}
        if "strain_limits" in spec:
            numbers |= {f"strain_limits.{k}" for k in ("fibre_tension", "fibre_compression", "matrix_tension",
                                                        "matrix_compression", "shear")}
        assert numbers <= set(RANGES[kind]), (kind, sorted(numbers - set(RANGES[kind])))


def test_toughness_in_the_wrong_unit_is_refused_and_accepted_only_on_purpose():
    """The review's case: in an N-mm file G_Ic written in J/m² (280 for 0.28 N/mm) raised the in-situ strengths of
    LaRC03 by sqrt(1000) with no message. Now refused; accepted only with check_ranges = false."""
    for value in ("280", "1e9"):
        assert "materials.cf.G_Ic" in _error(_definition(G_Ic=value, insitu="true"))
    ok = parse_definition(tomllib.loads(_definition(G_Ic="0.28", G_IIc="0.79", insitu="true")), "d.toml")
    assert ok.materials["cf"].G_Ic == 0.28
    exotic = _definition(extra="[analysis]\ncheck_ranges = false", G_Ic="280")
    assert parse_definition(tomllib.loads(exotic), "d.toml").materials["cf"].G_Ic == 280.0


def test_wrinkling_coefficient_and_offsets_are_checked(write_definition):
    message = _error(_definition(extra="[analysis]\nwrinkling_coefficient = 5"))
    assert "analysis.wrinkling_coefficient = 5" in message and "plausible range" in message
    assert "must be positive" in _error(_definition(extra="[analysis]\ncheck_ranges = false\n"
                                                          "wrinkling_coefficient = 0"))
    # [0/90]s of 0.125 mm plies: h = 0.5 mm; 1000 mm is 2000 thicknesses away (a mould line is 0.5).
    far = _definition().replace('material = "cf"', 'material = "cf"\noffset = 1000')
    assert "laminates.l.offset = 1000 mm is 2000 laminate thicknesses" in _error(far)
    zone = _definition().replace('laminate = "l"', 'laminate = "l"\nname = "z"\noffset = "-2 in"')
    assert "zones.z.offset = -50.8 mm" in _error(zone)
    near = _definition().replace('material = "cf"', 'material = "cf"\noffset = 0.25')
    assert parse_definition(tomllib.loads(near), "d.toml").laminates["l"].offset == 0.25
    # Unchecked, a far offset still gets the right cause from the section builder, not "a core only?".
    unchecked = far.replace("\n[materials.cf]", "[analysis]\ncheck_ranges = false\n[materials.cf]")
    proc = run_cli("section", write_definition(unchecked))
    assert_one_line_error(proc, "with the reference surface 1000 from the mid-plane (2000 laminate thicknesses)")


def test_absolute_temperature_as_change():
    for value in ("293", '"300 K"'):
        message = _error(_definition(cases=f"[cases.hot]\ndelta_T = {value}\n"))
        assert "cases.hot.delta_T" in message and "absolute temperature" in message
    message = _error(_definition("lbf-in", cases="[combinations.c]\nfactors = {a = 1}\ndelta_T = 540\n"
                                 "[cases.a]\ndelta_T = -280\n"))
    assert "combinations.c.delta_T = 540 °F" in message and "-280 degF" in message


def test_check_ranges_false_accepts_exotic_data():
    text = _definition(extra="[analysis]\ncheck_ranges = false", E1="181", E2="10.3", G12="7.17")
    defn = parse_definition(tomllib.loads(text), "def.toml")
    assert defn.materials["cf"].E1 == 181.0 and not defn.analysis.check_ranges


def test_physics_is_checked_even_without_ranges():
    # Transversely isotropic compliance (ν13 = ν12, E3 = E2) is positive definite only for
    # −1 < ν23 < 1 − 2 ν12 ν21 (closed form of the 3×3 compliance determinant, common practice).
    for nu23 in ("1.0", "-1.0"):
        message = _error(_definition(extra="[analysis]\ncheck_ranges = false", nu23=nu23))
        assert "nu23" in message and "positive-definite" in message
    message = _error(_definition().replace('layup = "[0/90]s"\nmaterial = "cf"',
                                           'plies = [{material = "cf", angle = 450}]'))
    assert "angle = 450" in message and "360" in message


def test_unit_spellings():
    text = _definition("lbf-in", density='"0.0578 lbf/in^3"')
    defn = parse_definition(tomllib.loads(text), "def.toml")
    m = defn.materials["cf"]
    assert m.E1 * PSI / 1e9 == pytest.approx(181.0, rel=1e-3)        # 26.25 Msi = 181.0 GPa
    assert m.Xt * PSI / 1e6 == pytest.approx(1500.0, rel=1e-3)       # 217.6 ksi = 1500 MPa
    # A weight density over g: 0.0578 lbf/in³ / 386.09 in/s² in lbf·s²/in⁴.
    assert m.density == pytest.approx(0.0578 / (9.80665 / 0.0254), rel=1e-9)
    for spelled in ('"0.0578 lb/in^3"', '"0.0578 lbm/in^3"'):
        d = parse_definition(tomllib.loads(_definition("lbf-in", density=spelled)), "def.toml")
        assert d.materials["cf"].density == pytest.approx(m.density, rel=1e-9)
    n_mm = parse_definition(tomllib.loads(_definition(E1='"26.25 msi"')), "def.toml")
    assert n_mm.materials["cf"].E1 == pytest.approx(26.25e6 * PSI / 1e6, rel=1e-12)


def test_unit_error_suggestion_fits_the_system():
    assert "Msi" in _error(_definition("lbf-in", E1='"26 in"'))
    assert "GPa" in _error(_definition("N-mm", E1='"26 in"'))
    assert "lb/in^3" in _error(_definition("lbf-in", density="true"))


def test_duplicate_case_names_are_refused(tmp_path, write_definition):
    message = _error(_definition(cases="[cases.Hot]\ndelta_T = 10\n[combinations.hot]\nfactors = {Hot = 1}\n"))
    assert "'Hot' and 'hot'" in message
    mesh = flat_plate(2, 1)
    write_mesh(tmp_path / "m.vtu", mesh)
    with h5py.File(tmp_path / "r.h5", "w") as h5:
        ds = h5.create_dataset("resultants", data=np.zeros((2, mesh.n_cells, 8)))
        ds.attrs["case_names"] = np.array(["a", "a"], dtype=h5py.string_dtype())
    path = write_definition(_definition(extra='[analysis]\ncriteria = ["max-stress"]'))
    assert_one_line_error(run_cli("recover", path, tmp_path / "m.vtu", tmp_path / "r.h5", "-o", tmp_path / "o.h5"),
                          "the name 'a' is given twice")


def test_cli_one_line_and_exit_2(write_definition):
    proc = run_cli("section", write_definition(_definition(E1="181")))
    assert_one_line_error(proc, "did you mean \"181 GPa\" (= 181000 MPa)?")


@pytest.fixture(scope="module")
def membrane_runs(tmp_path_factory):
    """Recover M = 0 resultants on an unsymmetric and on a symmetric stack (no range checks on the second)."""
    from bridge.recover.run import run_recover

    tmp = tmp_path_factory.mktemp("membrane")
    mesh = flat_plate(2, 1)
    write_mesh(tmp / "m.vtu", mesh)
    R = np.zeros((1, mesh.n_cells, 8))
    R[0, :, 0] = 50.0
    write_resultants_h5(tmp / "r.h5", ["a"], R)
    out = {}
    for name, layup, extra in (("unsym", "[0/90]", ""), ("sym", "[0/90]s", "check_ranges = false\n")):
        text = _definition(extra=f'[analysis]\ncriteria = ["max-stress"]\n{extra}').replace("[0/90]s", layup)
        (tmp / f"{name}.toml").write_text(text)
        out[name] = run_recover(str(tmp / f"{name}.toml"), str(tmp / "m.vtu"), [str(tmp / "r.h5")],
                                str(tmp / f"{name}.h5"))
        with StoreReader(tmp / f"{name}.h5") as st:
            out[name + "-meta"] = st.run
    return out


def test_membrane_only_input_on_unsymmetric_section_is_noted(membrane_runs):
    notes = [n for n in membrane_runs["unsym"]["notes"] if "M = 0" in n]
    assert len(notes) == 1 and "'l'" in notes[0]
    assert not any("M = 0" in n for n in membrane_runs["sym"]["notes"])
    assert membrane_runs["unsym-meta"].analysis.check_ranges is True
    assert any("M = 0" in n for n in membrane_runs["unsym-meta"].summary.notes)


def test_unchecked_ranges_are_noted(membrane_runs):
    notes = membrane_runs["sym"]["notes"]
    assert "material values were not checked against plausible ranges ([analysis] check_ranges = false)" in notes
    assert not any("plausible" in n for n in membrane_runs["unsym"]["notes"])
    assert membrane_runs["sym-meta"].analysis.check_ranges is False


def test_every_range_has_a_reason_and_a_typical_value():
    for kind, table in RANGES.items():
        for key, r in table.items():
            assert r.reason and r.span and r.kind in SI, (kind, key)
            assert r.low < r.typical < r.high, (kind, key)


_KEYS = [(kind, key) for kind, table in RANGES.items() for key in table
         if table[key].kind in ("stress", "density", "length", "expansion", "dimensionless", "force_per_length")]
_REQUIRED = {"ply": {"E1": 181e9, "E2": 10.3e9, "G12": 7.17e9, "nu12": 0.28},
             "isotropic": {"E": 70e9, "nu": 0.3}, "core": {"G13": 50e6, "G23": 30e6},
             # Balsa of density 160 kg/m³ in the ratios of the Wood Handbook (Forest Products Laboratory, 2010,
             # tables 5-1 and 5-2; from memory): E_L 4.0 GPa.
             "wood": {"grain": "end", "E_L": 4.0e9, "E_R": 0.184e9, "E_T": 0.06e9, "G_LR": 0.216e9,
                      "G_LT": 0.148e9, "G_RT": 0.02e9, "nu_LR": 0.229, "nu_LT": 0.488, "nu_RT": 0.665}}


def _parse(kind: str, key: str, value, units) -> str | None:
    """parse_material on a minimal material of ``kind`` with ``key`` set to ``value``; the refusal or None."""
    table = {"kind": kind, **_required(kind, units)}
    outer, _, inner = key.partition(".")          # a key of a sub-table: strain_limits.fibre_tension
    if outer == "knockdown" and inner:
        table[outer] = {inner: value}
    else:
        table[outer] = {inner: value} if inner else value
    try:
        parse_material("m", table, units)
    except DefinitionError as err:
        return str(err)
    return None


_HINTED = [(kind, key) for kind, table in RANGES.items() for key in table if table[key].kind in READINGS]


@settings(max_examples=400, deadline=None)
@given(st.sampled_from(_HINTED), st.sampled_from(sorted(SYSTEMS)), st.floats(-12.0, 12.0), st.booleans())
@example(("isotropic", "alpha"), "lbf-in", 2.0, False)      # 100e-6 /degF is unusual, 100e-6 /degC is not
def test_following_a_hint_gives_a_value_inside_the_range(kind_key, system_name, exponent, negative):
    """Property: for any value outside its range, every fix the refusal suggests, written into the file as
    suggested, is accepted by the range check; a unit of the other family (psi in an SI file) is suggested only
    as "looks like … in an … file", when no unit of the file's own family fits."""
    kind, key = kind_key
    r, units = RANGES[kind][key], SYSTEMS[system_name]
    value = float(f"{(-1.0 if negative else 1.0) * 10.0 ** exponent:.3g}")      # as an analyst writes a number
    if r.holds(value * si_factor(r.kind, units)):
        return
    message = _parse(kind, key, value, units)
    assert message is not None and "plausible range" in message, message
    fixes = re.findall(r'"([^"]+)"', message) + re.findall(r"plain ratio ([-+0-9.e]*[0-9])", message)
    for fix in fixes:
        refused = _parse(kind, key, fix if '"' + fix + '"' in message else float(fix), units)
        assert refused is None or "plausible range" not in refused, (value, fix, refused)
    own = FAMILY[system_name]
    for s in suggestions(value, r, units):
        if s.reading.family not in ("", own):
            assert f"in an {system_name} file" in message
            assert not any(t.family in ("", own) and r.usual_holds(value * t.scale * si_factor_of(t.unit, r.kind))
                           for t in READINGS[r.kind])


def si_factor_of(unit: str, kind: str) -> float:
    from bridge.definition.units import registry

    return float(registry().Quantity(1.0, unit).to(SI[kind]).magnitude)


def _required(kind: str, units) -> dict:
    """The required values of a material kind in ``units`` (moduli converted; ratios and names as they are)."""
    return {k: v / si_factor("stress", units) if isinstance(v, float) and k.startswith(("E", "G")) else v
            for k, v in _REQUIRED[kind].items()}


@settings(max_examples=150, deadline=None)
@given(st.sampled_from(_KEYS), st.sampled_from(sorted(SYSTEMS)), st.floats(-4.0, 4.0))
def test_values_inside_pass_and_outside_are_refused(kind_key, system_name, spread):
    """A value at log-position ``spread`` of its range (0 low end, 1 high end) passes exactly inside [0, 1]."""
    kind, key = kind_key
    r = RANGES[kind][key]
    units = SYSTEMS[system_name]
    low = max(r.low, 1e-300)
    si = low * (r.high / low) ** spread if r.low > 0 else r.high * spread
    if abs(spread - 0) < 1e-9 or abs(spread - 1) < 1e-9 or si == 0:
        return
    table = {"kind": kind, **_required(kind, units)}
    value = si / si_factor(r.kind, units)
    outer, _, inner = key.partition(".")          # a key of a sub-table: strain_limits.fibre_tension
    table[outer] = {inner: value} if inner else value
    try:
        parse_material("m", table, units)
        refused = None
    except DefinitionError as err:
        refused = str(err)
    inside = r.holds(si)
    if inside:
        # Inside the range: only the physics checks (positive definiteness, positive values) may refuse.
        assert refused is None or "plausible range" not in refused, refused
    else:
        assert refused is not None and f"materials.m.{key}" in refused and "plausible range" in refused, refused
