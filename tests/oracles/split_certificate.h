// The split form of a max-cardinality or perfect pool's certificate (docs/mathematics.md §9),
// derived from the certificate the pool exports: the classes come from its matching
// (solver/cardinality_classes.h), the weight prices are the pool's prices less K times the class
// prices (K = weight_offset). For tests on small graphs (at most 64 vertices): vertex sets are
// bit masks, the merged family is built by pairwise comparison.
#pragma once

#include <string>

#include "yoke/certificate.h"
#include "yoke/graph.h"

namespace yoke::oracle {

struct SplitOutcome {
  bool ok = false;
  std::string failure;  // why no split certificate was built
  LexicographicCertificate certificate;
};

// Fails when the matching is not maximum or when a blossom of the pool crosses a part of G[D]
// (the merged family would not be laminar).
SplitOutcome split_certificate(const Graph& graph, const Certificate& pooled);

}  // namespace yoke::oracle
