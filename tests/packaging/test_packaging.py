"""Installing as each ecosystem installs, each into a temporary place (never the system):
pip into a virtual environment (Debian's interpreter, --no-build-isolation, the build tools from
the archive), a wheel built with `python -m build` into another, and the Debian package unpacked
with dpkg-deb into a scratch root. Each then imports the package from another directory with no
PYTHONPATH of ours, runs the `coilkick` command, and finds the bundled models by itself.

CTest label "packaging" (it builds the extension once more, about two minutes on two cores)."""
import json
import os
import re
import subprocess
import sys

import pytest

SOURCE = os.environ.get("COILKICK_SOURCE_DIR", os.path.join(os.path.dirname(__file__), "..", ".."))
BUILD = os.environ.get("COILKICK_BUILD_DIR", os.path.join(SOURCE, "build"))


def project_version():
    with open(os.path.join(SOURCE, "CMakeLists.txt"), encoding="utf-8") as f:
        return re.search(r"project\(coilkick VERSION ([0-9.]+)", f.read()).group(1)


def run(args, **kw):
    out = subprocess.run(args, capture_output=True, text=True, timeout=1800, **kw)
    assert out.returncode == 0, "%s\n%s\n%s" % (" ".join(map(str, args)), out.stdout[-3000:], out.stderr[-3000:])
    return out.stdout


@pytest.fixture(scope="module")
def cmake_build_dir(tmp_path_factory):
    # One CMake build of the extension, shared by the pip install and the wheel.
    return str(tmp_path_factory.mktemp("cmake"))


def clean_env(cmake_build_dir=None):
    env = {k: v for k, v in os.environ.items() if k not in ("PYTHONPATH", "COILKICK_MODELS")}
    if cmake_build_dir:
        env["COILKICK_CMAKE_BUILD_DIR"] = cmake_build_dir
        env.setdefault("COILKICK_JOBS", "2")
    return env


def check_installed(python, command, where, cwd):
    """The package imports from `cwd` with no PYTHONPATH, reports the project version, finds its
    models under `where`, and the command runs the bundled demo scenario."""
    version = project_version()
    probe = ("import coilkick, json; s = coilkick.load_scenario(coilkick.default_models_directory() + "
             "'/scenarios/greenhouse_valve.toml'); r = coilkick.run(s); "
             "print(json.dumps({'file': coilkick.__file__, 'version': coilkick.__version__, "
             "'models': coilkick.default_models_directory(), 'release': r.metrics.release_time_s}))")
    got = json.loads(run([python, "-c", probe], cwd=cwd, env=clean_env()).strip().splitlines()[-1])
    assert got["file"].startswith(str(where)), got
    assert got["models"].startswith(str(where)), got
    assert got["version"] == version
    assert 1e-3 < got["release"] < 1e-1
    assert run([command, "--version"], cwd=cwd, env=clean_env()).strip() == "coilkick " + version
    report = json.loads(run([command, "run", os.path.join(got["models"], "scenarios", "greenhouse_valve.toml"), "--json"],
                            cwd=cwd, env=clean_env()))
    assert report["metrics"]["release_time_s"] == pytest.approx(got["release"], rel=1e-12)  # the same computation
    # The design-review page: the installed command hands over to the installed Python package.
    page = os.path.join(str(cwd), "review.html")
    run([command, "report", os.path.join(got["models"], "scenarios", "fan_relay.toml"), "--output", page, "--samples", "0",
         "--quiet"], cwd=cwd, env=clean_env())
    assert "<section id=\"checks\">" in open(page, encoding="utf-8").read()


def test_pip_install_into_a_virtual_environment(tmp_path, cmake_build_dir):
    venv = tmp_path / "venv"
    run([sys.executable, "-m", "venv", "--system-site-packages", str(venv)])
    run([str(venv / "bin" / "pip"), "install", "--no-build-isolation", "--no-deps", "--no-index", SOURCE],
        env=clean_env(cmake_build_dir))
    check_installed(str(venv / "bin" / "python"), str(venv / "bin" / "coilkick"), venv, tmp_path)


def test_wheel_built_and_installed(tmp_path, cmake_build_dir):
    wheels = tmp_path / "wheels"
    run([sys.executable, "-m", "build", "--no-isolation", "--wheel", "--outdir", str(wheels), SOURCE],
        env=clean_env(cmake_build_dir), cwd=SOURCE)
    built = list(wheels.glob("coilkick-%s-*.whl" % project_version()))
    assert len(built) == 1, list(wheels.iterdir())
    venv = tmp_path / "venv"
    run([sys.executable, "-m", "venv", "--system-site-packages", str(venv)])
    run([str(venv / "bin" / "pip"), "install", "--no-deps", "--no-index", str(built[0])], env=clean_env())
    check_installed(str(venv / "bin" / "python"), str(venv / "bin" / "coilkick"), venv, tmp_path)


def test_debian_package_unpacked_into_a_scratch_root(tmp_path):
    out = tmp_path / "deb"
    run(["cpack", "-G", "DEB", "-B", str(out), "--config", os.path.join(BUILD, "CPackConfig.cmake")], cwd=BUILD)
    debs = list(out.glob("coilkick_%s_*.deb" % project_version()))
    assert len(debs) == 1
    fields = run(["dpkg-deb", "-f", str(debs[0]), "Package", "Version", "Depends"])
    for needed in ("python3-numpy", "python3-pandas", "libeigen3-dev"):
        assert needed in fields
    root = tmp_path / "root"
    run(["dpkg-deb", "-x", str(debs[0]), str(root)])
    for path in ("usr/bin/coilkick", "usr/include/coilkick/coilkick.hpp", "usr/lib/cmake/coilkick/coilkickConfigVersion.cmake",
                 "usr/share/coilkick/models/parts", "usr/lib/python3/dist-packages/coilkick/__init__.py"):
        assert (root / path).exists(), path
    # Debian's python3 reads /usr/lib/python3/dist-packages; the scratch root stands in for /.
    env = clean_env()
    env["PYTHONPATH"] = str(root / "usr" / "lib" / "python3" / "dist-packages")
    probe = "import coilkick; print(coilkick.__version__, coilkick.default_models_directory())"
    version, models = run([sys.executable, "-c", probe], cwd=tmp_path, env=env).split()
    assert version == project_version()
    assert models == str(root / "usr" / "share" / "coilkick" / "models")
    assert run([str(root / "usr" / "bin" / "coilkick"), "--version"], cwd=tmp_path, env=clean_env()).strip() == "coilkick " + version
    run([str(root / "usr" / "bin" / "coilkick"), "run", models + "/scenarios/fan_relay.toml", "--quiet"], cwd=tmp_path, env=clean_env())
