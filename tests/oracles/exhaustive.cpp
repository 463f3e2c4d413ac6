#include "exhaustive.h"

#include <optional>
#include <stdexcept>
#include <vector>

namespace yoke::oracle {
namespace {

struct Enumeration {
  std::size_t n = 0;
  std::vector<std::optional<Weight>> weight;  // n x n; empty where there is no edge
  ExhaustiveOptima best;
  bool any_perfect = false;

  const std::optional<Weight>& at(std::size_t a, std::size_t b) const { return weight[a * n + b]; }

  void record(std::size_t pairs, Weight total) {
    ++best.matchings;
    Answer& mw = best.max_weight;
    if (total > mw.weight || (total == mw.weight && pairs < mw.pairs)) mw = {true, total, pairs};
    Answer& mc = best.max_cardinality;
    if (pairs > mc.pairs || (pairs == mc.pairs && total > mc.weight)) mc = {true, total, pairs};
    if (2 * pairs == n && (!any_perfect || total > best.perfect.weight)) {
      any_perfect = true;
      best.perfect = {true, total, pairs};
    }
  }

  // Decides the lowest undecided vertex: exposed, or matched to a higher undecided neighbour.
  // Every matching is reached by exactly one sequence of decisions. Depth <= n.
  void visit(std::uint32_t decided, std::size_t pairs, Weight total) {
    std::size_t v = 0;
    while (v < n && (decided >> v & 1U)) ++v;
    if (v == n) {
      record(pairs, total);
      return;
    }
    visit(decided | 1U << v, pairs, total);
    for (std::size_t u = v + 1; u < n; ++u) {
      if ((decided >> u & 1U) || !at(v, u)) continue;
      visit(decided | 1U << v | 1U << u, pairs + 1, total + *at(v, u));
    }
  }
};

}  // namespace

const Answer& ExhaustiveOptima::for_mode(Mode mode) const {
  switch (mode) {
    case Mode::max_weight: return max_weight;
    case Mode::max_cardinality: return max_cardinality;
    case Mode::perfect: return perfect;
  }
  throw std::logic_error("exhaustive enumeration: unknown mode");
}

ExhaustiveOptima exhaustive_optima(const Graph& graph) {
  Enumeration e;
  e.n = graph.vertex_count();
  if (e.n > kMaxExhaustiveVertices) {
    throw std::invalid_argument("exhaustive enumeration: graph too large");
  }
  e.weight.assign(e.n * e.n, std::nullopt);
  for (const Edge& edge : graph.edges()) {
    e.weight[edge.a * e.n + edge.b] = edge.w;
    e.weight[edge.b * e.n + edge.a] = edge.w;
  }
  e.visit(0, 0, 0);
  e.best.perfect.feasible = e.any_perfect;
  return e.best;
}

}  // namespace yoke::oracle
