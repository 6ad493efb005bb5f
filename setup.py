"""Builds the Python package through the project's CMake, so there is one build description:
the compiled module (_core), the coilkick command and the bundled models/ go into the package.
The version is the CMake project version. COILKICK_CMAKE_BUILD_DIR chooses the CMake build
directory (default build-python/cmake), COILKICK_JOBS the parallel jobs."""
import glob
import os
import re
import shutil
import subprocess
import sys

from setuptools import Extension, setup
from setuptools.command.build_ext import build_ext

ROOT = os.path.dirname(os.path.abspath(__file__))
os.makedirs(os.path.join(ROOT, "build-python"), exist_ok=True)  # setup.cfg's egg_base


def project_version():
    with open(os.path.join(ROOT, "CMakeLists.txt"), encoding="utf-8") as f:
        return re.search(r"project\(coilkick VERSION ([0-9.]+)", f.read()).group(1)


class CMakeBuild(build_ext):
    def build_extension(self, ext):
        build_dir = os.environ.get("COILKICK_CMAKE_BUILD_DIR") or os.path.join(ROOT, "build-python", "cmake")
        subprocess.check_call(["cmake", "-S", ROOT, "-B", build_dir, "-DCMAKE_BUILD_TYPE=Release",
                               "-DPython3_EXECUTABLE=" + sys.executable, "-DCOILKICK_BUILD_TESTS=OFF"])
        jobs = os.environ.get("COILKICK_JOBS", str(os.cpu_count() or 1))
        subprocess.check_call(["cmake", "--build", build_dir, "-j", jobs, "--target", "_core", "coilkick_cli"])
        target = self.get_ext_fullpath(ext.name)
        package_dir = os.path.dirname(target)
        os.makedirs(package_dir, exist_ok=True)
        core = glob.glob(os.path.join(build_dir, "python", "coilkick", "_core*.so"))
        if len(core) != 1:
            raise RuntimeError("coilkick: expected one built _core module in %s, found %s" % (build_dir, core))
        shutil.copy2(core[0], target)
        # The command (run by the `coilkick` entry point) and the models it and the module use.
        os.makedirs(os.path.join(package_dir, "bin"), exist_ok=True)
        shutil.copy2(os.path.join(build_dir, "bin", "coilkick"), os.path.join(package_dir, "bin", "coilkick"))
        models = os.path.join(package_dir, "models")
        shutil.rmtree(models, ignore_errors=True)
        shutil.copytree(os.path.join(ROOT, "models"), models)


setup(
    version=project_version(),
    packages=["coilkick"],
    package_dir={"coilkick": "bindings/python/coilkick"},
    package_data={"coilkick": ["review_page.html"]},
    ext_modules=[Extension("coilkick._core", sources=[])],
    cmdclass={"build_ext": CMakeBuild},
    zip_safe=False,
)
