// The optimality certificate of a matching and its independent checker.
//
// A certificate is a matching together with a dual solution of Edmonds' LP: doubled vertex
// duals 2u(v) and a laminar family of odd vertex sets (blossoms) with doubled duals 2z(B).
// The checker proves optimality without trusting the solver: primal feasibility, dual
// feasibility (every edge has slack >= 0), complementary slackness (matched edges tight,
// exposed vertices at u = 0 unless the mode is perfect, blossoms with z > 0 full) and
// w(M) = dual objective. The JSON form is in docs/formats.md ("Certificate").
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "yoke/graph.h"
#include "yoke/types.h"

namespace yoke {

// Node ids in a blossom forest: 0 .. n-1 are vertices, n + k is blossoms[k].
using NodeId = std::uint32_t;

struct CertificateBlossom {
  std::vector<NodeId> children;  // in cycle order, starting with the child holding the base
  Weight dual2 = 0;              // 2 z(B), >= 0
  Vertex base = kNoVertex;       // the one vertex of B not matched inside B
};

struct Certificate {
  Mode mode = Mode::max_weight;
  // Added to every edge weight before solving (max-cardinality); the duals below are duals
  // for the weights w + weight_offset. Zero in the other modes.
  Weight weight_offset = 0;
  std::vector<Vertex> mate;          // mate[v], kNoVertex when v is exposed
  std::vector<Weight> vertex_dual2;  // 2 u(v); may be negative only in perfect mode
  std::vector<CertificateBlossom> blossoms;
};

struct CheckResult {
  bool ok = true;
  std::string failure;  // first violated condition, in words, when !ok
  // The dual objective sum u + sum z (|B|-1)/2 for the offset weights, doubled.
  Int128 dual_objective2 = 0;
};

// Checks `cert` against `graph`. Cost O(m log n + n + total blossom children); exact
// (128-bit arithmetic), no recursion.
CheckResult check_certificate(const Graph& graph, const Certificate& cert);

}  // namespace yoke
