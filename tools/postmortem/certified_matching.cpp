#include "certified_matching.h"

#include <algorithm>

namespace yoke::postmortem {

CertifiedMatching certified_matching(const PoolExport& exported) {
  CertifiedMatching matching;
  for (const Edge& e : exported.graph.edges()) {
    if (exported.certificate.mate[e.a] != e.b) continue;
    const VertexKey a = exported.keys[e.a];
    const VertexKey b = exported.keys[e.b];
    matching.pairs.emplace_back(std::min(a, b), std::max(a, b));
    matching.weight += e.w - exported.matched_bonus;  // reported weights leave the bonus out
  }
  for (const MatchedPair& pair : exported.held) {  // fixed, outside the certificate
    matching.pairs.emplace_back(pair.a, pair.b);
    matching.weight += pair.w;
  }
  std::sort(matching.pairs.begin(), matching.pairs.end());
  return matching;
}

}  // namespace yoke::postmortem
