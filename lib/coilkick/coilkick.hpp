#pragma once
// Everything a user of the engine needs, in one include.
#include "coilkick/engine/circuit.hpp"
#include "coilkick/engine/errors.hpp"
#include "coilkick/engine/network.hpp"
#include "coilkick/engine/operating_point.hpp"
#include "coilkick/engine/probe.hpp"
#include "coilkick/engine/state.hpp"
#include "coilkick/engine/transient.hpp"
#include "coilkick/engine/transient_result.hpp"
#include "coilkick/engine/transmission_line.hpp"
#include "coilkick/engine/waveform.hpp"
