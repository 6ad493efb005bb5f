#pragma once
// doctest::Approx(b).epsilon(e) accepts |a − b| < e·(1 + max(|a|, |b|)): for quantities far below
// one in SI units (milliseconds, milliamperes, microjoules) that is an absolute test of e, which
// cannot fail. Relative comparisons in this project go through `rel`, which drops the 1.
#include <doctest/doctest.h>

inline doctest::Approx rel(double expected) { return doctest::Approx(expected).scale(0.0); }

// Relative `relative`, but never tighter than `absolute` (in the quantity's unit): for values
// that may be exactly zero. doctest's test is |a − b| < relative·(scale + max(|a|, |b|)).
inline doctest::Approx rel_or_abs(double expected, double relative, double absolute) {
  return doctest::Approx(expected).epsilon(relative).scale(absolute / relative);
}
