#pragma once
// doctest::Approx(b).epsilon(e) accepts |a − b| < e·(1 + max(|a|, |b|)): for quantities far below
// one in SI units (milliseconds, milliamperes, microjoules) that is an absolute test of e, which
// cannot fail. Relative comparisons in this project go through `rel`, which drops the 1.
#include <doctest/doctest.h>

inline doctest::Approx rel(double expected) { return doctest::Approx(expected).scale(0.0); }
