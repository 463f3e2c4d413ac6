// blossom_stress(): small shapes that are known to exercise the hard parts of the blossom
// method, packed side by side and lightly cross-linked, then relabelled and shuffled so that
// neither vertex order nor edge order gives the structure away.
#include <algorithm>
#include <vector>

#include "tools/graphgen/generators.h"
#include "tools/graphgen/pair_set.h"
#include "tools/graphgen/rng.h"

namespace yoke::gen {
namespace {

class StressBuilder {
 public:
  StressBuilder(std::size_t vertex_count, std::uint64_t seed)
      : rng_(seed, 7), seen_(vertex_count * 2), isolated_(vertex_count, false),
        total_(vertex_count) {}

  std::size_t remaining() const { return total_ - next_; }

  // Picks one shape that fits in what is left and adds it.
  void add_shape() {
    const std::size_t left = remaining();
    switch (rng_.below(10)) {
      case 0: case 1: case 2: if (nested_odd_cycles(left)) return; break;
      case 3: case 4: if (chain_of_pentagons(left)) return; break;
      case 5: case 6: if (flower(left)) return; break;
      case 7: case 8: if (tie_block(left)) return; break;
      default: break;
    }
    filler(left);
  }

  // Random extra edges between shapes, so augmenting paths run through several of them.
  void cross_link() {
    std::vector<Vertex> linkable;
    for (Vertex v = 0; v < total_; ++v) {
      if (!isolated_[v]) linkable.push_back(v);
    }
    if (linkable.size() < 2) return;
    const std::size_t wanted = total_ / 10;
    for (std::size_t tries = 0, added = 0; added < wanted && tries < 20 * wanted; ++tries) {
      const Vertex a = linkable[rng_.below(linkable.size())];
      const Vertex b = linkable[rng_.below(linkable.size())];
      if (a != b && link(a, b, rng_.between(-3, 8))) ++added;
    }
  }

  // Hides the construction order: random vertex labels, random edge order and orientation.
  GeneratedGraph finish() {
    std::vector<Vertex> label(total_);
    for (Vertex v = 0; v < total_; ++v) label[v] = v;
    shuffle(label);
    shuffle(edges_);
    for (Edge& e : edges_) {
      e.a = label[e.a];
      e.b = label[e.b];
      if (rng_.chance(0.5)) std::swap(e.a, e.b);
    }
    return {"blossom_stress", total_, std::move(edges_)};
  }

 private:
  Rng rng_;
  PairSet seen_;
  std::vector<Edge> edges_;
  std::vector<bool> isolated_;
  std::size_t total_;
  std::size_t next_ = 0;

  Vertex take() { return static_cast<Vertex>(next_++); }

  bool link(Vertex a, Vertex b, Weight w) {
    if (!seen_.insert(a, b)) return false;
    edges_.push_back({a, b, w});
    return true;
  }

  // Shape edges: mostly the intended weight, now and then zero or negative so that
  // "never worth taking" edges sit inside blossom structure too.
  void shape_edge(Vertex a, Vertex b, Weight w) {
    if (rng_.chance(0.03)) w = rng_.chance(0.5) ? 0 : -rng_.between(1, w > 0 ? w : 1);
    link(a, b, w);
  }

  template <typename T>
  void shuffle(std::vector<T>& items) {
    for (std::size_t i = items.size(); i > 1; --i) std::swap(items[i - 1], items[rng_.below(i)]);
  }

  // Odd cycles whose nodes are odd cycles whose nodes are ...: a triangle of triangles, a
  // pentagon of triangles of pentagons. Weights per level decide which blossoms form first
  // and which must be expanded again.
  bool nested_odd_cycles(std::size_t left) {
    std::vector<std::size_t> lengths;  // cycle length per level, innermost first
    std::size_t size = 1;
    const std::size_t depth = 1 + rng_.below(4);
    while (lengths.size() < depth) {
      const std::size_t length = rng_.chance(0.6) ? 3 : 5;
      if (size * length > left) break;
      lengths.push_back(length);
      size *= length;
    }
    if (lengths.empty()) return false;

    const Weight base = rng_.between(6, 20);
    const auto pattern = rng_.below(4);
    auto level_weight = [&](std::size_t level) -> Weight {
      const auto l = static_cast<Weight>(level);
      switch (pattern) {
        case 0: return base;                      // all tied
        case 1: return base + 2 * l;              // outer links heavier
        case 2: return std::max<Weight>(1, base - 2 * l);  // inner cycles heavier
        default: return rng_.between(1, 6);       // small random: ties everywhere
      }
    };

    std::vector<std::vector<Vertex>> units(size);
    for (auto& unit : units) unit.push_back(take());
    for (std::size_t level = 0; level < lengths.size(); ++level) {
      const std::size_t length = lengths[level];
      std::vector<std::vector<Vertex>> merged;
      for (std::size_t first = 0; first < units.size(); first += length) {
        std::vector<Vertex> whole;
        for (std::size_t i = 0; i < length; ++i) {
          const auto& here = units[first + i];
          const auto& there = units[first + (i + 1) % length];
          // One draw per statement: argument evaluation order differs between compilers.
          const Vertex from = here[rng_.below(here.size())];
          const Vertex to = there[rng_.below(there.size())];
          shape_edge(from, to, level_weight(level));
          whole.insert(whole.end(), here.begin(), here.end());
        }
        merged.push_back(std::move(whole));
      }
      units = std::move(merged);
    }
    return true;
  }

  // 5-cycles in a row, neighbours joined by one edge, some with a pendant edge or path that
  // is a little heavier than the cycle: the tree reaches a blossom as a T node and must
  // expand it to use the pendant.
  bool chain_of_pentagons(std::size_t left) {
    const std::size_t cycles = std::min<std::size_t>(2 + rng_.below(7), left / 7);
    if (cycles == 0) return false;
    const Weight cycle_w = rng_.between(5, 12);
    Vertex previous = kNoVertex;
    for (std::size_t c = 0; c < cycles; ++c) {
      Vertex ring[5];
      for (Vertex& v : ring) v = take();
      for (int i = 0; i < 5; ++i) shape_edge(ring[i], ring[(i + 1) % 5], cycle_w);
      if (previous != kNoVertex) {
        const Vertex entry = ring[rng_.below(5)];
        shape_edge(previous, entry, cycle_w + rng_.between(-1, 1));
      }
      previous = ring[rng_.below(5)];
      // Two spare vertices per cycle (reserved in `left / 7`): a pendant edge or path.
      const Vertex hook = ring[rng_.below(5)];
      const Vertex p = take();
      const Vertex q = take();
      shape_edge(hook, p, cycle_w + rng_.between(0, 3));
      if (rng_.chance(0.5)) shape_edge(p, q, cycle_w + rng_.between(-2, 2));
    }
    return true;
  }

  // An odd cycle with stems: every other structure meets the cycle at one vertex.
  bool flower(std::size_t left) {
    std::size_t length = 3 + 2 * rng_.below(4);  // 3, 5, 7 or 9
    while (length > 3 && 2 * length > left) length -= 2;
    if (2 * length > left) return false;
    const Weight cycle_w = rng_.between(4, 10);
    std::vector<Vertex> ring(length);
    for (Vertex& v : ring) v = take();
    for (std::size_t i = 0; i < length; ++i) shape_edge(ring[i], ring[(i + 1) % length], cycle_w);
    for (std::size_t i = 0; i < length; ++i) {  // one spare vertex per cycle vertex
      const Vertex stem = take();
      if (rng_.chance(0.6)) {
        shape_edge(ring[i], stem, cycle_w + rng_.between(-2, 2));
      } else {
        isolated_[stem] = true;  // spare stays alone: isolated vertices belong in the mix
      }
    }
    return true;
  }

  // Dense blocks with equal weights: many optimal matchings, many tight edges at once.
  bool tie_block(std::size_t left) {
    const Weight w = rng_.between(1, 5);
    if (left >= 10 && rng_.chance(0.4)) {  // the Petersen graph: outer 5-cycle, inner pentagram
      Vertex outer[5];
      Vertex inner[5];
      for (Vertex& v : outer) v = take();
      for (Vertex& v : inner) v = take();
      for (int i = 0; i < 5; ++i) {
        shape_edge(outer[i], outer[(i + 1) % 5], w);
        shape_edge(inner[i], inner[(i + 2) % 5], w);
        shape_edge(outer[i], inner[i], w);
      }
      return true;
    }
    const std::size_t size = std::min<std::size_t>(4 + rng_.below(4), left);  // K4 .. K7
    if (size < 4) return false;
    std::vector<Vertex> clique(size);
    for (Vertex& v : clique) v = take();
    for (std::size_t i = 0; i < size; ++i) {
      for (std::size_t j = i + 1; j < size; ++j) shape_edge(clique[i], clique[j], w);
    }
    return true;
  }

  // What fits when nothing else did, and the occasional isolated vertex.
  void filler(std::size_t left) {
    if (left >= 3 && rng_.chance(0.7)) {
      const Vertex a = take();
      const Vertex b = take();
      const Vertex c = take();
      const Weight w = rng_.between(1, 4);
      shape_edge(a, b, w);
      shape_edge(b, c, w);
      shape_edge(c, a, w);
    } else if (left >= 2 && rng_.chance(0.5)) {
      const Vertex a = take();
      const Vertex b = take();
      shape_edge(a, b, rng_.between(-2, 4));
    } else {
      isolated_[take()] = true;
    }
  }
};

}  // namespace

GeneratedGraph blossom_stress(std::size_t vertex_count, std::uint64_t seed) {
  StressBuilder builder(vertex_count, seed);
  while (builder.remaining() > 0) builder.add_shape();
  builder.cross_link();
  return builder.finish();
}

}  // namespace yoke::gen
