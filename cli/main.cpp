// coilkick command-line tool: run, compare, sweep, tolerance, suggest, faults, fit, report (and demo).
#include <CLI/CLI.hpp>
#include <csignal>
#include <filesystem>
#include <iostream>
#include <unistd.h>

#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/engine/errors.hpp"
#include "coilkick/engine/interrupt.hpp"
#include "coilkick/scenario/scenario.hpp"
#include "commands.hpp"

using namespace coilkick::cli;

namespace {
// Ctrl-C: the work stops at its next step and the command exits 130 without writing results; a
// second Ctrl-C ends the program at once.
extern "C" void on_interrupt(int) {
  if (coilkick::engine::interrupt_requested()) _exit(130);
  coilkick::engine::request_interrupt();
}

void common(CLI::App* app, CommonOptions& o, bool with_file = true) {
  if (with_file) app->add_option("FILE", o.file, "scenario file (TOML)")->required();
  app->add_option("--models", o.models_dir, "models directory (default: the bundled models/)");
  app->add_flag("--json", o.json, "print the results as JSON");
  app->add_flag("--quiet", o.quiet, "no progress bar");
  app->add_option("--threads", o.threads, "worker threads (default: all cores)")->check(CLI::Range(1, 1024));
}
}  // namespace

// An installed command finds the models it was installed with, wherever the install went:
// <prefix>/bin/coilkick next to <prefix>/share/coilkick/models (cmake --install, the Debian
// package), or coilkick/bin/coilkick next to coilkick/models (the Python package).
void find_installed_models() {
  namespace fs = std::filesystem;
  std::error_code ec;
  const fs::path exe = fs::read_symlink("/proc/self/exe", ec);
  if (ec) return;
  for (const fs::path& candidate : {exe.parent_path().parent_path() / "share" / "coilkick" / "models",
                                    exe.parent_path().parent_path() / "models"}) {
    if (fs::is_directory(candidate / "parts", ec)) {
      coilkick::catalogue::set_installed_models_directory(candidate.string());
      return;
    }
  }
}

int main(int argc, char** argv) {
  find_installed_models();
  CLI::App app{"coilkick — switch-off transients of relay, solenoid and contactor drivers, and clamp choice"};
  app.set_version_flag("--version", std::string("coilkick ") + COILKICK_VERSION);
  app.require_subcommand(1);
  CommonOptions o;
  std::string waveforms, csv, plot, output, max_release, max_voltage, time_metric = "release_time_s";
  std::vector<std::string> suggest_kinds;
  std::vector<std::string> vary;
  bool fail_on_check = false;
  int samples = 1000, top = 15;
  unsigned long long seed = 1;

  auto* run = app.add_subcommand("run", "one driver: on-state check, switch-off metrics, rating checks");
  common(run, o);
  run->add_option("--waveforms", waveforms, "write the waveforms to this CSV file");
  run->add_flag("--fail-on-check", fail_on_check, "exit with 1 when a rating check fails");

  auto* compare = app.add_subcommand("compare", "every applicable clamp kind on the driver, side by side");
  common(compare, o);
  compare->add_option("--csv", csv, "write the comparison as CSV to this file");
  compare->add_option("--plot", plot, "write the comparison chart as SVG to this file");

  auto* sweep = app.add_subcommand("sweep", "grid sweep over numeric keys; CSV of metrics per point");
  common(sweep, o);
  sweep->add_option("--vary", vary, "KEY=START:STOP:COUNT, e.g. clamp.zener.overrides.breakdown_voltage=5:40:36")->required();
  sweep->add_option("--output", output, "write the CSV to this file instead of standard output");

  auto* tol = app.add_subcommand("tolerance", "corners and Monte Carlo over the spreads the file declares");
  common(tol, o);
  tol->add_option("--samples", samples, "Monte Carlo samples (default 1000)")->check(CLI::Range(0, 10000000));
  tol->add_option("--seed", seed, "random seed (default 1); the same seed gives the same numbers on any thread count");

  auto* suggest = app.add_subcommand("suggest", "preferred-value clamps that meet release-time and voltage limits");
  common(suggest, o);
  suggest->add_option("--max-release-time", max_release, "longest acceptable release time, e.g. \"3 ms\"")->required();
  suggest->add_option("--kinds", suggest_kinds, "only these clamp kinds, e.g. diode_zener,tvs_across_switch")->delimiter(',');
  suggest->add_option("--time-metric", time_metric,
                      "what the release time is: release_time_s (coil current below release, default) or "
                      "contact_open_time_s (the contacts open; needs the armature model)");
  suggest->add_option("--max-switch-voltage", max_voltage, "highest acceptable switch voltage, e.g. \"48 V\"")->required();
  suggest->add_option("--top", top, "how many to list (default 15)")->check(CLI::Range(1, 1000));

  auto* faults = app.add_subcommand("faults", "node voltages of the healthy driver and of every single fault, by symptom");
  common(faults, o);
  faults->add_option("--csv", csv, "write the readings as CSV to this file");

  auto* rep = app.add_subcommand("report", "the design-review page of the scenario: one self-contained HTML file");
  common(rep, o);
  rep->add_option("--output", output, "HTML file to write (default: the scenario's name + .html)");
  rep->add_option("--samples", samples, "Monte Carlo runs of the tolerance section (default 200; 0: none)")->check(CLI::Range(0, 10000000));
  rep->add_option("--seed", seed, "random seed of the tolerance section (default 1)");

  FitCommand fitc;
  auto* fit = app.add_subcommand("fit", "fit the scenario's coil to a bench capture of its switch-off or switch-on");
  common(fit, o);
  fit->add_option("--capture", fitc.capture, "the capture: CSV with a time column and the coil current and switch voltage")->required();
  fit->add_option("--parameters", fitc.parameters,
                  "scenario keys to fit, e.g. coil.inductance,coil.core_loss_resistance (default: inductance with core loss "
                  "at switch-off, with resistance at switch-on)")
      ->delimiter(',');
  fit->add_option("--channels", fitc.channels,
                  "which column is which, by name or number: time=1,current=2,voltage=3 (the default), contact=4, drive=5 "
                  "(with a drive channel, time zero is at the drive edge)")
      ->delimiter(',');
  fit->add_option("--units", fitc.units, "units of columns whose header has none, e.g. 2=mV,3=V")->delimiter(',');
  fit->add_option("--shunt", fitc.shunt, "the current channel is a shunt's voltage: its resistance, e.g. \"0.1 ohm\"");
  fit->add_option("--noise", fitc.noise, "the current's noise, e.g. \"1 mA\" (default: from the steady current before the edge)");
  fit->add_option("--plot", fitc.plot, "write the overlay chart (measured, fitted, residuals) as SVG to this file");
  fit->add_option("--coil-record", fitc.coil_record, "write the fitted coil as a models/coils record (TOML) to this file");
  fit->add_option("--record-name", fitc.record_name, "the coil record's part name (default: the file's stem)");
  fit->add_option("--csv", fitc.csv, "write measured and fitted current per sample as CSV to this file");

  auto* demo = app.add_subcommand("demo", "compare every clamp on the bundled greenhouse-valve scenario");
  common(demo, o, false);
  demo->add_option("--csv", csv, "write the comparison as CSV to this file");
  demo->add_option("--plot", plot, "write the comparison chart as SVG to this file");

  try {
    app.parse(argc, argv);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForAllHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForVersion& e) {
    return app.exit(e);
  } catch (const CLI::RequiredError& e) {
    if (app.get_subcommands().empty() && argc > 1 && argv[1][0] != '-') {
      std::cerr << "coilkick: unknown command '" << argv[1] << "'; the commands are run, compare, sweep, tolerance, suggest, "
                   "faults, fit, report, demo (coilkick --help)\n";
      return 2;
    }
    app.exit(e);
    return 2;  // bad input
  } catch (const CLI::ParseError& e) {
    app.exit(e);
    return 2;  // bad input
  }
  std::signal(SIGINT, on_interrupt);
  try {
    if (run->parsed()) return cmd_run(o, waveforms, fail_on_check, std::cout);
    if (compare->parsed()) return cmd_compare(o, csv, plot, std::cout);
    if (sweep->parsed()) return cmd_sweep(o, vary, output, std::cout);
    if (tol->parsed()) return cmd_tolerance(o, samples, seed, std::cout);
    if (suggest->parsed()) return cmd_suggest(o, max_release, max_voltage, top, std::cout, time_metric, suggest_kinds);
    if (faults->parsed()) return cmd_faults(o, csv, std::cout);
    if (fit->parsed()) return cmd_fit(o, fitc, std::cout);
    if (rep->parsed()) return cmd_report(o, output, rep->count("--samples") ? samples : 200, seed);
    if (demo->parsed()) {
      const std::string models = o.models_dir.empty() ? coilkick::catalogue::default_models_directory() : o.models_dir;
      o.file = (std::filesystem::path(models) / "scenarios" / "greenhouse_valve.toml").string();
      return cmd_compare(o, csv, plot, std::cout);
    }
  } catch (const coilkick::engine::Interrupted&) {
    std::cerr << "\ncoilkick: interrupted (Ctrl-C); no results were written\n";
    return 130;
  } catch (const coilkick::engine::SimulationError& e) {
    std::cerr << "coilkick: simulation failed: " << e.what() << "\n";
    return 3;
  } catch (const std::invalid_argument& e) {
    std::cerr << "coilkick: " << e.what() << "\n";
    return 2;
  } catch (const std::exception& e) {
    std::cerr << "coilkick: internal error: " << e.what() << "\n";
    return 4;
  }
  return 2;
}
