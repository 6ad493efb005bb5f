#pragma once
#include <ostream>

namespace coilkick::cli {
// Runs the bundled demo switch-off and prints its result; returns the process exit code.
int run_demo(std::ostream& out);
}  // namespace coilkick::cli
