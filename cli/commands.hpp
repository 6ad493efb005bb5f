#pragma once
// The coilkick commands. Each returns the process exit code: 0 done, 1 a rating check failed
// and --fail-on-check was given, 2 bad input (file, key, value, option), 3 solver failure.
#include <ostream>
#include <string>
#include <vector>

#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/scenario/scenario.hpp"

namespace coilkick::cli {

struct CommonOptions {
  std::string file;
  std::string models_dir;  // empty: default models directory
  bool json = false;
  bool quiet = false;
  int threads = 0;  // 0: all cores
};

struct Loaded {
  catalogue::Catalogue parts;
  scenario::Scenario scenario;
};
Loaded load(const CommonOptions& o);  // throws CatalogueError / ScenarioError
int thread_count(const CommonOptions& o);

int cmd_run(const CommonOptions& o, const std::string& waveforms_csv, bool fail_on_check, std::ostream& out);
int cmd_compare(const CommonOptions& o, const std::string& csv_path, const std::string& plot_path, std::ostream& out);
int cmd_sweep(const CommonOptions& o, const std::vector<std::string>& vary, const std::string& output, std::ostream& out);
int cmd_tolerance(const CommonOptions& o, int samples, unsigned long long seed, std::ostream& out);
struct FitCommand {
  std::string capture;                  // CSV file
  std::vector<std::string> parameters;  // keys; empty: analyses::default_fit_keys
  std::vector<std::string> channels;    // "role=column" (time, current, voltage, contact); default time=1, current=2, voltage=3
  std::vector<std::string> units;       // "column=unit"
  std::string shunt, noise;             // quantities with units; empty: none / estimated
  std::string plot, coil_record, record_name, csv;  // outputs; empty: not written
};
int cmd_fit(const CommonOptions& o, const FitCommand& f, std::ostream& out);
int cmd_faults(const CommonOptions& o, const std::string& csv_path, std::ostream& out);
// Replaces the process with the Python package's report builder (coilkick/report.py).
int cmd_report(const CommonOptions& o, const std::string& output, int samples, unsigned long long seed);
// time_metric: "release_time_s" (coil current below release) or "contact_open_time_s" (armature model).
int cmd_suggest(const CommonOptions& o, const std::string& max_release_time, const std::string& max_switch_voltage, int top,
                std::ostream& out, const std::string& time_metric = "release_time_s", const std::vector<std::string>& kinds = {});

}  // namespace coilkick::cli
