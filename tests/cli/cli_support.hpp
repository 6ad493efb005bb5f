#pragma once
// What the command tests share: the bundled scenarios' paths, scratch files, and running the
// program itself (exit code and output).
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <string>
#include <sys/wait.h>

#include "coilkick/catalogue/catalogue.hpp"

namespace test_support {

inline std::string scenario_path(const char* name) { return coilkick::catalogue::default_models_directory() + "/scenarios/" + name; }

inline std::string scratch(const std::string& name, const std::string& text) {
  const auto dir = std::filesystem::temp_directory_path() / "coilkick_cli_test";
  std::filesystem::create_directories(dir);
  const auto p = (dir / name).string();
  std::ofstream(p) << text;
  return p;
}

struct Outcome {
  int code;
  std::string output;  // stdout and stderr
};

inline Outcome run_program(const std::string& args) {
  const std::string cmd = std::string(COILKICK_PROGRAM) + " " + args + " 2>&1";
  FILE* p = popen(cmd.c_str(), "r");
  std::string out;
  char buf[4096];
  while (p && fgets(buf, sizeof buf, p)) out += buf;
  const int status = p ? pclose(p) : -1;
  return {WIFEXITED(status) ? WEXITSTATUS(status) : -1, out};
}

}  // namespace test_support
