"""The [fields] and [resultants] tables of a definition: names, frame, twist sign and unit scales."""

from __future__ import annotations

import tomllib

import numpy as np
import pytest

from bridge.definition.loader import parse_definition
from bridge.recover.resultants import apply_settings
from shells.errors import DefinitionError, ResultantsError

BASE = """
units = "N-mm"
[materials.a]
E1 = "100 GPa"
E2 = "10 GPa"
G12 = "5 GPa"
nu12 = 0.3
thickness = 1
[laminates.l]
layup = "[0]"
material = "a"
"""


def _options(extra: str):
    defn = parse_definition(tomllib.loads(BASE + extra), "def.toml")
    return defn.fields, defn.resultants


def test_defaults():
    f, s = _options("")
    assert (f.n, f.m, f.q, f.scalars) == ("N", "M", "Q", None)
    assert (s.frame, s.twist_sign, s.force_scale, s.length_scale) == ("element", 1, 1.0, 1.0)


def test_renames_scalars_and_flags():
    f, s = _options('[fields]\nscalars = ["nx","ny","nxy","mx","my","mxy","qx","qy"]\n'
                    '[resultants]\nframe = "laminate"\ntwist_sign = -1\nforce_scale = 4.4482216152605\n'
                    'length_scale = 25.4\n')
    assert f.scalars[0] == "nx" and s.frame == "laminate" and s.twist_sign == -1
    # lbf and inch in a N-mm definition (1 lbf = 4.4482216152605 N, 1 in = 25.4 mm, exact: NIST SP 811):
    # N and Q scale by force/length, M by force; the twist sign flips Mxy.
    R = apply_settings(np.ones((1, 1, 8)), s)[0, 0]
    np.testing.assert_allclose(R, [4.4482216152605 / 25.4] * 3 + [4.4482216152605] * 2 + [-4.4482216152605]
                               + [4.4482216152605 / 25.4] * 2)


def test_unit_strings_for_scales():
    # 1 lbf = 4.4482216152605 N, 1 in = 25.4 mm, exact (NIST SP 811, appendix B).
    _, s = _options('[resultants]\nforce_scale = "1 lbf"\nlength_scale = "1 in"\n')
    assert s.force_scale == pytest.approx(4.4482216152605, rel=1e-12) and s.length_scale == pytest.approx(25.4)


def test_no_transverse_shear():
    assert _options('[fields]\nQ = ""\n')[0].q is None


@pytest.mark.parametrize("extra, needle", [
    ('[fields]\nNN = "x"\n', "did you mean 'N'"),
    ('[resultants]\nframe = "sideways"\n', "frame"),
    ('[resultants]\nframe = "vectors"\n', "vectors"),
    ('[resultants]\nforce_scale = "2 m"\n', "force_scale"),
    ('[fields]\nN = { array = "F", components = ["xx", "yy"] }\n', "3 components"),
    ('[fields]\nQ = { array = "F", components = ["xz", "qq"] }\n', "tensor names"),
    ('[result_files]\npoints_per_cell = 0\n', "points_per_cell"),
    ('[result_files]\npoints_per_cell = 4\npoint_cell_id = "id"\n', "not both"),
    ('[result_files]\ntensor_order = "columns"\n', "tensor_order"),
    ('[resultants]\ntwist_sign = 2\n', "twist_sign"),
    ('[resultants]\nforce_scale = "big"\n', "force_scale"),
    ('[fields]\nscalars = ["a", "b"]\n', "eight"),
])
def test_bad_tables(extra, needle):
    with pytest.raises((DefinitionError, ResultantsError)) as err:
        _options(extra)
    assert needle in str(err.value) and "def.toml" in str(err.value)


@pytest.mark.parametrize("units, entry, example", [
    ("N-mm", 'force_scale = "1 in"', "'1 lbf'"), ("lbf-in", 'force_scale = "1 in"', "'1 N'"),
    ("N-mm", 'length_scale = "1 lbf"', "'0.125 mm'"), ("lbf-in", 'length_scale = "1 N"', "'0.005 in'")])
def test_a_scale_of_the_wrong_dimension_gets_an_example_of_its_own_kind(units, entry, example):
    """A force scale given as a length is answered with a force example, never a stress (no '181 GPa')."""
    text = (BASE.replace('units = "N-mm"', f'units = "{units}"').replace("thickness = 1", 'thickness = "1 mm"')
            + f"[resultants]\n{entry}\n")
    with pytest.raises(DefinitionError) as err:
        parse_definition(tomllib.loads(text), "def.toml")
    assert "wrong dimension" in str(err.value) and example in str(err.value)
    assert "GPa" not in str(err.value) and "Msi" not in str(err.value)


def test_every_quantity_kind_has_an_example_of_its_own_dimension():
    """example() gives, for every kind of every system, a string pint converts to that kind's unit (pint is the
    reference: a general-purpose unit library)."""
    from bridge.definition.units import SYSTEMS, example, registry

    ureg = registry()
    for units in SYSTEMS.values():
        for kind in ("stress", "length", "force", "force_per_length", "moment_per_length", "density",
                     "expansion", "temperature", "dimensionless"):
            text = example(kind, units)
            if kind in ("expansion", "temperature"):
                text = text.replace("degC", "delta_degC").replace("degF", "delta_degF")
            q = ureg.Quantity(text)
            if kind == "density" and q.check("[force]/[length]**3"):
                q = q / ureg.Quantity(1.0, "g_0")
            q.to(units.unit_of(kind))          # raises DimensionalityError on an example of another kind
