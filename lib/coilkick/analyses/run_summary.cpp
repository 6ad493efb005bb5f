#include "coilkick/analyses/run_summary.hpp"

#include "coilkick/drivers/switch_off.hpp"
#include "coilkick/engine/errors.hpp"
#include "coilkick/scenario/scenario.hpp"

namespace coilkick::analyses {

RunSummary summarize_run(const drivers::DriverSpec& spec, const catalogue::Catalogue& parts,
                         const drivers::OperatingPoints* starts) {
  RunSummary s;
  try {
    auto r = drivers::simulate_switch_off(spec, parts, starts);
    s.metrics = std::move(r.metrics);
    s.checks = std::move(r.checks);
    s.status = drivers::overall_status(s.checks);
  } catch (const engine::SimulationError& e) {
    s.error = std::string("simulation failed: ") + e.what();
  } catch (const std::invalid_argument& e) {
    s.error = std::string("invalid at this point: ") + scenario::with_file_keys(e.what());
    s.invalid_input = true;
  }
  return s;
}

}  // namespace coilkick::analyses
