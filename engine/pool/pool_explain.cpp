// Pool::explain: a vertex's price and its nearest alternatives, read off the dual solution (with
// the phantom vertex, off the certificate's prices, made once per commit).
#include <algorithm>
#include <unordered_map>

#include "pool/pool_state.h"

namespace yoke {

bool Pool::certificate_prices_due() const {
  return state_->phantom != kNoVertex && !state_->without_phantom;
}

void Pool::make_certificate_prices() const { certified_state(*state_); }

std::optional<VertexExplanation> Pool::explain(VertexKey key, std::size_t limit) const {
  const State& pool = *state_;
  const Vertex v = pool.graph.find(key);
  if (v == kNoVertex) return std::nullopt;
  if (const auto partner = pool.holds.partner(key)) {
    VertexExplanation held;
    held.mate = partner;
    held.pair_weight = *pool.holds.aside_weight(key, *partner);
    held.weight_offset = pool.weight_offset;
    held.held = true;
    return held;
  }
  // With φ present the prices are the certificate's: a copy's with φ taken out (Pool::
  // export_certified; O(n) and a search once per commit while φ is present). The pairs are the
  // pool's.
  const MatchingState& priced = certified_state(pool);
  const BlossomForest& forest = priced.forest;
  const std::vector<Weight>& dual2 = priced.dual2;
  const Mates& mate = pool.matching.mate;

  // Blossoms holding v, each with the sum of the doubled duals from it to the top: an edge
  // whose other end meets v's chain at blossom B counts exactly that sum.
  std::unordered_map<NodeId, Weight> z2_from;
  std::vector<NodeId> chain;
  for (NodeId node = forest.parent(v); node != kNoNode; node = forest.parent(node)) chain.push_back(node);
  Weight above = 0;
  for (std::size_t i = chain.size(); i-- > 0;) {
    above += forest.dual2(chain[i]);
    z2_from[chain[i]] = above;
  }
  auto common_z2 = [&](Vertex x) {
    if (chain.empty()) return Weight{0};
    for (NodeId node = forest.parent(x); node != kNoNode; node = forest.parent(node)) {
      const auto it = z2_from.find(node);
      if (it != z2_from.end()) return it->second;
    }
    return Weight{0};
  };

  VertexExplanation out;
  out.dual2 = dual2[v];
  out.weight_offset = pool.weight_offset;
  // φ has no key: a vertex paired with it shows as exposed (its prices are the pool's inside).
  auto mate_key = [&](Vertex x) -> std::optional<VertexKey> {
    if (mate[x] == kNoVertex || mate[x] == pool.phantom) return std::nullopt;
    return pool.graph.key(mate[x]);
  };
  out.mate = mate_key(v);
  for (const Incidence& inc : pool.graph.graph().incident(v)) {
    if (inc.other == mate[v]) {
      out.pair_bonus = pool.bonus_on(v, inc.other);
      out.pair_weight = inc.w - out.pair_bonus;
      continue;
    }
    Alternative alt;
    alt.other = pool.graph.key(inc.other);
    alt.w = inc.w;
    alt.slack2 = dual2[v] + dual2[inc.other] + common_z2(inc.other) - 2 * (inc.w + pool.weight_offset);
    alt.other_mate = mate_key(inc.other);
    out.alternatives.push_back(alt);
  }
  auto closer = [](const Alternative& x, const Alternative& y) {
    return x.slack2 != y.slack2 ? x.slack2 < y.slack2 : x.other < y.other;
  };
  if (out.alternatives.size() > limit) {
    std::partial_sort(out.alternatives.begin(), out.alternatives.begin() + static_cast<std::ptrdiff_t>(limit),
                      out.alternatives.end(), closer);
    out.alternatives.resize(limit);
  } else {
    std::sort(out.alternatives.begin(), out.alternatives.end(), closer);
  }
  return out;
}

}  // namespace yoke
