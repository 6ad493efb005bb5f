#pragma once
// Reading the energy accumulators of a run: each dissipated power channel and each voltage
// source's delivered energy is integrated as a state (engine/circuit.hpp), so an energy between
// two instants is a difference of two states.
#include <string>
#include <vector>

#include <Eigen/Dense>

#include "coilkick/engine/circuit.hpp"

namespace coilkick::drivers {

// Heat of the given elements' dissipated channels (all of them, or only the named channel)
// between two states x0 and x1 of a run of circuit c.
double heat_between(const engine::Circuit& c, const Eigen::VectorXd& x0, const Eigen::VectorXd& x1,
                    const std::vector<std::string>& elements, const std::string& only_channel = "");

// Energy the ideal supply source delivered between x0 and x1 (negative: it took energy back).
double supply_energy_between(const engine::Circuit& c, const Eigen::VectorXd& x0, const Eigen::VectorXd& x1);

}  // namespace coilkick::drivers
