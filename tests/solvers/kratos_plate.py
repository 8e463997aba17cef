"""A small layered plate solved by Kratos Multiphysics (the ``[solver]`` extra), written in its native files.

The plate lies in the global XY plane with its edges turned by ``TURN`` degrees about Z. The solver's element
axes (like plybridge's element frame) run along global X projected on each element; the laminate's 0° runs
along the plate's edge, so the definition's material angle is ``TURN`` and the solver is given the ply angles
θ + TURN from its element x. Thin corotational quadrilaterals (``ShellThinElementCorotational3D4N``) with an
orthotropic layer table, given top ply first (the solver's stiffness stacks its first row at the top: see
docs/solvers.md). One static solve per case; each
case is written with the solver's own VTU writer into its own folder: the mesh file
``<case>/<case>_elements_0.vtu`` and the integration-point cloud ``<case>/<case>_element_gauss_0.vtu``.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

#: In-plane turn of the plate's edges from global X, degrees.
TURN = 30.0
#: Ply table of the laminate, bottom ply first: (thickness mm, angle ° from the laminate x axis).
PLIES = ((0.125, 0.0), (0.125, 45.0), (0.125, -45.0), (0.125, 90.0),
         (0.125, 90.0), (0.125, -45.0), (0.125, 45.0), (0.125, 0.0))
#: Ply material (N-mm): E1, E2, nu12, G12, G13, G23 (MPa) — a carbon/epoxy set of illustrative values.
MATERIAL = (140000.0, 9000.0, 0.3, 4600.0, 4600.0, 3000.0)
#: Loads per case: force per node on the far edge (global N), and a uniform lateral force per node (N).
CASES = {"pull": ((40.0, 10.0, 0.0), 0.0), "bend": ((0.0, 0.0, 0.0), 0.02)}
N_SIDE, LENGTH = 4, 40.0


def solve(folder: Path) -> dict:
    """Build, solve and write every case under ``folder``; returns the node coordinates and the case files."""
    import KratosMultiphysics as KM
    import KratosMultiphysics.ConstitutiveLawsApplication as CLA
    import KratosMultiphysics.StructuralMechanicsApplication as SMA
    from KratosMultiphysics import python_linear_solver_factory as linear_solvers

    c, s = np.cos(np.radians(TURN)), np.sin(np.radians(TURN))
    out = {"cases": {}}
    for case, (edge_force, lateral) in CASES.items():
        model = KM.Model()
        mp = model.CreateModelPart(case)
        for var in (KM.DISPLACEMENT, KM.ROTATION, KM.REACTION, KM.REACTION_MOMENT, KM.VOLUME_ACCELERATION,
                    SMA.POINT_LOAD):
            mp.AddNodalSolutionStepVariable(var)
        n = N_SIDE
        for j in range(n + 1):
            for i in range(n + 1):
                u, v = LENGTH * i / n, LENGTH * j / n
                mp.CreateNewNode(j * (n + 1) + i + 1, c * u - s * v, s * u + c * v, 0.0)
        for dof, reaction in ((KM.DISPLACEMENT_X, KM.REACTION_X), (KM.DISPLACEMENT_Y, KM.REACTION_Y),
                              (KM.DISPLACEMENT_Z, KM.REACTION_Z), (KM.ROTATION_X, KM.REACTION_MOMENT_X),
                              (KM.ROTATION_Y, KM.REACTION_MOMENT_Y), (KM.ROTATION_Z, KM.REACTION_MOMENT_Z)):
            KM.VariableUtils().AddDof(dof, reaction, mp)
        props = mp.GetProperties()[1]
        table = KM.Matrix(len(PLIES), 16)
        for row, (thickness, angle) in enumerate(reversed(PLIES)):       # top ply first
            values = (thickness, angle + TURN, 1.6e-9) + MATERIAL + (1500.0, 1200.0, 50.0, 200.0, 70.0, 70.0, 70.0)
            for col, value in enumerate(values):
                table[row, col] = value
        props.SetValue(SMA.SHELL_ORTHOTROPIC_LAYERS, table)
        props.SetValue(KM.CONSTITUTIVE_LAW, CLA.LinearElasticOrthotropic2DLaw())
        props.SetValue(KM.VOLUME_ACCELERATION, [0.0, 0.0, 0.0])
        eid = 1
        for j in range(n):
            for i in range(n):
                n0 = j * (n + 1) + i + 1
                mp.CreateNewElement("ShellThinElementCorotational3D4N", eid, [n0, n0 + 1, n0 + n + 2, n0 + n + 1],
                                    props)
                eid += 1
        cid = 1
        for node in mp.Nodes:
            i = (node.Id - 1) % (n + 1)
            if i == 0:
                for dof in (KM.DISPLACEMENT_X, KM.DISPLACEMENT_Y, KM.DISPLACEMENT_Z, KM.ROTATION_X, KM.ROTATION_Y,
                            KM.ROTATION_Z):
                    node.Fix(dof)
                continue
            load = np.array(edge_force) if i == n else np.zeros(3)
            load = load + np.array([0.0, 0.0, lateral])
            if np.any(load):
                node.SetSolutionStepValue(SMA.POINT_LOAD, 0, list(load))
                mp.CreateNewCondition("PointLoadCondition3D1N", cid, [node.Id], props)
                cid += 1
        solver = linear_solvers.ConstructSolver(KM.Parameters('{"solver_type": "skyline_lu_factorization"}'))
        strategy = KM.ResidualBasedLinearStrategy(mp, KM.ResidualBasedIncrementalUpdateStaticScheme(),
                                                  KM.ResidualBasedBlockBuilderAndSolver(solver),
                                                  False, False, False, False)
        strategy.SetEchoLevel(0)
        strategy.Initialize()
        strategy.Solve()
        writer = KM.VtuOutput(mp, True, KM.VtuOutput.BINARY, 15, False, True, 0)
        for var in (SMA.SHELL_FORCE, SMA.SHELL_MOMENT, SMA.SHELL_FORCE_GLOBAL, SMA.SHELL_MOMENT_GLOBAL,
                    SMA.SHELL_STRAIN, SMA.SHELL_CURVATURE, SMA.SHELL_ORTHOTROPIC_STRESS_TOP_SURFACE,
                    SMA.SHELL_ORTHOTROPIC_STRESS_BOTTOM_SURFACE):
            writer.AddIntegrationPointVariable(var, KM.Globals.DataLocation.Element)
        writer.PrintOutput(str(folder / case))
        out["cases"][case] = {"mesh": folder / case / f"{case}_elements_0.vtu",
                              "points": folder / case / f"{case}_element_gauss_0.vtu"}
    return out
