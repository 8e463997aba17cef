"""Defaults and fixed wording shared by every layer (declared once; imported, never restated).

The numbers are the values an analysis takes when the definition file does not
set them (docs/definition.md, ``[analysis]``); the caution is the one sentence
that the README, the CLI help, the report and every output file carry.
"""

from __future__ import annotations

#: Results support, never replace, an engineer's review (README, CLI help, report, stores).
CAUTION = ("Results support, and never replace, review by a qualified engineer under the applicable "
           "regulations and local codes.")

#: How the transverse shear stiffness H is obtained: "equilibrium" (Rolfes & Rohwer 1997) or "factor".
TRANSVERSE_SHEAR = "equilibrium"
#: k of the "factor" method, H = k · Σ Ḡ t (5/6, common practice).
SHEAR_FACTOR = 5.0 / 6.0
#: k of the face wrinkling allowable k · (Ef · Ec · Gc)^(1/3) (0.5, a design value after Hoff & Mautner 1945).
WRINKLING_COEFFICIENT = 0.5
#: Rows of the run's hot-spot table (the worst cells of the whole model).
HOT_SPOTS = 20
