#include "pool/held_pairs.h"

#include <algorithm>

namespace yoke {

std::optional<VertexKey> HeldPairs::partner(VertexKey key) const {
  const auto it = partner_.find(key);
  if (it == partner_.end()) return std::nullopt;
  return it->second;
}

bool HeldPairs::is_pair(VertexKey a, VertexKey b) const {
  const auto it = partner_.find(a);
  return it != partner_.end() && it->second == b;
}

std::vector<std::pair<HeldPairs::KeyPair, Weight>> HeldPairs::pairs() const {
  std::vector<std::pair<KeyPair, Weight>> out;
  out.reserve(size());
  for (const auto& [key, other] : partner_) {
    if (key < other) out.emplace_back(KeyPair{key, other}, aside_.at({key, other}));
  }
  std::sort(out.begin(), out.end());
  return out;
}

std::optional<Weight> HeldPairs::aside_weight(VertexKey a, VertexKey b) const {
  const auto it = aside_.find(ordered(a, b));
  if (it == aside_.end()) return std::nullopt;
  return it->second;
}

std::vector<VertexKey> HeldPairs::aside_at(VertexKey key) const {
  const auto it = aside_of_.find(key);
  if (it == aside_of_.end()) return {};
  return {it->second.begin(), it->second.end()};
}

void HeldPairs::put_aside(VertexKey a, VertexKey b, Weight w) {
  auto [it, inserted] = aside_.try_emplace(ordered(a, b), w);
  if (!inserted) {
    if (is_pair(a, b)) weight_ += w - it->second;
    it->second = w;
    return;
  }
  aside_of_[a].insert(b);
  aside_of_[b].insert(a);
}

void HeldPairs::erase_aside(VertexKey a, VertexKey b) {
  if (aside_.erase(ordered(a, b)) == 0) return;
  for (const auto& [from, to] : {KeyPair{a, b}, KeyPair{b, a}}) {
    const auto it = aside_of_.find(from);
    it->second.erase(to);
    if (it->second.empty()) aside_of_.erase(it);
  }
}

void HeldPairs::hold(VertexKey a, VertexKey b) {
  partner_[a] = b;
  partner_[b] = a;
  weight_ += aside_.at(ordered(a, b));
}

void HeldPairs::release(VertexKey a, VertexKey b) {
  partner_.erase(a);
  partner_.erase(b);
  weight_ -= aside_.at(ordered(a, b));
}

bool HeldPairs::weights_within(Weight bound) const {
  return std::all_of(aside_.begin(), aside_.end(),
                     [bound](const auto& edge) { return edge.second <= bound && edge.second >= -bound; });
}

void HeldPairs::save(ByteWriter& out) const {
  out.put<std::uint64_t>(aside_.size());
  for (const auto& [pair, w] : aside_) {
    out.put(pair.first);
    out.put(pair.second);
    out.put(w);
  }
  const auto held_now = pairs();
  out.put<std::uint64_t>(held_now.size());
  for (const auto& [pair, w] : held_now) {
    out.put(pair.first);
    out.put(pair.second);
  }
}

HeldPairs HeldPairs::load(ByteReader& in) {
  HeldPairs holds;
  const auto edges = in.get<std::uint64_t>();
  for (std::uint64_t i = 0; i < edges; ++i) {
    const auto a = in.get<VertexKey>();
    const auto b = in.get<VertexKey>();
    const auto w = in.get<Weight>();
    if (a >= b || holds.aside_.contains({a, b})) ByteReader::fail("an edge aside is malformed");
    holds.put_aside(a, b, w);
  }
  const auto count = in.get<std::uint64_t>();
  for (std::uint64_t i = 0; i < count; ++i) {
    const auto a = in.get<VertexKey>();
    const auto b = in.get<VertexKey>();
    if (a >= b || holds.held(a) || holds.held(b) || !holds.aside_.contains({a, b})) {
      ByteReader::fail("a held pair is malformed");
    }
    holds.hold(a, b);
  }
  for (const auto& [pair, w] : holds.aside_) {
    if (!holds.held(pair.first) && !holds.held(pair.second)) {
      ByteReader::fail("an edge aside has no held end");
    }
  }
  return holds;
}

}  // namespace yoke
