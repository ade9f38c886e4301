"""Installs the disc package with Debian's own tools: setuptools drives CMake.

    python3 -m venv --system-site-packages env
    env/bin/pip install --no-build-isolation bindings/python

setuptools keeps its temporary files in ./build, so CMake builds in ./build-pip instead.
"""
import os
import pathlib
import re
import subprocess
import sys

from setuptools import Extension, setup
from setuptools.command.build_ext import build_ext

HERE = pathlib.Path(__file__).resolve().parent
ROOT = HERE.parent.parent
# The version is written once, in the top-level project() call.
VERSION = re.search(r"project\(libdisc VERSION ([0-9.]+)", (ROOT / "CMakeLists.txt").read_text()).group(1)


class CMakeExtension(Extension):
    def __init__(self, name):
        super().__init__(name, sources=[])


class CMakeBuild(build_ext):
    def build_extension(self, ext):
        out = pathlib.Path(self.get_ext_fullpath(ext.name)).resolve().parent
        # DISC_CMAKE_BUILD_DIR reuses a configured build tree (the test suite does).
        build = pathlib.Path(os.environ.get("DISC_CMAKE_BUILD_DIR", ROOT / "build-pip"))
        if not (build / "CMakeCache.txt").exists():
            ninja = subprocess.run(["which", "ninja"], capture_output=True).returncode == 0
            subprocess.run(["cmake", "-S", str(ROOT), "-B", str(build), "-DCMAKE_BUILD_TYPE=Release",
                            "-DPython_EXECUTABLE=/usr/bin/python3", "-DDISC_BUILD_TESTS=OFF",
                            "-DDISC_BUILD_BENCHMARKS=OFF"] + (["-G", "Ninja"] if ninja else []),
                           check=True)
        subprocess.run(["cmake", "--build", str(build), "--target", "_disc", "-j", str(os.cpu_count() or 2)],
                       check=True)
        built = next((build / "python" / "disc").glob("_disc*.so"))
        out.mkdir(parents=True, exist_ok=True)
        self.copy_file(str(built), str(out / built.name))
        # The example netlists the build copied into the package (disc.example_path()).
        self.copy_tree(str(build / "python" / "disc" / "examples"), str(out / "examples"))


setup(
    name="disc",
    version=VERSION,
    description="Simulate power supplies built with selenium and copper-oxide plate rectifiers",
    packages=["disc"],
    package_dir={"disc": "disc"},
    package_data={"disc": ["*.pyi", "py.typed"]},
    ext_modules=[CMakeExtension("disc._disc")],
    cmdclass={"build_ext": CMakeBuild},
    python_requires=">=3.9",
)
