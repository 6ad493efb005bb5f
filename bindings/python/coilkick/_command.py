"""The `coilkick` command of an installed Python package: runs the compiled program bundled in
the package (coilkick/bin/coilkick), which finds the bundled models beside it."""
import os
import sys


def main():
    exe = os.path.join(os.path.dirname(os.path.abspath(__file__)), "bin", "coilkick")
    if not os.access(exe, os.X_OK):
        sys.stderr.write("coilkick: the bundled program %s is missing; reinstall the package\n" % exe)
        return 2
    os.environ.setdefault("COILKICK_PYTHON", sys.executable)  # `coilkick report` runs this interpreter
    os.execv(exe, [exe] + sys.argv[1:])
    return 0  # not reached


if __name__ == "__main__":
    sys.exit(main())
