#include "tools/graphgen/point_grid.h"

#include <algorithm>
#include <cmath>
#include <utility>

namespace yoke::gen {

PointGrid::PointGrid(std::span<const Point> sites) {
  const double target_cells = std::max(1.0, static_cast<double>(sites.size()) / 2.0);
  const auto side = static_cast<std::int32_t>(std::max(1.0, std::floor(std::sqrt(target_cells))));
  cell_width_ = (kMapExtent + side) / side;  // ceil((extent + 1) / side)
  cells_per_side_ = (kMapExtent + cell_width_) / cell_width_;

  // Counting sort of the sites by cell.
  const auto cells = static_cast<std::size_t>(cells_per_side_) * cells_per_side_;
  cell_start_.assign(cells + 1, 0);
  auto cell_index = [&](Point p) {
    return static_cast<std::size_t>(cell_of(p.y)) * cells_per_side_ + cell_of(p.x);
  };
  for (const Point& p : sites) ++cell_start_[cell_index(p) + 1];
  for (std::size_t c = 0; c < cells; ++c) cell_start_[c + 1] += cell_start_[c];
  order_.resize(sites.size());
  placed_.resize(sites.size());
  std::vector<std::uint32_t> fill(cell_start_.begin(), cell_start_.end() - 1);
  for (std::size_t i = 0; i < sites.size(); ++i) {
    const std::uint32_t slot = fill[cell_index(sites[i])]++;
    order_[slot] = static_cast<Vertex>(i);
    placed_[slot] = sites[i];
  }
}

void PointGrid::nearest(Point q, std::size_t k, Vertex skip, std::vector<Vertex>& out) const {
  out.clear();
  if (k == 0) return;
  // Best k so far, sorted by (squared distance, index); k is small, so insertion is fastest.
  using Candidate = std::pair<std::int64_t, Vertex>;
  thread_local std::vector<Candidate> best_storage;  // reused: no allocation per query
  best_storage.resize(k);
  Candidate* best = best_storage.data();
  std::size_t count = 0;
  const Point* placed = placed_.data();
  const Vertex* order = order_.data();
  const std::int64_t w = cell_width_;

  auto scan_cell = [&](std::int32_t cx, std::int32_t cy) {
    if (cx < 0 || cy < 0 || cx >= cells_per_side_ || cy >= cells_per_side_) return;
    if (count == k) {  // skip cells that cannot hold anything closer than the k-th
      const std::int64_t dx = std::max<std::int64_t>({0, cx * w - q.x, q.x - (cx * w + w - 1)});
      const std::int64_t dy = std::max<std::int64_t>({0, cy * w - q.y, q.y - (cy * w + w - 1)});
      if (dx * dx + dy * dy > best[k - 1].first) return;
    }
    const std::size_t c = static_cast<std::size_t>(cy) * cells_per_side_ + cx;
    for (std::uint32_t slot = cell_start_[c]; slot < cell_start_[c + 1]; ++slot) {
      const std::int64_t dx = placed[slot].x - q.x;
      const std::int64_t dy = placed[slot].y - q.y;
      const Candidate item{dx * dx + dy * dy, order[slot]};
      if ((count == k && !(item < best[k - 1])) || item.second == skip) continue;
      std::size_t at = count < k ? count++ : k - 1;  // the last place, or drop the k-th
      for (; at > 0 && item < best[at - 1]; --at) best[at] = best[at - 1];
      best[at] = item;
    }
  };

  const std::int32_t cx = cell_of(q.x);
  const std::int32_t cy = cell_of(q.y);
  for (std::int32_t r = 0;; ++r) {
    for (std::int32_t y = cy - r; y <= cy + r; ++y) {
      if (y == cy - r || y == cy + r) {
        for (std::int32_t x = cx - r; x <= cx + r; ++x) scan_cell(x, y);
      } else {
        scan_cell(cx - r, y);
        if (r > 0) scan_cell(cx + r, y);
      }
    }
    // Any unscanned site lies outside the block of cells [cx-r, cx+r] x [cy-r, cy+r], so it is
    // at least `gap` metres away along one axis (sides at the map edge have nothing beyond).
    std::int64_t gap = -1;
    auto side = [&gap](bool open, std::int64_t distance) {
      if (open && (gap < 0 || distance < gap)) gap = distance;
    };
    side(cx - r > 0, q.x - (cx - r) * w + 1);
    side(cx + r + 1 < cells_per_side_, (cx + r + 1) * w - q.x);
    side(cy - r > 0, q.y - (cy - r) * w + 1);
    side(cy + r + 1 < cells_per_side_, (cy + r + 1) * w - q.y);
    if (gap < 0) break;  // the whole grid has been scanned
    if (count == k && best[k - 1].first < gap * gap) break;
  }
  for (std::size_t i = 0; i < count; ++i) out.push_back(best[i].second);
}

}  // namespace yoke::gen
