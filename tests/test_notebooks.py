"""The notebooks in notebooks/ run from start to end, and are stored without outputs.

They are executed with nbclient on the ``python3`` kernel, which jupyter_client
starts with the interpreter running the tests (so the frameshift installed in the
test environment). A cell that raises fails the test.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

nbformat = pytest.importorskip("nbformat", reason="the test extra (nbformat) is not installed")
nbclient = pytest.importorskip("nbclient", reason="the test extra (nbclient) is not installed")
pytest.importorskip("ipykernel", reason="the test extra (ipykernel) is not installed")
pytest.importorskip("matplotlib", reason="the notebooks draw figures (plot extra)")

ROOT = Path(__file__).resolve().parents[1]
NOTEBOOKS = ROOT / "notebooks"
NAMES = ["quick_tour", "archive_pipeline", "rotating_table", "other_planets"]


def _tree(folder: Path) -> set[str]:
    return {str(p.relative_to(folder)) for p in folder.rglob("*") if "__pycache__" not in p.parts}


def _execute(name: str, cwd: Path):
    notebook = nbformat.read(NOTEBOOKS / f"{name}.ipynb", as_version=4)
    client = nbclient.NotebookClient(
        notebook,
        kernel_name="python3",
        timeout=300,
        allow_errors=False,
        resources={"metadata": {"path": str(cwd)}},
    )
    client.execute()
    return notebook


def _outputs(notebook) -> tuple[str, int]:
    text, images = [], 0
    for cell in notebook.cells:
        for out in cell.get("outputs", []):
            if out.get("output_type") == "stream" and out.get("name") == "stdout":
                text.append(out["text"])
            data = out.get("data", {})
            text.append(data.get("text/plain", ""))
            images += "image/png" in data
    return "\n".join(text), images


@pytest.mark.parametrize("name", NAMES)
def test_stored_without_outputs(name):
    notebook = nbformat.read(NOTEBOOKS / f"{name}.ipynb", as_version=4)
    nbformat.validate(notebook)
    code = [c for c in notebook.cells if c.cell_type == "code"]
    assert code
    assert all(c.outputs == [] and c.execution_count is None for c in code)
    assert notebook.metadata["kernelspec"]["name"] == "python3"


@pytest.fixture(scope="module")
def untouched():
    """The repository's data and notebook folders are the same after the runs."""
    before = {d: _tree(ROOT / d) for d in ("data_demo", "notebooks")}
    yield
    after = {d: _tree(ROOT / d) for d in ("data_demo", "notebooks")}
    assert after == before, "a notebook wrote into the repository"


@pytest.mark.slow
def test_quick_tour_runs_from_notebooks_folder(untouched):
    notebook = _execute("quick_tour", NOTEBOOKS)
    text, images = _outputs(notebook)
    assert images == 4  # terms at the mooring, term maps, zonal means, track
    assert "reference_frame: inertial" in text
    assert "northward changed: False" in text
    assert "balloon_terms.png" in text
    # both round trips (local and Cartesian) come back to the input
    changes = [float(v) for v in re.findall(r"round trip.*?: (\S+)\n", text)]
    assert len(changes) == 2 and max(changes) < 1e-9, changes


@pytest.mark.slow
def test_archive_pipeline_runs_from_repository_root(untouched):
    notebook = _execute("archive_pipeline", ROOT)
    text, images = _outputs(notebook)
    assert images == 1
    assert text.count("lazy=True") == 4  # one line per daily file
    assert text.count("exit status: 0") == 2
    assert "ua.reference_frame: inertial" in text
    assert "standard_name restored: eastward_wind" in text
    (agree,) = re.findall(r"library vs command line, largest difference \(m s-1\): (\S+)", text)
    (one,) = re.findall(r"one float32 rounding, at most \(m s-1\): (\S+)", text)
    (back,) = re.findall(r"round trip, largest difference \(m s-1\): (\S+)", text)
    (bound,) = re.findall(r"round-trip bound \(m s-1\): (\S+)", text)
    # float32 in, float32 out (IEEE 754 binary32: a rounding errs by at most 2^-24 relative)
    assert "stored as: float32" in text
    assert float(agree) <= float(one) and float(back) <= float(bound)


@pytest.mark.slow
def test_rotating_table_runs(untouched):
    # The invented spin-up run: lab conversion, terms and free surface print their
    # numbers; the rim of a 28 cm radius at 10 rpm stands Ω²r²/(2g) = 4.38 mm above the
    # centre (handbook formula for rigid-body rotation of a liquid).
    notebook = _execute("rotating_table", NOTEBOOKS)
    text, images = _outputs(notebook)
    assert images == 1
    assert "inertial ['time', 'y', 'x', 'x_inertial', 'y_inertial']" in text
    (rim,) = re.findall(r"rim height at the end of the run: (\S+) mm", text)
    assert abs(float(rim) - 4.3835) < 1e-3
    (during, after) = re.findall(r"Euler y at the rim, t = 5 s and 40 s: (\S+) (\S+)", text)[0]
    assert float(during) < 0 and float(after) == 0.0  # spin-up only


@pytest.mark.slow
def test_other_planets_runs(untouched):
    # Venus turns backwards: the frame's eastward speed at the equator is negative
    # (about -1.8 m s-1 at 70 km, from the IAU 2015 rate and radius).
    notebook = _execute("other_planets", NOTEBOOKS)
    text, _ = _outputs(notebook)
    (shift,) = re.findall(r"(\S+) m s-1 at the equator", text)
    assert -1.84 < float(shift) < -1.82
    assert "POLE | ICRF" in text
