#pragma once
// A progress bar on stderr for long sweeps and tolerance runs: shown only when stderr is a
// terminal and --quiet is not given.
#include <functional>

namespace coilkick::cli {

std::function<void(int, int)> progress_bar(bool quiet, const char* what);

}  // namespace coilkick::cli
