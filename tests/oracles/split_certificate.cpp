#include "split_certificate.h"

#include <algorithm>
#include <cstdint>
#include <map>
#include <vector>

#include "solver/cardinality_classes.h"

namespace yoke::oracle {
namespace {

using Mask = std::uint64_t;

struct Priced {
  Weight class_dual2 = 0;
  Weight total_dual2 = 0;
};

}  // namespace

SplitOutcome split_certificate(const Graph& graph, const Certificate& pooled) {
  SplitOutcome out;
  const std::size_t n = graph.vertex_count();
  if (n > 64) {
    out.failure = "more than 64 vertices";
    return out;
  }
  const CardinalityClasses classes = cardinality_classes(graph, pooled.mate);
  if (!classes.maximum) {
    out.failure = "the pool's matching is not maximum";
    return out;
  }
  const ClassDual dual = class_dual(classes, pooled.mate);
  const Weight k = pooled.weight_offset;

  // Vertex sets of the pool's blossoms (children come before parents only by id, so repeat).
  std::vector<Mask> pool_mask(pooled.blossoms.size(), 0);
  for (bool changed = true; changed;) {
    changed = false;
    for (std::size_t b = 0; b < pooled.blossoms.size(); ++b) {
      Mask m = 0;
      for (const NodeId c : pooled.blossoms[b].children) m |= c < n ? Mask{1} << c : pool_mask[c - n];
      if (m != pool_mask[b]) {
        pool_mask[b] = m;
        changed = true;
      }
    }
  }
  std::map<Mask, Priced> family;
  for (std::size_t b = 0; b < pooled.blossoms.size(); ++b) family[pool_mask[b]].total_dual2 += pooled.blossoms[b].dual2;
  for (const CertificateBlossom& part : dual.blossoms) {
    Mask m = 0;
    for (const NodeId v : part.children) m |= Mask{1} << v;
    family[m].class_dual2 = part.dual2;
  }
  std::vector<Mask> sets;
  for (const auto& [m, priced] : family) sets.push_back(m);
  for (const Mask a : sets) {
    for (const Mask b : sets) {
      if ((a & b) != 0 && (a & b) != a && (a & b) != b) {
        out.failure = "a blossom of the pool crosses a part of G[D]";
        return out;
      }
    }
  }
  // Children: each set and vertex hangs below the smallest set strictly holding it.
  std::sort(sets.begin(), sets.end(), [](Mask a, Mask b) { return __builtin_popcountll(a) < __builtin_popcountll(b); });
  auto smallest_above = [&](Mask inner) -> std::size_t {
    for (std::size_t i = 0; i < sets.size(); ++i) {
      if (sets[i] != inner && (sets[i] & inner) == inner) return i;
    }
    return sets.size();
  };
  LexicographicCertificate& cert = out.certificate;
  cert.mode = pooled.mode == Mode::perfect ? Mode::perfect : Mode::max_cardinality;
  cert.mate = pooled.mate;
  cert.class_dual2 = dual.vertex_dual2;
  cert.weight_dual2.resize(n);
  for (std::size_t v = 0; v < n; ++v) cert.weight_dual2[v] = pooled.vertex_dual2[v] - k * dual.vertex_dual2[v];
  cert.blossoms.resize(sets.size());
  for (std::size_t i = 0; i < sets.size(); ++i) {
    const Priced& priced = family[sets[i]];
    cert.blossoms[i].class_dual2 = priced.class_dual2;
    cert.blossoms[i].weight_dual2 = priced.total_dual2 - k * priced.class_dual2;
    const std::size_t up = smallest_above(sets[i]);
    if (up < sets.size()) cert.blossoms[up].children.push_back(static_cast<NodeId>(n + i));
  }
  for (Vertex v = 0; v < n; ++v) {
    const std::size_t up = smallest_above(Mask{1} << v);
    if (up < sets.size()) cert.blossoms[up].children.push_back(v);
  }
  out.ok = true;
  return out;
}

}  // namespace yoke::oracle
