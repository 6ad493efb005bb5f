#pragma once
// Forward-mode automatic differentiation for device equations. A device writes its currents
// and charges once, as templates on the scalar type; the element adapter evaluates them with
// Dual<N> to get conductances and capacitances, and with Dual<N, Dual<1>> to get the
// derivative of the capacitances along the state's rate (for the Jacobian's ∂(M·ẋ)/∂x term).
// Derivatives are exact (no finite differences), including through branches: each branch
// differentiates its own formula.
#include <array>
#include <cmath>
#include <type_traits>

namespace coilkick::devices {

template <int N, class T = double>
struct Dual {
  T v{};                 // value
  std::array<T, N> g{};  // gradient with respect to the N seeded variables

  Dual() = default;
  Dual(double c) : v(c) {}  // NOLINT: constants convert implicitly
  template <class U = T, class = std::enable_if_t<!std::is_same<U, double>::value>>
  Dual(const T& c) : v(c) {}  // NOLINT
  static Dual variable(const T& value, int k) {
    Dual d;
    d.v = value;
    d.g[static_cast<std::size_t>(k)] = T(1.0);
    return d;
  }
};

// How many orders of derivatives a scalar type carries: 0 for double, 1 for Dual<N>, 2 for
// Dual<N, Dual<1>>. Implicit solves need one Newton step in S per order for exact derivatives.
template <class S>
struct derivative_order : std::integral_constant<int, 0> {};
template <int N, class T>
struct derivative_order<Dual<N, T>> : std::integral_constant<int, 1 + derivative_order<T>::value> {};

inline double value_of(double x) { return x; }
template <int N, class T>
double value_of(const Dual<N, T>& x) { return value_of(x.v); }

#define COILKICK_DUAL_BINARY(op, value_expr, grad_expr)                                   \
  template <int N, class T>                                                               \
  Dual<N, T> operator op(const Dual<N, T>& a, const Dual<N, T>& b) {                      \
    Dual<N, T> r;                                                                         \
    r.v = value_expr;                                                                     \
    for (int k = 0; k < N; ++k) r.g[static_cast<std::size_t>(k)] = grad_expr;            \
    return r;                                                                             \
  }                                                                                       \
  template <int N, class T>                                                               \
  Dual<N, T> operator op(const Dual<N, T>& a, double c) { return a op Dual<N, T>(c); }     \
  template <int N, class T>                                                               \
  Dual<N, T> operator op(double c, const Dual<N, T>& b) { return Dual<N, T>(c) op b; }

#define G(x) x.g[static_cast<std::size_t>(k)]
COILKICK_DUAL_BINARY(+, a.v + b.v, G(a) + G(b))
COILKICK_DUAL_BINARY(-, a.v - b.v, G(a) - G(b))
COILKICK_DUAL_BINARY(*, a.v * b.v, G(a) * b.v + a.v * G(b))
COILKICK_DUAL_BINARY(/, a.v / b.v, (G(a) * b.v - a.v * G(b)) / (b.v * b.v))
#undef G
#undef COILKICK_DUAL_BINARY

template <int N, class T>
Dual<N, T> operator-(const Dual<N, T>& a) {
  Dual<N, T> r;
  r.v = -a.v;
  for (int k = 0; k < N; ++k) r.g[static_cast<std::size_t>(k)] = -a.g[static_cast<std::size_t>(k)];
  return r;
}

// Chain rule helper: f(a) with f(a.v) = fv and f'(a.v) = df.
template <int N, class T>
Dual<N, T> chain(const Dual<N, T>& a, const T& fv, const T& df) {
  Dual<N, T> r;
  r.v = fv;
  for (int k = 0; k < N; ++k) r.g[static_cast<std::size_t>(k)] = df * a.g[static_cast<std::size_t>(k)];
  return r;
}

using std::exp;
using std::log;
using std::sqrt;
using std::pow;

template <int N, class T>
Dual<N, T> exp(const Dual<N, T>& a) {
  const T e = exp(a.v);
  return chain(a, e, e);
}
template <int N, class T>
Dual<N, T> log(const Dual<N, T>& a) { return chain(a, T(log(a.v)), T(1.0 / a.v)); }
template <int N, class T>
Dual<N, T> sqrt(const Dual<N, T>& a) {
  const T s = sqrt(a.v);
  return chain(a, s, T(0.5 / s));
}
// a^p for a > 0 and a constant exponent p.
template <int N, class T>
Dual<N, T> pow(const Dual<N, T>& a, double p) {
  const T ap = pow(a.v, p);
  return chain(a, ap, T(p * ap / a.v));  // a^(p−1) = a^p / a
}

}  // namespace coilkick::devices
