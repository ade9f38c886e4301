"""Executes the documentation notebooks headless (nbclient, ipykernel) and fails on any error."""
import json
import os
import pathlib
import sys

import pytest
from conftest import need_module

nbformat = need_module("nbformat")
nbclient = need_module("nbclient")
need_module("ipykernel")

NOTEBOOKS = pathlib.Path(__file__).resolve().parents[2] / "docs" / "notebooks"


@pytest.fixture(scope="module")
def kernel(tmp_path_factory):
    # A kernel on this interpreter (Debian's, with numpy), not whatever 'python3' is on PATH.
    root = tmp_path_factory.mktemp("jupyter")
    spec = root / "kernels" / "disc-test"
    spec.mkdir(parents=True)
    (spec / "kernel.json").write_text(json.dumps({
        "argv": [sys.executable, "-m", "ipykernel_launcher", "-f", "{connection_file}"],
        "display_name": "disc test", "language": "python"}))
    os.environ["JUPYTER_PATH"] = str(root) + os.pathsep + os.environ.get("JUPYTER_PATH", "")
    return "disc-test"


# Every notebook in the folder, so a new one is executed without being listed here.
ALL = sorted(p.name for p in NOTEBOOKS.glob("*.ipynb"))


def test_every_notebook_is_found():
    # The five documented in docs/python.md at least; an empty glob would test nothing.
    assert {"parallel-stacks.ipynb", "radio-pre-power-check.ipynb", "fit-and-replace.ipynb",
            "three-columns-campaign.ipynb", "stored-stack-power-up.ipynb"} <= set(ALL)


def test_notebooks_find_their_data_through_the_package_and_plot_inline():
    # No path into the repository's layout and no forced backend (docs/python.md).
    for name in ALL:
        nb = nbformat.read(NOTEBOOKS / name, as_version=4)
        code = "\n".join(c.source for c in nb.cells if c.cell_type == "code")
        assert "../" not in code, f"{name} opens a path relative to the repository"
        assert "matplotlib.use(" not in code, f"{name} forces a matplotlib backend"
        if "matplotlib" in code:
            assert "%matplotlib inline" in code, f"{name} draws but does not plot inline"


@pytest.mark.parametrize("name", ALL)
def test_notebook_runs(name, kernel, tmp_path):
    # Executed in an empty folder of its own, as if the notebook were opened anywhere: its data
    # come from disc.example_path().
    nb = nbformat.read(NOTEBOOKS / name, as_version=4)
    client = nbclient.NotebookClient(nb, timeout=600, kernel_name=kernel,
                                     resources={"metadata": {"path": str(tmp_path)}})
    client.execute()
    code = "\n".join(c.source for c in nb.cells if c.cell_type == "code")
    if "matplotlib" in code:
        # The figures reach the notebook as inline images.
        images = [o for c in nb.cells if c.cell_type == "code" for o in c.outputs
                  if "image/png" in o.get("data", {})]
        assert images, f"{name} showed no inline figure"
