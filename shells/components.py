"""Names of ply stress and strain components, the same everywhere in plybridge (fields, pictures, files).

Material axes (1 fibre, 2 in-plane transverse, 3 normal; docs/conventions.md):
stresses ``sigma1 sigma2 tau12 tau13 tau23``, strains ``eps1 eps2 gamma12 gamma13 gamma23``
(engineering shear strains). Element axes (the cell's frame x, y, normal z):
``sigma_x sigma_y tau_xy tau_xz tau_yz`` and ``eps_x eps_y gamma_xy gamma_xz gamma_yz``.
Names used by earlier versions are refused with a pointer to the new one.
"""

from __future__ import annotations

from .errors import InputError

MATERIAL_STRESS = ("sigma1", "sigma2", "tau12", "tau13", "tau23")
MATERIAL_STRAIN = ("eps1", "eps2", "gamma12", "gamma13", "gamma23")
ELEMENT_STRESS = ("sigma_x", "sigma_y", "tau_xy", "tau_xz", "tau_yz")
ELEMENT_STRAIN = ("eps_x", "eps_y", "gamma_xy", "gamma_xz", "gamma_yz")
STRESSES = MATERIAL_STRESS + ELEMENT_STRESS
STRAINS = MATERIAL_STRAIN + ELEMENT_STRAIN
ALL = STRESSES + STRAINS

#: Printed symbol of each name (figures and reports; Greek letters).
SYMBOLS = {name: sym for names, syms in (
    (MATERIAL_STRESS, ("σ1", "σ2", "τ12", "τ13", "τ23")), (MATERIAL_STRAIN, ("ε1", "ε2", "γ12", "γ13", "γ23")),
    (ELEMENT_STRESS, ("σx", "σy", "τxy", "τxz", "τyz")), (ELEMENT_STRAIN, ("εx", "εy", "γxy", "γxz", "γyz")),
) for name, sym in zip(names, syms)}

#: Names of earlier versions → the name to use now.
RETIRED = {"s1": "sigma1", "s2": "sigma2", "s12": "tau12", "s13": "tau13", "s23": "tau23",
           "e1": "eps1", "e2": "eps2", "e12": "gamma12", "e13": "gamma13", "e23": "gamma23",
           **{f"stress:s{k}": v for k, v in (("1", "sigma1"), ("2", "sigma2"), ("12", "tau12"), ("13", "tau13"),
                                              ("23", "tau23"))},
           **{f"strain:e{k}": v for k, v in (("1", "eps1"), ("2", "eps2"), ("12", "gamma12"))}}


class ComponentNameError(InputError):
    """A component name that is not one of ours (a retired name gets a pointer to its replacement)."""


def check_component(name: str, where: str, allowed: tuple[str, ...] = ALL) -> str:
    """Return ``name`` if it is an allowed component name; else raise with a one-line pointer.

    Parameters
    ----------
    name : str
    where : str
        The option or entry being read (``--field``), named in the message.
    allowed : tuple of str
        The names accepted here.
    """
    if name in allowed:
        return name
    if name in RETIRED:
        raise ComponentNameError(f"{where} {name!r}: this name is retired; use {RETIRED[name]!r} "
                                 "(component names: docs/conventions.md)")
    raise ComponentNameError(f"{where} {name!r}: not a component name; use one of {', '.join(allowed)}")
