#pragma once
// Adapter from device equations to the engine's Element interface.
//
// A device model (diode, transistor ...) with N terminals and no internal states derives from
// TerminalDevice<Model, N> and provides two templates on the scalar type S:
//   void currents(const S* v, S* i) const;  // static (resistive) current INTO each terminal, A
//   void charges(const S* v, S* q) const;   // charge held at each terminal, C (sums to zero)
// and optionally currents_and_charges(v, i, q) (q may be null) when the two share work.
// A model with a breakdown branch (transistor avalanche) may also provide
//   bool has_breakdown() const;
// and take a last argument `S* breakdown` in currents (and currents_and_charges): when it is not
// null the model leaves the breakdown branch's terminal currents out of i and writes them there.
// The adapter then splits the heat into the channels "heat" (Σ v·i of everything else) and
// "breakdown_heat" (Σ v·i of the branch), so a check can count avalanche energy alone; neither is
// a difference of the other from the total, so both keep full precision.
// from the terminal voltages v (V). The adapter differentiates them exactly (dual.hpp) into
// conductances, capacitances and the capacitance slope the Jacobian needs; the heat is
// Σ v_k·i_k (channel "heat") and the stored energy is ∫ v·dq along the straight path s·v from 0
// (composite Gauss–Legendre quadrature; charges here are reciprocal so the integral is a
// state function).
#include <array>
#include <type_traits>
#include <utility>
#include <vector>

#include "coilkick/devices/dual.hpp"
#include "coilkick/engine/element.hpp"

namespace coilkick::devices {

template <class Model, class S, class = void>
struct has_currents_and_charges : std::false_type {};
template <class Model, class S>
struct has_currents_and_charges<Model, S, std::void_t<decltype(std::declval<const Model&>().currents_and_charges(
                                              std::declval<const S*>(), std::declval<S*>(), std::declval<S*>()))>>
    : std::true_type {};

template <class Model, class = void>
struct has_breakdown_split : std::false_type {};
template <class Model>
struct has_breakdown_split<Model, std::void_t<decltype(std::declval<const Model&>().has_breakdown())>> : std::true_type {};

// A piecewise-linear model numbers its corners (engine::PieceChoices) with
//   static constexpr int kPieceSlots = K;
// and takes a last argument `engine::PieceChoices* pieces` in currents (after `breakdown`).
template <class Model, class = void>
struct piece_slots_of : std::integral_constant<int, 0> {};
template <class Model>
struct piece_slots_of<Model, std::void_t<decltype(Model::kPieceSlots)>> : std::integral_constant<int, Model::kPieceSlots> {};

// A model whose charges are linear in the terminal voltages (fixed capacitances: the pwl
// transistors) says so with
//   static constexpr bool kLinearCharges = true;
// Its mass is then the same at every state: stamped by every load, also in plain doubles, and no
// mass slope (the circuit factors M once).
template <class Model, class = void>
struct linear_charges_of : std::false_type {};
template <class Model>
struct linear_charges_of<Model, std::void_t<decltype(Model::kLinearCharges)>> : std::integral_constant<bool, Model::kLinearCharges> {};

template <class Model, int N>
class TerminalDevice : public engine::Element {
 public:
  using engine::Element::Element;

  std::vector<engine::PowerChannelSpec> power_channels() const override {
    if (splits_breakdown()) {
      return {{"heat", engine::PowerChannelSpec::Kind::dissipated}, {"breakdown_heat", engine::PowerChannelSpec::Kind::dissipated}};
    }
    return {{"heat", engine::PowerChannelSpec::Kind::dissipated}};
  }

  void load(const engine::ElementContext& ctx, engine::Stamper& out) const override {
    // Rates only (the Rosenbrock stages) and no charges (whose slopes are the mass) or linear
    // ones (a fixed mass, stamped apart): the currents in plain doubles — the same values as the
    // dual numbers' value parts.
    if (!out.wants_slopes() && (!model().has_charges() || linear_charges_of<Model>::value)) {
      load_as<double>(ctx, out);
    } else {
      load_as<Dual<kSeeded>>(ctx, out);
    }
  }

  // A device's currents and charges depend only on its terminals' voltage differences (its
  // currents sum to zero: no terminal of it is an absolute reference), so the last terminal's
  // derivatives are minus the sum of the others': the dual numbers seed the first N − 1
  // terminals only (a third fewer gradient parts for a diode, a quarter for a transistor), and
  // slope_row() completes each row.
  static constexpr int kSeeded = N - 1;

  // Currents (and charges) in S, stamped: values always; with S = Dual<kSeeded> also the slopes
  // and, with charges, the mass.
  template <class S>
  void load_as(const engine::ElementContext& ctx, engine::Stamper& out) const {
    constexpr bool dual = !std::is_same_v<S, double>;
    std::array<S, N> v{}, i{}, q{}, ib{};
    for (int k = 0; k < N; ++k) {
      if constexpr (dual) {
        v[idx(k)] = k < kSeeded ? S::variable(ctx.value(k), k) : S(ctx.value(k));
      } else {
        v[idx(k)] = ctx.value(k);
      }
    }
    const bool with_charges = dual && model().has_charges();
    S* const breakdown = splits_breakdown() ? ib.data() : nullptr;
    if constexpr (has_currents_and_charges<Model, S>::value) {
      if constexpr (has_breakdown_split<Model>::value) {
        model().currents_and_charges(v.data(), i.data(), with_charges ? q.data() : nullptr, breakdown);
      } else {
        model().currents_and_charges(v.data(), i.data(), with_charges ? q.data() : nullptr);
      }
    } else {
      currents_of(v.data(), i.data(), breakdown, ctx.pieces());
      if (with_charges) model().charges(v.data(), q.data());
    }
    S p(0.0), pb(0.0);
    for (int k = 0; k < N; ++k) {
      S flow = i[idx(k)];
      p = p + v[idx(k)] * i[idx(k)];
      if (breakdown) {
        flow = flow + ib[idx(k)];
        pb = pb + v[idx(k)] * ib[idx(k)];
      }
      out.add_flow(k, -value_of(flow));
      if constexpr (dual) {
        const auto row = slope_row(flow.g);
        for (int j = 0; j < N; ++j) out.add_flow_slope(k, j, -row[idx(j)]);
      }
    }
    out.add_power(0, value_of(p));
    if (breakdown) out.add_power(1, value_of(pb));
    if constexpr (!dual && linear_charges_of<Model>::value) {
      if (model().has_charges()) stamp_linear_mass(out);
    }
    if constexpr (dual) {
      const auto power_row = slope_row(p.g);
      for (int j = 0; j < N; ++j) out.add_power_slope(0, j, power_row[idx(j)]);
      if (breakdown) {
        const auto breakdown_row = slope_row(pb.g);
        for (int j = 0; j < N; ++j) out.add_power_slope(1, j, breakdown_row[idx(j)]);
      }
      if (!with_charges) return;
      for (int k = 0; k < N; ++k) {
        const auto row = slope_row(q[idx(k)].g);
        for (int j = 0; j < N; ++j) out.add_mass(k, j, row[idx(j)]);
      }
    }
  }

  int piece_slot_count() const override { return piece_slots_of<Model>::value; }
  void choose_pieces(const engine::ElementContext& ctx) const override {
    if constexpr (piece_slots_of<Model>::value > 0) {
      std::array<double, N> v{}, i{}, ib{};
      for (int k = 0; k < N; ++k) v[idx(k)] = ctx.value(k);
      currents_of(v.data(), i.data(), splits_breakdown() ? ib.data() : nullptr, ctx.pieces());
    }
  }

  bool has_mass_slope() const override { return model().has_charges() && !linear_charges_of<Model>::value; }
  void load_mass_slope(const engine::ElementContext& ctx, engine::Stamper& out) const override {
    if (!has_mass_slope()) return;
    using D1 = Dual<1>;
    using D = Dual<kSeeded, D1>;
    std::array<D, N> v, q;
    for (int k = 0; k < N; ++k) {
      D1 inner;
      inner.v = ctx.value(k);
      inner.g[0] = ctx.rate(k);  // every terminal's rate: the charges move with all of them
      v[idx(k)] = k < kSeeded ? D::variable(inner, k) : D(inner);
    }
    model().charges(v.data(), q.data());
    for (int k = 0; k < N; ++k) {
      std::array<double, kSeeded> slopes;
      for (int j = 0; j < kSeeded; ++j) slopes[idx(j)] = q[idx(k)].g[idx(j)].g[0];
      const auto row = slope_row(slopes);
      for (int j = 0; j < N; ++j) out.add_mass_slope(k, j, row[idx(j)]);
    }
  }

  double stored_energy_J(const engine::ElementContext& ctx) const override {
    if (!model().has_charges()) return 0.0;
    // W = ∫0^1 Σ_k (s·v_k) · d q_k(s·v)/ds ds, 16 panels × 5-point Gauss–Legendre (Abramowitz &
    // Stegun, Handbook of Mathematical Functions, Table 25.4). The steepest integrand, a
    // diffusion charge e^(v/(n·V_T)) at ~1 V, changes by e^30 over the path: ~1.9 per panel,
    // where the 5-point rule's error term (h^11·f^(10) scale) stays below 1e-10 relative.
    using D1 = Dual<1>;
    std::array<double, N> v0;
    for (int k = 0; k < N; ++k) v0[idx(k)] = ctx.value(k);
    static const double nodes[5] = {-0.9061798459386640, -0.5384693101056831, 0.0, 0.5384693101056831, 0.9061798459386640};
    static const double weights[5] = {0.2369268850561891, 0.4786286704993665, 0.5688888888888889, 0.4786286704993665,
                                      0.2369268850561891};
    constexpr int panels = 16;
    double w = 0.0;
    for (int p = 0; p < panels; ++p) {
      for (int g = 0; g < 5; ++g) {
        const double s = (p + 0.5 + 0.5 * nodes[g]) / panels;
        std::array<D1, N> v, q;
        for (int k = 0; k < N; ++k) {
          v[idx(k)].v = s * v0[idx(k)];
          v[idx(k)].g[0] = v0[idx(k)];
        }
        model().charges(v.data(), q.data());
        double integrand = 0.0;
        for (int k = 0; k < N; ++k) integrand += s * v0[idx(k)] * q[idx(k)].g[0];  // v(s)·dq/ds
        w += 0.5 * weights[g] / panels * integrand;
      }
    }
    return w;
  }

 private:
  const Model& model() const { return static_cast<const Model&>(*this); }
  bool splits_breakdown() const {
    if constexpr (has_breakdown_split<Model>::value) return model().has_breakdown();
    return false;
  }
  static constexpr std::size_t idx(int k) { return static_cast<std::size_t>(k); }
  // A row of derivatives over all N terminals from the seeded first N − 1: the last is minus
  // their sum (kSeeded above).
  static std::array<double, N> slope_row(const std::array<double, kSeeded>& seeded) {
    std::array<double, N> row{};
    double sum = 0.0;
    for (int j = 0; j < kSeeded; ++j) {
      row[idx(j)] = seeded[idx(j)];
      sum += seeded[idx(j)];
    }
    row[idx(N - 1)] = -sum;
    return row;
  }
  // The fixed capacitances of linear charges: their slopes at any point (zero here).
  void stamp_linear_mass(engine::Stamper& out) const {
    using D = Dual<kSeeded>;
    std::array<D, N> v{}, q{};
    for (int k = 0; k < kSeeded; ++k) v[idx(k)] = D::variable(0.0, k);
    model().charges(v.data(), q.data());
    for (int k = 0; k < N; ++k) {
      const auto row = slope_row(q[idx(k)].g);
      for (int j = 0; j < N; ++j) out.add_mass(k, j, row[idx(j)]);
    }
  }
  template <class S>
  void currents_of(const S* v, S* i, S* breakdown, [[maybe_unused]] engine::PieceChoices* pieces) const {
    if constexpr (has_breakdown_split<Model>::value) {
      if constexpr (piece_slots_of<Model>::value > 0) {
        model().currents(v, i, breakdown, pieces);
      } else {
        model().currents(v, i, breakdown);
      }
    } else {
      if constexpr (piece_slots_of<Model>::value > 0) {
        model().currents(v, i, pieces);
      } else {
        model().currents(v, i);
      }
    }
  }
};

}  // namespace coilkick::devices
