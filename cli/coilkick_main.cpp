// coilkick command-line tool.
#include <iostream>
#include <string>

#include "coilkick/engine/errors.hpp"
#include "demo.hpp"

int main(int argc, char** argv) {
  const std::string cmd = argc > 1 ? argv[1] : "";
  try {
    if (cmd == "demo") return coilkick::cli::run_demo(std::cout);
    if (cmd == "--help" || cmd == "-h" || cmd.empty()) {
      std::cout << "usage: coilkick demo    run the bundled switch-off demo\n";
      return cmd.empty() ? 2 : 0;
    }
    std::cerr << "coilkick: unknown command '" << cmd << "' (try --help)\n";
    return 2;
  } catch (const coilkick::engine::SimulationError& e) {
    std::cerr << "coilkick: simulation failed: " << e.what() << "\n";
    return 3;
  } catch (const std::exception& e) {
    std::cerr << "coilkick: " << e.what() << "\n";
    return 2;
  }
}
