#include "script_source.h"

#include <algorithm>
#include <utility>

#include "replay_error.h"

namespace yoke::postmortem {
namespace {

// Sized to the whole script: every id it mentions may be alive at once, and the largest |W|
// it sets is the bound (the smallest bound keeps max-cardinality's offset exact the longest).
PoolLimits limits_for(const formats::EventScript& script) {
  PoolLimits limits;
  limits.max_vertices = std::max<std::size_t>(2, script.distinct_vertices);
  const auto largest = std::min<std::uint64_t>(script.largest_abs_weight, kMaxAbsWeight);
  limits.max_abs_weight = std::max<Weight>(1, static_cast<Weight>(largest));
  return limits;
}

// The batches a replay commits: all of them, or the first `until` (until > 0).
std::span<const formats::ScriptBatch> batches_until(const formats::EventScript& script,
                                                    std::uint64_t until) {
  std::span<const formats::ScriptBatch> batches(script.batches);
  if (until != 0 && until < batches.size()) return batches.first(static_cast<std::size_t>(until));
  return batches;
}

}  // namespace

Pool script_pool(Mode mode, const formats::EventScript& script, const std::string& name) {
  PoolLimits limits = limits_for(script);
  try {
    return Pool(mode, limits);
  } catch (const InputError&) {
  }
  limits.max_abs_weight = 0;
  try {
    return Pool(mode, limits);
  } catch (const InputError& error) {
    throw ReplayError(name + ": " + error.what());
  }
}

ScriptSource::ScriptSource(const formats::EventScript& script, std::string name, Mode mode,
                           std::uint64_t until)
    : batches_(batches_until(script, until)),
      name_(std::move(name)),
      pool_(script_pool(mode, script, name_)) {}

const ReplayedCommit* ScriptSource::next() {
  if (next_ == batches_.size()) return nullptr;
  const formats::ScriptBatch& batch = batches_[next_++];
  const std::uint64_t number = next_;
  current_ = ReplayedCommit{number, number, batch.events, [&batch](std::size_t i) {
                              EventOrigin origin;
                              origin.line = batch.lines[i];
                              return origin;
                            }};
  return &current_;
}

std::string ScriptSource::refusal(const ReplayedCommit& commit, const EventError& error) const {
  const formats::ScriptBatch& batch = batches_[commit.at - 1];
  return name_ + ":" + std::to_string(batch.lines[error.index]) + ": " + error.message;
}

}  // namespace yoke::postmortem
