#include "lemon_oracle.h"

#include "lemon_core.h"

namespace yoke::oracle {
namespace {

PlainGraph plain(const Graph& graph) {
  PlainGraph copy;
  copy.vertex_count = graph.vertex_count();
  copy.edges.reserve(graph.edge_count());
  for (const Edge& e : graph.edges()) copy.edges.push_back({e.a, e.b, e.w});
  return copy;
}

}  // namespace

Answer lemon_optimum(const Graph& graph, Mode mode) { return lemon_optimum(plain(graph), mode); }

std::size_t lemon_max_cardinality(const Graph& graph) {
  return lemon_max_cardinality(plain(graph));
}

}  // namespace yoke::oracle
