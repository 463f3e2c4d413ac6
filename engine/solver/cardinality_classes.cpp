// Edmonds' alternating search for the classes (docs/mathematics.md §9): a forest grown from
// every exposed vertex at once over a fixed matching, labels even and odd, blossoms contracted
// by union-find on their bases. Only labels are needed, never a path, so no blossom keeps its
// cycle.
#include "solver/cardinality_classes.h"

#include <numeric>
#include <utility>

namespace yoke {
namespace {

class ClassSearch {
 public:
  ClassSearch(const Graph& graph, std::span<const Vertex> mate)
      : graph_(graph),
        mate_(mate),
        n_(graph.vertex_count()),
        label_(n_, Label::none),
        reached_from_(n_, kNoVertex),
        root_(n_, kNoVertex),
        set_(n_),
        set_size_(n_, 1),
        base_(n_),
        mark_(n_, 0) {
    std::iota(set_.begin(), set_.end(), Vertex{0});
    std::iota(base_.begin(), base_.end(), Vertex{0});
  }

  CardinalityClasses run() {
    CardinalityClasses out;
    for (Vertex v = 0; v < n_; ++v) {
      if (mate_[v] == kNoVertex) {
        label_[v] = Label::even;
        root_[v] = v;
        queue_.push_back(v);
      }
    }
    for (std::size_t next = 0; next < queue_.size(); ++next) {
      if (!scan(queue_[next])) return out;  // an augmenting path: not a maximum matching
    }
    out.maximum = true;
    out.of.resize(n_);
    for (Vertex v = 0; v < n_; ++v) {
      out.of[v] = label_[v] == Label::even  ? MatchClass::missable
                  : label_[v] == Label::odd ? MatchClass::neighbour
                                            : MatchClass::always_paired;
    }
    find_parts(out);
    return out;
  }

 private:
  enum class Label : std::uint8_t { none, even, odd };

  // Looks at every edge of even vertex v; false when one closes an augmenting path.
  bool scan(Vertex v) {
    for (const Incidence& inc : graph_.incident(v)) {
      const Vertex x = inc.other;
      if (label_[x] == Label::odd || base_of(x) == base_of(v)) continue;
      if (label_[x] == Label::none) {  // x is matched: exposed vertices are all roots
        label_[x] = Label::odd;
        reached_from_[x] = v;
        root_[x] = root_[v];
        const Vertex m = mate_[x];
        label_[m] = Label::even;
        root_[m] = root_[v];
        queue_.push_back(m);
        continue;
      }
      if (root_[x] != root_[v]) return false;  // two trees meet on an even-even edge
      contract(v, x);
    }
    return true;
  }

  // The even base above even base b in its tree, kNoVertex at the root.
  Vertex base_above(Vertex b) {
    const Vertex m = mate_[b];
    return m == kNoVertex ? kNoVertex : base_of(reached_from_[m]);
  }

  // Even vertices v and x of one tree, in different blossoms, joined by an edge: every base on
  // the two tree paths up to their meeting base joins one blossom, and its odd vertices become
  // even. The walks alternate, so the steps above the meeting base are at most those below it.
  void contract(Vertex v, Vertex x) {
    ++stamp_;
    Vertex side[2] = {base_of(v), base_of(x)};
    Vertex meet = kNoVertex;
    for (int turn = 0; meet == kNoVertex; turn ^= 1) {
      Vertex& b = side[turn];
      if (b == kNoVertex) continue;
      if (mark_[b] == stamp_) {
        meet = b;
        break;
      }
      mark_[b] = stamp_;
      b = base_above(b);
    }
    for (Vertex b : {base_of(v), base_of(x)}) {
      while (b != meet) {
        const Vertex m = mate_[b];  // odd, becomes even inside the blossom
        label_[m] = Label::even;
        queue_.push_back(m);
        const Vertex above = base_of(reached_from_[m]);
        join(b, meet);
        join(m, meet);
        b = above;
      }
    }
  }

  // Union-find with path halving and union by size: O(α(n)) amortised per call.
  Vertex find(Vertex v) {
    while (set_[v] != v) {
      set_[v] = set_[set_[v]];
      v = set_[v];
    }
    return v;
  }
  Vertex base_of(Vertex v) { return base_[find(v)]; }

  // Merges v's set into the set of base `meet`, whose base stays `meet`.
  void join(Vertex v, Vertex meet) {
    Vertex a = find(v);
    Vertex b = find(meet);
    if (a == b) return;
    if (set_size_[a] > set_size_[b]) std::swap(a, b);
    set_[a] = b;
    set_size_[b] += set_size_[a];
    base_[b] = meet;
  }

  void find_parts(CardinalityClasses& out) const {
    out.part.assign(n_, CardinalityClasses::kNoPart);
    std::vector<Vertex> stack;
    for (Vertex s = 0; s < n_; ++s) {
      if (out.of[s] != MatchClass::missable || out.part[s] != CardinalityClasses::kNoPart) continue;
      const auto id = static_cast<std::uint32_t>(out.parts.size());
      out.parts.emplace_back();
      out.part[s] = id;
      stack.push_back(s);
      while (!stack.empty()) {
        const Vertex v = stack.back();
        stack.pop_back();
        out.parts[id].push_back(v);
        for (const Incidence& inc : graph_.incident(v)) {
          const Vertex x = inc.other;
          if (out.of[x] != MatchClass::missable || out.part[x] != CardinalityClasses::kNoPart) continue;
          out.part[x] = id;
          stack.push_back(x);
        }
      }
    }
  }

  const Graph& graph_;
  std::span<const Vertex> mate_;
  const std::size_t n_;
  std::vector<Label> label_;
  std::vector<Vertex> reached_from_;  // per odd vertex: the even vertex that reached it
  std::vector<Vertex> root_;          // per labelled vertex: its tree's exposed root
  std::vector<Vertex> set_;           // union-find over the vertices of contracted blossoms
  std::vector<std::uint32_t> set_size_;  // per set representative: its number of vertices
  std::vector<Vertex> base_;          // per set representative: the blossom's base
  std::vector<std::uint32_t> mark_;   // per base: stamp of the contraction that walked it
  std::uint32_t stamp_ = 0;
  std::vector<Vertex> queue_;         // even vertices to scan
};

}  // namespace

CardinalityClasses cardinality_classes(const Graph& graph, std::span<const Vertex> mate) {
  return ClassSearch(graph, mate).run();
}

ClassDual class_dual(const CardinalityClasses& classes, std::span<const Vertex> mate) {
  ClassDual dual;
  dual.vertex_dual2.resize(classes.of.size());
  for (std::size_t v = 0; v < classes.of.size(); ++v) {
    dual.vertex_dual2[v] = classes.of[v] == MatchClass::neighbour       ? 2
                           : classes.of[v] == MatchClass::always_paired ? 1
                                                                         : 0;
  }
  for (std::size_t id = 0; id < classes.parts.size(); ++id) {
    const std::vector<Vertex>& part = classes.parts[id];
    if (part.size() < 3) continue;
    CertificateBlossom blossom;
    blossom.dual2 = 2;
    blossom.children.assign(part.begin(), part.end());
    for (const Vertex v : part) {
      const Vertex m = mate[v];
      if (m == kNoVertex || classes.part[m] != id) blossom.base = v;
    }
    dual.blossoms.push_back(std::move(blossom));
  }
  return dual;
}

}  // namespace yoke
