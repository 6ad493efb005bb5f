// Waveform values, slopes and corners: straight-line geometry, checked by hand.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <stdexcept>

#include "coilkick/engine/waveform.hpp"

using coilkick::engine::Waveform;

TEST_CASE("edge: value, right-continuous slope and corners") {
  const Waveform w = Waveform::edge(5.0, 0.0, 1e-3, 20e-9);
  CHECK(w.value(0.0) == 5.0);
  CHECK(w.value(1e-3 + 10e-9) == rel(2.5).epsilon(1e-9));
  CHECK(w.value(2e-3) == 0.0);
  CHECK(w.slope(1e-3) == rel(-5.0 / 20e-9));  // segment starting at the corner
  CHECK(w.slope(1e-3 + 20e-9) == 0.0);
  CHECK(*w.next_corner_after(0.0) == 1e-3);
  CHECK(*w.next_corner_after(1e-3) == rel(1e-3 + 20e-9).epsilon(1e-15));
  CHECK_FALSE(w.next_corner_after(1.0).has_value());
}

TEST_CASE("pulse train: periodic corners and count") {
  const Waveform w = Waveform::pulse_train(0.0, 3.3, 1e-3, 1e-6, 4e-3, 1e-6, 10e-3, 2);
  CHECK(w.value(0.5e-3) == 0.0);
  CHECK(w.value(3e-3) == rel(3.3));
  CHECK(w.value(13e-3) == rel(3.3));
  CHECK(w.value(23e-3) == 0.0);  // only two pulses
  CHECK(*w.next_corner_after(5.5e-3) == rel(11e-3));
  CHECK_FALSE(w.next_corner_after(21.5e-3).has_value());
}

TEST_CASE("table: interpolation and strict ordering") {
  const Waveform w = Waveform::table({{0.0, 0.0}, {1.0, 2.0}, {3.0, 2.0}});
  CHECK(w.value(0.5) == rel(1.0));
  CHECK(w.slope(0.5) == rel(2.0));
  CHECK(w.value(10.0) == 2.0);
  CHECK_THROWS_WITH_AS(Waveform::table({{0.0, 0.0}, {0.0, 1.0}}),
                       doctest::Contains("strictly increasing"), std::invalid_argument);
  CHECK_THROWS_WITH_AS(Waveform::edge(0.0, 1.0, 0.0, 0.0), doctest::Contains("transition_time_s"),
                       std::invalid_argument);
}
