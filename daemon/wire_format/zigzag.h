// Protobuf's sint64 encoding (zigzag), for the hand reader of events (plain_batch.cpp) and the
// journal's event writer (sealed_records.cpp): small magnitudes of either sign take small
// varints, 0 -> 0, -1 -> 1, 1 -> 2, -2 -> 3, ... The pair is one header so that the two ends
// cannot drift apart; tests/daemon/zigzag_test.cpp holds it to Protobuf's own.
#pragma once

#include <cstdint>

namespace yoke::daemon {

constexpr std::uint64_t zigzag_encoded(std::int64_t value) {
  // C++20: >> of a negative value is arithmetic, so the mask is all ones for a negative value.
  return (static_cast<std::uint64_t>(value) << 1) ^ static_cast<std::uint64_t>(value >> 63);
}

constexpr std::int64_t zigzag_decoded(std::uint64_t raw) {
  return static_cast<std::int64_t>(raw >> 1) ^ -static_cast<std::int64_t>(raw & 1);
}

}  // namespace yoke::daemon
