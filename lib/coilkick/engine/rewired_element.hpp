#pragma once
// An element connected to other nodes than it was built with: every equation is the wrapped
// element's, only the terminal nodes differ. Used to model a broken connection (a transistor
// whose base is open is the same transistor with its base on a node of its own).
#include <memory>

#include "coilkick/engine/element.hpp"

namespace coilkick::engine {

class RewiredElement final : public Element {
 public:
  RewiredElement(std::shared_ptr<const Element> inner, std::vector<std::string> terminal_nodes);
  std::string kind() const override { return inner_->kind(); }
  std::vector<InternalStateSpec> internal_states() const override { return inner_->internal_states(); }
  std::vector<PowerChannelSpec> power_channels() const override { return inner_->power_channels(); }
  void load(const ElementContext& ctx, Stamper& out) const override { inner_->load(ctx, out); }
  void load_mass_slope(const ElementContext& ctx, Stamper& out) const override { inner_->load_mass_slope(ctx, out); }
  bool has_mass_slope() const override { return inner_->has_mass_slope(); }
  bool has_junctions() const override { return inner_->has_junctions(); }
  void junction_states(const ElementContext& ctx, std::vector<JunctionState>& out) const override { inner_->junction_states(ctx, out); }
  int piece_slot_count() const override { return inner_->piece_slot_count(); }
  void choose_pieces(const ElementContext& ctx) const override { inner_->choose_pieces(ctx); }
  double stored_energy_J(const ElementContext& ctx) const override { return inner_->stored_energy_J(ctx); }
  double next_corner_after_s(double t_s) const override { return inner_->next_corner_after_s(t_s); }

 private:
  std::shared_ptr<const Element> inner_;
};

}  // namespace coilkick::engine
