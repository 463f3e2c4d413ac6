// The certificate checker: an independent referee that shares no code with the solver.
//
// Checks run in the order of the header's contract (shape, primal feasibility, dual
// feasibility, complementary slackness, objective) and stop at the first violation. The sum of
// 2z over the blossoms holding both ends of an edge is read at the ends' lowest common
// ancestor in the blossom forest (certificate_forest.h, forest_lca.h), never from per-vertex
// lists of blossoms, which can total hundreds of millions of entries.
#include "yoke/certificate.h"

#include <algorithm>
#include <string>
#include <vector>

#include "certificate_forest.h"
#include "forest_lca.h"

namespace yoke {

namespace {

using certcheck::ForestLayout;
using certcheck::kNoNode;

std::string text(Int128 value) { return int128_text(value); }

// The parts of one edge's doubled slack, kept for the failure message.
struct Slack {
  Int128 u2_a = 0;
  Int128 u2_b = 0;
  Int128 z2_common = 0;
  Int128 w2 = 0;  // 2 (w + weight_offset)
  Int128 value() const { return u2_a + u2_b + z2_common - w2; }
};

class Checker {
 public:
  Checker(const Graph& graph, const Certificate& cert)
      : graph_(graph), cert_(cert), n_(graph.vertex_count()) {}

  CheckResult run() {
    CheckResult result;
    std::string failure = check_sizes();
    if (failure.empty()) failure = certcheck::build_forest_layout(cert_, n_, forest_);
    if (failure.empty()) {
      result.dual_objective2 = dual_objective2();
      failure = check_matching();
    }
    if (failure.empty()) failure = check_dual_signs();
    if (failure.empty()) {
      lca_ = certcheck::edge_lcas(forest_, graph_.edges());
      failure = check_edge_slacks();
    }
    if (failure.empty()) failure = check_exposed_duals();
    if (failure.empty()) failure = check_full_blossoms();
    if (failure.empty()) failure = check_objective(result.dual_objective2);
    result.ok = failure.empty();
    result.failure = std::move(failure);
    return result;
  }

 private:
  bool exposed(Vertex v) const { return cert_.mate[v] == kNoVertex; }

  std::string edge_name(EdgeIndex e) const {
    const Edge& edge = graph_.edge(e);
    return "edge " + text(edge.a) + "-" + text(edge.b) + " (index " + text(e) + ", w " +
           text(edge.w) + ")";
  }

  Slack slack(EdgeIndex e) const {
    const Edge& edge = graph_.edge(e);
    Slack s;
    s.u2_a = cert_.vertex_dual2[edge.a];
    s.u2_b = cert_.vertex_dual2[edge.b];
    s.z2_common = lca_[e] == kNoNode ? Int128{0} : forest_.dual2_from_root[lca_[e]];
    s.w2 = 2 * (Int128{edge.w} + cert_.weight_offset);
    return s;
  }

  std::string slack_parts(const Slack& s) const {
    const char* weight_label = cert_.weight_offset == 0 ? "2w" : "2(w + offset)";
    return "(2u: " + text(s.u2_a) + " + " + text(s.u2_b) +
           ", 2z of blossoms holding both ends: " + text(s.z2_common) + ", " + weight_label + ": " +
           text(s.w2) + ")";
  }

  std::string check_sizes() const {
    if (cert_.mate.size() != n_) {
      return "mate has " + text(cert_.mate.size()) + " entries, the graph has " + text(n_) +
             " vertices";
    }
    if (cert_.vertex_dual2.size() != n_) {
      return "vertex_dual2 has " + text(cert_.vertex_dual2.size()) + " entries, the graph has " +
             text(n_) + " vertices";
    }
    // An offset changes which matching is best in max-weight mode; in perfect mode it adds
    // the same constant to every perfect matching and is harmless.
    if (cert_.mode == Mode::max_weight && cert_.weight_offset != 0) {
      return "weight_offset is " + text(cert_.weight_offset) + " but must be 0 in max-weight mode";
    }
    // Graph preconditions, cheap to confirm and fatal to the checks below when broken.
    for (std::size_t e = 0; e < graph_.edge_count(); ++e) {
      const Edge& edge = graph_.edge(static_cast<EdgeIndex>(e));
      if (edge.a >= n_ || edge.b >= n_) {
        return "edge " + text(e) + " joins " + text(edge.a) + "-" + text(edge.b) +
               ", outside the graph's " + text(n_) + " vertices";
      }
      if (edge.a == edge.b) return "edge " + text(e) + " is a self loop at vertex " + text(edge.a);
    }
    return "";
  }

  // Primal feasibility; also finds, for each matched vertex, the edge to its mate.
  std::string check_matching() {
    for (Vertex v = 0; v < n_; ++v) {
      const Vertex m = cert_.mate[v];
      if (m == kNoVertex) {
        if (cert_.mode == Mode::perfect) {
          return "perfect mode, but vertex " + text(v) + " is exposed";
        }
        continue;
      }
      if (m >= n_) return "mate[" + text(v) + "] = " + text(m) + " is not a vertex";
      if (m == v) return "vertex " + text(v) + " is matched to itself";
      if (cert_.mate[m] != v) {
        const std::string back = exposed(m) ? "vertex " + text(m) + " is exposed"
                                            : "mate[" + text(m) + "] = " + text(cert_.mate[m]);
        return "mate is not symmetric: mate[" + text(v) + "] = " + text(m) + " but " + back;
      }
    }
    // With parallel edges (not allowed by Graph, harmless here) the heaviest copy is matched.
    matched_edge_.assign(n_, kNoEdge);
    for (std::size_t i = 0; i < graph_.edge_count(); ++i) {
      const auto e = static_cast<EdgeIndex>(i);
      const Edge& edge = graph_.edge(e);
      if (cert_.mate[edge.a] != edge.b) continue;
      const EdgeIndex kept = matched_edge_[edge.a];
      if (kept == kNoEdge || graph_.edge(kept).w < edge.w) {
        matched_edge_[edge.a] = e;
        matched_edge_[edge.b] = e;
      }
    }
    for (Vertex v = 0; v < n_; ++v) {
      if (!exposed(v) && matched_edge_[v] == kNoEdge) {
        return "vertex " + text(v) + " is matched to " + text(cert_.mate[v]) + ", but " + text(v) +
               "-" + text(cert_.mate[v]) + " is not an edge of the graph";
      }
    }
    return "";
  }

  std::string check_dual_signs() const {
    for (std::size_t k = 0; k < cert_.blossoms.size(); ++k) {
      if (cert_.blossoms[k].dual2 < 0) {
        return certcheck::node_name(static_cast<NodeId>(n_ + k), n_) +
               " has negative dual 2z = " + text(cert_.blossoms[k].dual2);
      }
    }
    if (cert_.mode == Mode::perfect) return "";
    for (Vertex v = 0; v < n_; ++v) {
      if (cert_.vertex_dual2[v] < 0) {
        return "vertex " + text(v) + " has negative dual 2u = " + text(cert_.vertex_dual2[v]) +
               " (only perfect mode allows negative vertex duals)";
      }
    }
    return "";
  }

  // Dual feasibility on every edge, then tightness of the matched ones.
  std::string check_edge_slacks() const {
    for (std::size_t i = 0; i < graph_.edge_count(); ++i) {
      const auto e = static_cast<EdgeIndex>(i);
      const Slack s = slack(e);
      if (s.value() < 0) {
        return edge_name(e) + " has negative slack " + text(s.value()) + " " + slack_parts(s);
      }
    }
    for (Vertex v = 0; v < n_; ++v) {
      if (exposed(v) || cert_.mate[v] < v) continue;
      const EdgeIndex e = matched_edge_[v];
      const Slack s = slack(e);
      if (s.value() != 0) {
        return "matched " + edge_name(e) + " is not tight: slack " + text(s.value()) + " " +
               slack_parts(s);
      }
    }
    return "";
  }

  std::string check_exposed_duals() const {
    if (cert_.mode == Mode::perfect) return "";  // no exposed vertex reaches here
    for (Vertex v = 0; v < n_; ++v) {
      if (exposed(v) && cert_.vertex_dual2[v] != 0) {
        return "vertex " + text(v) +
               " is exposed but has dual 2u = " + text(cert_.vertex_dual2[v]) +
               " (an exposed vertex needs u = 0)";
      }
    }
    return "";
  }

  // A blossom with z > 0 must hold (|B| - 1) / 2 matched edges. A matched edge lies inside
  // exactly the blossoms at and above its ends' LCA: count there, then sum bottom-up.
  std::string check_full_blossoms() const {
    std::vector<std::uint32_t> inside(forest_.node_count(), 0);
    for (Vertex v = 0; v < n_; ++v) {
      if (exposed(v) || cert_.mate[v] < v) continue;
      const NodeId lca = lca_[matched_edge_[v]];
      if (lca != kNoNode) ++inside[lca];
    }
    forest_.sum_into_ancestors(inside);
    for (std::size_t k = 0; k < cert_.blossoms.size(); ++k) {
      if (cert_.blossoms[k].dual2 == 0) continue;
      const auto node = static_cast<NodeId>(n_ + k);
      const std::uint32_t size = forest_.subtree_vertices[node];
      if (inside[node] != (size - 1) / 2) {
        return certcheck::node_name(node, n_) + " has 2z = " + text(cert_.blossoms[k].dual2) +
               " > 0 but is not full: it holds " + text(inside[node]) +
               " matched edges, a full blossom of " + text(size) + " vertices holds " +
               text((size - 1) / 2);
      }
    }
    return "";
  }

  Int128 dual_objective2() const {
    Int128 total = 0;
    for (const Weight u2 : cert_.vertex_dual2) total += u2;
    for (std::size_t k = 0; k < cert_.blossoms.size(); ++k) {
      const std::uint32_t size = forest_.subtree_vertices[n_ + k];
      total += Int128{cert_.blossoms[k].dual2} * ((size - 1) / 2);
    }
    return total;
  }

  // Implied by the conditions above (weak duality with equality); kept as a second,
  // independent sum so that a flaw in one check cannot pass silently.
  std::string check_objective(Int128 dual2) const {
    Int128 primal2 = 0;
    for (Vertex v = 0; v < n_; ++v) {
      if (exposed(v) || cert_.mate[v] < v) continue;
      primal2 += 2 * (Int128{graph_.edge(matched_edge_[v]).w} + cert_.weight_offset);
    }
    if (primal2 != dual2) {
      return "objective mismatch: 2w(M) = " + text(primal2) + " but the dual objective is " +
             text(dual2);
    }
    return "";
  }

  const Graph& graph_;
  const Certificate& cert_;
  const std::size_t n_;
  ForestLayout forest_;
  std::vector<EdgeIndex> matched_edge_;  // per vertex, the edge to its mate
  std::vector<NodeId> lca_;              // per edge, the LCA of its ends (kNoNode: none)
};

}  // namespace

CheckResult check_certificate(const Graph& graph, const Certificate& cert) {
  return Checker(graph, cert).run();
}

}  // namespace yoke
