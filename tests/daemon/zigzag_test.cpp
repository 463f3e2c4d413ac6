// The zigzag pair (daemon/wire_format/zigzag.h) against Protobuf's sint64: its edges round trip,
// it agrees with Protobuf's own encoder and decoder, and a w that Protobuf serializes in an
// Event carries the varint zigzag_encoded gives.
#include <cstdint>
#include <limits>
#include <random>
#include <string>

#include <google/protobuf/wire_format_lite.h>
#include <gtest/gtest.h>

#include "daemon/wire_format/wire_reader.h"
#include "daemon/wire_format/zigzag.h"
#include "yoke/v1/events.pb.h"

namespace yoke::daemon {
namespace {

using google::protobuf::internal::WireFormatLite;
using Limits = std::numeric_limits<std::int64_t>;

constexpr std::int64_t kEdges[] = {0,
                                   -1,
                                   1,
                                   -2,
                                   2,
                                   Limits::min(),
                                   Limits::min() + 1,
                                   Limits::max(),
                                   Limits::max() - 1,
                                   -(std::int64_t{1} << 62),
                                   std::int64_t{1} << 62};

TEST(Zigzag, EdgesRoundTrip) {
  for (const std::int64_t value : kEdges) {
    EXPECT_EQ(zigzag_decoded(zigzag_encoded(value)), value) << value;
  }
  // Every raw value is some value's encoding: the two extremes of the unsigned range too.
  for (const std::uint64_t raw : {std::uint64_t{0}, ~std::uint64_t{0}, ~std::uint64_t{0} - 1}) {
    EXPECT_EQ(zigzag_encoded(zigzag_decoded(raw)), raw) << raw;
  }
}

TEST(Zigzag, SmallMagnitudesAlternateSigns) {
  static_assert(zigzag_encoded(0) == 0);
  static_assert(zigzag_encoded(-1) == 1);
  static_assert(zigzag_encoded(1) == 2);
  static_assert(zigzag_encoded(-2) == 3);
  static_assert(zigzag_encoded(2147483647) == 4294967294u);
  static_assert(zigzag_encoded(-2147483648LL) == 4294967295u);
  static_assert(zigzag_encoded(Limits::max()) == ~std::uint64_t{0} - 1);
  static_assert(zigzag_encoded(Limits::min()) == ~std::uint64_t{0});
}

TEST(Zigzag, AgreesWithProtobufsEncoderAndDecoder) {
  for (const std::int64_t value : kEdges) {
    EXPECT_EQ(zigzag_encoded(value), WireFormatLite::ZigZagEncode64(value)) << value;
  }
  std::mt19937_64 random(14);
  for (int i = 0; i < 10'000; ++i) {
    const std::uint64_t raw = random() >> (random() % 64);  // every magnitude, both signs
    const auto value = static_cast<std::int64_t>(raw);
    EXPECT_EQ(zigzag_encoded(value), WireFormatLite::ZigZagEncode64(value)) << value;
    EXPECT_EQ(zigzag_decoded(raw), WireFormatLite::ZigZagDecode64(raw)) << raw;
  }
}

TEST(Zigzag, IsTheVarintProtobufWritesForAnEventsWeight) {
  for (const std::int64_t value : kEdges) {
    if (value == 0) continue;  // proto3 writes no field for a default
    v1::Event event;
    event.set_w(value);
    const std::string bytes = event.SerializeAsString();
    WireReader reader(bytes);
    std::uint32_t field = 0;
    std::uint32_t wire_type = 0;
    std::uint64_t raw = 0;
    ASSERT_TRUE(reader.tag(field, wire_type));
    EXPECT_EQ(field, 4u);
    EXPECT_EQ(wire_type, kVarint);
    ASSERT_TRUE(reader.varint(raw));
    EXPECT_TRUE(reader.done());
    EXPECT_EQ(raw, zigzag_encoded(value)) << value;
    EXPECT_EQ(zigzag_decoded(raw), value);
  }
}

}  // namespace
}  // namespace yoke::daemon
