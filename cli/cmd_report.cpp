// coilkick report FILE --output PAGE.html: the design-review page. The page is built by the
// Python package (its jinja2 template and matplotlib charts, coilkick/review_page.py): this command
// finds the package installed beside the program and hands over to it.
#include <cstdlib>
#include <filesystem>
#include <stdexcept>
#include <string>
#include <unistd.h>
#include <vector>

#include "commands.hpp"

namespace coilkick::cli {

int cmd_report(const CommonOptions& o, const std::string& output, int samples, unsigned long long seed) {
  namespace fs = std::filesystem;
  std::error_code ec;
  const fs::path bin = fs::read_symlink("/proc/self/exe", ec).parent_path();
  // A build tree (build/bin, build/python), an install prefix or the Debian package
  // (bin, lib/python3/dist-packages), the Python package itself (coilkick/bin in site-packages).
  std::string package_parent;
  for (const fs::path& p : {bin.parent_path() / "python", bin.parent_path() / "lib" / "python3" / "dist-packages",
                            bin.parent_path().parent_path()}) {
    if (fs::exists(p / "coilkick" / "review_page.py", ec)) {
      package_parent = p.string();
      break;
    }
  }
  if (package_parent.empty()) {
    throw std::invalid_argument("report: the coilkick Python package is not installed beside this program (" + bin.string() +
                                "); the page is built by it (coilkick.report)");
  }
  const char* python_env = std::getenv("COILKICK_PYTHON");  // set by the Python package's own command
  const std::string python = python_env ? python_env : COILKICK_PYTHON_EXECUTABLE;
  const char* old = std::getenv("PYTHONPATH");
  const std::string path = package_parent + (old && *old ? std::string(":") + old : std::string());
  setenv("PYTHONPATH", path.c_str(), 1);
  // (The package imports review_page itself, so run its main rather than the module as __main__.)
  std::vector<std::string> args{python, "-c", "import sys; from coilkick.review_page import main; sys.exit(main(sys.argv[1:]))",
                                o.file, "--samples", std::to_string(samples), "--seed", std::to_string(seed)};
  if (!output.empty()) args.insert(args.end(), {"--output", output});
  if (!o.models_dir.empty()) args.insert(args.end(), {"--models", o.models_dir});
  if (o.quiet) args.emplace_back("--quiet");
  std::vector<char*> argv;
  for (auto& a : args) argv.push_back(a.data());
  argv.push_back(nullptr);
  execv(python.c_str(), argv.data());
  throw std::invalid_argument("report: cannot run the Python interpreter " + python);
}

}  // namespace coilkick::cli
