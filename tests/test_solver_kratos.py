"""A round trip with a real solver: Kratos Multiphysics solves a layered plate, plybridge reads its own files.

Runs the recipe of docs/solvers.md (its TOML block is read from the page) on the solver's native output —
integration-point clouds of 3 × 3 tensors, one folder per case — and checks, against the solver itself:
the section stiffness (our A, B, D against the solver's generalized forces and strains at every integration
point), `compare` passing at 1e-3 with its coverage stated, and a planted frame error and a planted
ply-order error each named first by the diagnosis. Needs the optional extra: pip install -e ".[solver]".
"""

from __future__ import annotations

import json
import re
import shutil
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

pytest.importorskip("KratosMultiphysics.StructuralMechanicsApplication",
                    reason="the [solver] extra (Kratos Multiphysics) is not installed: pip install -e '.[solver]'")

from bridge.cli import main  # noqa: E402
from bridge.mesh.cloud import read_point_cloud  # noqa: E402
from bridge.model.sections import section_of  # noqa: E402
from postproc.compare import element_to_material  # noqa: E402
from tests.solvers import kratos_plate  # noqa: E402

DOC = Path(__file__).resolve().parents[1] / "docs" / "solvers.md"


def recipe() -> str:
    """The plybridge settings of docs/solvers.md (the TOML block after "plybridge settings")."""
    text = DOC.read_text(encoding="utf-8")
    return re.search(r"\*\*plybridge settings\.\*\*\s*```toml\n(.*?)```", text, re.S).group(1)


@pytest.fixture(scope="module")
def solved(tmp_path_factory):
    folder = tmp_path_factory.mktemp("kratos")
    files = kratos_plate.solve(folder)["cases"]
    return folder, files


def variant(folder: Path, name: str, *edits: tuple[str, str]) -> Path:
    text = recipe()
    for old, new in edits:
        assert old in text, old
        text = text.replace(old, new)
    path = folder / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return path


def compare(folder, files, definition: Path):
    pull, bend = files["pull"], files["bend"]
    out = CliRunner().invoke(main, ["compare", str(definition), str(pull["mesh"]), str(pull["points"]),
                                    "--resultants", str(bend["points"]), str(pull["points"]), str(bend["points"]),
                                    "-o", str(folder / "cmp.h5"), "--json", "--quiet"])
    assert out.exit_code in (0, 1), out.output
    return out.exit_code, json.loads(out.stdout)


def test_section_stiffness_equals_the_solvers(solved):
    """[N; M] = [[A, B], [B, D]] [ε⁰; κ] at every integration point, in the laminate axes, to 1e-6."""
    from bridge.definition.loader import load_definition

    folder, files = solved
    defn = load_definition(variant(folder, "base"))
    sec = section_of(defn, "qi")
    abd = np.block([[sec.props.A, sec.props.B], [sec.props.B, sec.props.D]])
    phi = kratos_plate.TURN
    for case in files.values():
        data = read_point_cloud(str(case["points"])).point_data
        t = {k: data[k].reshape(-1, 3, 3) for k in ("SHELL_FORCE", "SHELL_MOMENT", "SHELL_STRAIN", "SHELL_CURVATURE")}

        def vec(a, shear):        # (x, y, xy) of the tensors; off-diagonals are halves for strains
            v = np.zeros((len(a), 5))
            v[:, :3] = np.stack([a[:, 0, 0], a[:, 1, 1], shear * a[:, 0, 1]], 1)
            return v

        n = element_to_material(vec(t["SHELL_FORCE"], 1), phi, "stress")[:, :3]
        m = element_to_material(vec(t["SHELL_MOMENT"], 1), phi, "stress")[:, :3]
        e = element_to_material(vec(t["SHELL_STRAIN"], 2), phi, "strain")[:, :3]
        k = element_to_material(vec(t["SHELL_CURVATURE"], 2), phi, "strain")[:, :3]
        ours = np.concatenate([e, k], 1) @ abd.T
        theirs = np.concatenate([n, m], 1)
        assert np.abs(ours - theirs).max() <= 1e-6 * np.abs(theirs).max()


def test_compare_passes_from_native_files_with_coverage_stated(solved):
    folder, files = solved
    code, summary = compare(folder, files, variant(folder, "base"))
    assert code == 0 and summary["verdict"] == "pass" and summary["max_discrepancy"] < 1e-3
    cov = summary["coverage"]["zones"]["plate"]
    assert (cov["checked"], cov["total"], cov["plies_checked"]) == (2, 24, [1, 8])
    assert cov["points"] == {"1": ["bottom"], "8": ["top"]}
    assert summary["cases"] == ["pull", "bend"] and summary["skipped_cases"] == ["both"]
    assert "both" in summary["note"]


def test_global_tensors_give_the_same_result(solved):
    folder, files = solved
    path = variant(folder, "global", ('N = { array = "SHELL_FORCE", components = ["xx", "yy", "xy"] }',
                                      'N = "SHELL_FORCE_GLOBAL"'),
                   ('M = { array = "SHELL_MOMENT", components = ["xx", "yy", "xy"] }', 'M = "SHELL_MOMENT_GLOBAL"'),
                   ('frame = "element"', 'frame = "global"'))
    code, summary = compare(folder, files, path)
    assert code == 0 and summary["max_discrepancy"] < 1e-3


def test_planted_frame_error_is_named_first(solved):
    folder, files = solved
    code, summary = compare(folder, files, variant(folder, "frame", ('frame = "element"', 'frame = "laminate"')))
    assert code == 1
    top = summary["diagnosis"][0]["explained"][0]
    assert top["name"] == "resultant-frame" and 'frame = "element"' in top["fix"]


def test_planted_ply_order_error_is_named_first(solved):
    folder, files = solved
    path = variant(folder, "order", ('surface = "bottom"', 'ply = 1, point = "bottom"'),
                   ('surface = "top"', 'ply = 8, point = "top"'), ('axes = "element"', 'axes = "element"\n'
                                                                    'ply_order = "top-down"'))
    code, summary = compare(folder, files, path)
    assert code == 1
    assert summary["diagnosis"][0]["explained"][0]["name"] == "stacking-order"


def test_recover_reads_the_native_files(solved):
    folder, files = solved
    out = CliRunner().invoke(main, ["recover", str(variant(folder, "recover")), str(files["pull"]["mesh"]),
                                    str(files["pull"]["points"]), str(files["bend"]["points"]), "-o",
                                    str(folder / "results.h5"), "--json", "--quiet"])
    assert out.exit_code == 0, out.output
    summary = json.loads(out.stdout)
    assert summary["flagged_cells"] == 0 and summary["worst"]["case"] in ("pull", "bend", "both")


def test_clouds_in_another_cell_order_are_mapped_or_refused(solved):
    """The solver's integration-point files with their cells listed backwards (points and values together) give
    the same comparison and the same margins; the same files in metres on a millimetre mesh are refused."""
    import h5py

    from tests.meshes import write_cloud

    folder, files = solved
    (folder / "rev").mkdir(exist_ok=True)
    rev, metres = {}, {}
    for case, names in files.items():
        cloud = read_point_cloud(str(names["points"]))
        n = len(cloud.points) // 4
        order = (np.arange(n)[::-1, None] * 4 + np.arange(4)).ravel()
        (folder / "rev" / case).mkdir(exist_ok=True)
        rev[case] = {"mesh": names["mesh"], "points": folder / "rev" / case / Path(names["points"]).name}
        write_cloud(rev[case]["points"], cloud.points[order], {k: v[order] for k, v in cloud.point_data.items()})
        (folder / "m" / case).mkdir(parents=True, exist_ok=True)
        metres[case] = {"mesh": names["mesh"], "points": folder / "m" / case / Path(names["points"]).name}
        write_cloud(metres[case]["points"], cloud.points / 1000, cloud.point_data)
    code, summary = compare(folder, rev, variant(folder, "rev"))
    assert code == 0 and summary["max_discrepancy"] < 1e-3
    envelopes = []
    for name, fs in (("fwd", files), ("rev", rev)):
        out = CliRunner().invoke(main, ["recover", str(variant(folder, "recover")), str(fs["pull"]["mesh"]),
                                        str(fs["pull"]["points"]), str(fs["bend"]["points"]), "-o",
                                        str(folder / f"{name}.h5"), "--quiet"])
        assert out.exit_code == 0, out.output
        if name == "rev":
            assert "another cell order" in out.stderr
        with h5py.File(folder / f"{name}.h5") as h5:
            envelopes.append(h5["envelope/margin"][()])
    np.testing.assert_allclose(envelopes[1], envelopes[0], rtol=1e-12)
    out = CliRunner().invoke(main, ["recover", str(variant(folder, "recover")), str(files["pull"]["mesh"]),
                                    str(metres["pull"]["points"]), str(metres["bend"]["points"]), "-o",
                                    str(folder / "m.h5"), "--quiet"])
    assert out.exit_code == 2 and "do not match the mesh's cells" in out.stderr


def test_report_shows_a_comparison_of_the_stores_own_inputs_only(solved):
    """recover and compare of the same native files: the report shows the comparison; a comparison with
    another definition (a planted frame error) is refused in one line."""
    folder, files = solved
    store = folder / "own.h5"
    out = CliRunner().invoke(main, ["recover", str(variant(folder, "recover")), str(files["pull"]["mesh"]),
                                    str(files["pull"]["points"]), str(files["bend"]["points"]), "-o", str(store),
                                    "--quiet"])
    assert out.exit_code == 0, out.output
    compare(folder, files, variant(folder, "base"))
    shutil.copy(folder / "cmp.h5", folder / "own-cmp.h5")
    out = CliRunner().invoke(main, ["report", str(store), "-o", str(folder / "r.html"), "--compare",
                                    str(folder / "own-cmp.h5")])
    assert out.exit_code == 0, out.output
    assert "Comparison with the solver" in (folder / "r.html").read_text(encoding="utf-8")
    compare(folder, files, variant(folder, "frame", ('frame = "element"', 'frame = "laminate"')))
    out = CliRunner().invoke(main, ["report", str(store), "-o", str(folder / "r2.html"), "--compare",
                                    str(folder / "cmp.h5")])
    assert out.exit_code == 2 and "made from another definition than the results store" in out.stderr
    assert len(out.stderr.strip().splitlines()) == 1 and not (folder / "r2.html").exists()
