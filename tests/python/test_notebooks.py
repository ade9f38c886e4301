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


@pytest.mark.parametrize("name", ALL)
def test_notebook_runs(name, kernel):
    nb = nbformat.read(NOTEBOOKS / name, as_version=4)
    client = nbclient.NotebookClient(nb, timeout=600, kernel_name=kernel,
                                     resources={"metadata": {"path": str(NOTEBOOKS)}})
    client.execute()
