"""The ``[fields]`` and ``[resultants]`` tables → :mod:`bridge.resultants` settings.

```toml
[fields]                 # names of the solver's cell arrays (defaults N, M, Q)
N = "N"
M = "M"
Q = "Q"                  # or Q = "" when the solver gives no transverse shear
# scalars = ["nx", "ny", "nxy", "mx", "my", "mxy", "qx", "qy"]   # eight one-component arrays instead

[resultants]
frame = "element"        # "element", "laminate" or "vectors" (then vectors = "array name")
twist_sign = 1           # -1 for a solver whose twisting moment has the other sign
force_scale = 1.0        # solver force unit → definition force unit
length_scale = 1.0       # solver length unit → definition length unit
```
"""

from __future__ import annotations

from shells.errors import DefinitionError, InputError

from .definition import Definition
from .resultants import ResultantFields, ResultantSettings
from .schema import check_keys, expect_table


def resultant_options(defn: Definition) -> tuple[ResultantFields, ResultantSettings]:
    fields = expect_table(defn.raw.get("fields", {}), "[fields]")
    res = expect_table(defn.raw.get("resultants", {}), "[resultants]")
    try:
        check_keys(fields, ("N", "M", "Q", "scalars"), "fields")
        check_keys(res, ("frame", "vectors", "twist_sign", "force_scale", "length_scale"), "resultants")
        for key, value in fields.items():
            ok = isinstance(value, str) if key != "scalars" else (
                isinstance(value, list) and len(value) == 8 and all(isinstance(v, str) for v in value))
            if not ok:
                raise DefinitionError(f"fields.{key} must be " + ("a list of eight array names" if key == "scalars"
                                                                 else "an array name"))
        q = fields.get("Q", "Q")
        f = ResultantFields(fields.get("N", "N"), fields.get("M", "M"), q or None,
                            tuple(fields["scalars"]) if "scalars" in fields else None)
        for key in ("force_scale", "length_scale"):
            if isinstance(res.get(key, 1.0), bool) or not isinstance(res.get(key, 1.0), (int, float)):
                raise DefinitionError(f"resultants.{key} must be a number")
        s = ResultantSettings(res.get("frame", "element"), res.get("vectors"), res.get("twist_sign", 1),
                              float(res.get("force_scale", 1.0)), float(res.get("length_scale", 1.0)))
    except InputError as err:
        raise DefinitionError(err.detail, defn.source) from None
    return f, s
