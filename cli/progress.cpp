#include "progress.hpp"

#include <cstdio>
#include <unistd.h>

namespace coilkick::cli {

std::function<void(int, int)> progress_bar(bool quiet, const char* what) {
  if (quiet || !isatty(STDERR_FILENO)) return {};
  return [what](int done, int total) {
    const int width = 40;
    const int filled = total > 0 ? done * width / total : width;
    std::fprintf(stderr, "\r%s [", what);
    for (int k = 0; k < width; ++k) std::fputc(k < filled ? '#' : ' ', stderr);
    std::fprintf(stderr, "] %d/%d", done, total);
    if (done == total) std::fputc('\n', stderr);
    std::fflush(stderr);
  };
}

}  // namespace coilkick::cli
