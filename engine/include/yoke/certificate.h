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

// The lexicographic certificate of max-cardinality and perfect modes, without a weight offset
// (docs/mathematics.md §9): one laminar family with two prices per vertex and per blossom.
// The class prices (unit weights) prove that the matching has the most pairs; the weight prices
// prove that no matching with as many pairs weighs more. Rules: class prices >= 0; a weight
// price may be negative only where the class price is positive; every edge whose class slack
// is 0 has weight slack >= 0 (the others are not judged); matched edges have both slacks 0;
// exposed vertices have both prices 0; a blossom with a positive class price or a non-zero
// weight price is full.
struct LexicographicBlossom {
  std::vector<NodeId> children;  // vertices and blossoms, any order
  Weight class_dual2 = 0;        // 2 z_c(B), >= 0
  Weight weight_dual2 = 0;       // 2 z_w(B)
  Vertex base = kNoVertex;       // optional: the one vertex of B not matched inside B
};

struct LexicographicCertificate {
  Mode mode = Mode::max_cardinality;  // max_cardinality or perfect
  std::vector<Vertex> mate;
  std::vector<Weight> class_dual2;   // 2 u_c(v): 0, 1 or 2 for the classes of §9, >= 0 in general
  std::vector<Weight> weight_dual2;  // 2 u_w(v)
  std::vector<LexicographicBlossom> blossoms;
};

// Checks `cert` against `graph`: the class part through check_certificate on unit weights
// (its failures start with "class part: "), then the weight part ("weight part: ").
// dual_objective2 is the weight part's. Cost O(m log n + n + total blossom children), plus a
// unit-weight copy of the graph's edges; exact, no recursion.
CheckResult check_lexicographic_certificate(const Graph& graph,
                                            const LexicographicCertificate& cert);

}  // namespace yoke
