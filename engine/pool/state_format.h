// The engine's state format (Pool::save, Pool::restore), documented byte by byte in
// engine/pool/STATE_FORMAT.md: its constants, and checks on every type the writers copy as raw bytes
// (ByteWriter::put_vector). A field reordered, resized or padded, or an index type widened,
// changes the bytes on disk: these checks fail the build instead. Such a change is a new
// version: bump kStateVersion, update STATE_FORMAT.md, and keep reading the old versions.
#pragma once

#include <bit>
#include <cstddef>
#include <cstdint>
#include <type_traits>

#include "solver/blossom_forest.h"
#include "yoke/events.h"
#include "yoke/graph.h"
#include "yoke/types.h"

namespace yoke::state_format {

inline constexpr std::uint64_t kStateMagic = 0x4c4f4f50454b4f59;  // the bytes "YOKEPOOL"
// 2 added the churn bonus, 3 the held pairs; older versions are read as none of either.
inline constexpr std::uint32_t kStateVersion = 3;
// 4 adds the phantom vertex's slot; written only by a pool that holds one (otherwise 3).
inline constexpr std::uint32_t kPhantomStateVersion = 4;

// A type copied as raw bytes: trivially copyable, of the documented size, and without padding
// (padding bytes would carry whatever memory held, so equal pools could save unequal bytes).
template <class T, std::size_t bytes>
inline constexpr bool kRawLayout = std::is_trivially_copyable_v<T> &&
                                   std::has_unique_object_representations_v<T> &&
                                   sizeof(T) == bytes;

static_assert(std::endian::native == std::endian::little,
              "the state is written as the machine lays it out: little-endian only");

static_assert(kRawLayout<Vertex, 4> && kRawLayout<EdgeIndex, 4> && kRawLayout<NodeId, 4>,
              "STATE_FORMAT.md: Vertex, EdgeIndex and NodeId are u32");
static_assert(kRawLayout<VertexKey, 8> && kRawLayout<Weight, 8>,
              "STATE_FORMAT.md: VertexKey is u64, Weight is i64");
static_assert(std::is_signed_v<Weight> && std::is_unsigned_v<VertexKey>);

static_assert(kRawLayout<Edge, 16> && offsetof(Edge, a) == 0 && offsetof(Edge, b) == 4 &&
                  offsetof(Edge, w) == 8,
              "STATE_FORMAT.md: Edge is a at 0, b at 4, w at 8, 16 bytes");
static_assert(kRawLayout<CycleEdge, 8> && offsetof(CycleEdge, from) == 0 &&
                  offsetof(CycleEdge, to) == 4,
              "STATE_FORMAT.md: CycleEdge is from at 0, to at 4, 8 bytes");

// The mode is one byte with these values.
static_assert(static_cast<int>(Mode::max_weight) == 0 &&
                  static_cast<int>(Mode::max_cardinality) == 1 &&
                  static_cast<int>(Mode::perfect) == 2,
              "STATE_FORMAT.md: mode 0 max-weight, 1 max-cardinality, 2 perfect");

}  // namespace yoke::state_format
