// The checker of the split certificate (docs/mathematics.md §9). The class part is an ordinary
// certificate for unit weights and goes through check_certificate; the weight part reuses the
// forest layout and the offline LCAs (certificate_forest.h, forest_lca.h) with its own prices.
#include <string>
#include <vector>

#include "certificate_forest.h"
#include "forest_lca.h"
#include "yoke/certificate.h"

namespace yoke {
namespace {

using certcheck::ForestLayout;
using certcheck::kNoNode;

std::string lex_text(Int128 value) { return int128_text(value); }

// The family of `cert` with one of its two prices per blossom, as check_certificate reads it.
Certificate with_prices(const LexicographicCertificate& cert, bool class_prices) {
  Certificate out;
  out.mode = Mode::max_weight;
  out.mate = cert.mate;
  out.vertex_dual2 = class_prices ? cert.class_dual2 : cert.weight_dual2;
  out.blossoms.reserve(cert.blossoms.size());
  for (const LexicographicBlossom& b : cert.blossoms) {
    out.blossoms.push_back({b.children, class_prices ? b.class_dual2 : b.weight_dual2, b.base});
  }
  return out;
}

class WeightPartChecker {
 public:
  WeightPartChecker(const std::vector<Edge>& edges, std::size_t n, const LexicographicCertificate& cert)
      : edges_(edges), n_(n), cert_(cert) {}

  std::string run(Int128& objective2) {
    const Certificate classes = with_prices(cert_, true);
    const Certificate weights = with_prices(cert_, false);
    if (std::string f = certcheck::build_forest_layout(classes, n_, class_forest_); !f.empty()) return f;
    if (std::string f = certcheck::build_forest_layout(weights, n_, weight_forest_); !f.empty()) return f;
    lca_ = certcheck::edge_lcas(class_forest_, edges_);  // one shape: the LCAs serve both
    std::string failure = check_signs();
    if (failure.empty()) failure = check_edges();
    if (failure.empty()) failure = check_exposed();
    if (failure.empty()) failure = check_full();
    if (failure.empty()) failure = check_objective(objective2);
    return failure;
  }

 private:
  Int128 class_slack2(std::size_t i) const {
    const Edge& e = edges_[i];
    const Int128 z = lca_[i] == kNoNode ? Int128{0} : class_forest_.dual2_from_root[lca_[i]];
    return Int128{cert_.class_dual2[e.a]} + cert_.class_dual2[e.b] + z - 2;
  }
  Int128 weight_slack2(std::size_t i) const {
    const Edge& e = edges_[i];
    const Int128 z = lca_[i] == kNoNode ? Int128{0} : weight_forest_.dual2_from_root[lca_[i]];
    return Int128{cert_.weight_dual2[e.a]} + cert_.weight_dual2[e.b] + z - 2 * Int128{e.w};
  }
  std::string edge_name(std::size_t i) const {
    return "edge " + lex_text(edges_[i].a) + "-" + lex_text(edges_[i].b) + " (w " + lex_text(edges_[i].w) + ")";
  }

  // A weight price below 0 needs a positive class price at the same vertex or blossom.
  std::string check_signs() const {
    for (Vertex v = 0; v < n_; ++v) {
      if (cert_.weight_dual2[v] < 0 && cert_.class_dual2[v] <= 0) {
        return "vertex " + lex_text(v) + " has weight dual 2u = " + lex_text(cert_.weight_dual2[v]) +
               " < 0 but class dual 2u = " + lex_text(cert_.class_dual2[v]) +
               " (a negative weight price needs a positive class price)";
      }
    }
    for (std::size_t k = 0; k < cert_.blossoms.size(); ++k) {
      const LexicographicBlossom& b = cert_.blossoms[k];
      if (b.weight_dual2 < 0 && b.class_dual2 <= 0) {
        return certcheck::node_name(static_cast<NodeId>(n_ + k), n_) + " has weight dual 2z = " +
               lex_text(b.weight_dual2) + " < 0 but class dual 2z = " + lex_text(b.class_dual2) +
               " (a negative weight price needs a positive class price)";
      }
    }
    return "";
  }

  // Edges tight for the classes must be feasible for the weights; matched ones tight.
  std::string check_edges() const {
    for (std::size_t i = 0; i < edges_.size(); ++i) {
      const Edge& e = edges_[i];
      const bool matched = cert_.mate[e.a] == e.b;
      if (class_slack2(i) != 0) continue;  // check_certificate ruled out a matched one
      const Int128 slack = weight_slack2(i);
      if (slack < 0) return edge_name(i) + " is tight for the classes but has weight slack " + lex_text(slack);
      if (matched && slack != 0) return "matched " + edge_name(i) + " has weight slack " + lex_text(slack);
    }
    return "";
  }

  std::string check_exposed() const {
    for (Vertex v = 0; v < n_; ++v) {
      if (cert_.mate[v] == kNoVertex && cert_.weight_dual2[v] != 0) {
        return "vertex " + lex_text(v) + " is exposed but has weight dual 2u = " + lex_text(cert_.weight_dual2[v]);
      }
    }
    return "";
  }

  // A blossom with a non-zero weight price holds (|B| - 1) / 2 matched edges (the class part
  // checked those with a positive class price).
  std::string check_full() {
    inside_.assign(weight_forest_.node_count(), 0);
    for (std::size_t i = 0; i < edges_.size(); ++i) {
      const Edge& e = edges_[i];
      if (cert_.mate[e.a] == e.b && lca_[i] != kNoNode) ++inside_[lca_[i]];
    }
    weight_forest_.sum_into_ancestors(inside_);
    for (std::size_t k = 0; k < cert_.blossoms.size(); ++k) {
      if (cert_.blossoms[k].weight_dual2 == 0) continue;
      const auto node = static_cast<NodeId>(n_ + k);
      const std::uint32_t size = weight_forest_.subtree_vertices[node];
      if (inside_[node] != (size - 1) / 2) {
        return certcheck::node_name(node, n_) + " has weight dual 2z = " +
               lex_text(cert_.blossoms[k].weight_dual2) + " but is not full: " + lex_text(inside_[node]) +
               " matched edges inside, " + lex_text((size - 1) / 2) + " needed";
      }
    }
    return "";
  }

  // Implied by the rules above for the matching itself; kept as an independent second sum.
  std::string check_objective(Int128& objective2) const {
    Int128 dual2 = 0;
    for (const Weight u2 : cert_.weight_dual2) dual2 += u2;
    for (std::size_t k = 0; k < cert_.blossoms.size(); ++k) {
      dual2 += Int128{cert_.blossoms[k].weight_dual2} * ((weight_forest_.subtree_vertices[n_ + k] - 1) / 2);
    }
    Int128 primal2 = 0;
    for (const Edge& e : edges_) {
      if (cert_.mate[e.a] == e.b) primal2 += 2 * Int128{e.w};
    }
    objective2 = dual2;
    if (primal2 != dual2) {
      return "objective mismatch: 2w(M) = " + lex_text(primal2) + " but the weight dual objective is " +
             lex_text(dual2);
    }
    return "";
  }

  const std::vector<Edge>& edges_;
  const std::size_t n_;
  const LexicographicCertificate& cert_;
  ForestLayout class_forest_;
  ForestLayout weight_forest_;
  std::vector<NodeId> lca_;
  std::vector<std::uint32_t> inside_;
};

}  // namespace

CheckResult check_lexicographic_certificate(const Graph& graph, const LexicographicCertificate& cert) {
  CheckResult result;
  const std::size_t n = graph.vertex_count();
  auto fail = [&](std::string failure) {
    result.ok = false;
    result.failure = std::move(failure);
    return result;
  };
  if (cert.mode != Mode::max_cardinality && cert.mode != Mode::perfect) {
    return fail(std::string("mode is ") + mode_name(cert.mode) +
                "; the split certificate is for max-cardinality and perfect");
  }
  if (cert.mate.size() != n || cert.class_dual2.size() != n || cert.weight_dual2.size() != n) {
    return fail("mate, class_dual2 and weight_dual2 need " + lex_text(n) + " entries each");
  }
  // Live edges only (a pool's graph may hold freed slots); the unit-weight copy for the classes.
  std::vector<Edge> edges;
  edges.reserve(graph.edge_count());
  for (std::size_t e = 0; e < graph.edge_slots(); ++e) {
    if (graph.is_live(static_cast<EdgeIndex>(e))) edges.push_back(graph.edge(static_cast<EdgeIndex>(e)));
  }
  std::vector<Edge> unit = edges;
  for (Edge& e : unit) e.w = 1;
  const CheckResult classes = check_certificate(Graph::from_edges(n, std::move(unit)), with_prices(cert, true));
  if (!classes.ok) return fail("class part: " + classes.failure);
  if (cert.mode == Mode::perfect) {
    for (Vertex v = 0; v < n; ++v) {
      if (cert.mate[v] == kNoVertex) return fail("perfect mode, but vertex " + lex_text(v) + " is exposed");
    }
  }
  std::string failure = WeightPartChecker(edges, n, cert).run(result.dual_objective2);
  if (!failure.empty()) return fail("weight part: " + failure);
  return result;
}

}  // namespace yoke
