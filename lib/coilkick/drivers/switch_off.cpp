#include "coilkick/drivers/switch_off.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>
#include <string>
#include <vector>

#include "coilkick/drivers/off_state.hpp"
#include "coilkick/drivers/on_state.hpp"
#include "coilkick/drivers/run_time_origin.hpp"
#include "coilkick/drivers/si_format.hpp"
#include "coilkick/drivers/switch_off_checks.hpp"
#include "coilkick/drivers/switch_off_transient.hpp"
#include "coilkick/engine/circuit.hpp"
#include "coilkick/engine/errors.hpp"

namespace coilkick::drivers {

namespace {

OperatingPoints points_of(const DriverSpec& spec, const BuiltDriver& b) {
  const engine::Circuit circuit(b.network);
  return {solve_on_state(spec, b, circuit).state, solve_off_point(spec, b, circuit)};
}

// A pwl driver's DC points where Newton and the continuation do not find them from the cold
// guess: from the same driver's points at the physical level. Newton on piecewise-linear
// devices can circle between pieces far from the solution (a pwl Darlington's output
// transistor switching between saturation and the active line at every iteration, from 0 V);
// the physical curves are smooth and the pwl lines lie on them near the solution, so Newton
// from there converges. Rethrows the pwl failure where the physical level fails too or its
// circuit has another shape.
OperatingPoints pwl_points_from_physical(const DriverSpec& spec, const BuiltDriver& b, const catalogue::Catalogue& parts,
                                         const engine::OperatingPointError& failure) {
  DriverSpec smooth = spec;
  smooth.analysis.model_level = devices::ModelLevel::physical;
  const BuiltDriver bs = build_driver_network(smooth, parts);
  const engine::Circuit pwl(b.network), physical(bs.network);
  if (!same_state_names(physical, pwl)) throw failure;
  OperatingPoints start;
  try {
    start = points_of(smooth, bs);
  } catch (const engine::SimulationError&) {
    throw failure;
  }
  return {solve_on_state(spec, b, pwl, &start.on).state, solve_off_point(spec, b, pwl, &start.off)};
}

bool is_pwl(const DriverSpec& spec) { return spec.analysis.model_level == devices::ModelLevel::pwl; }

// A run that fails says where to turn: out of wall time, which key sets the budget; at the pwl
// level a fast loop through a clamp (an active clamp's Zener into a Darlington's base) can switch
// pieces at picoseconds without end, where the physical curves are smooth; a step that met the
// time's own rounding (64 ulps of t) is finer with the switch-off earlier in the run (where the
// run did not move it there: run_time_origin.hpp), or not asked for at looser tolerances; a moved run's message says how its times (the engine's
// "at t = ...") relate to the scenario's. `spec` is the scenario's description, `shift_s` how far
// the run moved its times.
[[noreturn]] void rethrow_with_hints(const DriverSpec& spec, double shift_s, const engine::SimulationError& e, bool time_resolution) {
  std::vector<std::string> hints;
  if (std::string(e.what()).find("wall-time budget") != std::string::npos) {
    hints.push_back("analysis.maximum_wall_time sets that budget");
  }
  if (is_pwl(spec)) {
    hints.push_back("at the pwl device level, whose piecewise-linear curves a fast loop can switch between without end; "
                    "the physical level, analysis.device_models = \"physical\", has smooth ones");
  }
  std::ostringstream h;
  if (time_resolution && shift_s > 0.0) {
    h << "the switch-off at drive.switch_off_at = " << spec.drive.switch_off_at_s << " s was run " << kEarliestEdgeInRun_s
      << " s into the run already: looser analysis tolerances ask for less";
  } else if (time_resolution) {
    h << "the switch-off at drive.switch_off_at = " << spec.drive.switch_off_at_s
      << " s: an earlier switch-off is resolved more finely, or looser analysis tolerances ask for less";
  }
  if (!h.str().empty()) hints.push_back(h.str());
  if (shift_s > 0.0) {
    std::ostringstream t;
    t << "the times above are the run's own, the scenario's less " << shift_s << " s";
    hints.push_back(t.str());
  }
  std::ostringstream m;
  m << e.what() << " (";
  for (std::size_t i = 0; i < hints.size(); ++i) m << (i ? "; " : "") << hints[i];
  m << ")";
  if (time_resolution) throw engine::TimeResolutionError(m.str());
  throw engine::SimulationError(m.str());
}

// A hold (or repetition) that fails where the switch cannot follow its drive: a switch that
// takes longer than a whole period to turn off is switched on again before it has blocked, so it
// sits in its linear region and the average moves steeply and irregularly with the duty (a random
// driver's high-side P-MOSFET, its gate pulled up through 66 kΩ, took 83 µs at a 41 µs period; its
// periods wandered by milliamperes and never settled). The failure then says so, from one
// switch-off of the same driver from its DC on-state (switch_off_delay_s); otherwise it is
// rethrown as it was.
HoldResult solve_hold_or_say_why(const DriverSpec& spec, const BuiltDriver& b) {
  auto slow_switch = [&]() -> std::string {
    DriverSpec plain = spec;
    plain.hold = HoldSpec{};
    plain.repeat = RepeatSpec{};
    double delay_s = 0.0;
    try {
      delay_s = simulate_switch_off(plain, b, nullptr).metrics.get("switch_off_delay_s");
    } catch (const engine::SimulationError&) {
      return "";  // no plain switch-off to read either: the hold's own failure says enough
    } catch (const std::invalid_argument&) {
      return "";
    }
    const double period_s = 1.0 / spec.periodic_drive().pwm_frequency_Hz;
    if (!(delay_s > period_s)) return "";
    std::ostringstream m;
    m << "; the switch cannot follow that drive: one switch-off from the DC on-state takes " << format_si(delay_s, "s")
      << " (switch_off_delay_s) against a period of " << format_si(period_s, "s") << " ("
      << (spec.hold.present() ? "hold.pwm_frequency" : "repeat.period")
      << "), so every on-time comes before the switch has turned off: a longer period, or a faster turn-off (smaller pull-up, "
         "base or gate resistors)";
    return m.str();
  };
  try {
    return solve_hold(spec, b);
  } catch (const engine::TimeResolutionError& e) {
    throw engine::TimeResolutionError(e.what() + slow_switch());
  } catch (const engine::SimulationError& e) {
    throw engine::SimulationError(e.what() + slow_switch());
  } catch (const std::invalid_argument& e) {
    throw std::invalid_argument(e.what() + slow_switch());
  }
}

// The switch-off of `run` (the scenario's driver `spec`, its times moved by −shift_s), a pwl
// driver's DC points from the physical level's where its own Newton fails.
SwitchOffResult run_switch_off(const DriverSpec& spec, const DriverSpec& run, double shift_s, const catalogue::Catalogue& parts,
                               const OperatingPoints* starts) {
  const BuiltDriver b = build_driver_network(run, parts);
  try {
    if (!is_pwl(run)) return simulate_switch_off(run, b, starts);
    if (starts) return simulate_switch_off(run, b, starts);
    try {
      return simulate_switch_off(run, b, nullptr);
    } catch (const engine::OperatingPointError& failure) {
      const OperatingPoints from_physical = pwl_points_from_physical(run, b, parts, failure);
      return simulate_switch_off(run, b, &from_physical);
    }
  } catch (const engine::TimeResolutionError& e) {
    rethrow_with_hints(spec, shift_s, e, true);
  } catch (const engine::SimulationError& e) {
    if (!is_pwl(run) && shift_s == 0.0) throw;
    rethrow_with_hints(spec, shift_s, e, false);
  }
}

}  // namespace

SwitchOffResult simulate_switch_off(const DriverSpec& spec, const catalogue::Catalogue& parts, const OperatingPoints* starts) {
  const double shift = run_time_shift_s(spec);
  if (shift == 0.0) return run_switch_off(spec, spec, 0.0, parts, starts);
  return in_scenario_time(run_switch_off(spec, moved_in_time(spec, shift), shift, parts, starts), spec, parts, shift);
}

OperatingPoints solve_operating_points(const DriverSpec& spec, const catalogue::Catalogue& parts) {
  const BuiltDriver b = build_driver_network(spec, parts);
  try {
    return points_of(spec, b);
  } catch (const engine::OperatingPointError& failure) {
    if (!is_pwl(spec)) throw;
    return pwl_points_from_physical(spec, b, parts, failure);
  }
}

SwitchOffResult simulate_switch_off(const DriverSpec& spec, const BuiltDriver& b, const OperatingPoints* starts) {
  const engine::Circuit circuit(b.network);
  // Every channel reads the board's on-state and off-state (one DC point each).
  std::vector<ChannelRun> channels;
  channels.push_back({channel_driver_spec(spec, 0), &b, solve_on_state(spec, b, circuit, starts ? &starts->on : nullptr), {}});
  for (std::size_t k = 0; k < b.channels.size(); ++k) {
    const DriverSpec one = channel_driver_spec(spec, k + 1);
    channels.push_back({one, &b.channels[k], read_on_state(one, b.channels[k], circuit, channels.front().on.state), {}});
  }
  auto read_off = [&](const engine::CircuitState& off_point) {
    bool all = true;
    for (auto& ch : channels) {
      ch.off = read_off_state(ch.spec, *ch.built, b.network, circuit, off_point, ch.on.coil_current_A);
      all = all && ch.off.blocks;
    }
    return all;
  };
  // The off point: from the given start, or — with a hold, which needs it first, or the armature
  // model, whose off point has its own start — before the run; otherwise after the run, from its
  // last point (a few Newton iterations where the cold guess or the on-state take dozens,
  // walking the drive's junctions off). That run assumes that the driver blocks and does not
  // grow its horizon; it runs again where the off point says otherwise (a fault), or where the
  // driver blocks but the decay was not seen yet within an automatic horizon.
  const bool off_first = starts != nullptr || spec.has_periodic_drive() || b.armature;
  if (off_first) read_off(solve_off_point(spec, b, circuit, starts ? &starts->off : &channels.front().on.state));
  const OnState& on = channels.front().on;
  const OffState& off = channels.front().off;

  SwitchOffResult out;
  // With a hold the switch-off starts from the PWM's steady state instead of the DC on-state —
  // where the driver blocks at all (otherwise off_state_blocks fails and says why; a hold of a
  // coil that never de-energises has no steady period to speak of). (One channel only.)
  engine::CircuitState start = on.state;
  if (spec.has_periodic_drive() && off.blocks) {
    out.hold = std::make_shared<const HoldResult>(solve_hold_or_say_why(spec, b));
    start = out.hold->final_start;
    channels.front().on.state = start;
    channels.front().on.coil_current_A = start.values[circuit.state_index("coil.current")];
  }
  SwitchOffTransient run = run_switch_off_transient(spec, channels, circuit, start, off_first);
  if (!off_first) {
    const engine::TransientResult& r = *run.result;
    engine::CircuitState last;
    last.time_s = r.end_time_s();
    last.values = r.states().row(r.states().rows() - 1).transpose();
    const bool blocks = read_off(solve_off_point(spec, b, circuit, &last));
    // (A stop time of the file's own is a horizon that does not grow: nothing to run again for.)
    const bool automatic_horizon = !(spec.analysis.stop_time_s > 0.0);
    if (!blocks || (!run.decay_observed && automatic_horizon)) run = run_switch_off_transient(spec, channels, circuit, start);
  }

  out.spec = spec;
  out.transient = run.result;
  bool all_block = true;
  double slowest_decay_s = 0.0;
  for (const auto& ch : channels) {
    SwitchOffMeasures measures = measure_switch_off(ch.spec, *ch.built, ch.on, ch.off, *run.result);
    ChannelResult r;
    r.name = ch.built->prefix.empty() ? "" : ch.built->prefix.substr(0, ch.built->prefix.size() - 1);
    r.metrics = measures.metrics;
    r.waveforms = switch_off_waveforms(*ch.built, *run.result);
    r.checks = switch_off_checks(ch.spec, *ch.built, measures, ch.off, run.decay_observed, ch.on.control_voltage_V,
                                 &ch == &channels.front() ? out.hold.get() : nullptr);
    all_block = all_block && ch.off.blocks;
    slowest_decay_s = std::max(slowest_decay_s, r.metrics.get("current_decay_time_10pct_s"));
    if (&ch == &channels.front()) set_hold_metrics(spec, out.hold.get(), r.metrics);
    out.channels.push_back(std::move(r));
  }
  // The board's metrics (the common clamp pin, the shared cable core, from the first edge on),
  // measured once and carried by every channel; its checks with the first channel's.
  Metrics board;
  measure_common_clamp(b, *run.result, first_edge_s(spec), all_block, board);
  for (auto& r : out.channels) {
    for (const auto& [name, value] : board.items()) r.metrics.set(name, value);
  }
  const auto common_checks = common_clamp_checks(b, board, slowest_decay_s);
  out.channels.front().checks.insert(out.channels.front().checks.end(), common_checks.begin(), common_checks.end());

  // The first channel's metrics with the board's, then every further channel's behind its name.
  out.metrics = out.channels.front().metrics;
  const std::vector<std::string> names = metric_names(further_channel_names(spec));
  for (std::size_t k = 1; k < out.channels.size(); ++k) {
    const std::string prefix = out.channels[k].name + ".";
    for (const auto& name : names) {
      if (name.rfind(prefix, 0) == 0) out.metrics.set(name, out.channels[k].metrics.get(name.substr(prefix.size())));
    }
  }
  // Every check of the board: the first channel's and the board's as they are, a further
  // channel's behind its name ("pump: switch_voltage"; the run's accuracy once).
  out.checks = out.channels.front().checks;
  for (std::size_t k = 1; k < out.channels.size(); ++k) {
    for (auto c : out.channels[k].checks) {
      if (c.name == "accuracy") continue;
      c.name = out.channels[k].name + ": " + c.name;
      out.checks.push_back(std::move(c));
    }
  }
  out.waveforms = out.channels.front().waveforms;
  if (out.channels.size() == 1) out.channels.clear();
  return out;
}

}  // namespace coilkick::drivers
