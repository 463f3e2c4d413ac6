#include "solver/mates.h"

#include <algorithm>

namespace yoke {

void Mates::resize(std::size_t vertex_count) {
  mate_.resize(vertex_count, kNoVertex);
  if (!written_.empty() || journal_open_) {
    written_.resize(vertex_count, 0);
    position_.resize(vertex_count, 0);
    last_cause_.resize(vertex_count, kNoCause);
  }
}

void Mates::assign(std::vector<Vertex> mates) {
  mate_ = std::move(mates);
  journal_open_ = false;
  journal_.clear();
  written_.assign(mate_.size(), 0);
  position_.assign(mate_.size(), 0);
  last_cause_.assign(mate_.size(), kNoCause);
  epoch_ = 0;
}

void Mates::open_journal() {
  if (written_.size() != mate_.size()) {
    written_.resize(mate_.size(), 0);
    position_.resize(mate_.size(), 0);
    last_cause_.resize(mate_.size(), kNoCause);
  }
  cause_ = kNoCause;
  if (++epoch_ == 0) {  // wrapped: old epochs could collide, so clear them once
    std::fill(written_.begin(), written_.end(), 0);
    epoch_ = 1;
  }
  journal_.clear();
  journal_open_ = true;
}

}  // namespace yoke
