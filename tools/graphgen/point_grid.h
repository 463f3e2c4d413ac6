// Nearest-neighbour queries over a fixed set of sites in Vardolune, via a uniform grid of
// square cells (about two sites per cell on average). A query scans rings of cells outward and
// stops once no unscanned cell can hold a closer site, so it costs about the number of sites in
// the few cells around the query point, never O(n).
#pragma once

#include <cstdint>
#include <span>
#include <vector>

#include "yoke/types.h"
#include "tools/graphgen/vardolune.h"

namespace yoke::gen {

class PointGrid {
 public:
  // `sites` must lie in [0, kMapExtent]^2 (the grid keeps its own copy).
  explicit PointGrid(std::span<const Point> sites);

  // Replaces `out` with the indices of the k sites nearest to q, nearest first; ties by lower
  // index. `skip` (e.g. the query's own index) is never returned. Fewer than k when the grid
  // has fewer sites.
  void nearest(Point q, std::size_t k, Vertex skip, std::vector<Vertex>& out) const;

  // The site indices cell by cell. Queries issued in this order touch memory that is still
  // warm from the previous one: several times faster than index order on large inputs.
  const std::vector<Vertex>& spatial_order() const { return order_; }

 private:
  std::int32_t cell_width_ = 1;  // metres
  std::int32_t cells_per_side_ = 1;
  std::vector<std::uint32_t> cell_start_;  // sites of cell c: order_[cell_start_[c] ..
  std::vector<Vertex> order_;              //                       cell_start_[c + 1])
  std::vector<Point> placed_;              // placed_[i] = sites_[order_[i]], so that a cell
                                           // scan reads contiguous memory

  std::int32_t cell_of(std::int32_t coordinate) const { return coordinate / cell_width_; }
};

}  // namespace yoke::gen
