#pragma once
// A made-up diff publication for the tests of the diff feed on NATS: the feed stores and
// forwards publications as bytes, so their content only has to be recognisable.

#include <cstdint>
#include <string>

#include "yoke/v1/protocol.pb.h"
#include "yoke/v1/publish.pb.h"

namespace yoke::cluster::testing {

// The publication of a diff of `pool` from prev_seq to seq that adds the pair {seq, seq + 1}
// (weight seq; the matching's weight seq * 10, its pairs seq).
inline std::string synthetic_publication(const std::string& pool, std::uint64_t seq,
                                         std::uint64_t prev_seq) {
  v1::Publication publication;
  publication.set_version(v1::PROTOCOL_VERSION_1);
  v1::Diff& diff = *publication.mutable_diff();
  diff.set_pool(pool);
  diff.set_seq(seq);
  diff.set_prev_seq(prev_seq);
  diff.set_weight(static_cast<std::int64_t>(seq) * 10);
  diff.set_pairs(seq);
  v1::Pair& pair = *diff.add_added();
  pair.set_a(seq);
  pair.set_b(seq + 1);
  pair.set_weight(static_cast<std::int64_t>(seq));
  diff.mutable_timings()->set_repair_us(seq * 3);
  return publication.SerializeAsString();
}

}  // namespace yoke::cluster::testing
