"""The example notebooks run headless without errors (nbclient, the python3 kernel of
/usr/bin/python3), and are stored without outputs."""
import glob
import os

import nbformat
import pytest

import nbclient  # a project dependency (python3-nbclient): missing is a failure, not a skip

NOTEBOOKS = sorted(glob.glob(os.path.join(os.path.dirname(__file__), "..", "..", "notebooks_examples", "*.ipynb")))


def test_there_are_eight_notebooks():
    assert len(NOTEBOOKS) == 8


@pytest.mark.parametrize("path", NOTEBOOKS, ids=os.path.basename)
def test_notebook_runs_and_is_stored_clean(path):
    nb = nbformat.read(path, as_version=4)
    for cell in nb.cells:
        if cell.cell_type == "code":
            assert not cell.get("outputs"), "stored with outputs: " + path
            assert cell.get("execution_count") is None
    assert nb.cells[-1].cell_type == "markdown" and nb.cells[-1].source.startswith("## Sources")
    # The kernel starts in the notebook's folder: make the package path absolute for it.
    os.environ["PYTHONPATH"] = os.pathsep.join(os.path.abspath(p) for p in os.environ.get("PYTHONPATH", "").split(os.pathsep) if p)
    os.environ.setdefault("MPLBACKEND", "Agg")
    os.environ.setdefault("PYDEVD_DISABLE_FILE_VALIDATION", "1")
    client = nbclient.NotebookClient(nb, timeout=600, kernel_name="python3",
                                     resources={"metadata": {"path": os.path.dirname(path)}})
    client.execute()
