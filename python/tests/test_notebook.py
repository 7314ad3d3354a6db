"""The example notebook in docs/ runs headless from top to bottom (nbclient),
so it never goes stale; its outputs are not committed."""

import pytest

from conftest import ROOT


def test_the_example_notebook_runs():
    nbformat = pytest.importorskip("nbformat")
    nbclient = pytest.importorskip("nbclient")
    pytest.importorskip("matplotlib")
    path = ROOT / "docs" / "canonode_demo.ipynb"
    nb = nbformat.read(path, as_version=4)
    # The committed notebook carries no outputs.
    assert all(not c.get("outputs") for c in nb.cells if c.cell_type == "code")
    nbclient.NotebookClient(nb, timeout=600, kernel_name="python3", resources={"metadata": {"path": str(ROOT)}}).execute()
    outs = [o for c in nb.cells if c.cell_type == "code" for o in c.outputs]
    assert not [o for o in outs if o.output_type == "error"]
    # The spectrum's table and the reduction's LaTeX were displayed.
    assert any("text/html" in o.get("data", {}) for o in outs)
    assert any("text/latex" in o.get("data", {}) for o in outs)
