#pragma once
// Parameter checks shared by all elements: each failure names the element and the field.
#include <string>

namespace coilkick::engine {

// Throws std::invalid_argument "<owner>: <field> must be finite and > 0, got <value>".
void require_positive(const std::string& owner, const char* field, double value);
// Same for >= 0.
void require_non_negative(const std::string& owner, const char* field, double value);
// Finite, any sign.
void require_finite(const std::string& owner, const char* field, double value);
// Finite and strictly inside (lo, hi).
void require_open_range(const std::string& owner, const char* field, double value, double lo, double hi);
// Finite and inside [lo, hi].
void require_closed_range(const std::string& owner, const char* field, double value, double lo, double hi);
// > 0; +infinity allowed (means "absent", e.g. no core-loss resistance).
void require_positive_or_infinite(const std::string& owner, const char* field, double value);

}  // namespace coilkick::engine
