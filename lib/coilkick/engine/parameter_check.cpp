#include "coilkick/engine/parameter_check.hpp"

#include <cmath>
#include <sstream>
#include <stdexcept>

namespace coilkick::engine {
namespace {
[[noreturn]] void fail(const std::string& owner, const char* field, const char* rule, double v) {
  std::ostringstream m;
  m << owner << ": " << field << " must be " << rule << ", got " << v;
  throw std::invalid_argument(m.str());
}
}  // namespace

void require_positive(const std::string& owner, const char* field, double value) {
  if (!std::isfinite(value) || !(value > 0.0)) fail(owner, field, "finite and > 0", value);
}

void require_non_negative(const std::string& owner, const char* field, double value) {
  if (!std::isfinite(value) || value < 0.0) fail(owner, field, "finite and >= 0", value);
}

void require_finite(const std::string& owner, const char* field, double value) {
  if (!std::isfinite(value)) fail(owner, field, "finite", value);
}

void require_open_range(const std::string& owner, const char* field, double value, double lo, double hi) {
  if (!std::isfinite(value) || !(value > lo && value < hi)) {
    std::ostringstream rule;
    rule << "inside (" << lo << ", " << hi << ")";
    fail(owner, field, rule.str().c_str(), value);
  }
}

void require_closed_range(const std::string& owner, const char* field, double value, double lo, double hi) {
  if (!std::isfinite(value) || !(value >= lo && value <= hi)) {
    std::ostringstream rule;
    rule << "inside [" << lo << ", " << hi << "]";
    fail(owner, field, rule.str().c_str(), value);
  }
}

void require_positive_or_infinite(const std::string& owner, const char* field, double value) {
  if (std::isnan(value) || !(value > 0.0)) fail(owner, field, "> 0 (or infinite for none)", value);
}

}  // namespace coilkick::engine
