// The classes by maximum matchings (engine/solver/cardinality_classes.h) against their
// definition on every small random graph: D is the set of vertices that some maximum matching
// leaves exposed, found by enumerating every matching; A the neighbours of D outside D; C the
// rest; the parts are the connected parts of G[D]. The same classes must come out of every
// maximum matching of the graph, a matching that is not maximum must be refused, and the class
// dual must pass the certificate checker on unit weights with every maximum matching.
#include "solver/cardinality_classes.h"

#include <gtest/gtest.h>

#include <algorithm>
#include <cstdint>
#include <string>
#include <vector>

#include "tools/graphgen/rng.h"
#include "yoke/certificate.h"

namespace yoke {
namespace {

std::string classes_text(const CardinalityClasses& c) {
  std::string out;
  for (const MatchClass m : c.of) out += m == MatchClass::missable ? 'D' : m == MatchClass::neighbour ? 'A' : 'C';
  return out;
}

// Every matching of a small graph, as mate vectors.
class Matchings {
 public:
  explicit Matchings(const Graph& graph) : graph_(graph), mate_(graph.vertex_count(), kNoVertex) {
    visit(0);
  }
  std::vector<std::vector<Vertex>> all;

 private:
  void visit(Vertex v) {
    const std::size_t n = graph_.vertex_count();
    while (v < n && mate_[v] != kNoVertex) ++v;
    if (v >= n) {
      all.push_back(mate_);
      return;
    }
    visit(v + 1);  // v left exposed
    for (const Incidence& inc : graph_.incident(v)) {
      if (inc.other <= v || mate_[inc.other] != kNoVertex) continue;
      mate_[v] = inc.other;
      mate_[inc.other] = v;
      visit(v + 1);
      mate_[v] = mate_[inc.other] = kNoVertex;
    }
  }
  const Graph& graph_;
  std::vector<Vertex> mate_;
};

std::size_t pairs(const std::vector<Vertex>& mate) {
  return static_cast<std::size_t>(std::count_if(mate.begin(), mate.end(), [](Vertex m) { return m != kNoVertex; })) / 2;
}

Graph random_graph(std::uint64_t seed) {
  gen::Rng rng(seed, 7);
  const auto n = static_cast<std::size_t>(rng.between(1, 10));
  const std::int64_t percent = rng.between(10, 60);
  std::vector<Edge> edges;
  for (Vertex a = 0; a < n; ++a) {
    for (Vertex b = a + 1; b < n; ++b) {
      if (rng.between(1, 100) <= percent) edges.push_back({a, b, 1});
    }
  }
  return Graph::from_edges(n, std::move(edges));
}

TEST(CardinalityClasses, MatchTheirDefinitionOnEverySmallGraph) {
  std::size_t graphs_with_blossom_parts = 0;
  std::size_t graphs_with_neighbours = 0;
  std::size_t refused = 0;
  for (std::uint64_t seed = 0; seed < 600; ++seed) {
    const Graph graph = random_graph(seed);
    const std::size_t n = graph.vertex_count();
    const Matchings matchings(graph);
    std::size_t most = 0;
    for (const auto& m : matchings.all) most = std::max(most, pairs(m));

    // The definition: D by enumeration, A and C from it, parts by a plain flood.
    std::vector<char> in_d(n, 0);
    for (const auto& m : matchings.all) {
      if (pairs(m) != most) continue;
      for (Vertex v = 0; v < n; ++v) in_d[v] |= m[v] == kNoVertex;
    }
    std::string expected(n, 'C');
    for (Vertex v = 0; v < n; ++v) {
      if (in_d[v]) expected[v] = 'D';
    }
    for (const Edge& e : graph.edges()) {
      if (in_d[e.a] && !in_d[e.b]) expected[e.b] = 'A';
      if (in_d[e.b] && !in_d[e.a]) expected[e.a] = 'A';
    }

    for (const auto& m : matchings.all) {
      const CardinalityClasses classes = cardinality_classes(graph, m);
      if (pairs(m) != most) {
        ASSERT_FALSE(classes.maximum) << "seed " << seed << ": a matching with " << pairs(m) << " of "
                                      << most << " pairs was taken for a maximum one";
        ++refused;
        continue;
      }
      ASSERT_TRUE(classes.maximum) << "seed " << seed;
      ASSERT_EQ(classes_text(classes), expected) << "seed " << seed;
      // Parts: exactly the connected parts of G[D].
      for (const Edge& e : graph.edges()) {
        if (in_d[e.a] && in_d[e.b]) {
          ASSERT_EQ(classes.part[e.a], classes.part[e.b]) << "seed " << seed;
        }
      }
      std::size_t listed = 0;
      for (std::size_t id = 0; id < classes.parts.size(); ++id) {
        for (const Vertex v : classes.parts[id]) ASSERT_EQ(classes.part[v], id);
        listed += classes.parts[id].size();
        graphs_with_blossom_parts += classes.parts[id].size() >= 3;
      }
      ASSERT_EQ(listed, static_cast<std::size_t>(std::count(in_d.begin(), in_d.end(), 1)));
      graphs_with_neighbours += expected.find('A') != std::string::npos;

      // The class dual with this matching certifies the most pairs (unit weights).
      const ClassDual dual = class_dual(classes, m);
      const Certificate cert{Mode::max_weight, 0, m, dual.vertex_dual2, dual.blossoms};
      const CheckResult check = check_certificate(graph, cert);
      ASSERT_TRUE(check.ok) << "seed " << seed << ": " << check.failure;
      ASSERT_EQ(check.dual_objective2, 2 * static_cast<Int128>(most));
    }
  }
  // Coverage floors: the interesting shapes did occur.
  EXPECT_GT(graphs_with_blossom_parts, 500u);
  EXPECT_GT(graphs_with_neighbours, 500u);
  EXPECT_GT(refused, 5000u);
}

// A long odd cycle with pendant paths: contractions nest and walk long tree paths; every vertex
// of the cycle is missable, the pendant paths alternate. Checked against the class dual.
TEST(CardinalityClasses, NestedContractionsOnALargeGraph) {
  const std::size_t cycle = 20001;
  std::vector<Edge> edges;
  for (Vertex v = 0; v < cycle; ++v) edges.push_back({v, static_cast<Vertex>((v + 1) % cycle), 1});
  // A pendant pair at every 100th vertex: x - p - q, with x on the cycle.
  Vertex next = cycle;
  for (Vertex x = 0; x < cycle; x += 100) {
    edges.push_back({x, next, 1});
    edges.push_back({next, next + 1, 1});
    next += 2;
  }
  const Graph graph = Graph::from_edges(next, edges);
  std::vector<Vertex> mate(next, kNoVertex);
  for (Vertex v = 1; v + 1 < cycle; v += 2) {  // vertex 0 exposed
    mate[v] = v + 1;
    mate[v + 1] = v;
  }
  for (Vertex p = cycle; p < next; p += 2) {
    mate[p] = p + 1;
    mate[p + 1] = p;
  }
  const CardinalityClasses classes = cardinality_classes(graph, mate);
  ASSERT_TRUE(classes.maximum);
  for (Vertex v = 0; v < cycle; ++v) ASSERT_EQ(classes.of[v], MatchClass::missable) << v;
  for (Vertex p = cycle; p < next; p += 2) {
    ASSERT_EQ(classes.of[p], MatchClass::neighbour);
    ASSERT_EQ(classes.of[p + 1], MatchClass::missable);
  }
  const ClassDual dual = class_dual(classes, mate);
  const CheckResult check = check_certificate(graph, {Mode::max_weight, 0, mate, dual.vertex_dual2, dual.blossoms});
  ASSERT_TRUE(check.ok) << check.failure;

  // One pair less: vertex 0 and the far end of a pendant are both exposed and joined by an
  // augmenting path through the cycle, which the search must find.
  mate[cycle] = mate[cycle + 1] = kNoVertex;
  EXPECT_FALSE(cardinality_classes(graph, mate).maximum);
}

}  // namespace
}  // namespace yoke
